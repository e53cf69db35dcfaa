//! Findings that only a missing model would settle are left out.
//!
//! A part whose model or subcircuit is defined nowhere (a typo, a library that could not be
//! read) is checked with its kind's built-in defaults. A rating finding on it that rests on one
//! of those defaults (a diode's reverse rating, a switch's threshold) says more about the
//! default than about the part; `model-missing` already says what is missing, once.

use super::RuleContext;
use crate::circuit::UnknownPart;
use crate::diagnostic::Finding;
use crate::source::Span;
use std::collections::HashSet;

/// Rules that speak about the deck's text and stay whatever the model says.
const DECK_RULES: &[&str] = &["model-missing", "name-duplicate", "part-pins"];

/// The element lines of parts whose model is defined nowhere.
pub fn undefined_spans(cx: &RuleContext<'_>) -> HashSet<Span> {
    cx.circuit
        .unknown_parts()
        .iter()
        .filter(|(_, why)| *why == UnknownPart::Undefined)
        .filter_map(|&(device, _)| cx.circuit.device(device))
        .filter_map(|d| cx.netlist.elements.get(d.element))
        .map(|e| e.span)
        .collect()
}

/// True when the finding sits on such a part and one of its numbers is a built-in default.
pub fn rests_on_missing_model(finding: &Finding, undefined: &HashSet<Span>) -> bool {
    !undefined.is_empty()
        && !DECK_RULES.contains(&finding.rule.as_str())
        && undefined.contains(&finding.span)
        && finding
            .values
            .iter()
            .any(|v| v.source.starts_with("built-in default"))
}
