//! `capacitor-overvoltage`: a capacitor sees more voltage than its rating allows. See `rules/capacitor-overvoltage.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
