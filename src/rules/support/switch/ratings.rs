//! Standard ratings and part suggestions a fix can name.

use super::*;

/// MOSFET drain-source voltage classes a buyer finds (common practice).
pub const VDS_CLASSES: [f64; 14] = [
    20.0, 30.0, 40.0, 60.0, 80.0, 100.0, 150.0, 200.0, 250.0, 400.0, 500.0, 600.0, 800.0, 1000.0,
];
/// Capacitor voltage ratings (common practice for aluminium electrolytics and ceramics).
pub const CAP_VOLTAGES: [f64; 16] = [
    6.3, 10.0, 16.0, 25.0, 35.0, 50.0, 63.0, 80.0, 100.0, 160.0, 200.0, 250.0, 350.0, 400.0, 450.0,
    630.0,
];
/// Resistor power ratings (common practice).
pub const RESISTOR_WATTS: [f64; 8] = [0.125, 0.25, 0.5, 1.0, 2.0, 3.0, 5.0, 10.0];
/// E6 series (IEC 60063), one decade: the usual steps of electrolytic capacitors.
pub const E6: [f64; 6] = [1.0, 1.5, 2.2, 3.3, 4.7, 6.8];
/// The smallest standard rating at or above `value`.
pub fn next_rating(list: &[f64], value: f64) -> Option<f64> {
    list.iter().copied().find(|&r| r >= value * (1.0 - 1e-9))
}
/// A capacitance rounded up to E6.
pub fn cap_e6(value: f64) -> Option<f64> {
    eseries::round_up(value, &E6)
}
/// A concrete diode for a freewheel path that must block `v_rev` and carry `amps`, from the
/// JEDEC numbers in the built-in library where one fits. `fast` asks for no reverse recovery.
pub fn diode_hint(v_rev: f64, amps: f64, fast: bool) -> String {
    let need = if amps > 0.0 {
        format!(
            "rated for at least {} reverse and {}",
            format_si(v_rev, "V"),
            format_si(amps, "A")
        )
    } else {
        format!(
            "rated for at least {} reverse and the load's current",
            format_si(v_rev, "V")
        )
    };
    if fast {
        match diode_choice(v_rev, amps, true) {
            Some((n, v, a)) => format!(
                "a Schottky {need}, e.g. a {n} ({}, {})",
                format_si(v, "V"),
                format_si(a, "A")
            ),
            None if v_rev <= 100.0 => format!("a Schottky {need}"),
            None => format!("an ultrafast-recovery diode {need}"),
        }
    } else {
        match diode_choice(v_rev, amps, false) {
            Some((n, v, a)) => format!(
                "a rectifier {need}, e.g. a {n} ({}, {})",
                format_si(v, "V"),
                format_si(a, "A")
            ),
            None => format!("a rectifier {need}"),
        }
    }
}

/// The registered part [`diode_hint`] names for a diode rated for `v_rev` reverse and `amps`:
/// its number, reverse voltage and current rating (`None` when no listed part fits).
pub fn diode_choice(v_rev: f64, amps: f64, fast: bool) -> Option<(&'static str, f64, f64)> {
    let schottky_1a = [("1N5817", 20.0), ("1N5818", 30.0), ("1N5819", 40.0)];
    let rectifier_1a = [
        ("1N4001", 50.0),
        ("1N4002", 100.0),
        ("1N4003", 200.0),
        ("1N4004", 400.0),
    ];
    let rectifier_3a = [
        ("1N5400", 50.0),
        ("1N5401", 100.0),
        ("1N5402", 200.0),
        ("1N5404", 400.0),
    ];
    let pick = |list: &[(&'static str, f64)], amps_rated: f64| {
        (amps <= amps_rated)
            .then(|| list.iter().find(|(_, v)| *v >= v_rev))
            .flatten()
            .map(|(n, v)| (*n, *v, amps_rated))
    };
    if fast {
        pick(&schottky_1a, 1.0)
    } else {
        pick(&rectifier_1a, 1.0).or_else(|| pick(&rectifier_3a, 3.0))
    }
}
