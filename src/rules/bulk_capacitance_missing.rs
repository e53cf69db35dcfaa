//! `bulk-capacitance-missing`: a rail feeding switched inductive loads lacks bulk capacitance. See `rules/bulk-capacitance-missing.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
