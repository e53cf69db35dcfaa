//! `decoupling-missing`: an ic has no capacitor across its supply pins. See `rules/decoupling-missing.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
