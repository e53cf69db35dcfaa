//! `net-dangling`: a net with a single connection, usually a typo. See `rules/net-dangling.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
