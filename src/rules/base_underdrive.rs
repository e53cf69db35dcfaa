//! `base-underdrive`: a bjt switch gets too little base current and runs in its active region. See `rules/base-underdrive.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
