//! The rating names part data may carry, as config keys and instance or subcircuit
//! parameters.

use super::Kind;

/// Declares the numeric ratings once, each with its SI unit: the list of names and the unit
/// lookup below are both made from it, so a rating can never have a name without a unit.
macro_rules! numeric_ratings {
    ($($name:literal => $unit:literal,)*) => {
        /// Rating names with numeric values (SI base units), accepted as config keys and as
        /// instance or subcircuit parameters. Thresholds and limits are magnitudes (also for
        /// P-channel parts).
        pub const RATING_NAMES: &[&str] = &[$($name),*];

        /// The SI unit of each numeric rating (`""` for a plain ratio), for reading a unit
        /// written after a config value (`"45 mH"`) and refusing one that measures something
        /// else (`"6 A"` for a voltage).
        pub fn rating_unit(name: &str) -> Option<&'static str> {
            match name.to_ascii_lowercase().as_str() {
                $($name => Some($unit),)*
                _ => None,
            }
        }
    };
}

numeric_ratings! {
    // loads
    "rated_voltage" => "V",
    "rated_current" => "A",
    "stall_current" => "A",
    "inductance" => "H",
    "resistance" => "Ω",
    // MOSFETs
    "vgs_th_min" => "V",
    "vgs_th_max" => "V",
    "vgs_rated" => "V",
    "vgs_max" => "V",
    "vds_max" => "V",
    "id_max" => "A",
    "rds_on" => "Ω",
    "pd_max" => "W",
    "qg" => "C",
    // BJTs
    "vce_max" => "V",
    "ic_max" => "A",
    "hfe_min" => "",
    // diodes and TVS
    "vrrm" => "V",
    "if_avg" => "A",
    "ifrm" => "A",
    "ifsm" => "A",
    "vf" => "V",
    "vz" => "V",
    "trr" => "s",
    "vclamp" => "V",
    // timers and logic outputs
    "supply_min" => "V",
    "supply_max" => "V",
    "supply_abs_max" => "V",
    "out_high_drop" => "V",
    "out_current_max" => "A",
    "discharge_current_rated" => "A",
    "discharge_current_max" => "A",
    "ladder_resistance" => "Ω",
    "trigger_bias_current" => "A",
    "threshold_bias_current" => "A",
    "voh" => "V",
    "vol" => "V",
    // resistors, pots, capacitors
    "power_rating" => "W",
    "wiper_current_max" => "A",
    "voltage_rating" => "V",
    "capacitance" => "F",
}

/// Rating names with yes/no values, stored as 1.0 / 0.0.
pub const FLAG_RATINGS: &[&str] = &["polarized", "logic_level"];

/// True when `name` (any case) is a rating name, numeric or flag.
pub fn is_rating_name(name: &str) -> bool {
    let lower = name.to_ascii_lowercase();
    RATING_NAMES.contains(&lower.as_str()) || FLAG_RATINGS.contains(&lower.as_str())
}

/// The SI unit of a SPICE model parameter a kind's defaults fill (`bf`, `is`, `n`; `""` for a
/// plain ratio). They come from a `.model` card, not from `kickback.toml`.
pub fn model_parameter_unit(name: &str) -> Option<&'static str> {
    match name.to_ascii_lowercase().as_str() {
        "is" => Some("A"),
        "bf" | "n" => Some(""),
        "vto" => Some("V"),
        _ => None,
    }
}

const LOAD_KEYS: &[&str] = &[
    "rated_voltage",
    "rated_current",
    "stall_current",
    "inductance",
    "resistance",
];
const MOS_KEYS: &[&str] = &[
    "vgs_th_min",
    "vgs_th_max",
    "vgs_rated",
    "vgs_max",
    "vds_max",
    "id_max",
    "rds_on",
    "pd_max",
    "qg",
    "logic_level",
];
const BJT_KEYS: &[&str] = &["vce_max", "ic_max", "hfe_min", "pd_max"];
const DIODE_KEYS: &[&str] = &["vrrm", "if_avg", "ifrm", "ifsm", "vf", "trr"];
const ZENER_KEYS: &[&str] = &["vrrm", "if_avg", "ifrm", "ifsm", "vf", "vz", "trr"];
const TVS_KEYS: &[&str] = &["vrrm", "if_avg", "ifrm", "ifsm", "vf", "vz", "vclamp"];
const TIMER_KEYS: &[&str] = &[
    "supply_min",
    "supply_max",
    "supply_abs_max",
    "out_high_drop",
    "vol",
    "out_current_max",
    "discharge_current_rated",
    "discharge_current_max",
    "ladder_resistance",
    "trigger_bias_current",
    "threshold_bias_current",
];
const LOGIC_KEYS: &[&str] = &["voh", "vol", "out_current_max"];
const RESISTOR_KEYS: &[&str] = &["resistance", "power_rating"];
const POT_KEYS: &[&str] = &["resistance", "power_rating", "wiper_current_max"];
const CAPACITOR_KEYS: &[&str] = &["capacitance", "voltage_rating", "polarized"];

/// The rating names (numeric and flags) that describe a part of `kind`, in the order a
/// reference lists them; empty for kinds that only come from the netlist's letters. Every
/// rating name belongs to at least one configurable kind.
pub fn keys_of_kind(kind: Kind) -> &'static [&'static str] {
    match kind {
        Kind::DcMotor | Kind::RelayCoil | Kind::Solenoid | Kind::Inductor => LOAD_KEYS,
        Kind::Nmos | Kind::Pmos => MOS_KEYS,
        Kind::Npn | Kind::Pnp => BJT_KEYS,
        Kind::Diode | Kind::Schottky => DIODE_KEYS,
        Kind::Zener => ZENER_KEYS,
        Kind::Tvs => TVS_KEYS,
        Kind::Timer555 | Kind::Timer555Cmos => TIMER_KEYS,
        Kind::LogicOutput => LOGIC_KEYS,
        Kind::Resistor => RESISTOR_KEYS,
        Kind::Potentiometer => POT_KEYS,
        Kind::Capacitor => CAPACITOR_KEYS,
        _ => &[],
    }
}

/// The range of values a rating takes on real parts, for keys where a value far below it
/// most likely lost a factor of 10⁹ to SPICE's scale letters (`"6M"` is 6 mΩ; mega is `MEG`):
/// `(low, high, what the range covers)`. Only keys where a mega reading is plausible have one.
pub fn mega_range(name: &str) -> Option<(f64, f64, &'static str)> {
    match name.to_ascii_lowercase().as_str() {
        // A winding below 1 Ω is a large motor, a pot's track starts at about 100 Ω; neither
        // reaches 100 MΩ (common practice).
        "resistance" => Some((1.0, 100e6, "1 Ω to 100 MΩ (a winding or a pot's track)")),
        // The 555's divider: about 5 kΩ bipolar, 100 kΩ or more CMOS (from memory).
        "ladder_resistance" => Some((1e3, 10e6, "1 kΩ to 10 MΩ (a 555's divider)")),
        _ => None,
    }
}

#[cfg(test)]
mod unit_tests {
    use super::*;

    #[test]
    fn every_rating_belongs_to_a_kind() {
        for name in RATING_NAMES.iter().chain(FLAG_RATINGS) {
            assert!(
                Kind::CONFIGURABLE
                    .iter()
                    .any(|k| keys_of_kind(*k).contains(name)),
                "{name}"
            );
        }
    }

    #[test]
    fn every_numeric_rating_has_a_unit() {
        for name in RATING_NAMES {
            assert!(rating_unit(name).is_some(), "{name}");
        }
    }
}
