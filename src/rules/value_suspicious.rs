//! `value-suspicious`: a value that is almost surely a unit slip. See `rules/value-suspicious.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
