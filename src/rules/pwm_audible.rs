//! `pwm-audible`: the switching frequency lies in the audible band. See `rules/pwm-audible.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
