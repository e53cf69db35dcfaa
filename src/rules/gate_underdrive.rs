//! `gate-underdrive`: the gate is driven too weakly to enhance the switch at the load current. See `rules/gate-underdrive.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
