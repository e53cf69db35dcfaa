//! `gate-overvoltage`: the on-state gate-source voltage exceeds the switch's rating. See `rules/gate-overvoltage.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
