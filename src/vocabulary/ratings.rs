//! The rating names part data may carry, as config keys and instance or subcircuit
//! parameters.

/// Rating names with numeric values (SI base units), accepted as config keys and as instance
/// or subcircuit parameters. Thresholds and limits are magnitudes (also for P-channel parts).
pub const RATING_NAMES: &[&str] = &[
    // loads
    "rated_voltage",
    "rated_current",
    "stall_current",
    "inductance",
    "resistance",
    // MOSFETs
    "vgs_th_min",
    "vgs_th_max",
    "vgs_rated",
    "vgs_max",
    "vds_max",
    "id_max",
    "rds_on",
    "pd_max",
    "qg",
    // BJTs
    "vce_max",
    "ic_max",
    "hfe_min",
    // diodes and TVS
    "vrrm",
    "if_avg",
    "ifrm",
    "ifsm",
    "vf",
    "vz",
    "trr",
    "vclamp",
    // timers and logic outputs
    "supply_min",
    "supply_max",
    "supply_abs_max",
    "out_high_drop",
    "out_current_max",
    "discharge_current_rated",
    "discharge_current_max",
    "ladder_resistance",
    "trigger_bias_current",
    "threshold_bias_current",
    "voh",
    "vol",
    // resistors, pots, capacitors
    "power_rating",
    "wiper_current_max",
    "voltage_rating",
    "capacitance",
];

/// Rating names with yes/no values, stored as 1.0 / 0.0.
pub const FLAG_RATINGS: &[&str] = &["polarized", "logic_level"];

/// True when `name` (any case) is a rating name, numeric or flag.
pub fn is_rating_name(name: &str) -> bool {
    let lower = name.to_ascii_lowercase();
    RATING_NAMES.contains(&lower.as_str()) || FLAG_RATINGS.contains(&lower.as_str())
}

/// The SI unit of each numeric rating (`""` for a plain ratio), for reading a unit written
/// after a config value (`"45 mH"`) and refusing one that measures something else (`"6 A"` for
/// a voltage).
pub fn rating_unit(name: &str) -> Option<&'static str> {
    let unit = match name.to_ascii_lowercase().as_str() {
        "rated_voltage" | "vgs_th_min" | "vgs_th_max" | "vgs_rated" | "vgs_max" | "vds_max"
        | "vce_max" | "vrrm" | "vf" | "vz" | "vclamp" | "supply_min" | "supply_max"
        | "supply_abs_max" | "out_high_drop" | "voh" | "vol" | "voltage_rating" => "V",
        "rated_current"
        | "stall_current"
        | "id_max"
        | "ic_max"
        | "if_avg"
        | "ifrm"
        | "ifsm"
        | "out_current_max"
        | "discharge_current_rated"
        | "discharge_current_max"
        | "trigger_bias_current"
        | "threshold_bias_current"
        | "wiper_current_max" => "A",
        "inductance" => "H",
        "resistance" | "rds_on" | "ladder_resistance" => "Ω",
        "pd_max" | "power_rating" => "W",
        "qg" => "C",
        "trr" => "s",
        "capacitance" => "F",
        "hfe_min" => "",
        _ => return None,
    };
    Some(unit)
}

#[cfg(test)]
mod unit_tests {
    use super::*;

    #[test]
    fn every_numeric_rating_has_a_unit() {
        for name in RATING_NAMES {
            assert!(rating_unit(name).is_some(), "{name}");
        }
    }
}
