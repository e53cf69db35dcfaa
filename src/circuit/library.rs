//! The built-in library: JEDEC-registered part numbers whose ratings are public registration
//! data. Values are from memory of the registrations and are marked so in their provenance.
//! No vendor models and no brand data.

use super::Kind;

pub(crate) struct LibraryPart {
    pub number: &'static str,
    pub kind: Kind,
    /// Rating name → value in SI base units.
    pub ratings: &'static [(&'static str, f64)],
}

impl LibraryPart {
    pub fn source(&self) -> String {
        format!(
            "built-in {} (JEDEC registration data, from memory)",
            self.number
        )
    }
}

/// 1N400x: 1 A general-purpose rectifiers; VRRM by number, IF(AV) 1 A, IFSM 30 A (8.3 ms half
/// sine), VF 1.1 V at 1 A; standard recovery (trr a few microseconds; 2 µs used here).
macro_rules! rectifier_1a {
    ($number:literal, $vrrm:literal) => {
        LibraryPart {
            number: $number,
            kind: Kind::Diode,
            ratings: &[
                ("vrrm", $vrrm),
                ("if_avg", 1.0),
                ("ifsm", 30.0),
                ("vf", 1.1),
                ("trr", 2e-6),
            ],
        }
    };
}

/// 1N540x: 3 A rectifiers; IF(AV) 3 A, IFSM 200 A, VF 1.2 V at 3 A; standard recovery.
macro_rules! rectifier_3a {
    ($number:literal, $vrrm:literal) => {
        LibraryPart {
            number: $number,
            kind: Kind::Diode,
            ratings: &[
                ("vrrm", $vrrm),
                ("if_avg", 3.0),
                ("ifsm", 200.0),
                ("vf", 1.2),
                ("trr", 2e-6),
            ],
        }
    };
}

/// 1N581x: 1 A Schottky rectifiers; IF(AV) 1 A, IFSM 25 A; VF at 1 A by number; no minority
/// carrier recovery (10 ns used as an upper bound).
macro_rules! schottky_1a {
    ($number:literal, $vrrm:literal, $vf:literal) => {
        LibraryPart {
            number: $number,
            kind: Kind::Schottky,
            ratings: &[
                ("vrrm", $vrrm),
                ("if_avg", 1.0),
                ("ifsm", 25.0),
                ("vf", $vf),
                ("trr", 1e-8),
            ],
        }
    };
}

pub(crate) static LIBRARY: &[LibraryPart] = &[
    rectifier_1a!("1N4001", 50.0),
    rectifier_1a!("1N4002", 100.0),
    rectifier_1a!("1N4003", 200.0),
    rectifier_1a!("1N4004", 400.0),
    rectifier_1a!("1N4005", 600.0),
    rectifier_1a!("1N4006", 800.0),
    rectifier_1a!("1N4007", 1000.0),
    // Small-signal switching diode: VRRM 100 V, IF(AV) 150 mA, IFRM 450 mA, IFSM 1 A for 1 s,
    // VF 1 V at 10 mA, trr 4 ns.
    LibraryPart {
        number: "1N4148",
        kind: Kind::Diode,
        ratings: &[
            ("vrrm", 100.0),
            ("if_avg", 0.15),
            ("ifrm", 0.45),
            ("ifsm", 1.0),
            ("vf", 1.0),
            ("trr", 4e-9),
        ],
    },
    schottky_1a!("1N5817", 20.0, 0.45),
    schottky_1a!("1N5818", 30.0, 0.55),
    schottky_1a!("1N5819", 40.0, 0.6),
    rectifier_3a!("1N5400", 50.0),
    rectifier_3a!("1N5401", 100.0),
    rectifier_3a!("1N5402", 200.0),
    rectifier_3a!("1N5403", 300.0),
    rectifier_3a!("1N5404", 400.0),
    rectifier_3a!("1N5405", 500.0),
    rectifier_3a!("1N5406", 600.0),
    rectifier_3a!("1N5407", 800.0),
    rectifier_3a!("1N5408", 1000.0),
    // Small-signal N-channel MOSFET: VDS 60 V, VGS ±20 V, ID 200 mA, PD 400 mW,
    // VGS(th) 0.8–3 V, RDS(on) 5 Ω at VGS 10 V.
    LibraryPart {
        number: "2N7000",
        kind: Kind::Nmos,
        ratings: &[
            ("vds_max", 60.0),
            ("vgs_max", 20.0),
            ("id_max", 0.2),
            ("pd_max", 0.4),
            ("vgs_th_min", 0.8),
            ("vgs_th_max", 3.0),
            ("rds_on", 5.0),
            ("vgs_rated", 10.0),
        ],
    },
];

/// The library part a model or subcircuit name refers to: the number itself, any case, with an
/// optional element-letter prefix (`D1N4007`, `M2N7000`) and an optional suffix after a
/// separator (`1N4148_fast`, `1N4007-GP`).
pub(crate) fn lookup(name: &str) -> Option<&'static LibraryPart> {
    let upper = name.trim().to_ascii_uppercase();
    let bytes = upper.as_bytes();
    let unprefixed = match bytes {
        [b'D' | b'M' | b'Q' | b'J', digit, ..] if digit.is_ascii_digit() => upper.get(1..)?,
        _ => upper.as_str(),
    };
    LIBRARY.iter().find(|part| {
        unprefixed
            .strip_prefix(part.number)
            .is_some_and(|rest| rest.is_empty() || rest.starts_with(['_', '-', '.', '/', ' ']))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_find_their_numbers() {
        assert_eq!(lookup("1n4007").map(|p| p.number), Some("1N4007"));
        assert_eq!(lookup("D1N4148").map(|p| p.number), Some("1N4148"));
        assert_eq!(lookup("1N5819_x").map(|p| p.number), Some("1N5819"));
        assert_eq!(lookup("M2N7000").map(|p| p.kind), Some(Kind::Nmos));
        assert!(lookup("1N40071").is_none());
        assert!(lookup("DSW").is_none());
    }

    // JEDEC registration (from memory): the 1N4001..1N4007 series spans 50 V to 1000 V.
    #[test]
    fn rectifier_series_voltages() {
        let vrrm =
            |n: &str| lookup(n).and_then(|p| p.ratings.iter().find(|r| r.0 == "vrrm").map(|r| r.1));
        assert_eq!(vrrm("1N4001"), Some(50.0));
        assert_eq!(vrrm("1N4004"), Some(400.0));
        assert_eq!(vrrm("1N4007"), Some(1000.0));
        assert_eq!(vrrm("1N5408"), Some(1000.0));
        assert_eq!(vrrm("1N5817"), Some(20.0));
    }
}
