//! `driver-overload`: an output pin would source or sink more than its rating. See `rules/driver-overload.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
