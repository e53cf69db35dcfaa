//! `timer-reset-floating`: a timer's reset pin is left floating. See `rules/timer-reset-floating.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
