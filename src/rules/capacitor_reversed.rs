//! `capacitor-reversed`: a polarized capacitor is reverse-biased in some state. See `rules/capacitor-reversed.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
