//! Part knowledge: which model or subcircuit is what kind, and the vocabulary of part data.
//!
//! Built-in name recognition of subcircuits (upper-cased name):
//! - contains `555` → `timer-555`; a CMOS variant (`timer-555-cmos`) when the name also contains
//!   `CMOS` or `7555`, or has a `C` right before the `555`;
//! - contains `MOTOR` → `dc-motor`; `RELAY` → `relay-coil`; `SOLENOID` or `VALVE` → `solenoid`;
//! - `POTENTIOMETER`, `RHEOSTAT`, `TRIMPOT`, or a word starting with `POT` (at the start of the
//!   name or after a non-letter: `POT`, `POT10K`, `TIMING_POT`) → `potentiometer`;
//! - contains `LOGIC`, `MCU_PIN` or `GPIO` → `logic-output`;
//! - a number of the built-in library (`2N7000`, `1N4148`...) → that part's kind.
//!
//! A `kind` in `[parts]` or `[elements]` always wins over all of these.

use super::{glob, library, Kind};
use crate::config::Config;
use crate::netlist::{FlatElement, Model};

pub use crate::vocabulary::ratings::{is_rating_name, FLAG_RATINGS, RATING_NAMES};

/// True when a subcircuit of this name is one device (its insides are a simulation model) and
/// must not be flattened: a `[parts]` entry with a `kind` names it, or built-in recognition does.
pub fn keeps_whole(subckt_name: &str, config: &Config) -> bool {
    configured_kind(subckt_name, config).is_some() || recognized_kind(subckt_name).is_some()
}

/// The kind a `[parts]` entry gives this name: exact names before globs, then file order.
pub fn configured_kind(name: &str, config: &Config) -> Option<Kind> {
    let exact = config
        .parts
        .iter()
        .filter(|(pattern, _)| !glob::is_glob(pattern) && pattern.eq_ignore_ascii_case(name));
    let globbed = config
        .parts
        .iter()
        .filter(|(pattern, _)| glob::is_glob(pattern) && glob::matches(pattern, name));
    exact.chain(globbed).find_map(|(_, part)| part.kind)
}

/// The kind built-in name recognition gives a subcircuit name (see the module notes).
pub fn recognized_kind(name: &str) -> Option<Kind> {
    let upper = name.to_ascii_uppercase();
    if let Some(at) = upper.find("555") {
        let c_before = at > 0 && upper.as_bytes().get(at - 1) == Some(&b'C');
        let cmos = upper.contains("CMOS") || upper.contains("7555") || c_before;
        return Some(if cmos {
            Kind::Timer555Cmos
        } else {
            Kind::Timer555
        });
    }
    if upper.contains("MOTOR") {
        return Some(Kind::DcMotor);
    }
    if upper.contains("RELAY") {
        return Some(Kind::RelayCoil);
    }
    if upper.contains("SOLENOID") || upper.contains("VALVE") {
        return Some(Kind::Solenoid);
    }
    if is_pot_name(&upper) {
        return Some(Kind::Potentiometer);
    }
    if upper.contains("LOGIC") || upper.contains("MCU_PIN") || upper.contains("GPIO") {
        return Some(Kind::LogicOutput);
    }
    library::lookup(name).map(|part| part.kind)
}

fn is_pot_name(upper: &str) -> bool {
    if ["POTENTIOMETER", "RHEOSTAT", "TRIMPOT"]
        .iter()
        .any(|w| upper.contains(w))
    {
        return true;
    }
    upper.match_indices("POT").any(|(at, _)| {
        at == 0
            || upper
                .as_bytes()
                .get(at - 1)
                .is_some_and(|b| !b.is_ascii_alphabetic())
    })
}

/// Kind from the diode's model name when it says so (`DSCHOTTKY`, `ZENER5V1`, `TVS24`).
fn diode_kind_from_name(name: &str) -> Option<Kind> {
    let upper = name.to_ascii_uppercase();
    if upper.contains("SCHOTTKY") || upper.contains("SBD") {
        Some(Kind::Schottky)
    } else if upper.contains("ZENER") {
        Some(Kind::Zener)
    } else if upper.contains("TVS") {
        Some(Kind::Tvs)
    } else {
        None
    }
}

/// The kind of an element from its letter, model card and name, before any `kind` from the
/// config (which the caller applies on top).
pub(crate) fn element_kind(element: &FlatElement, model: Option<&Model>) -> Kind {
    let model_name = element.model.as_deref().unwrap_or("");
    let model_type = model.map(|m| m.kind.to_ascii_uppercase());
    let library_kind = || library::lookup(model_name).map(|p| p.kind);
    match element.letter {
        'R' => Kind::Resistor,
        'C' => Kind::Capacitor,
        'L' => Kind::Inductor,
        'D' => library_kind()
            .or_else(|| diode_kind_from_name(model_name))
            .unwrap_or(Kind::Diode),
        'Q' => match model_type.as_deref() {
            // `LPNP`: the lateral PNP of some simulators' model sets.
            Some("PNP" | "LPNP") => Kind::Pnp,
            Some("NPN") => Kind::Npn,
            _ => library_kind().filter(|k| k.is_bjt()).unwrap_or(Kind::Npn),
        },
        'M' => match model_type.as_deref() {
            Some("PMOS") => Kind::Pmos,
            Some("NMOS") => Kind::Nmos,
            Some("VDMOS") if model.is_some_and(|m| m.param("pchan").is_some()) => Kind::Pmos,
            Some(_) => Kind::Nmos,
            None => library_kind()
                .filter(|k| k.is_mos())
                .or_else(|| p_channel_name(model_name).then_some(Kind::Pmos))
                .unwrap_or(Kind::Nmos),
        },
        'J' => Kind::Jfet,
        'V' => Kind::VoltageSource,
        'I' => Kind::CurrentSource,
        'E' | 'F' | 'G' | 'H' | 'B' => Kind::ControlledSource,
        'S' | 'W' => Kind::Switch,
        'K' => Kind::Coupling,
        'T' => Kind::TransmissionLine,
        'X' => element
            .subckt
            .as_ref()
            .map(|s| s.name.as_str())
            .or(element.model.as_deref())
            .and_then(recognized_kind)
            .unwrap_or(Kind::Unknown),
        _ => Kind::Unknown,
    }
}

/// `PMOS`, `PCH` or `PFET` starting a word of the name (`PCH_SW`, `Q3-PFET`, `2301PCH`): inside
/// a word the letters mean nothing (`PUMPFET`, `LAMPCHAIN`).
fn p_channel_name(name: &str) -> bool {
    let upper = name.to_ascii_uppercase();
    ["PMOS", "PCH", "PFET"].iter().any(|mark| {
        upper.match_indices(mark).any(|(at, _)| {
            upper[..at]
                .chars()
                .next_back()
                .is_none_or(|c| !c.is_ascii_alphabetic())
        })
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn p_channel_marks_start_a_word() {
        for name in ["PMOS1", "PCH_SW", "Q3-PFET", "2301PCH", "pfet"] {
            assert!(p_channel_name(name), "{name}");
        }
        for name in ["PUMPFET", "LAMPCHAIN", "NFET", "SWITCH"] {
            assert!(!p_channel_name(name), "{name}");
        }
    }

    #[test]
    fn recognizes_generic_names() {
        assert_eq!(recognized_kind("NE555"), Some(Kind::Timer555));
        assert_eq!(recognized_kind("timer555"), Some(Kind::Timer555));
        assert_eq!(recognized_kind("X7555"), Some(Kind::Timer555Cmos));
        assert_eq!(recognized_kind("C555"), Some(Kind::Timer555Cmos));
        assert_eq!(recognized_kind("555_CMOS"), Some(Kind::Timer555Cmos));
        assert_eq!(recognized_kind("StirMotor"), Some(Kind::DcMotor));
        assert_eq!(recognized_kind("RELAY12"), Some(Kind::RelayCoil));
        assert_eq!(recognized_kind("valve_a"), Some(Kind::Solenoid));
        assert_eq!(recognized_kind("POT10K"), Some(Kind::Potentiometer));
        assert_eq!(recognized_kind("timing_pot"), Some(Kind::Potentiometer));
        assert_eq!(recognized_kind("DEPOT"), None);
        assert_eq!(recognized_kind("MCU_PIN3V3"), Some(Kind::LogicOutput));
        assert_eq!(recognized_kind("2N7000"), Some(Kind::Nmos));
        assert_eq!(recognized_kind("AMP1"), None);
    }

    #[test]
    fn config_kind_makes_a_part_whole() {
        let mut config = Config::default();
        assert!(!keeps_whole("PUMP12", &config));
        config.parts.push((
            "pump*".into(),
            crate::config::PartConfig {
                kind: Some(Kind::DcMotor),
                ..Default::default()
            },
        ));
        assert!(keeps_whole("PUMP12", &config));
        assert!(keeps_whole("NE555", &config));
    }
}
