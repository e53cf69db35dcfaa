//! `discharge-unprotected`: a 555's discharge pin can sink more current than it survives. See `rules/discharge-unprotected.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
