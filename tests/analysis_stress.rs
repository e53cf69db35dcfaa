//! Worst-state stress on resistors, pots and capacitors.

mod analysis_support;

use analysis_support::{assert_close, Board};

#[test]
fn resistor_into_the_discharge_pin_at_the_pots_zero_end() {
    // A 555 astable on 9 V whose discharge resistor is 100 Ω in series with a 10 kΩ pot wired
    // as a rheostat. At the pot's zero end, with the discharge pin on, the 100 Ω meets 9 V.
    let mut b = Board::new();
    b.dc("V9", "v9", "0", 9.0);
    b.timer("XU1", ["0", "tc", "out", "v9", "ctl", "tc", "dis", "v9"]);
    b.r("R1", "v9", "pa", 100.0);
    b.pot("XRV1", "pa", "dis", "dis", 10e3);
    b.r("RB", "dis", "tc", 10e3);
    b.c("CT", "tc", "0", 100e-9);
    b.c("CC", "ctl", "0", 10e-9);
    let (a, _) = b.analyze();
    let r1 = a
        .resistors
        .iter()
        .find(|r| r.device == b.id("R1"))
        .expect("R1 facts");
    let pot = a
        .resistors
        .iter()
        .find(|r| r.device == b.id("XRV1"))
        .expect("pot facts");
    // Common practice: about 0.8 W in the resistor (9²/100 with the pin as a short) and about
    // 90 mA through the wiper. The discharge stand-in's 10 Ω on-resistance (from memory) takes
    // it to 9 V/110 Ω: 82 mA and 0.67 W.
    let p = r1.peak_power_w.max;
    assert_close(p, (9.0f64 / 110.0).powi(2) * 100.0, 1e-3, "R1 power");
    // It conducts only while the output is low (the discharge pin on): averaged over the
    // astable's period it dissipates the peak times the low share, 1 − D.
    let duty = a.timers[0].duty.as_ref().expect("duty");
    let avg = r1.power_w.max;
    assert!(
        avg < p && avg >= p * (1.0 - duty.max) - 1e-9,
        "{avg} of {p}, {duty:?}"
    );
    assert_close(p, 0.81, 0.2, "about 0.8 W");
    let i = pot.wiper_current_a.as_ref().expect("wiper current").max;
    assert_close(i, 9.0 / 110.0, 1e-3, "wiper current");
    assert_close(i, 0.09, 0.1, "about 90 mA");
    assert!(
        r1.power_w.max_state.contains("XRV1 wiper at 0 %"),
        "{}",
        r1.power_w.max_state
    );
    assert!(
        r1.peak_power_w.max_state.contains("XU1 low"),
        "{}",
        r1.peak_power_w.max_state
    );
}

#[test]
fn wiper_search_finds_the_matched_load() {
    // Maximum power transfer: a rheostat fed from 10 V through 700 Ω takes the most power,
    // V²/(4·Rs) = 35.7 mW, at 700 Ω, i.e. 35 % of a 2 kΩ pot's travel, between grid points.
    let mut b = Board::new();
    b.dc("V10", "v10", "0", 10.0);
    b.r("RS", "v10", "n", 700.0);
    b.pot("XRV1", "n", "0", "0", 2e3);
    let (a, _) = b.analyze();
    let pot = a
        .resistors
        .iter()
        .find(|r| r.device == b.id("XRV1"))
        .expect("pot facts");
    assert_close(
        pot.power_w.max,
        100.0 / (4.0 * 700.0),
        1e-4,
        "matched power",
    );
    assert!(
        pot.power_w.max_state.contains("wiper at 35 %"),
        "{}",
        pot.power_w.max_state
    );
    // The series resistor is worst at the pot's zero end: 10²/700.
    let rs = a
        .resistors
        .iter()
        .find(|r| r.device == b.id("RS"))
        .expect("RS");
    assert_close(
        rs.power_w.max,
        100.0 / 700.0,
        1e-3,
        "series resistor at the short",
    );
}

#[test]
fn capacitor_voltages_over_states() {
    let mut b = Board::new();
    b.dc("V12", "v12", "0", 12.0);
    b.corners("V12", 10.8, 13.2);
    // An electrolytic fitted the wrong way round across the rail.
    b.c("CBULK", "0", "v12", 470e-6);
    // A capacitor on a divider's tap, which moves with the rail.
    b.r("R1", "v12", "tap", 10e3);
    b.r("R2", "tap", "0", 10e3);
    b.c("CF", "tap", "0", 100e-9);
    let (a, _) = b.analyze();
    let bulk = a
        .capacitors
        .iter()
        .find(|c| c.device == b.id("CBULK"))
        .expect("CBULK");
    assert_close(
        bulk.voltage_v.min,
        -13.2,
        1e-12,
        "reversed bulk at the high corner",
    );
    assert_close(
        bulk.voltage_v.max,
        -10.8,
        1e-12,
        "reversed bulk at the low corner",
    );
    assert_eq!(bulk.voltage_v.min_state, "V12 at max");
    let cf = a
        .capacitors
        .iter()
        .find(|c| c.device == b.id("CF"))
        .expect("CF");
    // Divider rule: half the rail, at each corner.
    assert_close(cf.voltage_v.min, 5.4, 1e-6, "tap at the low corner");
    assert_close(cf.voltage_v.max, 6.6, 1e-6, "tap at the high corner");
    // Both resistors dissipate (V/2)²/R at most, at the high corner.
    let r1 = a
        .resistors
        .iter()
        .find(|r| r.device == b.id("R1"))
        .expect("R1");
    assert_close(r1.power_w.max, 6.6 * 6.6 / 10e3, 1e-6, "divider resistor");
}
