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

/// Where a number came from, strongest first: what a finding may rest on. Only `Assumed`
/// numbers (a kind's or the tool's default) are guesses; the others were stated somewhere or
/// computed from what was.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Provenance {
    /// `[elements]`, `[parts]` or `[supply]` in `kickback.toml`.
    Config,
    /// The element's own line: its value or an instance parameter.
    Instance,
    /// A `.model` card (or a spread derived from one, such as thresholds around `VTO`).
    Model,
    /// The built-in library of registered part numbers.
    Library,
    /// A default of the part's kind or of the tool: not known for this part.
    Assumed,
    /// Worked out by the analyses from the netlist and the numbers above.
    Computed,
}

impl Provenance {
    /// The provenance a display text such as `from .model DSW BV` or `built-in default for
    /// npn (...)` stands for. Every producer of part data writes one of these openings
    /// (`circuit::data`, `circuit::defaults`, `circuit::library`, the rules' fallbacks).
    pub fn of_source(text: &str) -> Provenance {
        let t = text.trim_start();
        if t.starts_with("from config") {
            Provenance::Config
        } else if t.starts_with("from instance parameter") || t.starts_with("from element value") {
            Provenance::Instance
        } else if t.starts_with("from .model") || t.starts_with("the model's") {
            Provenance::Model
        } else if t.starts_with("built-in default")
            || t.starts_with("default ")
            || t.contains("(DESIGN default)")
            || t.starts_with("√(power_rating/R)")
        {
            Provenance::Assumed
        } else if t.starts_with("built-in ") {
            Provenance::Library
        } else {
            Provenance::Computed
        }
    }

    pub fn as_str(self) -> &'static str {
        match self {
            Provenance::Config => "config",
            Provenance::Instance => "instance",
            Provenance::Model => "model",
            Provenance::Library => "library",
            Provenance::Assumed => "assumed",
            Provenance::Computed => "computed",
        }
    }
}

/// A named number behind a finding, in SI base units, with where it came from: the display
/// text (`from config`, `from .model DSW BV`, `built-in default for timer-555`, `computed`)
/// and its [`Provenance`] tag.
#[derive(Clone, Debug, PartialEq)]
pub struct Quantity {
    pub name: String,
    pub value: f64,
    pub unit: String,
    pub source: String,
    pub provenance: Provenance,
    /// The finding's verdict turns on this number (a rating it is compared with): when it is
    /// only assumed, the finding is a note unless it holds over the number's plausible range
    /// (see [`Finding::holds_at`]).
    pub decides: bool,
}

impl Quantity {
    pub fn new(
        name: impl Into<String>,
        value: f64,
        unit: impl Into<String>,
        source: impl Into<String>,
    ) -> Self {
        let source = source.into();
        Quantity {
            name: name.into(),
            value,
            unit: unit.into(),
            provenance: Provenance::of_source(&source),
            source,
            decides: false,
        }
    }
}

/// One instance line on the way down to a flattened element, outermost first.
#[derive(Clone, Debug, PartialEq)]
pub struct InstanceStep {
    pub name: String,
    pub span: Span,
}

/// One text edit of a fix: the text in `span` (empty: a place to insert at) becomes `text`.
#[derive(Clone, Debug, PartialEq)]
pub struct Edit {
    pub span: Span,
    pub text: String,
}

/// A fix the rule computed, as edits to the netlist: applying them and checking again no
/// longer gives the finding. `title` says what it does (`set RBV to 47 Ω`).
#[derive(Clone, Debug, PartialEq)]
pub struct Fix {
    pub title: String,
    pub edits: Vec<Edit>,
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
    /// The severest level the verdict keeps over the whole plausible range of its assumed
    /// numbers (`None`: it keeps none, and becomes a note).
    pub holds_at: Option<Severity>,
    /// The fixes that can be applied as they stand (an editor offers them); most fixes are
    /// only words in `help`.
    pub fixes: Vec<Fix>,
}

impl Finding {
    /// The other lines the finding involves, in the order every format shows them: its labels,
    /// then the instance lines that placed its element.
    pub fn involved_lines(&self) -> Vec<(Span, String)> {
        let labels = self
            .labels
            .iter()
            .map(|label| (label.span, label.message.clone()));
        let instances = self
            .instances
            .iter()
            .map(|step| (step.span, format!("instance {}", step.name)));
        labels.chain(instances).collect()
    }

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
            holds_at: None,
            fixes: Vec::new(),
        }
    }

    /// Adds a fix that can be applied as edits (see [`Fix`]).
    pub fn with_fix(mut self, fix: Option<Fix>) -> Self {
        self.fixes.extend(fix);
        self
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

    /// As [`Finding::with_value`], for the number the verdict turns on (see
    /// [`Quantity::decides`]).
    pub fn with_deciding_value(
        self,
        name: impl Into<String>,
        value: f64,
        unit: impl Into<String>,
        source: impl Into<String>,
    ) -> Self {
        let mut f = self.with_value(name, value, unit, source);
        if let Some(q) = f.values.last_mut() {
            q.decides = true;
        }
        f
    }

    /// Marks that the verdict holds, at its own severity, over the plausible range of its
    /// assumed numbers.
    pub fn holding_over_range(self, holds: bool) -> Self {
        let severity = self.severity;
        self.holding_at(holds.then_some(severity))
    }

    /// Marks the severest level the verdict keeps over the plausible range of its assumed
    /// numbers (an error that would still be a warning with the largest plausible rating).
    pub fn holding_at(mut self, level: Option<Severity>) -> Self {
        self.holds_at = level.map(|l| l.min(self.severity));
        self
    }

    /// The assumed number the verdict turns on, unless the verdict holds regardless.
    pub fn resting_on_assumption(&self) -> Option<&Quantity> {
        if self.holds_at == Some(self.severity) {
            return None;
        }
        self.values
            .iter()
            .find(|q| q.decides && q.provenance == Provenance::Assumed)
    }
}
