//! `switch-dissipation`: a switch's conduction loss exceeds what its package can shed. See `rules/switch-dissipation.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
