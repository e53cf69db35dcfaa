//! `flyback-reversed`: a freewheel diode is fitted backwards and shorts the supply through the switch. See `rules/flyback-reversed.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
