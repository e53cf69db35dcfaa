//! Findings: what every stage reports to the user. A finding carries its rule ID, severity,
//! primary span, labels on the other lines involved, a fix and the numbers behind it, each with
//! its provenance. Renderers in `report/` turn findings into text; nothing else prints them.

use crate::source::Span;
use serde::Serialize;

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    Note,
    Warning,
    Error,
}

impl Severity {
    pub fn as_str(self) -> &'static str {
        match self {
            Severity::Note => "note",
            Severity::Warning => "warning",
            Severity::Error => "error",
        }
    }

    pub fn parse(text: &str) -> Option<Severity> {
        match text.to_ascii_lowercase().as_str() {
            "note" => Some(Severity::Note),
            "warning" => Some(Severity::Warning),
            "error" => Some(Severity::Error),
            _ => None,
        }
    }
}

impl std::fmt::Display for Severity {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// A secondary location: another line involved in the finding (the source, the diode, the pot).
#[derive(Clone, Debug, PartialEq)]
pub struct Label {
    pub span: Span,
    pub message: String,
}

/// A named number behind a finding, in SI base units, with where it came from
/// (`from config`, `from .model DSW BV`, `built-in default for timer-555`, `computed`).
#[derive(Clone, Debug, PartialEq)]
pub struct Quantity {
    pub name: String,
    pub value: f64,
    pub unit: String,
    pub source: String,
}

impl Quantity {
    pub fn new(
        name: impl Into<String>,
        value: f64,
        unit: impl Into<String>,
        source: impl Into<String>,
    ) -> Self {
        Quantity {
            name: name.into(),
            value,
            unit: unit.into(),
            source: source.into(),
        }
    }
}

/// One instance line on the way down to a flattened element, outermost first.
#[derive(Clone, Debug, PartialEq)]
pub struct InstanceStep {
    pub name: String,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Finding {
    /// Stable kebab-case rule ID (`flyback-missing`, `syntax`...).
    pub rule: String,
    pub severity: Severity,
    pub message: String,
    /// The line that must change.
    pub span: Span,
    /// Local element name as written (`M1`), when the finding is about an element.
    pub element: Option<String>,
    /// Full flattened path (`XDRV.M1`), when the element sits inside subcircuit instances.
    pub instance_path: Option<String>,
    /// The instance lines that placed the element, outermost first.
    pub instances: Vec<InstanceStep>,
    pub labels: Vec<Label>,
    pub help: Option<String>,
    pub values: Vec<Quantity>,
}

impl Finding {
    pub fn new(
        rule: impl Into<String>,
        severity: Severity,
        span: Span,
        message: impl Into<String>,
    ) -> Self {
        Finding {
            rule: rule.into(),
            severity,
            message: message.into(),
            span,
            element: None,
            instance_path: None,
            instances: Vec::new(),
            labels: Vec::new(),
            help: None,
            values: Vec::new(),
        }
    }

    pub fn with_element(mut self, local: impl Into<String>, path: Option<String>) -> Self {
        self.element = Some(local.into());
        self.instance_path = path;
        self
    }

    pub fn with_label(mut self, span: Span, message: impl Into<String>) -> Self {
        self.labels.push(Label {
            span,
            message: message.into(),
        });
        self
    }

    pub fn with_help(mut self, help: impl Into<String>) -> Self {
        self.help = Some(help.into());
        self
    }

    pub fn with_value(
        mut self,
        name: impl Into<String>,
        value: f64,
        unit: impl Into<String>,
        source: impl Into<String>,
    ) -> Self {
        self.values.push(Quantity::new(name, value, unit, source));
        self
    }
}
