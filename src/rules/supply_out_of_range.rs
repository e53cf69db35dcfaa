//! `supply-out-of-range`: a part's supply is outside its operating or absolute range at some corner. See `rules/supply-out-of-range.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
