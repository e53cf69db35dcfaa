//! `timer-control-unbypassed`: a timer's control pin has no capacitor to ground. See `rules/timer-control-unbypassed.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
