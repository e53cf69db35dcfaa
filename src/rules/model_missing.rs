//! `model-missing`: an element names a model or subcircuit that is defined nowhere. See `rules/model-missing.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
