//! `switch-voltage-margin`: a switch's voltage rating leaves too little margin over rail and clamp. See `rules/switch-voltage-margin.md`.

use super::RuleContext;
use crate::diagnostic::Finding;

pub fn check(cx: &RuleContext<'_>, out: &mut Vec<Finding>) {
    let _ = (cx, out);
}
