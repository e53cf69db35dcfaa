//! `trigger-overlap`: a one-shot's trigger stays low longer than its shortest pulse. See `rules/trigger-overlap.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
