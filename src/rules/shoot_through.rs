//! `shoot-through`: both switches of a bridge leg can conduct at once. See `rules/shoot-through.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
