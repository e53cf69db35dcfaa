//! DC engine MOSFETs against the square-law model (Shichman & Hodges, 1968):
//! cutoff for Vgs ≤ Vt, saturation `Id = k/2·(Vgs−Vt)²·(1+λVds)` for Vds ≥ Vgs−Vt,
//! triode `Id = k·((Vgs−Vt)·Vds − Vds²/2)` below it (the triode form with λ = 0).

use kickback::analysis::dc::{
    solve, ElementId, MosParams, MosPolarity, MosRegion, Network, Node, OperatingPoint,
    SolveOptions,
};

fn rel_err(got: f64, want: f64) -> f64 {
    (got - want).abs() / want.abs().max(1e-30)
}

fn nmos(vto: f64, k: f64, lambda: f64) -> MosParams {
    MosParams {
        polarity: MosPolarity::N,
        vto,
        k,
        lambda,
    }
}

/// Low-side switch: Vdd through RD into the drain, gate held at `vg`, source grounded.
fn low_side(vdd: f64, rd: f64, vg: f64, params: MosParams) -> (OperatingPoint, ElementId, Node) {
    let mut net = Network::new();
    let gnd = net.ground();
    let (supply, drain, gate) = (
        net.add_node("vdd"),
        net.add_node("drain"),
        net.add_node("gate"),
    );
    net.add_voltage_source(supply, gnd, vdd);
    net.add_voltage_source(gate, gnd, vg);
    net.add_resistor(supply, drain, rd);
    let m = net.add_mosfet(drain, gate, gnd, params);
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    (op, m, drain)
}

#[test]
fn cutoff_below_threshold() {
    let (op, m, drain) = low_side(12.0, 1e3, 1.5, nmos(2.0, 2e-3, 0.0));
    assert_eq!(op.mos_region(m), Some(MosRegion::Cutoff));
    // Only gmin (1e-12 S) conducts: picoamperes.
    assert!(op.current(m).unwrap_or(1.0).abs() < 1e-10);
    assert!((op.voltage(drain).unwrap_or(0.0) - 12.0).abs() < 1e-6);
    assert_eq!(op.control_current(m), Some(0.0));
}

#[test]
fn saturation_matches_square_law_with_channel_length_modulation() {
    // Id = k/2·Vov²·(1 + λ·(Vdd − RD·Id)) solved for Id in closed form.
    let (vdd, rd, vg, vto, k, lambda) = (12.0, 1e3, 3.0, 2.0, 2e-3, 0.02);
    let (op, m, drain) = low_side(vdd, rd, vg, nmos(vto, k, lambda));
    let a = 0.5 * k * (vg - vto) * (vg - vto);
    let want = a * (1.0 + lambda * vdd) / (1.0 + a * lambda * rd);
    assert_eq!(op.mos_region(m), Some(MosRegion::Saturation));
    let got = op.current(m).unwrap_or(f64::NAN);
    assert!(rel_err(got, want) < 1e-6, "Id {got} vs {want}");
    let vd = op.voltage(drain).unwrap_or(f64::NAN);
    assert!(rel_err(vd, vdd - rd * want) < 1e-6);
    assert!(rel_err(op.power(m).unwrap_or(0.0), vd * want) < 1e-6);
}

#[test]
fn triode_matches_square_law() {
    // (Vdd − Vds)/RD = k·(Vov·Vds − Vds²/2) → k/2·Vds² − (k·Vov + 1/RD)·Vds + Vdd/RD = 0,
    // the smaller root.
    let (vdd, rd, vg, vto, k) = (12.0, 10e3, 10.0, 2.0, 2e-3);
    let (op, m, drain) = low_side(vdd, rd, vg, nmos(vto, k, 0.0));
    let vov = vg - vto;
    let b = k * vov + 1.0 / rd;
    let vds = (b - (b * b - 2.0 * k * vdd / rd).sqrt()) / k;
    assert_eq!(op.mos_region(m), Some(MosRegion::Triode));
    let got = op.voltage(drain).unwrap_or(f64::NAN);
    assert!(rel_err(got, vds) < 1e-6, "Vds {got} vs {vds}");
    let id = k * (vov * vds - vds * vds / 2.0);
    assert!(rel_err(op.current(m).unwrap_or(0.0), id) < 1e-6);
}

#[test]
fn power_mosfet_at_motor_current() {
    // A logic-driven power switch (k = 20 A/V², Vt = 2 V) sinking ~2.4 A through a 5 Ω winding:
    // deep triode, Rds = 1/(k·(Vov − Vds/2)) to first order.
    let (vdd, rd, vg, vto, k) = (12.0, 5.0, 10.0, 2.0, 20.0);
    let (op, m, drain) = low_side(vdd, rd, vg, nmos(vto, k, 0.0));
    let vov = vg - vto;
    let b = k * vov + 1.0 / rd;
    let vds = (b - (b * b - 2.0 * k * vdd / rd).sqrt()) / k;
    assert_eq!(op.mos_region(m), Some(MosRegion::Triode));
    assert!(rel_err(op.voltage(drain).unwrap_or(0.0), vds) < 1e-6);
}

#[test]
fn p_channel_high_side_is_mirrored() {
    // Mirror of the square law for P channel: |Id| = k/2·(Vsg − |Vt|)², current leaves the
    // drain (negative into it) and flows to the load.
    let (vdd, rl, vsg, vto, k) = (12.0, 500.0, 5.0, 2.0, 2e-3);
    let mut net = Network::new();
    let gnd = net.ground();
    let (supply, drain, gate) = (
        net.add_node("vdd"),
        net.add_node("drain"),
        net.add_node("gate"),
    );
    net.add_voltage_source(supply, gnd, vdd);
    net.add_voltage_source(gate, gnd, vdd - vsg);
    let load = net.add_resistor(drain, gnd, rl);
    let params = MosParams {
        polarity: MosPolarity::P,
        vto,
        k,
        lambda: 0.0,
    };
    let m = net.add_mosfet(drain, gate, supply, params);
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    let want = 0.5 * k * (vsg - vto).powi(2);
    assert_eq!(op.mos_region(m), Some(MosRegion::Saturation));
    assert!(rel_err(op.current(m).unwrap_or(0.0), -want) < 1e-6);
    assert!(rel_err(op.current(load).unwrap_or(0.0), want) < 1e-6);
    assert!(rel_err(op.voltage(drain).unwrap_or(0.0), want * rl) < 1e-6);
}

#[test]
fn channel_is_symmetric_for_reversed_drain_and_source() {
    // Shichman–Hodges devices are symmetric: swapping the drain and source terminals of the
    // same circuit leaves every node voltage unchanged and negates the drain current.
    let build = |swap: bool| {
        let mut net = Network::new();
        let gnd = net.ground();
        let (supply, x, gate) = (net.add_node("vdd"), net.add_node("x"), net.add_node("gate"));
        net.add_voltage_source(supply, gnd, 5.0);
        net.add_voltage_source(gate, gnd, 6.0);
        net.add_resistor(supply, x, 2.2e3);
        let params = nmos(1.5, 1e-3, 0.05);
        let m = if swap {
            net.add_mosfet(gnd, gate, x, params)
        } else {
            net.add_mosfet(x, gate, gnd, params)
        };
        let op = solve(&net, &SolveOptions::default()).expect("solves");
        (
            op.voltage(x).unwrap_or(f64::NAN),
            op.current(m).unwrap_or(f64::NAN),
        )
    };
    let (v_normal, i_normal) = build(false);
    let (v_swapped, i_swapped) = build(true);
    assert!(
        rel_err(v_swapped, v_normal) < 1e-9,
        "{v_swapped} vs {v_normal}"
    );
    assert!(
        rel_err(-i_swapped, i_normal) < 1e-9,
        "{i_swapped} vs {i_normal}"
    );
}

#[test]
fn high_side_n_channel_is_a_source_follower() {
    // A high-side N-channel switch with its gate at the supply is a source follower: with the
    // load R in the source, Vs solves k/2·(Vg − Vs − Vt)² = Vs/R, i.e. with u = Vg − Vt − Vs,
    // (k·R/2)·u² + u − (Vg − Vt) = 0.
    let (vdd, vg, vto, k, r) = (12.0, 12.0, 3.0, 1.0, 10.0);
    let mut net = Network::new();
    let gnd = net.ground();
    let (supply, gate, source) = (
        net.add_node("vdd"),
        net.add_node("gate"),
        net.add_node("motor"),
    );
    net.add_voltage_source(supply, gnd, vdd);
    net.add_voltage_source(gate, gnd, vg);
    let m = net.add_mosfet(supply, gate, source, nmos(vto, k, 0.0));
    net.add_resistor(source, gnd, r);
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    let u = (-1.0 + (1.0 + 2.0 * k * r * (vg - vto)).sqrt()) / (k * r);
    let vs = vg - vto - u;
    assert_eq!(op.mos_region(m), Some(MosRegion::Saturation));
    let got = op.voltage(source).unwrap_or(f64::NAN);
    assert!(rel_err(got, vs) < 1e-6, "Vs {got} vs {vs}");
    // The switch drops Vdd − Vs and dissipates (Vdd − Vs)·Vs/R: watts, not milliwatts.
    let want_power = (vdd - vs) * vs / r;
    assert!(rel_err(op.power(m).unwrap_or(0.0), want_power) < 1e-6);
    assert!(want_power > 1.0);
}
