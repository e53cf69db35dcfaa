//! DC engine bipolar transistors (Ebers–Moll transport model) and the current-limited
//! resistor.

use kickback::analysis::dc::{solve, BjtParams, BjtPolarity, BjtRegion, Network, SolveOptions};

fn rel_err(got: f64, want: f64) -> f64 {
    (got - want).abs() / want.abs().max(1e-30)
}

fn npn() -> BjtParams {
    BjtParams {
        polarity: BjtPolarity::Npn,
        is: 1e-14,
        beta_f: 100.0,
        beta_r: 1.0,
        n: 1.0,
    }
}

/// Common-emitter stage: base fed from `vbb` through `rb`, collector load `rc` from `vcc`.
fn common_emitter(
    vcc: f64,
    rc: f64,
    vbb: f64,
    rb: f64,
    params: BjtParams,
) -> (f64, f64, f64, BjtRegion) {
    let mut net = Network::new();
    let gnd = net.ground();
    let (supply, drive, base, collector) = (
        net.add_node("vcc"),
        net.add_node("drive"),
        net.add_node("base"),
        net.add_node("col"),
    );
    net.add_voltage_source(supply, gnd, vcc);
    net.add_voltage_source(drive, gnd, vbb);
    net.add_resistor(drive, base, rb);
    net.add_resistor(supply, collector, rc);
    let q = net.add_bjt(collector, base, gnd, params);
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    (
        op.current(q).unwrap_or(f64::NAN),
        op.control_current(q).unwrap_or(f64::NAN),
        op.voltage(collector).unwrap_or(f64::NAN),
        op.bjt_region(q).unwrap_or(BjtRegion::Cutoff),
    )
}

#[test]
fn starved_base_gives_beta_limited_active_region() {
    // Ebers–Moll in forward active: Ic = βF·Ib, Vbe = Vt·ln(βF·Ib/IS + 1).
    let (ic, ib, vc, region) = common_emitter(12.0, 1e3, 5.0, 1e6, npn());
    assert_eq!(region, BjtRegion::Active);
    assert!(rel_err(ic / ib, 100.0) < 1e-3, "Ic/Ib = {}", ic / ib);
    assert!(rel_err(vc, 12.0 - 1e3 * ic) < 1e-9);
    // Ib ≈ (5 V − ~0.6 V)/1 MΩ: a few microamperes.
    assert!(ib > 4.2e-6 && ib < 4.5e-6, "Ib {ib}");
    let vt = SolveOptions::default().thermal_voltage();
    let vbe = 5.0 - 1e6 * ib;
    assert!(
        rel_err(vbe, vt * (100.0 * ib / 1e-14 + 1.0).ln()) < 1e-5,
        "Vbe {vbe}"
    );
}

#[test]
fn heavy_base_drive_saturates() {
    // Saturation: βF·Ib far exceeds what the collector load allows, so Vce falls to a
    // fraction of a volt and the forced gain Ic/Ib drops well below βF.
    let (ic, ib, vc, region) = common_emitter(12.0, 1e3, 5.0, 1e3, npn());
    assert_eq!(region, BjtRegion::Saturation);
    assert!(vc > 0.0 && vc < 0.2, "Vce(sat) {vc}");
    assert!(ic / ib < 10.0);
    assert!(rel_err(ic, (12.0 - vc) / 1e3) < 1e-9);
}

#[test]
fn grounded_base_is_cut_off() {
    let (ic, _, vc, region) = common_emitter(12.0, 1e3, 0.0, 10e3, npn());
    assert_eq!(region, BjtRegion::Cutoff);
    assert!(ic.abs() < 1e-9);
    assert!((vc - 12.0).abs() < 1e-6);
}

#[test]
fn pnp_high_side_is_mirrored() {
    // PNP: emitter at the supply, base pulled down through RB; collector current leaves the
    // collector (negative into it) and equals βF times the base current leaving the base.
    let mut net = Network::new();
    let gnd = net.ground();
    let (supply, base, collector) = (net.add_node("vcc"), net.add_node("b"), net.add_node("c"));
    net.add_voltage_source(supply, gnd, 12.0);
    net.add_resistor(base, gnd, 2.2e6);
    net.add_resistor(collector, gnd, 1e3);
    let params = BjtParams {
        polarity: BjtPolarity::Pnp,
        ..npn()
    };
    let q = net.add_bjt(collector, base, supply, params);
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    let (ic, ib) = (
        op.current(q).unwrap_or(0.0),
        op.control_current(q).unwrap_or(0.0),
    );
    assert_eq!(op.bjt_region(q), Some(BjtRegion::Active));
    assert!(ic < 0.0 && ib < 0.0);
    assert!(rel_err(ic / ib, 100.0) < 1e-3);
    assert!(rel_err(op.voltage(collector).unwrap_or(0.0), -ic * 1e3) < 1e-9);
}

#[test]
fn emitter_follower_drops_one_vbe() {
    // Emitter follower: Ve = Vb − Vbe with Vbe = Vt·ln(Ie·βF/((βF+1)·IS) + 1) (Ebers–Moll).
    let mut net = Network::new();
    let gnd = net.ground();
    let (supply, base, emitter) = (net.add_node("vcc"), net.add_node("b"), net.add_node("e"));
    net.add_voltage_source(supply, gnd, 12.0);
    net.add_voltage_source(base, gnd, 6.0);
    net.add_resistor(emitter, gnd, 1e3);
    let q = net.add_bjt(supply, base, emitter, npn());
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    let ve = op.voltage(emitter).unwrap_or(0.0);
    let ie = ve / 1e3;
    let vt = SolveOptions::default().thermal_voltage();
    let vbe = vt * (ie * 100.0 / (101.0 * 1e-14) + 1.0).ln();
    assert!(rel_err(ve, 6.0 - vbe) < 1e-6, "Ve {ve} vs {}", 6.0 - vbe);
    assert_eq!(op.bjt_region(q), Some(BjtRegion::Active));
}

#[test]
fn current_limited_resistor_below_and_above_its_limit() {
    // Below the limit it is Ohm's law (within 0.05 % at half the limit by construction of the
    // knee); far above it it delivers its limit current.
    let solve_at = |volts: f64, ohms: f64, limit: f64| {
        let mut net = Network::new();
        let gnd = net.ground();
        let top = net.add_node("top");
        net.add_voltage_source(top, gnd, volts);
        let r = net.add_current_limited_resistor(top, gnd, ohms, limit);
        let op = solve(&net, &SolveOptions::default()).expect("solves");
        (
            op.current(r).unwrap_or(f64::NAN),
            op.power(r).unwrap_or(f64::NAN),
        )
    };
    let (below, _) = solve_at(1.0, 20.0, 0.2);
    assert!(rel_err(below, 0.05) < 1e-5, "{below}");
    let (half, _) = solve_at(2.0, 20.0, 0.2);
    assert!(rel_err(half, 0.1) < 5e-4, "{half}");
    let (above, power) = solve_at(12.0, 20.0, 0.2);
    assert!(rel_err(above, 0.2) < 1e-4, "{above}");
    assert!(rel_err(power, 12.0 * 0.2) < 1e-4);
    let (reversed, _) = solve_at(-12.0, 20.0, 0.2);
    assert!(rel_err(reversed, -0.2) < 1e-4);
}

#[test]
fn discharge_pin_through_series_resistor() {
    // A timer's discharge pin (on-resistance 10 Ω, limit 50 mA, values invented) fed from
    // 9 V: through 1 kΩ it stays ohmic, through a bare 0 Ω path it sits at its limit and
    // dissipates ~9 V × 50 mA.
    for (series, want_current) in [(1e3, 9.0 / 1010.0), (0.0, 0.05)] {
        let mut net = Network::new();
        let gnd = net.ground();
        let (supply, pin) = (net.add_node("vcc"), net.add_node("dis"));
        net.add_voltage_source(supply, gnd, 9.0);
        net.add_resistor(supply, pin, series);
        let dis = net.add_current_limited_resistor(pin, gnd, 10.0, 0.05);
        let op = solve(&net, &SolveOptions::default()).expect("solves");
        let i = op.current(dis).unwrap_or(f64::NAN);
        assert!(rel_err(i, want_current) < 1e-4, "series {series}: {i}");
    }
}
