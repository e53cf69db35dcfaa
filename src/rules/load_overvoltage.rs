//! `load-overvoltage`: a load's effective or peak voltage exceeds its rating. See `rules/load-overvoltage.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
