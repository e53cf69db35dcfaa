//! DC engine against closed-form linear networks.

use kickback::analysis::dc::{solve, thevenin, Network, SolveOptions};

fn assert_close(got: Option<f64>, want: f64, rel: f64) {
    let got = got.unwrap_or(f64::NAN);
    let tol = rel * want.abs().max(1e-12);
    assert!((got - want).abs() <= tol, "got {got}, want {want} (±{tol})");
}

#[test]
fn voltage_divider_matches_divider_rule() {
    // Voltage-divider rule: Vout = Vin·R2/(R1+R2); Ohm's law for the current.
    let mut net = Network::new();
    let gnd = net.ground();
    let (vin, out) = (net.add_node("vin"), net.add_node("out"));
    let src = net.add_voltage_source(vin, gnd, 12.0);
    let r1 = net.add_resistor(vin, out, 10e3);
    let r2 = net.add_resistor(out, gnd, 20e3);
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    assert_close(op.voltage(out), 12.0 * 20e3 / 30e3, 1e-12);
    assert_close(op.current(r1), 12.0 / 30e3, 1e-12);
    assert_close(op.current(r2), 12.0 / 30e3, 1e-12);
    // A delivering source carries negative current into its + terminal and absorbs
    // negative power; the resistors dissipate I²R.
    assert_close(op.current(src), -12.0 / 30e3, 1e-12);
    assert_close(op.power(src), -12.0 * 12.0 / 30e3, 1e-12);
    assert_close(op.power(r1), (12.0f64 / 30e3).powi(2) * 10e3, 1e-12);
    assert_eq!(op.fallback(), kickback::analysis::dc::Fallback::None);
}

/// Wheatstone bridge: top–A R1, A–ground R2, top–B R3, B–ground R4, galvanometer Rg A–B.
fn bridge(r: [f64; 4], rg: f64, vs: f64) -> (f64, f64) {
    let mut net = Network::new();
    let gnd = net.ground();
    let (top, a, b) = (net.add_node("top"), net.add_node("a"), net.add_node("b"));
    net.add_voltage_source(top, gnd, vs);
    net.add_resistor(top, a, r[0]);
    net.add_resistor(a, gnd, r[1]);
    net.add_resistor(top, b, r[2]);
    net.add_resistor(b, gnd, r[3]);
    let galvanometer = net.add_resistor(a, b, rg);
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    (
        op.current(galvanometer).unwrap_or(f64::NAN),
        op.voltage_between(a, b).unwrap_or(f64::NAN),
    )
}

#[test]
fn balanced_wheatstone_bridge_carries_no_current() {
    // Wheatstone balance condition: R1/R2 = R3/R4 gives zero bridge current.
    let (i, v) = bridge([1e3, 2e3, 3.3e3, 6.6e3], 500.0, 10.0);
    assert!(i.abs() < 1e-15, "bridge current {i}");
    assert!(v.abs() < 1e-12, "bridge voltage {v}");
}

#[test]
fn unbalanced_wheatstone_bridge_matches_thevenin_closed_form() {
    // Thevenin's theorem applied to the bridge: Vth = Vs·(R2/(R1+R2) − R4/(R3+R4)),
    // Rth = R1∥R2 + R3∥R4, Ig = Vth/(Rth + Rg).
    let (r, rg, vs) = ([1e3, 2.2e3, 4.7e3, 3.9e3], 680.0, 9.0);
    let par = |x: f64, y: f64| x * y / (x + y);
    let vth = vs * (r[1] / (r[0] + r[1]) - r[3] / (r[2] + r[3]));
    let rth = par(r[0], r[1]) + par(r[2], r[3]);
    let (i, v) = bridge(r, rg, vs);
    assert_close(Some(i), vth / (rth + rg), 1e-10);
    assert_close(Some(v), vth * rg / (rth + rg), 1e-10);
}

#[test]
fn r2r_ladder_halves_at_each_node() {
    // R-2R ladder terminated in 2R: every node sees R to ground looking onward, so each
    // series R and the rest of the ladder halve the voltage, V_k = Vref/2^k.
    let (r, vref, stages) = (10e3, 8.0, 8);
    let mut net = Network::new();
    let gnd = net.ground();
    let reference = net.add_node("ref");
    net.add_voltage_source(reference, gnd, vref);
    let mut previous = reference;
    let mut taps = Vec::new();
    for k in 1..=stages {
        let node = net.add_node(&format!("n{k}"));
        net.add_resistor(previous, node, r);
        net.add_resistor(node, gnd, 2.0 * r);
        taps.push(node);
        previous = node;
    }
    net.add_resistor(previous, gnd, 2.0 * r);
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    for (k, node) in taps.iter().enumerate() {
        assert_close(op.voltage(*node), vref / 2f64.powi(k as i32 + 1), 1e-10);
    }
}

#[test]
fn current_source_into_parallel_resistors() {
    // Ohm's law: 1 mA into 1 kΩ ∥ 3 kΩ = 750 Ω gives 0.75 V; the current divides inversely
    // to resistance. SPICE convention: current flows from p through the source to n.
    let mut net = Network::new();
    let gnd = net.ground();
    let node = net.add_node("x");
    let src = net.add_current_source(gnd, node, 1e-3);
    let r1 = net.add_resistor(node, gnd, 1e3);
    let r3 = net.add_resistor(node, gnd, 3e3);
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    assert_close(op.voltage(node), 0.75, 1e-12);
    assert_close(op.current(r1), 0.75e-3, 1e-12);
    assert_close(op.current(r3), 0.25e-3, 1e-12);
    assert_close(op.current(src), 1e-3, 1e-12);
    // The source delivers 0.75 mW: it absorbs −0.75 mW.
    assert_close(op.power(src), -0.75e-3, 1e-12);
}

#[test]
fn vcvs_amplifier_gain() {
    // An ideal voltage amplifier: Vout = A·Vin regardless of load.
    let mut net = Network::new();
    let gnd = net.ground();
    let (input, out) = (net.add_node("in"), net.add_node("out"));
    net.add_voltage_source(input, gnd, 0.25);
    net.add_vcvs(out, gnd, input, gnd, 20.0);
    net.add_resistor(out, gnd, 100.0);
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    assert_close(op.voltage(out), 5.0, 1e-12);
}

#[test]
fn non_inverting_amplifier_with_finite_open_loop_gain() {
    // Negative feedback formula: closed-loop gain G = A/(1 + A·β), β = Rg/(Rg + Rf).
    let (a, rf, rg, vin) = (1e5, 9e3, 1e3, 0.1);
    let mut net = Network::new();
    let gnd = net.ground();
    let (input, out, minus) = (net.add_node("in"), net.add_node("out"), net.add_node("fb"));
    net.add_voltage_source(input, gnd, vin);
    net.add_vcvs(out, gnd, input, minus, a);
    net.add_resistor(out, minus, rf);
    net.add_resistor(minus, gnd, rg);
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    let beta = rg / (rg + rf);
    assert_close(op.voltage(out), vin * a / (1.0 + a * beta), 1e-10);
}

#[test]
fn vccs_transconductance_into_load() {
    // Ohm's law on a transconductor: Gm·Vin flows from p through the source to n, so with
    // p = out it pulls current out of the load: Vout = −Gm·Vin·RL.
    let mut net = Network::new();
    let gnd = net.ground();
    let (input, out) = (net.add_node("in"), net.add_node("out"));
    net.add_voltage_source(input, gnd, 0.5);
    let gm = net.add_vccs(out, gnd, input, gnd, 2e-3);
    net.add_resistor(out, gnd, 4.7e3);
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    assert_close(op.voltage(out), -0.5 * 2e-3 * 4.7e3, 1e-12);
    assert_close(op.current(gm), 1e-3, 1e-12);
}

#[test]
fn ten_k_parallel_four_k_seven_is_about_3k2() {
    // Common practice: 10 kΩ ∥ 4.7 kΩ ≈ 3.2 kΩ (exactly 3197.3 Ω).
    let mut net = Network::new();
    let gnd = net.ground();
    let node = net.add_node("x");
    net.add_resistor(node, gnd, 10e3);
    net.add_resistor(node, gnd, 4.7e3);
    let th = thevenin(&net, node, &SolveOptions::default()).expect("solves");
    assert!((th.r_th - 3.2e3).abs() < 5.0, "r_th {}", th.r_th);
    assert_close(Some(th.r_th), 10e3 * 4.7e3 / 14.7e3, 1e-10);
    assert!(th.v_open.abs() < 1e-12);
}

#[test]
fn thevenin_of_a_divider() {
    // Thevenin's theorem: a divider is Vs·R2/(R1+R2) behind R1∥R2.
    let mut net = Network::new();
    let gnd = net.ground();
    let (vcc, mid) = (net.add_node("vcc"), net.add_node("mid"));
    net.add_voltage_source(vcc, gnd, 9.0);
    net.add_resistor(vcc, mid, 5e3);
    net.add_resistor(mid, gnd, 10e3);
    net.add_current_source(mid, gnd, 0.0);
    let th = thevenin(&net, mid, &SolveOptions::default()).expect("solves");
    assert_close(Some(th.v_open), 6.0, 1e-12);
    assert_close(Some(th.r_th), 5e3 * 10e3 / 15e3, 1e-10);
    // Loading it with 10 kΩ: the divider rule again on the equivalent.
    assert_close(
        Some(th.loaded_voltage(10e3)),
        6.0 * 10e3 / (10e3 + th.r_th),
        1e-12,
    );
    let at_ground = thevenin(&net, gnd, &SolveOptions::default()).expect("solves");
    assert_eq!((at_ground.v_open, at_ground.r_th), (0.0, 0.0));
}

#[test]
fn switch_states_and_zero_ohm_short() {
    // Ohm's law through a closed switch (r_on) and an open one (r_off); a 0 Ω resistor is an
    // ideal short whose current is solved as a branch current.
    let mut net = Network::new();
    let gnd = net.ground();
    let (vcc, a, b, c) = (
        net.add_node("vcc"),
        net.add_node("a"),
        net.add_node("b"),
        net.add_node("c"),
    );
    net.add_voltage_source(vcc, gnd, 5.0);
    let closed = net.add_switch(vcc, a, true, 0.5, 1e9);
    net.add_resistor(a, gnd, 99.5);
    let open = net.add_switch(vcc, b, false, 0.5, 1e9);
    net.add_resistor(b, gnd, 1e3);
    let short = net.add_resistor(a, c, 0.0);
    net.add_resistor(c, gnd, 1e6);
    let op = solve(&net, &SolveOptions::default()).expect("solves");
    let load = 99.5 * 1e6 / (99.5 + 1e6);
    assert_close(op.voltage(a), 5.0 * load / (load + 0.5), 1e-10);
    assert_close(op.voltage(c), 5.0 * load / (load + 0.5), 1e-10);
    assert_close(op.current(short), op.voltage(c).unwrap_or(0.0) / 1e6, 1e-9);
    assert_close(op.current(closed), 5.0 / (load + 0.5), 1e-10);
    assert_close(op.current(open), 5.0 / (1e9 + 1e3), 1e-9);
}

#[test]
fn start_from_another_network_is_ignored() {
    // solve_from only speeds a solve up: a foreign start gives the divider rule's answer.
    use kickback::analysis::dc::solve_from;
    let mut other = Network::new();
    let x = other.add_node("x");
    let gnd = other.ground();
    other.add_current_source(gnd, x, 1.0);
    other.add_resistor(x, gnd, 1e3);
    let foreign = solve(&other, &SolveOptions::default()).expect("solves");

    let mut net = Network::new();
    let gnd = net.ground();
    let (vin, out) = (net.add_node("vin"), net.add_node("out"));
    net.add_voltage_source(vin, gnd, 5.0);
    net.add_resistor(vin, out, 1e3);
    net.add_resistor(out, gnd, 4e3);
    let op = solve_from(&net, &SolveOptions::default(), &foreign).expect("solves");
    assert_close(op.voltage(out), 4.0, 1e-12);
}
