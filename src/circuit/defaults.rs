//! Each kind's defaults: what is assumed when nothing stronger says otherwise. Every value says
//! where it comes from in its provenance.

use super::{Kind, PartData};

/// Power rating of a resistor or pot that states none (common practice: a ¼ W part; for pots,
/// small trimmers and panel pots, conservative). Every default rating is read from here.
pub const RESISTOR_POWER_RATING_W: f64 = 0.25;

/// `vgs_th_max` at or below this marks a logic-level MOSFET (common practice).
pub const LOGIC_LEVEL_VGS_TH_MAX: f64 = 2.5;

const BIPOLAR_555: [(&str, f64); 11] = [
    ("supply_min", 4.5),
    ("supply_max", 16.0),
    ("supply_abs_max", 18.0),
    ("out_high_drop", 1.7),
    ("vol", 0.1),
    ("out_current_max", 0.2),
    ("discharge_current_rated", 0.015),
    ("discharge_current_max", 0.1),
    ("ladder_resistance", 5000.0),
    ("trigger_bias_current", 0.5e-6),
    ("threshold_bias_current", 0.25e-6),
];

const CMOS_555: [(&str, f64); 11] = [
    ("supply_min", 2.0),
    ("supply_max", 15.0),
    ("supply_abs_max", 16.0),
    ("out_high_drop", 0.3),
    ("vol", 0.1),
    ("out_current_max", 0.05),
    ("discharge_current_rated", 0.01),
    ("discharge_current_max", 0.05),
    ("ladder_resistance", 100e3),
    ("trigger_bias_current", 1e-11),
    ("threshold_bias_current", 1e-11),
];

/// Sets a default with the provenance `built-in default for KIND (WHY)`, built only when used.
fn default(data: &mut PartData, kind: Kind, name: &str, value: f64, why: &str) {
    data.set_if_absent_with(name, value, || {
        if why.is_empty() {
            format!("built-in default for {kind}")
        } else {
            format!("built-in default for {kind} ({why})")
        }
    });
}

/// Fills what is still unknown with the kind's defaults.
pub(crate) fn apply_defaults(data: &mut PartData, kind: Kind) {
    match kind {
        Kind::Nmos | Kind::Pmos => mos_defaults(data, kind),
        Kind::Npn | Kind::Pnp => {
            default(data, kind, "bf", 100.0, "SPICE3 default BF, from memory");
            default(data, kind, "is", 1e-16, "SPICE3 default IS, from memory");
        }
        Kind::Diode | Kind::Zener | Kind::Tvs => {
            default(data, kind, "is", 1e-14, "SPICE3 default IS, from memory");
            default(data, kind, "n", 1.0, "SPICE3 default N, from memory");
        }
        Kind::Schottky => {
            let why = "about 0.35 V at 1 A, from memory";
            default(data, kind, "is", 1e-6, why);
            default(data, kind, "n", 1.0, why);
        }
        Kind::Timer555 | Kind::Timer555Cmos => {
            let table = if kind == Kind::Timer555 {
                &BIPOLAR_555
            } else {
                &CMOS_555
            };
            for (name, value) in table {
                default(data, kind, name, *value, "from memory");
            }
        }
        Kind::Resistor => default(
            data,
            kind,
            "power_rating",
            RESISTOR_POWER_RATING_W,
            "common practice",
        ),
        Kind::Potentiometer => {
            let why = "common practice: small trimmers and panel pots, conservative";
            default(data, kind, "power_rating", RESISTOR_POWER_RATING_W, why);
            if let (Some(power), Some(resistance)) =
                (data.value("power_rating"), data.value("resistance"))
            {
                if resistance > 0.0 && power >= 0.0 {
                    let why = "√(power_rating/R), common practice";
                    default(
                        data,
                        kind,
                        "wiper_current_max",
                        (power / resistance).sqrt(),
                        why,
                    );
                }
            }
        }
        Kind::LogicOutput => {
            let why = "3.3 V logic, common practice";
            default(data, kind, "voh", 3.3, why);
            default(data, kind, "vol", 0.0, why);
            let why = "a typical microcontroller pin's limit, from memory";
            default(data, kind, "out_current_max", 0.02, why);
        }
        _ => {}
    }
}

/// Datasheet threshold limits from a model card's `VTO` when the user gave none: the model
/// simulates a typical part, and datasheets spread the threshold about 1 V either side of
/// typical (from memory: 2–4 V around a typical 3 V for standard power MOSFETs, 1–2 V for
/// logic-level ones).
fn model_thresholds(data: &mut PartData) {
    let Some(vto) = data.value("vto").map(f64::abs).filter(|v| *v > 0.0) else {
        return;
    };
    let why = "the model's VTO ± 1 V (a datasheet's usual threshold spread)";
    if data.value("vgs_th_max").is_none() {
        data.set_if_absent("vgs_th_max", vto + 1.0, why);
    }
    if data.value("vgs_th_min").is_none() {
        data.set_if_absent("vgs_th_min", (vto - 1.0).max(vto / 2.0), why);
    }
}

/// MOSFET defaults; a logic-level part (flagged, or `vgs_th_max` ≤ 2.5 V) gets logic-level ones.
/// Thresholds and limits are magnitudes, for P-channel parts too.
fn mos_defaults(data: &mut PartData, kind: Kind) {
    model_thresholds(data);
    let flagged = data.value("logic_level").is_some_and(|v| v != 0.0);
    let low_threshold = data
        .value("vgs_th_max")
        .is_some_and(|v| v <= LOGIC_LEVEL_VGS_TH_MAX);
    let logic = flagged || low_threshold;
    let base = if logic {
        format!("built-in default for logic-level {kind}")
    } else {
        format!("built-in default for {kind}")
    };
    let (th_min, th_max, rated, max) = if logic {
        (1.0, 2.0, 4.5, 12.0)
    } else {
        (2.0, 4.0, 10.0, 20.0)
    };
    // Keep the defaults consistent with a threshold the user gave on one side only.
    let th_min = match data.value("vgs_th_max") {
        Some(given) if given < th_min => given / 2.0,
        _ => th_min,
    };
    let th_max = match data.value("vgs_th_min") {
        Some(given) if given > th_max => given + 2.0,
        _ => th_max,
    };
    data.set_if_absent("vgs_th_min", th_min, base.as_str());
    data.set_if_absent("vgs_th_max", th_max, base.as_str());
    data.set_if_absent("vgs_rated", rated, base.as_str());
    data.set_if_absent("vgs_max", max, base.as_str());
    data.set_if_absent_with("pd_max", 1.0, || {
        format!("{base} (common practice: TO-220 in free air)")
    });
}
