//! `supply-unreferenced`: a section with no dc path to the reference, or a switch and driver on different references. See `rules/supply-unreferenced.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
