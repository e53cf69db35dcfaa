//! Rules: each reads the circuit and the analyses and returns findings. One module per rule,
//! one registry listing every rule once ([`REGISTRY`]), one page per rule in `rules/*.md`.

use crate::analysis::Analysis;
use crate::circuit::Circuit;
use crate::config::Config;
use crate::diagnostic::{Finding, Severity};
use crate::netlist::FlatNetlist;

pub mod base_underdrive;
pub mod bulk_capacitance_missing;
pub mod capacitor_overvoltage;
pub mod capacitor_reversed;
pub mod decoupling_missing;
pub mod discharge_unprotected;
pub mod driver_overload;
pub mod duty_overrun;
pub mod element_shorted;
pub mod flyback_missing;
pub mod flyback_reversed;
pub mod flyback_underrated;
pub mod gate_cannot_turn_off;
pub mod gate_floating;
pub mod gate_overvoltage;
pub mod gate_underdrive;
pub mod load_overvoltage;
pub mod model_missing;
pub mod name_duplicate;
pub mod net_dangling;
pub mod pin_unconnected;
pub mod pot_wiper_overcurrent;
pub mod pwm_audible;
pub mod pwm_frequency_unsuitable;
pub mod resistor_overpower;
pub mod shoot_through;
pub mod stage_unknown;
pub mod supply_out_of_range;
pub mod supply_shorted;
pub mod supply_unreferenced;
pub mod switch_dissipation;
pub mod switch_voltage_margin;
pub mod timer_control_unbypassed;
pub mod timer_reset_floating;
pub mod timer_stuck;
pub mod trigger_overlap;
pub mod value_suspicious;

/// Everything a rule may read.
pub struct RuleContext<'a> {
    pub netlist: &'a FlatNetlist,
    pub circuit: &'a Circuit,
    pub analysis: &'a Analysis,
    pub config: &'a Config,
}

/// A rule's identity, declared once beside its code (`pub const RULE: Rule` in its module):
/// its ID, the severity it gives by default, every severity it can give, a one-line summary,
/// its page and its check.
#[derive(Clone, Copy, Debug)]
pub struct Rule {
    pub id: &'static str,
    pub default_severity: Severity,
    /// Every severity the rule itself can give (graded rules give more than one). A rating
    /// finding that rests on an assumed value may also be lowered to a note afterwards.
    pub grades: &'static [Severity],
    pub summary: &'static str,
    /// The rule's page (`rules/<id>.md`), compiled in.
    pub page: &'static str,
    /// `None` for rules whose findings come from an earlier stage (e.g. `syntax` from the parser).
    pub check: Option<fn(&RuleContext<'_>, &mut Vec<Finding>)>,
}

impl Rule {
    /// The severity of a finding of an ungraded rule: the one its identity declares.
    pub const fn severity(&self) -> Severity {
        self.default_severity
    }

    /// The severity of a graded finding: `wanted` when the rule's identity lists it among the
    /// grades it gives, else the rule's default. A finding never carries a severity the rule
    /// does not declare, so `kickback rules` always tells the whole range.
    pub fn grade(&self, wanted: Severity) -> Severity {
        if wanted == self.default_severity || self.grades.contains(&wanted) {
            wanted
        } else {
            self.default_severity
        }
    }
}

impl From<Rule> for String {
    fn from(rule: Rule) -> String {
        rule.id.to_string()
    }
}

/// Every rule, once: one line per rule. Keep in one-to-one agreement with `rules/*.md` (a test
/// checks).
/// Rules whose findings say that kickback could not judge part of a deck (a sub-network it
/// could not solve, a stage or part it does not understand, a model or pinout it does not
/// have), as opposed to a fault found. The summary counts them, so a run with nothing judged
/// never reads as a clean pass.
pub static NOT_JUDGED: &[&str] = &[
    "solve-failed",
    "stage-unknown",
    "part-pins",
    "model-missing",
    "element-unknown",
    "dialect-foreign",
];

pub static REGISTRY: &[&Rule] = &[
    &flyback_missing::RULE,
    &flyback_reversed::RULE,
    &flyback_underrated::RULE,
    &shoot_through::RULE,
    &gate_underdrive::RULE,
    &gate_overvoltage::RULE,
    &gate_cannot_turn_off::RULE,
    &base_underdrive::RULE,
    &discharge_unprotected::RULE,
    &trigger_overlap::RULE,
    &duty_overrun::RULE,
    &timer_stuck::RULE,
    &load_overvoltage::RULE,
    &supply_out_of_range::RULE,
    &switch_voltage_margin::RULE,
    &driver_overload::RULE,
    &resistor_overpower::RULE,
    &pot_wiper_overcurrent::RULE,
    &switch_dissipation::RULE,
    &capacitor_overvoltage::RULE,
    &capacitor_reversed::RULE,
    &bulk_capacitance_missing::RULE,
    &front_end::SYNTAX,
    &front_end::ELEMENT_UNKNOWN,
    &front_end::PARAMETER_INVALID,
    &front_end::INCLUDE_CYCLE,
    &front_end::INCLUDE_REFUSED,
    &front_end::DIALECT_FOREIGN,
    &front_end::PART_PINS,
    &model_missing::RULE,
    &name_duplicate::RULE,
    &element_shorted::RULE,
    &net_dangling::RULE,
    &pin_unconnected::RULE,
    &supply_shorted::RULE,
    &supply_unreferenced::RULE,
    &gate_floating::RULE,
    &timer_reset_floating::RULE,
    &timer_control_unbypassed::RULE,
    &decoupling_missing::RULE,
    &pwm_audible::RULE,
    &front_end::SUPPRESSION_UNUSED,
    &front_end::SUPPRESSION_INVALID,
    &front_end::SOLVE_FAILED,
    &value_suspicious::RULE,
    &pwm_frequency_unsuitable::RULE,
    &stage_unknown::RULE,
];

pub fn find(id: &str) -> Option<&'static Rule> {
    REGISTRY
        .iter()
        .copied()
        .find(|r| r.id.eq_ignore_ascii_case(id))
}

/// Runs every enabled rule; findings inside behavioural part models are left out
/// ([`part_models`]), and so are findings that rest on a default of a part whose model is
/// missing ([`unknown_parts`]); findings that rest on an assumed rating are lowered to what
/// holds over the rating's plausible range ([`assumed`]).
pub fn run(cx: &RuleContext<'_>) -> Vec<Finding> {
    let mut out = Vec::new();
    for rule in REGISTRY {
        if let Some(check) = rule.check {
            check(cx, &mut out);
        }
    }
    let models = part_models::model_instances(cx.netlist);
    out.retain(|f| !part_models::inside_model(f, &models));
    let undefined = unknown_parts::undefined_spans(cx);
    out.retain(|f| !unknown_parts::rests_on_missing_model(f, &undefined));
    assumed::settle(&mut out);
    out
}

pub mod assumed;
pub mod edits;
pub mod eseries;
pub mod front_end;
pub mod part_models;
pub mod support;
pub mod suppress;
pub mod units;
pub mod unknown_parts;
