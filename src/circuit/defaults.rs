//! Each kind's defaults: what is assumed when nothing stronger says otherwise. One table,
//! [`DEFAULTS`], says every default, for which kind, when it applies and where it comes from;
//! [`apply_defaults`] fills a part's data from it and `kickback parts` prints it. Every value
//! says where it comes from in its provenance.

use super::{Kind, PartData};

/// Power rating of a resistor or pot that states none (common practice: a ¼ W part; for pots,
/// small trimmers and panel pots, conservative). Every default rating is read from here.
pub const RESISTOR_POWER_RATING_W: f64 = 0.25;

/// `vgs_th_max` at or below this marks a logic-level MOSFET (common practice).
pub const LOGIC_LEVEL_VGS_TH_MAX: f64 = 2.5;

/// What a default's number is.
#[derive(Clone, Copy)]
pub enum DefaultValue {
    /// One number, in the key's SI base unit.
    Fixed(f64),
    /// A threshold's lower limit: this number, or half the part's `vgs_th_max` when that is
    /// already known and lower (so the two stay in order).
    BelowKnownMax(f64),
    /// A threshold's upper limit: this number, or the part's `vgs_th_min` + 2 V when that is
    /// already known and higher.
    AboveKnownMin(f64),
    /// Worked out from the part's other data, when that is known; `formula` says how.
    Derived {
        formula: &'static str,
        compute: fn(&PartData) -> Option<f64>,
    },
}

/// Which parts of a kind a default applies to.
#[derive(Clone, Copy, PartialEq, Eq)]
pub enum Applies {
    Always,
    /// MOSFETs flagged `logic_level`, or whose `vgs_th_max` is at most
    /// [`LOGIC_LEVEL_VGS_TH_MAX`].
    LogicLevel,
    /// The other MOSFETs.
    Standard,
}

impl Applies {
    /// The words `kickback parts` uses for it.
    pub fn as_str(self) -> &'static str {
        match self {
            Applies::Always => "always",
            Applies::LogicLevel => "logic-level",
            Applies::Standard => "standard",
        }
    }
}

/// Where a default says it comes from.
#[derive(Clone, Copy)]
pub enum Origin {
    /// `built-in default for KIND` (`for logic-level KIND` when it applies to those only),
    /// followed by `(WHY)` when `why` is not empty.
    Kind { why: &'static str },
    /// These words alone.
    Own(&'static str),
}

/// One default: a key of a kind, its value, when it applies and where it comes from.
pub struct KindDefault {
    pub kinds: &'static [Kind],
    pub key: &'static str,
    pub value: DefaultValue,
    pub applies: Applies,
    pub origin: Origin,
}

impl KindDefault {
    /// The provenance a value set from this default carries, for a part of `kind`.
    pub fn provenance(&self, kind: Kind) -> String {
        match self.origin {
            Origin::Own(text) => text.to_string(),
            Origin::Kind { why } => {
                let class = if self.applies == Applies::LogicLevel {
                    "logic-level "
                } else {
                    ""
                };
                if why.is_empty() {
                    format!("built-in default for {class}{kind}")
                } else {
                    format!("built-in default for {class}{kind} ({why})")
                }
            }
        }
    }
}

const MOS: &[Kind] = &[Kind::Nmos, Kind::Pmos];
const BJT: &[Kind] = &[Kind::Npn, Kind::Pnp];
const JUNCTION: &[Kind] = &[Kind::Diode, Kind::Zener, Kind::Tvs];
const SCHOTTKY: &[Kind] = &[Kind::Schottky];
const BIPOLAR_555: &[Kind] = &[Kind::Timer555];
const CMOS_555: &[Kind] = &[Kind::Timer555Cmos];
const RESISTOR: &[Kind] = &[Kind::Resistor];
const POT: &[Kind] = &[Kind::Potentiometer];
const LOGIC: &[Kind] = &[Kind::LogicOutput];

const fn row(
    kinds: &'static [Kind],
    key: &'static str,
    value: DefaultValue,
    applies: Applies,
    origin: Origin,
) -> KindDefault {
    KindDefault {
        kinds,
        key,
        value,
        applies,
        origin,
    }
}

const fn fixed(
    kinds: &'static [Kind],
    key: &'static str,
    value: f64,
    why: &'static str,
) -> KindDefault {
    row(
        kinds,
        key,
        DefaultValue::Fixed(value),
        Applies::Always,
        Origin::Kind { why },
    )
}

const fn mos(
    key: &'static str,
    value: DefaultValue,
    applies: Applies,
    why: &'static str,
) -> KindDefault {
    row(MOS, key, value, applies, Origin::Kind { why })
}

/// Datasheet threshold limits from a model card's `VTO` when the user gave none: the model
/// simulates a typical part, and datasheets spread the threshold about 1 V either side of
/// typical (from memory: 2–4 V around a typical 3 V for standard power MOSFETs, 1–2 V for
/// logic-level ones).
const VTO_SPREAD: &str = "the model's VTO ± 1 V (a datasheet's usual threshold spread)";

fn model_vto(data: &PartData) -> Option<f64> {
    data.value("vto").map(f64::abs).filter(|v| *v > 0.0)
}

fn vto_plus_one(data: &PartData) -> Option<f64> {
    model_vto(data).map(|vto| vto + 1.0)
}

fn vto_minus_one(data: &PartData) -> Option<f64> {
    model_vto(data).map(|vto| (vto - 1.0).max(vto / 2.0))
}

fn wiper_from_power(data: &PartData) -> Option<f64> {
    let (power, resistance) = (data.value("power_rating")?, data.value("resistance")?);
    (resistance > 0.0 && power >= 0.0).then(|| (power / resistance).sqrt())
}

const TIMER_WHY: &str = "from memory";
const POT_WHY: &str = "common practice: small trimmers and panel pots, conservative";
const LOGIC_WHY: &str = "3.3 V logic, common practice";
const SCHOTTKY_WHY: &str = "about 0.35 V at 1 A, from memory";

/// Every kind's defaults, in the order they are applied: a default that reads another key
/// (a derived one, a threshold kept in order) comes after it.
pub const DEFAULTS: &[KindDefault] = &[
    // MOSFETs: thresholds from the model's VTO first, then by class.
    row(
        MOS,
        "vgs_th_max",
        DefaultValue::Derived {
            formula: "|VTO| + 1 V, from the model card",
            compute: vto_plus_one,
        },
        Applies::Always,
        Origin::Own(VTO_SPREAD),
    ),
    row(
        MOS,
        "vgs_th_min",
        DefaultValue::Derived {
            formula: "max(|VTO| − 1 V, |VTO|/2), from the model card",
            compute: vto_minus_one,
        },
        Applies::Always,
        Origin::Own(VTO_SPREAD),
    ),
    mos(
        "vgs_th_min",
        DefaultValue::BelowKnownMax(2.0),
        Applies::Standard,
        "",
    ),
    mos(
        "vgs_th_min",
        DefaultValue::BelowKnownMax(1.0),
        Applies::LogicLevel,
        "",
    ),
    mos(
        "vgs_th_max",
        DefaultValue::AboveKnownMin(4.0),
        Applies::Standard,
        "",
    ),
    mos(
        "vgs_th_max",
        DefaultValue::AboveKnownMin(2.0),
        Applies::LogicLevel,
        "",
    ),
    mos(
        "vgs_rated",
        DefaultValue::Fixed(10.0),
        Applies::Standard,
        "",
    ),
    mos(
        "vgs_rated",
        DefaultValue::Fixed(4.5),
        Applies::LogicLevel,
        "",
    ),
    mos("vgs_max", DefaultValue::Fixed(20.0), Applies::Standard, ""),
    mos(
        "vgs_max",
        DefaultValue::Fixed(12.0),
        Applies::LogicLevel,
        "",
    ),
    mos(
        "pd_max",
        DefaultValue::Fixed(1.0),
        Applies::Standard,
        "common practice: TO-220 in free air",
    ),
    mos(
        "pd_max",
        DefaultValue::Fixed(1.0),
        Applies::LogicLevel,
        "common practice: TO-220 in free air",
    ),
    // BJTs and diodes: the SPICE model parameters a simulator assumes.
    fixed(BJT, "bf", 100.0, "SPICE3 default BF, from memory"),
    fixed(BJT, "is", 1e-16, "SPICE3 default IS, from memory"),
    fixed(JUNCTION, "is", 1e-14, "SPICE3 default IS, from memory"),
    fixed(JUNCTION, "n", 1.0, "SPICE3 default N, from memory"),
    fixed(SCHOTTKY, "is", 1e-6, SCHOTTKY_WHY),
    fixed(SCHOTTKY, "n", 1.0, SCHOTTKY_WHY),
    // 555 timers, bipolar and CMOS.
    fixed(BIPOLAR_555, "supply_min", 4.5, TIMER_WHY),
    fixed(BIPOLAR_555, "supply_max", 16.0, TIMER_WHY),
    fixed(BIPOLAR_555, "supply_abs_max", 18.0, TIMER_WHY),
    fixed(BIPOLAR_555, "out_high_drop", 1.7, TIMER_WHY),
    fixed(BIPOLAR_555, "vol", 0.1, TIMER_WHY),
    fixed(BIPOLAR_555, "out_current_max", 0.2, TIMER_WHY),
    fixed(BIPOLAR_555, "discharge_current_rated", 0.015, TIMER_WHY),
    fixed(BIPOLAR_555, "discharge_current_max", 0.1, TIMER_WHY),
    fixed(BIPOLAR_555, "ladder_resistance", 5000.0, TIMER_WHY),
    fixed(BIPOLAR_555, "trigger_bias_current", 0.5e-6, TIMER_WHY),
    fixed(BIPOLAR_555, "threshold_bias_current", 0.25e-6, TIMER_WHY),
    fixed(CMOS_555, "supply_min", 2.0, TIMER_WHY),
    fixed(CMOS_555, "supply_max", 15.0, TIMER_WHY),
    fixed(CMOS_555, "supply_abs_max", 16.0, TIMER_WHY),
    fixed(CMOS_555, "out_high_drop", 0.3, TIMER_WHY),
    fixed(CMOS_555, "vol", 0.1, TIMER_WHY),
    fixed(CMOS_555, "out_current_max", 0.05, TIMER_WHY),
    fixed(CMOS_555, "discharge_current_rated", 0.01, TIMER_WHY),
    fixed(CMOS_555, "discharge_current_max", 0.05, TIMER_WHY),
    fixed(CMOS_555, "ladder_resistance", 100e3, TIMER_WHY),
    fixed(CMOS_555, "trigger_bias_current", 1e-11, TIMER_WHY),
    fixed(CMOS_555, "threshold_bias_current", 1e-11, TIMER_WHY),
    // Resistors and pots.
    fixed(
        RESISTOR,
        "power_rating",
        RESISTOR_POWER_RATING_W,
        "common practice",
    ),
    fixed(POT, "power_rating", RESISTOR_POWER_RATING_W, POT_WHY),
    row(
        POT,
        "wiper_current_max",
        DefaultValue::Derived {
            formula: "√(power_rating/resistance)",
            compute: wiper_from_power,
        },
        Applies::Always,
        Origin::Kind {
            why: "√(power_rating/R), common practice",
        },
    ),
    // Logic outputs (a controller's pin).
    fixed(LOGIC, "voh", 3.3, LOGIC_WHY),
    fixed(LOGIC, "vol", 0.0, LOGIC_WHY),
    fixed(
        LOGIC,
        "out_current_max",
        0.02,
        "a typical microcontroller pin's limit, from memory",
    ),
];

/// The defaults of one kind, in the order they are applied.
pub fn defaults_of(kind: Kind) -> impl Iterator<Item = &'static KindDefault> {
    DEFAULTS.iter().filter(move |d| d.kinds.contains(&kind))
}

/// True when a MOSFET's data marks it logic-level: flagged, or `vgs_th_max` at most
/// [`LOGIC_LEVEL_VGS_TH_MAX`].
fn is_logic_level(data: &PartData) -> bool {
    let flagged = data.value("logic_level").is_some_and(|v| v != 0.0);
    let low_threshold = data
        .value("vgs_th_max")
        .is_some_and(|v| v <= LOGIC_LEVEL_VGS_TH_MAX);
    flagged || low_threshold
}

/// Fills what is still unknown with the kind's defaults, from [`DEFAULTS`]. Thresholds and
/// limits are magnitudes, for P-channel parts too.
pub(crate) fn apply_defaults(data: &mut PartData, kind: Kind) {
    // A part's class (logic-level or standard) is settled once, at its first default that
    // depends on it, after the defaults that apply to every part of the kind before it.
    let mut logic: Option<bool> = None;
    for default in defaults_of(kind) {
        if default.applies != Applies::Always {
            let logic = *logic.get_or_insert_with(|| is_logic_level(data));
            if logic != (default.applies == Applies::LogicLevel) {
                continue;
            }
        }
        let value = match default.value {
            DefaultValue::Fixed(value) => Some(value),
            DefaultValue::BelowKnownMax(value) => Some(match data.value("vgs_th_max") {
                Some(given) if given < value => given / 2.0,
                _ => value,
            }),
            DefaultValue::AboveKnownMin(value) => Some(match data.value("vgs_th_min") {
                Some(given) if given > value => given + 2.0,
                _ => value,
            }),
            DefaultValue::Derived { compute, .. } => compute(data),
        };
        if let Some(value) = value {
            data.set_if_absent_with(default.key, value, || default.provenance(kind));
        }
    }
}
