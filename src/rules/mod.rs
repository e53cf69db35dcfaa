//! Rules: each reads the circuit and the analyses and returns findings. One module per rule,
//! one registry listing every rule once ([`REGISTRY`]), one page per rule in `rules/*.md`.

use crate::analysis::Analysis;
use crate::circuit::Circuit;
use crate::config::Config;
use crate::diagnostic::{Finding, Severity};
use crate::netlist::FlatNetlist;

/// Everything a rule may read.
pub struct RuleContext<'a> {
    pub netlist: &'a FlatNetlist,
    pub circuit: &'a Circuit,
    pub analysis: &'a Analysis,
    pub config: &'a Config,
}

/// One registry entry.
pub struct RuleInfo {
    pub id: &'static str,
    pub default_severity: Severity,
    pub summary: &'static str,
    /// The rule's page (`rules/<id>.md`), compiled in.
    pub page: &'static str,
    /// `None` for rules whose findings come from an earlier stage (e.g. `syntax` from the parser).
    pub check: Option<fn(&RuleContext<'_>, &mut Vec<Finding>)>,
}

macro_rules! rule {
    ($id:literal, $sev:ident, $summary:literal, $check:expr) => {
        RuleInfo {
            id: $id,
            default_severity: Severity::$sev,
            summary: $summary,
            page: include_str!(concat!("../../rules/", $id, ".md")),
            check: $check,
        }
    };
}

/// Every rule, once. Keep in one-to-one agreement with `rules/*.md` (a test checks).
pub static REGISTRY: &[RuleInfo] = &[rule!(
    "syntax",
    Error,
    "The parser cannot read a statement",
    None
)];

pub fn find(id: &str) -> Option<&'static RuleInfo> {
    REGISTRY.iter().find(|r| r.id.eq_ignore_ascii_case(id))
}

/// Runs every enabled rule.
pub fn run(cx: &RuleContext<'_>) -> Vec<Finding> {
    let mut out = Vec::new();
    for rule in REGISTRY {
        if let Some(check) = rule.check {
            check(cx, &mut out);
        }
    }
    out
}

pub mod eseries;
pub mod suppress;
pub mod units;
