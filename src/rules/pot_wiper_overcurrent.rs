//! `pot-wiper-overcurrent`: a pot's wiper carries more current than it is rated for. See `rules/pot-wiper-overcurrent.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
