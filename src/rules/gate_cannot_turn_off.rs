//! `gate-cannot-turn-off`: the off-state gate-source voltage is too close to the threshold. See `rules/gate-cannot-turn-off.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
