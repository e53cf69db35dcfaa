//! `flyback-missing`: an inductive load is switched with no freewheeling path. See `rules/flyback-missing.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
