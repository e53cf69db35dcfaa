//! DC engine diodes against the Shockley diode equation `I = IS·(exp(V/(N·Vt)) − 1)`.

use kickback::analysis::dc::{solve, DiodeParams, Network, SolveOptions};
use lambert_w::lambert_w0;

fn rel_err(got: f64, want: f64) -> f64 {
    (got - want).abs() / want.abs().max(1e-30)
}

/// Closed form of a source `vs` driving a diode through a total series resistance `r`:
/// with the Shockley equation, `I = (N·Vt/R)·W((IS·R/(N·Vt))·exp((Vs + IS·R)/(N·Vt))) − IS`,
/// W the principal branch of the Lambert W function (the known Lambert-W solution of the
/// series diode-resistor circuit; W from the `lambert_w` crate).
fn series_current(vs: f64, r: f64, is: f64, nvt: f64) -> f64 {
    let arg = (is * r / nvt) * ((vs + is * r) / nvt).exp();
    nvt / r * lambert_w0(arg) - is
}

#[test]
fn series_diode_resistor_matches_lambert_w() {
    let options = SolveOptions::default();
    let vt = options.thermal_voltage();
    let cases = [
        // (Vs, R, IS, N, RS)
        (5.0, 1e3, 1e-14, 1.0, 0.0),
        (1.0, 100.0, 1e-14, 1.0, 0.0),
        (12.0, 4.7e3, 2.5e-9, 1.75, 0.0),
        (3.0, 100.0, 2.5e-9, 1.8, 2.0),
        (9.0, 10.0, 1e-12, 1.2, 0.05),
        (0.4, 1e3, 1e-14, 1.0, 0.0),
    ];
    for (vs, r, is, n, rs) in cases {
        let mut net = Network::new();
        let gnd = net.ground();
        let (top, anode) = (net.add_node("top"), net.add_node("anode"));
        net.add_voltage_source(top, gnd, vs);
        net.add_resistor(top, anode, r);
        let params = DiodeParams {
            is,
            n,
            rs,
            ..DiodeParams::default()
        };
        let d = net.add_diode(anode, gnd, params);
        let op = solve(&net, &options).expect("solves");
        let want = series_current(vs, r + rs, is, n * vt);
        let got = op.current(d).unwrap_or(f64::NAN);
        // gmin (1e-12 S) across the junction adds at most ~1e-12 A.
        assert!(
            rel_err(got, want) < 1e-6 || (got - want).abs() < 1e-11,
            "Vs={vs} R={r}: got {got}, want {want}"
        );
        let v_anode = op.voltage(anode).unwrap_or(f64::NAN);
        assert!(rel_err(v_anode, vs - r * want) < 1e-6, "anode {v_anode}");
        assert!(rel_err(op.power(d).unwrap_or(0.0), v_anode * want) < 1e-5);
    }
}

#[test]
fn current_forced_diode_matches_inverse_shockley() {
    // Inverse of the Shockley equation plus the ohmic drop: V = N·Vt·ln(I/IS + 1) + I·RS.
    let options = SolveOptions::default();
    let vt = options.thermal_voltage();
    for (i, is, n, rs) in [
        (10e-3, 1e-14, 1.0, 0.0),
        (1e-6, 1e-14, 1.0, 0.0),
        (1.0, 2.5e-9, 1.75, 0.04),
        (20e-3, 1e-18, 2.0, 5.0),
    ] {
        let mut net = Network::new();
        let gnd = net.ground();
        let anode = net.add_node("anode");
        net.add_current_source(gnd, anode, i);
        let params = DiodeParams {
            is,
            n,
            rs,
            ..DiodeParams::default()
        };
        let d = net.add_diode(anode, gnd, params);
        let op = solve(&net, &options).expect("solves");
        let want = n * vt * (i / is + 1.0).ln() + i * rs;
        let got = op.voltage(anode).unwrap_or(f64::NAN);
        assert!(
            rel_err(got, want) < 1e-6,
            "I={i}: got {got} V, want {want} V"
        );
        assert!(rel_err(op.current(d).unwrap_or(0.0), i) < 1e-6);
    }
}

#[test]
fn reverse_biased_diode_passes_only_saturation_current() {
    // Shockley equation at large reverse bias: I → −IS (plus gmin·V).
    let mut net = Network::new();
    let gnd = net.ground();
    let (top, cathode) = (net.add_node("top"), net.add_node("k"));
    net.add_voltage_source(top, gnd, 12.0);
    net.add_resistor(top, cathode, 1e3);
    let d = net.add_diode(gnd, cathode, DiodeParams::default());
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    let i = op.current(d).unwrap_or(f64::NAN);
    assert!(i < 0.0 && i.abs() < 2e-11, "reverse current {i}");
    assert!((op.voltage(cathode).unwrap_or(0.0) - 12.0).abs() < 1e-6);
}

#[test]
fn zener_breakdown_clamps_near_bv() {
    // Exponential breakdown branch: reverse current IBV·exp((Vr − BV)/(N·Vt)), so
    // Vr = BV + N·Vt·ln(I/IBV) at the solved current; near BV for currents near IBV.
    let options = SolveOptions::default();
    let vt = options.thermal_voltage();
    let params = DiodeParams {
        bv: Some(5.1),
        ibv: 1e-3,
        ..DiodeParams::default()
    };
    let mut net = Network::new();
    let gnd = net.ground();
    let (top, k) = (net.add_node("top"), net.add_node("k"));
    net.add_voltage_source(top, gnd, 12.0);
    let r = net.add_resistor(top, k, 1e3);
    let z = net.add_diode(gnd, k, params);
    let op = solve(&net, &options).expect("solves");
    let vr = op.voltage(k).unwrap_or(f64::NAN);
    let i = op.current(r).unwrap_or(f64::NAN);
    assert!((vr - 5.1).abs() < 0.2, "clamp voltage {vr}");
    assert!(
        rel_err(vr, 5.1 + vt * (i / 1e-3).ln()) < 1e-6,
        "Vr {vr} at I {i}"
    );
    assert!(rel_err(op.current(z).unwrap_or(0.0), -i) < 1e-6);
}

#[test]
fn diodes_in_series_and_antiparallel() {
    // Two equal diodes in series share the drop equally (Shockley symmetry); an antiparallel
    // pair conducts the same current either way.
    let options = SolveOptions::default();
    let mut net = Network::new();
    let gnd = net.ground();
    let (a, m) = (net.add_node("a"), net.add_node("m"));
    net.add_current_source(gnd, a, 5e-3);
    net.add_diode(a, m, DiodeParams::default());
    net.add_diode(m, gnd, DiodeParams::default());
    let op = solve(&net, &options).expect("solves");
    let va = op.voltage(a).unwrap_or(f64::NAN);
    let vm = op.voltage(m).unwrap_or(f64::NAN);
    assert!(rel_err(va, 2.0 * vm) < 1e-6, "va {va} vm {vm}");

    let mut forward = 0.0;
    for sign in [1.0, -1.0] {
        let mut net = Network::new();
        let gnd = net.ground();
        let (top, x) = (net.add_node("top"), net.add_node("x"));
        net.add_voltage_source(top, gnd, sign * 3.0);
        let r = net.add_resistor(top, x, 220.0);
        net.add_diode(x, gnd, DiodeParams::default());
        net.add_diode(gnd, x, DiodeParams::default());
        let op = solve(&net, &options).expect("solves");
        let i = op.current(r).unwrap_or(f64::NAN);
        if sign > 0.0 {
            forward = i;
        } else {
            assert!(rel_err(-i, forward) < 1e-9, "{i} vs {forward}");
        }
    }
}

#[test]
fn fallbacks_rescue_a_starved_iteration_limit() {
    // A diode hard-driven from 5 V through 0.1 Ω needs several plain Newton iterations from
    // a zero start. With fewer allowed per attempt, gmin stepping and then source stepping must
    // still reach the Lambert-W solution.
    use kickback::analysis::dc::Fallback;
    let build = || {
        let mut net = Network::new();
        let gnd = net.ground();
        let (top, anode) = (net.add_node("top"), net.add_node("anode"));
        net.add_voltage_source(top, gnd, 5.0);
        let r = net.add_resistor(top, anode, 0.1);
        net.add_diode(anode, gnd, DiodeParams::default());
        (net, r)
    };
    let vt = SolveOptions::default().thermal_voltage();
    let want = series_current(5.0, 0.1, 1e-14, vt);
    for (per_attempt, fallback) in [
        (100, Fallback::None),
        (8, Fallback::GminStepping),
        (5, Fallback::SourceStepping),
    ] {
        let (net, r) = build();
        let options = SolveOptions {
            max_iterations: per_attempt,
            ..SolveOptions::default()
        };
        let op = solve(&net, &options).expect("solves");
        assert_eq!(
            op.fallback(),
            fallback,
            "{per_attempt} iterations per attempt"
        );
        assert!(rel_err(op.current(r).unwrap_or(0.0), want) < 1e-6);
        assert!(op.iterations() <= options.max_total_iterations);
    }
}

/// A loop with no source in it carries no current (Kirchhoff's voltage law: the drops round a
/// loop of passive parts sum to zero, so a resistor and a forward-only diode in a closed ring
/// settle at zero). Here the ring is a 24 V rail's 8 Ω winding resistance, a micro-ohm stand-in
/// for the winding's inductance and a freewheel diode back to the rail, with scale currents of
/// Schottky magnitude: every combination must settle at zero current, not wander at the
/// rounding level of 24 V forever.
#[test]
fn a_sourceless_ring_through_a_micro_ohm_winding_settles_at_zero() {
    let options = SolveOptions::default();
    for (is, n) in [(1e-6, 1.0), (1e-6, 1.05), (1e-14, 1.0), (2.5e-9, 1.75)] {
        for stand_in_ohms in [1e-6, 1e-3] {
            let mut net = Network::new();
            let gnd = net.ground();
            let (rail, x, d) = (net.add_node("rail"), net.add_node("x"), net.add_node("d"));
            net.add_voltage_source(rail, gnd, 24.0);
            net.add_resistor(rail, x, 8.0);
            net.add_resistor(x, d, stand_in_ohms);
            let params = DiodeParams {
                is,
                n,
                ..DiodeParams::default()
            };
            let diode = net.add_diode(d, rail, params);
            let op = solve(&net, &options)
                .unwrap_or_else(|e| panic!("IS {is}, N {n}, {stand_in_ohms} Ω: {e}"));
            let current = op.current(diode).unwrap_or(f64::NAN);
            assert!(current.abs() < 1e-6, "IS {is}, N {n}: {current} A");
            let v = op.voltage(d).unwrap_or(f64::NAN);
            assert!((v - 24.0).abs() < 1e-4, "IS {is}, N {n}: {v} V");
        }
    }
}
