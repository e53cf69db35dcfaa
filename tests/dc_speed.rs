//! A motor-drive-sized network (30 nodes, 5 nonlinear devices) for the DC engine: it must
//! solve, and `cargo test --release --test dc_speed -- --ignored --nocapture` reports how long
//! one solve takes.

use std::time::Instant;

use kickback::analysis::dc::{
    solve, solve_from, BjtParams, BjtPolarity, DiodeParams, MosParams, MosPolarity, Network,
    SolveOptions,
};

/// Two channels of a drive board (values invented): a divider chain biasing everything, a
/// BJT level shifter driving a low-side N-channel switch into a motor winding with its
/// freewheel diode, a PNP high-side driver into a solenoid, a P-channel switch on a pump, and
/// an R–2R sense ladder.
fn drive_board() -> Network {
    drive_board_at(12.0)
}

fn drive_board_at(supply: f64) -> Network {
    let mut net = Network::new();
    let gnd = net.ground();
    let vcc = net.add_node("vcc");
    let v5 = net.add_node("v5");
    net.add_voltage_source(vcc, gnd, supply);
    net.add_voltage_source(v5, gnd, 5.0);

    // Channel 1: logic pin → base resistor → NPN → pull-up → NMOS gate → motor.
    let pin = net.add_node("pin1");
    let base1 = net.add_node("q1_base");
    let gate1 = net.add_node("m1_gate");
    let motor1 = net.add_node("motor1");
    net.add_voltage_source(pin, gnd, 3.3);
    net.add_resistor(pin, base1, 4.7e3);
    net.add_resistor(base1, gnd, 47e3);
    net.add_resistor(vcc, gate1, 2.2e3);
    let npn = BjtParams {
        polarity: BjtPolarity::Npn,
        is: 1e-14,
        beta_f: 150.0,
        beta_r: 2.0,
        n: 1.0,
    };
    net.add_bjt(gate1, base1, gnd, npn);
    let nmos = MosParams {
        polarity: MosPolarity::N,
        vto: 2.5,
        k: 15.0,
        lambda: 0.01,
    };
    net.add_mosfet(motor1, gate1, gnd, nmos);
    net.add_resistor(vcc, motor1, 6.0);
    let flyback = DiodeParams {
        is: 2.5e-9,
        n: 1.75,
        rs: 0.04,
        bv: Some(100.0),
        ibv: 1e-5,
    };
    net.add_diode(motor1, vcc, flyback);

    // Channel 2: PNP high-side into a solenoid, enabled by a divider.
    let base2 = net.add_node("q2_base");
    let sol = net.add_node("solenoid");
    net.add_resistor(vcc, base2, 10e3);
    net.add_resistor(base2, gnd, 22e3);
    let pnp = BjtParams {
        polarity: BjtPolarity::Pnp,
        ..npn
    };
    net.add_bjt(sol, base2, vcc, pnp);
    net.add_resistor(sol, gnd, 24.0);

    // Pump on a P-channel switch whose gate sits on a divider.
    let gate3 = net.add_node("m3_gate");
    let pump = net.add_node("pump");
    net.add_resistor(vcc, gate3, 10e3);
    net.add_resistor(gate3, gnd, 15e3);
    let pmos = MosParams {
        polarity: MosPolarity::P,
        vto: 2.0,
        k: 8.0,
        lambda: 0.02,
    };
    net.add_mosfet(pump, gate3, vcc, pmos);
    net.add_resistor(pump, gnd, 8.0);

    // Bias chain and sense ladder fill the rest of the 30 nodes (ground included).
    let mut previous = v5;
    for k in 0..19 {
        let node = net.add_node(&format!("ladder{k}"));
        net.add_resistor(previous, node, 10e3);
        net.add_resistor(node, gnd, 20e3);
        previous = node;
    }
    net.add_resistor(previous, gnd, 20e3);
    net
}

#[test]
fn drive_board_solves() {
    let net = drive_board();
    assert_eq!(net.node_count(), 30);
    let op = solve(&net, &SolveOptions::default()).expect("the board solves");
    let motor = net
        .node("motor1")
        .and_then(|n| op.voltage(n))
        .unwrap_or(f64::NAN);
    // The level shifter's NPN is on, so the NMOS gate is pulled low and the motor is off:
    // its drain floats up to the supply through the winding.
    assert!((motor - 12.0).abs() < 1e-3, "motor node {motor}");
    assert!(op.iterations() < 100, "iterations {}", op.iterations());
}

#[test]
fn supply_sweep_from_previous_point_matches_cold_solves() {
    // Warm starts are an optimisation only: each corner must agree with a cold solve.
    let options = SolveOptions::default();
    let mut previous = solve(&drive_board_at(10.0), &options).expect("solves");
    for step in 1..=8 {
        let supply = 10.0 + 0.5 * f64::from(step);
        let net = drive_board_at(supply);
        let warm = solve_from(&net, &options, &previous).expect("solves");
        let cold = solve(&net, &options).expect("solves");
        assert!(
            warm.iterations() < cold.iterations(),
            "{} vs {}",
            warm.iterations(),
            cold.iterations()
        );
        for k in 0..net.node_count() {
            let name = format!("ladder{k}");
            for node in [net.node("pump"), net.node("solenoid"), net.node(&name)]
                .into_iter()
                .flatten()
            {
                let (w, c) = (
                    warm.voltage(node).unwrap_or(f64::NAN),
                    cold.voltage(node).unwrap_or(0.0),
                );
                assert!((w - c).abs() <= 1e-6 * c.abs() + 1e-6, "{name}: {w} vs {c}");
            }
        }
        previous = warm;
    }
}

#[test]
#[ignore = "timing report; run with --release"]
fn time_one_solve() {
    let net = drive_board();
    let options = SolveOptions::default();
    let runs = 200;
    let started = Instant::now();
    let mut iterations = 0;
    for _ in 0..runs {
        let op = solve(&net, &options).expect("the board solves");
        iterations = op.iterations();
    }
    let each = started.elapsed() / runs;
    println!(
        "one solve of 30 nodes / 5 nonlinear devices: {each:?} ({iterations} Newton iterations)"
    );
    let nearby = drive_board_at(12.5);
    let start = solve(&net, &options).expect("the board solves");
    let started = Instant::now();
    for _ in 0..runs {
        let op = solve_from(&nearby, &options, &start).expect("the board solves");
        iterations = op.iterations();
    }
    let each = started.elapsed() / runs;
    println!("the same from a neighbouring corner's solution: {each:?} ({iterations} iterations)");
}
