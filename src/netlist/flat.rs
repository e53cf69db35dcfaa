//! The flattened netlist: what the front end hands to `circuit/`. This is the contract between
//! the two rooms; the parser's own statement types stay private to `netlist/`.

use crate::diagnostic::InstanceStep;
use crate::source::Span;

/// A number that is either known or depends on time, node voltages or other non-constant terms.
/// Elements with a `Varies` value are still connected; analyses skip what they cannot know.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Num {
    Known(f64),
    Varies,
}

impl Num {
    pub fn known(self) -> Option<f64> {
        match self {
            Num::Known(v) => Some(v),
            Num::Varies => None,
        }
    }
}

/// What an independent source (V or I) does over time.
#[derive(Clone, Debug, PartialEq)]
pub enum Waveform {
    /// Only a DC value (or nothing).
    Dc,
    Pulse {
        v1: f64,
        v2: f64,
        delay: f64,
        rise: f64,
        fall: f64,
        width: f64,
        period: f64,
    },
    Sin {
        offset: f64,
        amplitude: f64,
        frequency: f64,
    },
    /// Time/value pairs.
    Pwl(Vec<(f64, f64)>),
    /// A form we connect but do not interpret (EXP, SFFM, AM, behavioural...).
    Other(String),
}

/// Independent source specification: DC value and waveform.
#[derive(Clone, Debug, PartialEq)]
pub struct SourceSpec {
    /// The DC value (`DC v` or a bare value); for waveforms without one, SPICE's time-zero value.
    pub dc: Option<f64>,
    pub wave: Waveform,
}

impl SourceSpec {
    /// Low and high levels of a switching source (PULSE), or the min/max of PWL/SIN.
    pub fn levels(&self) -> Option<(f64, f64)> {
        match &self.wave {
            Waveform::Pulse { v1, v2, .. } => Some((v1.min(*v2), v1.max(*v2))),
            Waveform::Sin {
                offset, amplitude, ..
            } => Some((offset - amplitude.abs(), offset + amplitude.abs())),
            Waveform::Pwl(points) if !points.is_empty() => {
                let lo = points.iter().map(|p| p.1).fold(f64::INFINITY, f64::min);
                let hi = points.iter().map(|p| p.1).fold(f64::NEG_INFINITY, f64::max);
                Some((lo, hi))
            }
            _ => None,
        }
    }

    /// Frequency of a periodic PULSE or SIN source, in Hz.
    pub fn frequency(&self) -> Option<f64> {
        match &self.wave {
            Waveform::Pulse { period, .. } if *period > 0.0 => Some(1.0 / period),
            Waveform::Sin { frequency, .. } if *frequency > 0.0 => Some(*frequency),
            _ => None,
        }
    }

    /// Fraction of a PULSE period spent at the `v2` level (edges counted half), 0..=1.
    pub fn duty(&self) -> Option<f64> {
        match &self.wave {
            Waveform::Pulse {
                rise,
                fall,
                width,
                period,
                ..
            } if *period > 0.0 => Some(((width + 0.5 * (rise + fall)) / period).clamp(0.0, 1.0)),
            _ => None,
        }
    }

    /// Fraction of a PULSE period spent at the higher of its two levels: [`Self::duty`] for
    /// `PULSE(0 5 …)`, its complement for `PULSE(5 0 …)`, whose width is spent low.
    pub fn duty_high(&self) -> Option<f64> {
        let duty = self.duty()?;
        match &self.wave {
            Waveform::Pulse { v1, v2, .. } if v2 < v1 => Some(1.0 - duty),
            _ => Some(duty),
        }
    }

    /// True for a PULSE whose `v2` (the level its width describes) is the lower one.
    pub fn pulses_low(&self) -> bool {
        matches!(&self.wave, Waveform::Pulse { v1, v2, .. } if v2 < v1)
    }
}

/// A `.model` card, with its parameters evaluated. Keys are lower-case.
#[derive(Clone, Debug, PartialEq)]
pub struct Model {
    /// Name as written.
    pub name: String,
    /// Model type upper-cased: `D`, `NPN`, `PNP`, `NMOS`, `PMOS`, `NJF`, `PJF`, `SW`, `CSW`, `R`,
    /// `C`, `L`, or whatever else the deck says.
    pub kind: String,
    pub params: Vec<(String, Num)>,
    pub span: Span,
}

impl Model {
    pub fn param(&self, key: &str) -> Option<Num> {
        self.params
            .iter()
            .find(|(k, _)| k.eq_ignore_ascii_case(key))
            .map(|(_, v)| *v)
    }
}

/// A subcircuit instance kept whole because part knowledge says it is one device
/// (a 555 model, a motor, a pot). Its insides are a simulation model and are not expanded.
#[derive(Clone, Debug, PartialEq)]
pub struct KeptSubckt {
    /// Subcircuit name as written on its `.subckt` line (or on the `X` line when the deck has no
    /// definition and the part is known from config or the built-in library).
    pub name: String,
    /// Port names in order, from the `.subckt` line; empty when there is no definition.
    pub ports: Vec<String>,
    /// Span of the `.subckt` line, when there is one.
    pub definition: Option<Span>,
}

/// One element of the flattened circuit.
#[derive(Clone, Debug, PartialEq)]
pub struct FlatElement {
    /// Full flattened name, original case: `XDRV.M1` (top-level elements: just `M1`).
    pub path: String,
    /// Name as written on its own line: `M1`.
    pub name: String,
    /// Element letter, upper-case (`R`, `M`, `X`, `A`...).
    pub letter: char,
    /// Flattened net names in port order, original case. Nets inside an instance are prefixed
    /// with the instance path (`XDRV.n1`); ground and `.global` nets keep their name.
    pub nodes: Vec<String>,
    /// Model or subcircuit name as written, when the element names one.
    pub model: Option<String>,
    /// Index into [`FlatNetlist::models`] when `model` resolved to a `.model` card in scope.
    pub model_index: Option<usize>,
    /// The primary value (R, C, L value; V/I DC value; E/F/G/H gain), when there is one.
    pub value: Option<Num>,
    /// The primary value's text as written (`1M`, `{rt}`, `10uF`), for messages about unit slips.
    pub value_text: Option<String>,
    /// Where the primary value is written on the element's line, for a fix that sets it.
    pub value_span: Option<Span>,
    /// Instance parameters (`m=2`, `rser=0.1`, `rated_voltage=6`...), lower-case keys,
    /// evaluated. For kept subcircuits: the instance's parameters over the definition's defaults.
    pub params: Vec<(String, Num)>,
    /// For V and I elements.
    pub source: Option<SourceSpec>,
    /// For F, H (controlling source) and K (coupled inductors): the element names they refer to,
    /// flattened into the same scope.
    pub refs: Vec<String>,
    /// For kept subcircuit instances.
    pub subckt: Option<KeptSubckt>,
    /// The element's own statement, continuation lines included.
    pub span: Span,
    /// The instance lines that placed it, outermost first (empty at top level).
    pub instances: Vec<InstanceStep>,
}

impl FlatElement {
    pub fn param(&self, key: &str) -> Option<Num> {
        self.params
            .iter()
            .find(|(k, _)| k.eq_ignore_ascii_case(key))
            .map(|(_, v)| *v)
    }

    /// The `m=` multiplier: how many of this element stand in parallel (1 when not given or
    /// not a known positive number). R, C and L values are already scaled by it (R/m, C·m,
    /// L/m); for D, Q, M and J it multiplies the device's area and current.
    pub fn multiplier(&self) -> f64 {
        match self.param("m") {
            Some(Num::Known(m)) if m.is_finite() && m > 0.0 => m,
            _ => 1.0,
        }
    }

    /// `Some(path)` when the element sits inside an instance, for findings.
    pub fn instance_path(&self) -> Option<String> {
        if self.instances.is_empty() {
            None
        } else {
            Some(self.path.clone())
        }
    }
}

/// A `* kickback waive rule-a, rule-b because reason` comment.
#[derive(Clone, Debug, PartialEq)]
pub struct Suppression {
    /// Rule IDs as written, lower-cased.
    pub rules: Vec<String>,
    /// The text after `because`, when given (required by the rules; absent is itself a finding).
    pub reason: Option<String>,
    /// Written in the earlier form, `kickback: allow rule-a -- reason`: still honoured for one
    /// release, with a note that gives the current form.
    pub earlier_form: bool,
    /// The comment's own span.
    pub span: Span,
    /// 1-based line of the statement it applies to: its own line when it trails an element,
    /// the next statement's first line when it stands on a line of its own.
    pub target_line: usize,
    pub file: crate::source::FileId,
}

/// An include that could not be read; models and subcircuits left undefined because of it are
/// reported once, with this file, rather than one by one.
#[derive(Clone, Debug, PartialEq)]
pub struct MissingInclude {
    pub path: String,
    pub span: Span,
}

#[derive(Clone, Debug, Default, PartialEq)]
pub struct FlatNetlist {
    pub title: String,
    pub elements: Vec<FlatElement>,
    /// Every `.model` card, top level and subcircuit-local.
    pub models: Vec<Model>,
    /// `.global` net names.
    pub globals: Vec<String>,
    pub suppressions: Vec<Suppression>,
    pub missing_includes: Vec<MissingInclude>,
    /// Names of subcircuits the deck defines (for model-missing).
    pub subckt_names: Vec<String>,
    /// Each subcircuit definition's name and the span of its `.subckt` line, in deck order.
    pub subckt_definitions: Vec<(String, Span)>,
    /// The file holds only definitions (`.subckt`, `.model`, `.param`, `.lib` sections): a
    /// library checked on its own. It has no title, no top-level circuit, and its subcircuits
    /// were checked as definitions (their lines for syntax) rather than flattened; rules about
    /// a whole circuit (dangling nets, missing supplies) have nothing to judge in it.
    pub is_library: bool,
    /// Nets that element expressions read (`B1 out 0 V=V(ctl)*2`, `R=V(r2)`), and the words
    /// of lines skipped as unknown elements, flattened and sorted (case-blind): a net whose
    /// only wire is a source, or whose other wires kickback skipped, may still be in use.
    pub sensed_nets: Vec<String>,
}

impl FlatNetlist {
    /// True when an expression reads the net or a skipped line may wire it (see
    /// [`FlatNetlist::sensed_nets`]).
    pub fn is_sensed(&self, net: &str) -> bool {
        let key = net.to_ascii_lowercase();
        self.sensed_nets
            .binary_search_by(|n| n.to_ascii_lowercase().cmp(&key))
            .is_ok()
    }
}
