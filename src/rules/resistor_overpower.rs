//! `resistor-overpower`: a resistor dissipates more than its power rating in some state. See `rules/resistor-overpower.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
