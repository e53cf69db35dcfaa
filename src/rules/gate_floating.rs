//! `gate-floating`: a gate or base whose driver can float has no pull resistor. See `rules/gate-floating.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
