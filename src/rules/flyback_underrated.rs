//! `flyback-underrated`: a freewheel diode's voltage, current or recovery rating does not fit the load. See `rules/flyback-underrated.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
