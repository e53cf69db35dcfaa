//! Fixes as edits: the few fixes a rule can state as a change to the netlist's text (a value
//! set to a named E-series number, a line added). They only write what the rule decided; they
//! compute no physics and never guess what the rule did not say.

use super::RuleContext;
use crate::diagnostic::{Edit, Fix};
use crate::netlist::FlatElement;
use crate::source::Span;

/// A number as a SPICE value: three figures at most, with a scale suffix (`47`, `4.7k`,
/// `1Meg`, `2.2n`). `None` for a number that cannot be written so.
pub fn spice_number(value: f64) -> Option<String> {
    if !value.is_finite() || value <= 0.0 {
        return None;
    }
    const SCALES: [(f64, &str); 9] = [
        (1e12, "T"),
        (1e9, "G"),
        (1e6, "Meg"),
        (1e3, "k"),
        (1.0, ""),
        (1e-3, "m"),
        (1e-6, "u"),
        (1e-9, "n"),
        (1e-12, "p"),
    ];
    let (scale, suffix) = SCALES
        .iter()
        .find(|(s, _)| value >= *s * (1.0 - 1e-9))
        .copied()
        .unwrap_or((1e-12, "p"));
    let mantissa = value / scale;
    let digits = if mantissa >= 100.0 {
        0
    } else if mantissa >= 10.0 {
        1
    } else {
        2
    };
    let text = format!("{mantissa:.digits$}");
    let text = if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    };
    Some(format!("{text}{suffix}"))
}

/// Sets an element's primary value to `value`, when its line states it as a plain number at
/// top level (a parameter or an expression is the user's to change; a line inside a
/// subcircuit definition is shared by every instance).
pub fn set_value(element: &FlatElement, value: f64, title: String) -> Option<Fix> {
    if !element.instances.is_empty() {
        return None;
    }
    let span = element.value_span?;
    let written = element.value_text.as_deref()?;
    if !written.starts_with(|c: char| c.is_ascii_digit() || c == '.') {
        return None;
    }
    Some(Fix {
        title,
        edits: vec![Edit {
            span,
            text: spice_number(value)?,
        }],
    })
}

/// Adds `line` (an element line, without its line break) just before a top-level element's
/// statement, so that it reads beside the line it belongs to.
pub fn add_line_before(element: &FlatElement, line: String, title: String) -> Option<Fix> {
    if !element.instances.is_empty() {
        return None;
    }
    let at = Span {
        file: element.span.file,
        start: element.span.start,
        end: element.span.start,
    };
    Some(Fix {
        title,
        edits: vec![Edit {
            span: at,
            text: format!("{line}\n"),
        }],
    })
}

/// An element name built from `stem` that no element of the deck uses yet (case-blind):
/// `stem`, then `stem_2`, `stem_3`...
pub fn unused_name(cx: &RuleContext<'_>, stem: &str) -> String {
    let taken = |name: &str| {
        cx.netlist
            .elements
            .iter()
            .any(|e| e.path.eq_ignore_ascii_case(name))
    };
    if !taken(stem) {
        return stem.to_string();
    }
    (2..)
        .map(|n| format!("{stem}_{n}"))
        .find(|name| !taken(name))
        .unwrap_or_else(|| stem.to_string())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_written_as_a_deck_writes_them() {
        assert_eq!(spice_number(47.0).as_deref(), Some("47"));
        assert_eq!(spice_number(4700.0).as_deref(), Some("4.7k"));
        assert_eq!(spice_number(1e6).as_deref(), Some("1Meg"));
        assert_eq!(spice_number(2.2e-9).as_deref(), Some("2.2n"));
        assert_eq!(spice_number(120.0).as_deref(), Some("120"));
        assert_eq!(spice_number(0.0), None);
    }
}
