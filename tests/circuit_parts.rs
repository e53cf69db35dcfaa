//! Part knowledge in the built circuit: kinds, pin roles, part data and its provenance.

#[path = "circuit_support.rs"]
mod support;

use kickback::circuit::{Kind, PinRole};
use kickback::config::Config;
use support::{config, device, el, Deck};

fn roles(circuit: &kickback::circuit::Circuit, path: &str) -> Vec<PinRole> {
    device(circuit, path).pins.iter().map(|p| p.role).collect()
}

#[test]
fn kinds_follow_letters_and_models() {
    let (circuit, findings, _) = Deck::new()
        .model("QN", "NPN", &[])
        .model("QP", "PNP", &[])
        .model("MP", "PMOS", &[])
        .model("MN", "NMOS", &[])
        .model("DSW", "D", &[])
        .model("DZENER5", "D", &[("bv", 5.1)])
        .with(el("R1", "a b").value(1e3))
        .with(el("C1", "a b").value(1e-6))
        .with(el("L1", "a b").value(1e-3))
        .with(el("D1", "a b").model("DSW"))
        .with(el("D2", "a b").model("D1N5819"))
        .with(el("D3", "a b").model("DZENER5"))
        .with(el("Q1", "c b e").model("QN"))
        .with(el("Q2", "c b e").model("QP"))
        .with(el("M1", "d g s s").model("MP"))
        .with(el("M2", "d g s s").model("MN"))
        .with(el("M3", "d g s s").model("UNDEFINED"))
        .with(el("M4", "d g s s").model("2N7000"))
        .with(el("J1", "d g s").model("JX"))
        .with(el("V1", "a 0").value(5.0))
        .with(el("I1", "a 0").value(1e-3))
        .with(el("E1", "a 0 b 0").value(2.0))
        .with(el("F1", "a 0").value(2.0))
        .with(el("G1", "a 0 b 0").value(2.0))
        .with(el("H1", "a 0").value(2.0))
        .with(el("B1", "a 0"))
        .with(el("S1", "a b c 0").model("SW"))
        .with(el("W1", "a b").model("CSW"))
        .with(el("K1", "").value(0.99))
        .with(el("T1", "a 0 b 0"))
        .with(el("A1", "a b"))
        .with(el("X1", "0 a b c d e f g").kept("NE555", ""))
        .with(el("X2", "a b").kept("StirMotor", ""))
        .with(el("X3", "a b").kept("MYSTERY", ""))
        .build(&Config::default());
    let want = [
        ("R1", Kind::Resistor),
        ("C1", Kind::Capacitor),
        ("L1", Kind::Inductor),
        ("D1", Kind::Diode),
        ("D2", Kind::Schottky),
        ("D3", Kind::Zener),
        ("Q1", Kind::Npn),
        ("Q2", Kind::Pnp),
        ("M1", Kind::Pmos),
        ("M2", Kind::Nmos),
        ("M3", Kind::Nmos),
        ("M4", Kind::Nmos),
        ("J1", Kind::Jfet),
        ("V1", Kind::VoltageSource),
        ("I1", Kind::CurrentSource),
        ("E1", Kind::ControlledSource),
        ("F1", Kind::ControlledSource),
        ("G1", Kind::ControlledSource),
        ("H1", Kind::ControlledSource),
        ("B1", Kind::ControlledSource),
        ("S1", Kind::Switch),
        ("W1", Kind::Switch),
        ("K1", Kind::Coupling),
        ("T1", Kind::TransmissionLine),
        ("A1", Kind::Unknown),
        ("X1", Kind::Timer555),
        ("X2", Kind::DcMotor),
        ("X3", Kind::Unknown),
    ];
    for (path, kind) in want {
        assert_eq!(device(&circuit, path).kind, kind, "{path}");
    }
    assert_eq!(
        circuit.devices().len(),
        want.len(),
        "one device per element"
    );
    assert!(device(&circuit, "K1").pins.is_empty());
    // A zener's BV is its zener voltage, not a reverse rating.
    let d3 = device(&circuit, "D3");
    assert_eq!(d3.data.value("vz"), Some(5.1));
    assert_eq!(d3.data.value("vrrm"), None);
    assert!(findings.is_empty(), "{findings:?}");
}

#[test]
fn config_kind_always_wins() {
    let cfg = config(
        r#"
[parts.DSW]
kind = "tvs"

[elements."L1"]
kind = "dc-motor"

[parts.NE555]
kind = "timer-555-cmos"
"#,
    );
    let (circuit, findings, _) = Deck::new()
        .model("DSW", "D", &[])
        .with(el("D1", "a b").model("DSW"))
        .with(el("L1", "a b").value(2e-3))
        .with(el("X1", "0 a b c d e f g").kept("NE555", ""))
        .build(&cfg);
    assert_eq!(device(&circuit, "D1").kind, Kind::Tvs);
    assert_eq!(device(&circuit, "L1").kind, Kind::DcMotor);
    assert_eq!(device(&circuit, "X1").kind, Kind::Timer555Cmos);
    assert_eq!(
        roles(&circuit, "L1"),
        [PinRole::Pos, PinRole::Neg],
        "a load keeps pos neg"
    );
    assert!(findings.is_empty(), "{findings:?}");
}

#[test]
fn timer_ports_map_by_name_then_dip_order() {
    use PinRole::*;
    let cfg = config(
        r#"
[parts.ODD555]
pins = ["vcc", "gnd", "out", "trig", "thr", "dis", "ctrl", "reset"]
"#,
    );
    let (circuit, findings, _) = Deck::new()
        .with(el("X1", "n1 n2 n3 n4 n5 n6 n7 n8").kept(
            "NE555",
            "THRESHOLD VCC TRIGGER GND DISCHARGE OUTPUT CONTROL RESETbar",
        ))
        .with(el("X2", "n1 n2 n3 n4 n5 n6 n7 n8").kept("NE555", "p1 p2 p3 p4 p5 p6 p7 p8"))
        .with(el("X3", "n1 n2 n3 n4 n5 n6 n7 n8").kept("ODD555", "a b c d e f g h"))
        .with(el("X4", "n1 n2 n3 n4 n5 n6 n7 n8").kept("TIMER555", "VN TR Q R CV THR DIS VP"))
        .build(&cfg);
    assert_eq!(
        roles(&circuit, "X1"),
        [Thr, Vcc, Trig, Gnd, Dis, Out, Ctrl, Reset]
    );
    assert_eq!(
        roles(&circuit, "X2"),
        [Gnd, Trig, Out, Reset, Ctrl, Thr, Dis, Vcc]
    );
    assert_eq!(
        roles(&circuit, "X3"),
        [Vcc, Gnd, Out, Trig, Thr, Dis, Ctrl, Reset]
    );
    assert_eq!(
        roles(&circuit, "X4"),
        [Gnd, Trig, Out, Reset, Ctrl, Thr, Dis, Vcc]
    );
    let x1 = device(&circuit, "X1");
    assert_eq!(x1.pin(Dis), circuit.net_named("n5"));
    assert!(findings.is_empty(), "{findings:?}");
}

#[test]
fn transistor_diode_and_pot_roles() {
    use PinRole::*;
    let (circuit, _, _) = Deck::new()
        .model("MN", "NMOS", &[])
        .model("QN", "NPN", &[])
        .with(el("M1", "d g s b").model("MN"))
        .with(el("Q1", "c b e").model("QN"))
        .with(el("D1", "a k").model("D1N4148"))
        .with(el("X1", "a w b").kept("POT10K", "CW W CCW"))
        .with(el("X2", "s g d").kept("2N7000", "S G D"))
        .with(el("E1", "a 0 b 0").value(1.0))
        .with(el("X3", "o").kept("MCU_PIN", "GPIO"))
        .build(&Config::default());
    assert_eq!(roles(&circuit, "M1"), [Drain, Gate, Source, Bulk]);
    assert_eq!(roles(&circuit, "Q1"), [Collector, Base, Emitter]);
    assert_eq!(roles(&circuit, "D1"), [Anode, Cathode]);
    assert_eq!(roles(&circuit, "X1"), [B, Wiper, A]);
    assert_eq!(roles(&circuit, "X2"), [Source, Gate, Drain]);
    assert_eq!(roles(&circuit, "E1"), [Pos, Neg, CtrlPos, CtrlNeg]);
    assert_eq!(roles(&circuit, "X3"), [Out]);
}

#[test]
fn ports_that_do_not_fit_are_a_part_pins_finding() {
    let cfg = config(
        r#"
[elements."XPUMP"]
pins = ["pos", "neg"]
"#,
    );
    let (circuit, findings, netlist) = Deck::new()
        .with(el("R0", "a 0").value(1.0))
        .with(el("XCH1.X1", "a b c").kept("NE555", "a1 a2 a3"))
        .with(el("XPUMP", "a b c").kept("PUMPMOTOR", "1 2 3"))
        .build(&cfg);
    assert_eq!(findings.len(), 2, "{findings:#?}");
    let timer = &findings[0];
    assert_eq!(timer.rule, "part-pins");
    // The deck says too little: a note; the timer's roles stay unknown (nothing is guessed).
    assert_eq!(timer.severity, kickback::diagnostic::Severity::Note);
    assert_eq!(device(&circuit, "XCH1.X1").kind, Kind::Unknown);
    assert_eq!(timer.span, netlist.elements[1].span);
    assert_eq!(timer.element.as_deref(), Some("X1"));
    assert_eq!(timer.instance_path.as_deref(), Some("XCH1.X1"));
    assert_eq!(timer.instances.len(), 1);
    assert!(
        timer.message.contains("count does not fit"),
        "{}",
        timer.message
    );
    assert_eq!(timer.labels.len(), 1, "the .subckt line is labelled");
    assert!(timer
        .help
        .as_deref()
        .is_some_and(|h| h.contains("[parts.NE555]")));
    let pump = &findings[1];
    assert!(
        pump.message.contains("2 roles for 3 ports"),
        "{}",
        pump.message
    );
    // A wrong `pins` list is the config's own mistake: a warning.
    assert_eq!(pump.severity, kickback::diagnostic::Severity::Warning);
    assert_eq!(device(&circuit, "XPUMP").pins[2].role, PinRole::Other);
}

#[test]
fn a_part_known_only_from_config_is_a_device() {
    let cfg = config(
        r#"
[parts.PUMP12]
kind = "dc-motor"
rated_voltage = 12
stall_current = "1.8"
inductance = "2.2m"
"#,
    );
    let (circuit, findings, _) = Deck::new()
        .with(el("XP1", "vbat sw").kept("PUMP12", ""))
        .build(&cfg);
    let pump = device(&circuit, "XP1");
    assert_eq!(pump.kind, Kind::DcMotor);
    assert_eq!(pump.pins.len(), 2);
    assert_eq!(pump.data.value("rated_voltage"), Some(12.0));
    assert_eq!(pump.data.value("stall_current"), Some(1.8));
    assert!((pump.data.value("inductance").unwrap_or(0.0) - 2.2e-3).abs() < 1e-15);
    assert_eq!(
        pump.data.get("inductance").map(|r| r.source.as_str()),
        Some("from config [parts.PUMP12]")
    );
    assert!(findings.is_empty());
}

/// One rating offered by every source at once; each test run removes the strongest source and
/// the next one must show through: [elements] > [parts] > instance parameter > .model >
/// built-in library > kind default.
#[test]
fn provenance_order_strongest_first() {
    let layers = [
        (
            "[elements.\"XCH2.M1\"]\npd_max = 0.1\n",
            0.1,
            "from config [elements.\"XCH2.M1\"]",
        ),
        (
            "[parts.M2N7000]\npd_max = 0.2\n",
            0.2,
            "from config [parts.M2N7000]",
        ),
    ];
    let deck = |with_instance: bool, with_model: bool, model: &str| {
        let mut m1 = el("XCH2.M1", "d g 0 0").model(model);
        if with_instance {
            m1 = m1.param("pd_max", 0.3);
        }
        let params: &[(&str, f64)] = if with_model { &[("pd_max", 0.35)] } else { &[] };
        Deck::new().model(model, "NMOS", params).with(m1)
    };
    let source_of = |circuit: &kickback::circuit::Circuit| {
        let rated = device(circuit, "xch2.m1").data.get("pd_max").cloned();
        rated
            .map(|r| (r.value, r.source))
            .unwrap_or((f64::NAN, String::new()))
    };

    let all = format!("{}\n{}", layers[0].0, layers[1].0);
    let (circuit, _, _) = deck(true, true, "M2N7000").build(&config(&all));
    assert_eq!(source_of(&circuit), (0.1, layers[0].2.to_string()));

    let (circuit, _, _) = deck(true, true, "M2N7000").build(&config(layers[1].0));
    assert_eq!(source_of(&circuit), (0.2, layers[1].2.to_string()));

    let (circuit, _, _) = deck(true, true, "M2N7000").build(&Config::default());
    assert_eq!(
        source_of(&circuit),
        (0.3, "from instance parameter pd_max".to_string())
    );

    let (circuit, _, _) = deck(false, true, "M2N7000").build(&Config::default());
    assert_eq!(
        source_of(&circuit),
        (0.35, "from .model M2N7000 PD_MAX".to_string())
    );

    // 2N7000 registration (from memory): PD 400 mW.
    let (circuit, _, _) = deck(false, false, "M2N7000").build(&Config::default());
    assert_eq!(
        source_of(&circuit),
        (
            0.4,
            "built-in 2N7000 (JEDEC registration data, from memory)".to_string()
        )
    );

    let (circuit, _, _) = deck(false, false, "MGENERIC").build(&Config::default());
    assert_eq!(
        source_of(&circuit),
        (
            1.0,
            "built-in default for nmos (common practice: TO-220 in free air)".to_string()
        )
    );
}

#[test]
fn model_parameters_and_library_ratings() {
    let (circuit, _, _) = Deck::new()
        .model(
            "DSW",
            "D",
            &[
                ("bv", 40.0),
                ("is", 2e-9),
                ("n", 1.8),
                ("rs", 0.05),
                ("tt", 5e-9),
            ],
        )
        .model(
            "MPWR",
            "NMOS",
            &[("vto", 2.9), ("kp", 20.0), ("lambda", 0.01)],
        )
        .model("QSW", "NPN", &[("bf", 150.0)])
        .with(el("D1", "a k").model("DSW"))
        .with(el("D2", "a k").model("D1N4007"))
        .with(el("D3", "a k").model("DPLAIN"))
        .with(el("M1", "d g s s").model("MPWR"))
        .with(el("Q1", "c b e").model("QSW"))
        .build(&Config::default());
    let d1 = &device(&circuit, "D1").data;
    assert_eq!(d1.value("vrrm"), Some(40.0));
    assert_eq!(
        d1.get("vrrm").map(|r| r.source.as_str()),
        Some("from .model DSW BV")
    );
    assert_eq!(d1.value("bv"), Some(40.0));
    assert_eq!(d1.value("is"), Some(2e-9));
    assert_eq!(d1.value("n"), Some(1.8));
    assert_eq!(d1.value("rs"), Some(0.05));
    assert_eq!(d1.value("tt"), Some(5e-9));

    // 1N4007 registration (from memory): 1000 V, 1 A average, 30 A surge.
    let d2 = &device(&circuit, "D2").data;
    assert_eq!(d2.value("vrrm"), Some(1000.0));
    assert_eq!(d2.value("if_avg"), Some(1.0));
    assert_eq!(d2.value("ifsm"), Some(30.0));
    assert!(
        d2.value("trr").is_some_and(|t| t > 1e-6),
        "standard recovery"
    );
    assert_eq!(
        d2.get("vrrm").map(|r| r.source.as_str()),
        Some("built-in 1N4007 (JEDEC registration data, from memory)")
    );

    // Nothing known: no reverse rating is guessed, but the DC model has SPICE's defaults.
    let d3 = &device(&circuit, "D3").data;
    assert_eq!(d3.value("vrrm"), None);
    assert_eq!(d3.value("is"), Some(1e-14));
    assert_eq!(d3.value("n"), Some(1.0));

    let m1 = &device(&circuit, "M1").data;
    assert_eq!(m1.value("vto"), Some(2.9));
    assert_eq!(m1.value("kp"), Some(20.0));
    assert_eq!(m1.value("lambda"), Some(0.01));
    assert_eq!(device(&circuit, "Q1").data.value("bf"), Some(150.0));
}

#[test]
fn kind_defaults() {
    let cfg = config(
        r#"
[parts.MLOGIC]
vgs_th_max = 2.0
"#,
    );
    let (circuit, _, _) = Deck::new()
        .with(el("M1", "d g s s").model("MSTD"))
        .with(el("M2", "d g s s").model("MLOGIC"))
        .with(el("X1", "1 2 3 4 5 6 7 8").kept("NE555", ""))
        .with(el("X2", "1 2 3 4 5 6 7 8").kept("TLC555", ""))
        .with(el("R1", "a b").value(4.7e3))
        .with(el("X3", "a w b").kept("POT", "A W B").param("r", 100e3))
        .with(el("X4", "o 0").kept("GPIO_OUT", ""))
        .build(&cfg);
    // DESIGN defaults for a standard-threshold nmos: vgs_th 2..4 V, rated at 10 V, max 20 V.
    let m1 = &device(&circuit, "M1").data;
    assert_eq!(m1.value("vgs_th_min"), Some(2.0));
    assert_eq!(m1.value("vgs_th_max"), Some(4.0));
    assert_eq!(m1.value("vgs_rated"), Some(10.0));
    assert_eq!(m1.value("vgs_max"), Some(20.0));
    assert_eq!(m1.value("vds_max"), None, "never guessed");
    assert_eq!(
        m1.get("vgs_max").map(|r| r.source.as_str()),
        Some("built-in default for nmos")
    );
    // A part whose vgs_th_max is at most 2.5 V is logic-level: vgs_max 12 V.
    let m2 = &device(&circuit, "M2").data;
    assert_eq!(m2.value("vgs_max"), Some(12.0));
    assert!(m2.value("vgs_th_min").is_some_and(|v| v <= 2.0));

    // Bipolar 555 (from memory): 4.5–16 V, abs max 18 V, 1.7 V high drop, 200 mA output,
    // discharge 15 mA characterised / 100 mA max, ladder 3 × 5 kΩ, bias 0.5 µA / 0.25 µA.
    let t = &device(&circuit, "X1").data;
    for (name, want) in [
        ("supply_min", 4.5),
        ("supply_max", 16.0),
        ("supply_abs_max", 18.0),
        ("out_high_drop", 1.7),
        ("out_current_max", 0.2),
        ("discharge_current_rated", 0.015),
        ("discharge_current_max", 0.1),
        ("ladder_resistance", 5000.0),
        ("trigger_bias_current", 0.5e-6),
        ("threshold_bias_current", 0.25e-6),
    ] {
        assert_eq!(t.value(name), Some(want), "{name}");
    }
    assert_eq!(
        t.get("supply_max").map(|r| r.source.as_str()),
        Some("built-in default for timer-555 (from memory)")
    );
    // CMOS 555 (from memory): 2–15 V.
    let c = &device(&circuit, "X2");
    assert_eq!(c.kind, Kind::Timer555Cmos);
    assert_eq!(c.data.value("supply_min"), Some(2.0));
    assert_eq!(c.data.value("supply_max"), Some(15.0));
    assert!(c.data.value("out_high_drop").is_some_and(|v| v < 1.7));

    let r1 = &device(&circuit, "R1").data;
    assert_eq!(r1.value("resistance"), Some(4.7e3));
    assert_eq!(r1.value("power_rating"), Some(0.25), "common practice");

    let pot = &device(&circuit, "X3").data;
    assert_eq!(pot.value("resistance"), Some(100e3));
    // √(power_rating / R) = √(0.25 / 100k) ≈ 1.58 mA (common practice).
    let wiper = pot.value("wiper_current_max").unwrap_or(0.0);
    assert!((wiper - (0.25f64 / 100e3).sqrt()).abs() < 1e-12, "{wiper}");

    let logic = &device(&circuit, "X4");
    assert_eq!(logic.kind, Kind::LogicOutput);
    assert_eq!(logic.data.value("voh"), Some(3.3));
    assert!(logic.data.value("out_current_max").is_some());
}

#[test]
fn load_subckt_parameters_become_ratings() {
    let (circuit, _, _) = Deck::new()
        .with(
            el("XM", "a b")
                .kept("DOSE_MOTOR", "P N")
                .param("r", 6.5)
                .param("l", 1.5e-3)
                .param("rated_voltage", 12.0),
        )
        .with(el("C1", "a 0").value(470e-6).param("polarized", 1.0))
        .build(&Config::default());
    let motor = &device(&circuit, "XM").data;
    assert_eq!(motor.value("resistance"), Some(6.5));
    assert_eq!(motor.value("inductance"), Some(1.5e-3));
    assert_eq!(
        motor.get("rated_voltage").map(|r| r.source.as_str()),
        Some("from instance parameter rated_voltage")
    );
    let cap = &device(&circuit, "C1").data;
    assert_eq!(cap.value("capacitance"), Some(470e-6));
    assert_eq!(cap.value("polarized"), Some(1.0));
}

#[test]
fn exact_part_names_beat_globs_whatever_the_order() {
    let cfg = config(
        r#"
[parts."pump*"]
kind = "dc-motor"
rated_voltage = 24
stall_current = 3

[parts.PUMP12]
rated_voltage = 12
"#,
    );
    assert!(kickback::circuit::parts::keeps_whole("Pump12", &cfg));
    let (circuit, _, _) = Deck::new()
        .with(el("XP", "a b").kept("Pump12", ""))
        .build(&cfg);
    let pump = device(&circuit, "XP");
    assert_eq!(pump.kind, Kind::DcMotor, "kind from the glob");
    assert_eq!(
        pump.data.value("rated_voltage"),
        Some(12.0),
        "the exact name wins"
    );
    assert_eq!(
        pump.data.get("stall_current").map(|r| r.source.as_str()),
        Some("from config [parts.\"pump*\"]")
    );
}

/// A model card's VTO is a typical threshold; with no datasheet limits given, the limits are
/// taken about 1 V either side of it (from memory: the usual spread of a datasheet's
/// V_GS(th) min/max around its typical value).
#[test]
fn threshold_limits_follow_the_model_vto() {
    let deck = "vto\nM1 d g 0 0 NLL\nR1 d 0 1k\nR2 g 0 1k\n.model NLL NMOS (VTO=1.1 KP=30)\n.end\n";
    let (netlist, _, _) = kickback::netlist::parse_str("vto.cir", deck);
    let (circuit, _) = kickback::circuit::Circuit::build(&netlist, &Config::default());
    let m1 = device(&circuit, "M1");
    let max = m1.data.value("vgs_th_max").unwrap_or(0.0);
    let min = m1.data.value("vgs_th_min").unwrap_or(0.0);
    assert!((max - 2.1).abs() < 1e-12, "vgs_th_max {max}");
    assert!((min - 0.55).abs() < 1e-12, "vgs_th_min {min}");
    assert!(m1
        .data
        .get("vgs_th_max")
        .is_some_and(|r| r.source.contains("VTO")));
    // A logic-level threshold gets logic-level drive defaults too.
    assert_eq!(m1.data.value("vgs_rated"), Some(4.5));
}
