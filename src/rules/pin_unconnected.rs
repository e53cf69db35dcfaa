//! `pin-unconnected`: a part pin sits on a net of its own. See `rules/pin-unconnected.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
