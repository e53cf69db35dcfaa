//! `timer-stuck`: a timer phase can never reach its threshold. See `rules/timer-stuck.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
