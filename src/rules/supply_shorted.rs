//! `supply-shorted`: voltage sources in parallel or a source across a short. See `rules/supply-shorted.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
