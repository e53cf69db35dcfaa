//! The switching rules against the facts contract: hand-written facts for small motor drives,
//! checked for what fires, where it points and the numbers it states.

mod motor_rules_kit;

use kickback::analysis::{Freewheel, FreewheelKind, Side};
use kickback::circuit::{Kind, PinRole, Rated};
use kickback::diagnostic::Severity;
use kickback::rules::{
    base_underdrive, flyback_missing, flyback_reversed, flyback_underrated, gate_cannot_turn_off,
    gate_overvoltage, gate_underdrive, shoot_through,
};
use motor_rules_kit::{
    driver, freewheel, load, point, pulse, range, rated, supply, switch, timer, value, Kit,
};

use PinRole::*;

/// A 12 V solenoid valve (24 Ω, 45 mH) on an NPN, driven from a 1 Hz pulse through 1 kΩ.
fn valve_on_npn(with_diode: Option<(&str, Kind, bool)>) -> Kit {
    let mut kit = Kit::new();
    let v12 = supply(&mut kit, "V12 v12 0 DC 12", 12.0);
    let vin = kit.source(
        "VVALV pwm 0 PULSE(0 3.3 0 1u 1u 0.5 1)",
        pulse(0.0, 3.3, 0.0, 0.5, 1.0),
    );
    let rb = kit.two("RBV pwm vb 1k", Kind::Resistor, &[]);
    let q = kit.part(
        "QV vc vb 0 NPNSW",
        Kind::Npn,
        &[(Collector, "vc"), (Base, "vb"), (Emitter, "0")],
        &[("vce_max", 40.0), ("hfe_min", 60.0)],
    );
    let sol = kit.part(
        "XVALV v12 vc VALVE12",
        Kind::Solenoid,
        &[(Pos, "v12"), (Neg, "vc")],
        &[
            ("rated_voltage", 12.0),
            ("resistance", 24.0),
            ("inductance", 45e-3),
        ],
    );
    let mut sw = switch(q, Kind::Npn, Side::Low);
    sw.rail_v = Some(point(12.0, "V12 at 12 V"));
    sw.rail_supply = Some(v12);
    sw.load = Some(0);
    sw.branch = vec![sol];
    sw.inductive = true;
    sw.driver = Some(driver(vin, vec![rb]));
    sw.base_current_a = Some(point(2.6e-3, "VVALV high"));
    sw.vgs_on_v = Some(point(0.75, "VVALV high"));
    sw.current_a = Some(point(0.3, "VVALV high"));
    sw.vds_on_v = Some(point(4.8, "VVALV high"));
    sw.dissipation_w = Some(point(0.72, "VVALV high"));
    sw.linear_region = true;
    sw.duty = Some(point(0.5, "VVALV"));
    sw.frequency_hz = Some(point(1.0, "VVALV"));
    if let Some((line, k, reversed)) = with_diode {
        let d = kit.two(line, k, &[("vrrm", 40.0), ("if_avg", 1.0)]);
        sw.freewheel.push(Freewheel {
            on_state_current_a: reversed.then_some(2.9),
            ..freewheel(d, FreewheelKind::AcrossLoad, reversed)
        });
    }
    let mut l = load(sol, Kind::Solenoid);
    l.rated_v = rated(12.0, "from config [parts.VALVE12]");
    l.inductance = rated(45e-3, "from config [parts.VALVE12]");
    l.current_a = Some(point(0.5, "VVALV high"));
    l.switch = Some(q);
    kit.analysis.loads.push(l);
    kit.analysis.switches.push(sw);
    kit
}

#[test]
fn solenoid_with_no_diode_is_flyback_missing_with_its_energy() {
    let kit = valve_on_npn(None);
    let found = kit.show(flyback_missing::check);
    assert_eq!(found.len(), 1, "{found:#?}");
    let f = &found[0];
    assert_eq!(f.severity, Severity::Error);
    assert_eq!(kit.element_at(f.span), "XVALV");
    // ½·L·I² = ½ × 45 mH × (0.5 A)² = 5.625 mJ.
    assert!((value(f, "stored_energy") - 5.625e-3).abs() < 1e-9);
    assert!(f.message.contains("5.62 mJ"), "{}", f.message);
    assert!(kit.labelled(f).contains(&"QV".to_string()));
    assert!(kit.labelled(f).contains(&"V12".to_string()));
    let help = f.help.as_deref().unwrap();
    assert!(help.contains("cathode to v12"), "{help}");
    assert!(help.contains("24 V"), "{help}");
}

#[test]
fn a_diode_across_the_switch_does_not_freewheel_the_load() {
    let mut kit = valve_on_npn(None);
    kit.two("DQ 0 vc DSW", Kind::Diode, &[]);
    let found = kit.show(flyback_missing::check);
    assert_eq!(found.len(), 1);
    assert!(kit.labelled(&found[0]).contains(&"DQ".to_string()));
    assert!(found[0].message.contains("DQ sits across the switch"));
}

#[test]
fn a_freewheel_diode_keeps_flyback_missing_quiet() {
    let kit = valve_on_npn(Some(("DV vc v12 1N4001", Kind::Diode, false)));
    assert!(kit.run(flyback_missing::check).is_empty());
    assert!(kit.run(flyback_reversed::check).is_empty());
}

#[test]
fn a_reversed_diode_states_the_short_current() {
    let kit = valve_on_npn(Some(("DV v12 vc 1N4001", Kind::Diode, true)));
    let found = kit.show(flyback_reversed::check);
    assert_eq!(found.len(), 1);
    let f = &found[0];
    assert_eq!(kit.element_at(f.span), "DV");
    assert!(f.message.contains("2.9 A"), "{}", f.message);
    assert!(f.help.as_deref().unwrap().contains("cathode to v12"));
    // A reversed diode is not also a missing one.
    assert!(kit.run(flyback_missing::check).is_empty());
}

#[test]
fn a_starved_base_is_base_underdrive_with_a_base_resistor_fix() {
    let kit = valve_on_npn(Some(("DV vc v12 1N4001", Kind::Diode, false)));
    let found = kit.show(base_underdrive::check);
    assert_eq!(found.len(), 1, "{found:#?}");
    let f = &found[0];
    // The base resistor is the line to change.
    assert_eq!(kit.element_at(f.span), "RBV");
    // I_C at saturation (12 − 0.2) / 24 Ω = 492 mA; the engine's 500 mA load current is larger.
    assert!((value(f, "required_base_current") - 0.05).abs() < 1e-9);
    assert!(f.message.contains("V_CE = 4.8 V"), "{}", f.message);
    // (3.3 − 0.75) / 50 mA = 51 Ω → E12 down 47 Ω.
    assert!(
        f.help.as_deref().unwrap().contains("set RBV to 47 Ω"),
        "{:?}",
        f.help
    );
}

#[test]
fn a_relay_with_enough_base_current_is_quiet() {
    let mut kit = valve_on_npn(Some(("DV vc v12 1N4001", Kind::Diode, false)));
    let sw = &mut kit.analysis.switches[0];
    sw.base_current_a = Some(point(0.06, "VVALV high"));
    sw.vds_on_v = Some(point(0.15, "VVALV high"));
    sw.linear_region = false;
    assert!(kit.run(base_underdrive::check).is_empty());
}

/// A 12 V pump (8 Ω) on a low-side N-channel gated by a 555 on `vcc`.
fn pump_on_timer(vcc: f64, amps: f64) -> Kit {
    let mut kit = Kit::new();
    let v = supply(&mut kit, "V1 vcc 0 DC 9", vcc);
    let u1 = kit.part(
        "XU1 0 tr g vcc ct th ds vcc TIMER555",
        Kind::Timer555,
        &[
            (Gnd, "0"),
            (Trig, "tr"),
            (Out, "g"),
            (Reset, "vcc"),
            (Ctrl, "ct"),
            (Thr, "th"),
            (Dis, "ds"),
            (Vcc, "vcc"),
        ],
        &[("out_high_drop", 1.7)],
    );
    let m = kit.part(
        "M1 d g 0 0 NCH",
        Kind::Nmos,
        &[(Drain, "d"), (Gate, "g"), (Source, "0"), (Bulk, "0")],
        &[
            ("vgs_th_min", 2.0),
            ("vgs_th_max", 4.0),
            ("vgs_rated", 10.0),
            ("rds_on", 0.05),
            ("vgs_max", 20.0),
        ],
    );
    let mot = kit.part(
        "XM1 vcc d PUMP",
        Kind::DcMotor,
        &[(Pos, "vcc"), (Neg, "d")],
        &[],
    );
    kit.analysis.timers.push(timer(u1, vcc));
    let mut sw = switch(m, Kind::Nmos, Side::Low);
    sw.rail_v = Some(point(vcc, "V1"));
    sw.rail_supply = Some(v);
    sw.branch = vec![mot];
    sw.inductive = true;
    sw.driver = Some(driver(u1, vec![]));
    sw.vgs_on_v = Some(point(vcc - 1.7, "XU1 high"));
    sw.vgs_off_v = Some(point(0.1, "XU1 low"));
    sw.current_a = Some(point(amps, "XU1 high"));
    // The gain as the analysis publishes it: from rds_on at vgs_rated, no model card.
    sw.gain = Some(kickback::analysis::stand_in::mos_gain_fact(
        &kit.device(m).data,
    ));
    kit.analysis.switches.push(sw);
    kit
}

#[test]
fn standard_mosfet_from_a_555_on_9_v_is_not_an_error_at_a_small_motors_current() {
    // Common practice: 9 V from a bipolar 555 is enough for a standard-threshold MOSFET at a
    // small motor's 1–2 A; a note about the on-resistance is fine.
    for amps in [1.0, 2.0] {
        let kit = pump_on_timer(9.0, amps);
        let found = kit.show(gate_underdrive::check);
        assert!(
            found.iter().all(|f| f.severity != Severity::Error),
            "{found:#?}"
        );
        assert_eq!(found.len(), 1);
        assert_eq!(found[0].severity, Severity::Note);
        // k = 1/(0.05 × (10 − 4)) = 3.33 A/V²; at 7.3 V: 1/(3.33 × 3.3) = 91 mΩ.
        assert!((value(&found[0], "rds_on_estimate") - 0.0909).abs() < 1e-3);
    }
}

#[test]
fn standard_mosfet_from_a_555_on_6_v_is_an_error() {
    // Common practice: on 6 V the 555 gives 4.3 V, not enough.
    let kit = pump_on_timer(6.0, 1.5);
    let found = kit.show(gate_underdrive::check);
    assert_eq!(found.len(), 1);
    let f = &found[0];
    assert_eq!(f.severity, Severity::Error);
    assert_eq!(kit.element_at(f.span), "M1");
    // 4 + √(2 × 1.5 / 3.33) + 1 = 5.95 V.
    assert!(
        (value(f, "required_vgs") - 5.949).abs() < 1e-2,
        "{}",
        value(f, "required_vgs")
    );
    assert!(kit.labelled(f).contains(&"XU1".to_string()));
    assert!(
        f.help
            .as_deref()
            .unwrap()
            .contains("XU1 from at least 7.65 V"),
        "{:?}",
        f.help
    );
}

#[test]
fn unknown_current_uses_the_midpoint() {
    let mut kit = pump_on_timer(9.0, 1.0);
    kit.analysis.switches[0].current_a = None;
    let found = kit.show(gate_underdrive::check);
    // Midpoint of 4 V and 10 V is 7 V; 7.3 V passes with a note.
    assert_eq!(found.len(), 1);
    assert_eq!(found[0].severity, Severity::Note);
    assert!((value(&found[0], "required_vgs") - 7.0).abs() < 1e-9);
}

#[test]
fn high_side_n_channel_follower_is_an_error_with_its_real_vgs() {
    let mut kit = pump_on_timer(12.0, 1.0);
    let sw = &mut kit.analysis.switches[0];
    sw.side = Side::High;
    sw.follower = true;
    sw.vgs_on_v = Some(point(4.6, "XU1 high"));
    sw.vds_on_v = Some(point(6.3, "XU1 high"));
    sw.dissipation_w = Some(point(3.1, "XU1 high"));
    let found = kit.show(gate_underdrive::check);
    assert_eq!(found.len(), 1);
    let f = &found[0];
    assert_eq!(f.severity, Severity::Error);
    assert!(f.message.contains("source follower"), "{}", f.message);
    assert!(
        f.message.contains("4.6 V") && f.message.contains("3.1 W"),
        "{}",
        f.message
    );
}

#[test]
fn a_p_channel_gate_pulled_to_ground_on_24_v_is_gate_overvoltage() {
    let mut kit = Kit::new();
    let v = supply(&mut kit, "V24 v24 0 DC 24", 24.0);
    let m = kit.part(
        "MP1 out g v24 v24 PCH",
        Kind::Pmos,
        &[(Drain, "out"), (Gate, "g"), (Source, "v24"), (Bulk, "v24")],
        &[("vgs_max", 20.0), ("vgs_rated", 10.0)],
    );
    let mut sw = switch(m, Kind::Pmos, Side::High);
    sw.rail_supply = Some(v);
    sw.vgs_on_v = Some(point(-24.0, "VIN high"));
    sw.vgs_off_v = Some(point(0.0, "VIN low"));
    kit.analysis.switches.push(sw);
    let found = kit.show(gate_overvoltage::check);
    assert_eq!(found.len(), 1);
    let help = found[0].help.as_deref().unwrap();
    // 10 kΩ × (24/10 − 1) = 14 kΩ: 12 kΩ gives 10.9 V, 15 kΩ 9.6 V; 10.9 V is nearer 10 V.
    assert!(help.contains("12 kΩ") && help.contains("10.9 V"), "{help}");
    assert!(help.contains("15 V zener"), "{help}");
    assert!(kit.run(gate_cannot_turn_off::check).is_empty());
}

#[test]
fn a_p_channel_driven_from_5_v_logic_on_12_v_cannot_turn_off() {
    let mut kit = Kit::new();
    let v = supply(&mut kit, "V12 v12 0 DC 12", 12.0);
    let pin = kit.source(
        "VLOG g 0 PULSE(0 5 0 10n 10n 25u 50u)",
        pulse(0.0, 5.0, 0.0, 25e-6, 50e-6),
    );
    let m = kit.part(
        "MP1 out g v12 v12 PCH",
        Kind::Pmos,
        &[(Drain, "out"), (Gate, "g"), (Source, "v12"), (Bulk, "v12")],
        &[("vgs_th_min", 2.0)],
    );
    let mut sw = switch(m, Kind::Pmos, Side::High);
    sw.rail_supply = Some(v);
    sw.driver = Some(driver(pin, vec![]));
    sw.vgs_on_v = Some(point(-12.0, "VLOG low"));
    sw.vgs_off_v = Some(point(-7.0, "VLOG high"));
    kit.analysis.switches.push(sw);
    let found = kit.show(gate_cannot_turn_off::check);
    assert_eq!(found.len(), 1);
    assert_eq!(found[0].severity, Severity::Error);
    assert!(
        found[0].message.contains("7 V below its source"),
        "{}",
        found[0].message
    );
    assert!(found[0].help.as_deref().unwrap().contains("level shifter"));
}

#[test]
fn off_state_above_half_the_threshold_is_a_warning() {
    let mut kit = pump_on_timer(12.0, 1.0);
    kit.analysis.switches[0].vgs_off_v = Some(point(1.2, "XU1 low"));
    let found = kit.show(gate_cannot_turn_off::check);
    assert_eq!(found.len(), 1);
    assert_eq!(found[0].severity, Severity::Warning);
}

/// A half-bridge leg on 12 V: P-channel high, N-channel low, gates from `drive`.
fn leg(shared: bool) -> Kit {
    let mut kit = Kit::new();
    let v = supply(&mut kit, "V12 v12 0 DC 12", 12.0);
    let (gh, gl) = if shared { ("g", "g") } else { ("gh", "gl") };
    let vh = kit.source(
        &format!("VH {gh} 0 PULSE(12 0 0 10n 10n 20u 50u)"),
        pulse(12.0, 0.0, 0.0, 20e-6, 50e-6),
    );
    let vl = if shared {
        vh
    } else {
        kit.source(
            "VL gl 0 PULSE(0 12 25u 10n 10n 20u 50u)",
            pulse(0.0, 12.0, 25e-6, 20e-6, 50e-6),
        )
    };
    let data = [("vgs_th_min", 2.0), ("vgs_th_max", 4.0)];
    let mh = kit.part(
        &format!("MPH out {gh} v12 v12 PCH"),
        Kind::Pmos,
        &[(Drain, "out"), (Gate, gh), (Source, "v12"), (Bulk, "v12")],
        &data,
    );
    let ml = kit.part(
        &format!("MPL out {gl} 0 0 NCH"),
        Kind::Nmos,
        &[(Drain, "out"), (Gate, gl), (Source, "0"), (Bulk, "0")],
        &data,
    );
    let mut hi = switch(mh, Kind::Pmos, Side::Bridge);
    hi.rail_v = Some(point(12.0, "V12"));
    hi.rail_supply = Some(v);
    hi.bridge_partner = Some(ml);
    hi.driver = Some(driver(vh, vec![]));
    hi.vgs_on_v = Some(point(-12.0, "VH low"));
    hi.vgs_off_v = Some(point(0.0, "VH high"));
    let mut lo = switch(ml, Kind::Nmos, Side::Bridge);
    lo.rail_v = Some(point(12.0, "V12"));
    lo.rail_supply = Some(v);
    lo.bridge_partner = Some(mh);
    lo.driver = Some(driver(vl, vec![]));
    lo.vgs_on_v = Some(point(12.0, "VL high"));
    lo.vgs_off_v = Some(point(0.0, "VL low"));
    if shared {
        hi.driver.as_mut().unwrap().shared_with = vec![ml].into();
        lo.driver.as_mut().unwrap().shared_with = vec![mh].into();
    }
    kit.analysis.switches.push(hi);
    kit.analysis.switches.push(lo);
    kit
}

#[test]
fn a_shared_gate_drive_with_no_dead_time_is_a_warning() {
    let kit = leg(true);
    let found = kit.show(shoot_through::check);
    assert_eq!(found.len(), 1, "{found:#?}");
    assert_eq!(found[0].severity, Severity::Warning);
    // 12 V − 2 V − 2 V = 8 V band.
    assert!((value(&found[0], "conduction_band") - 8.0).abs() < 1e-9);
}

#[test]
fn a_shared_drive_that_leaves_the_p_channel_on_is_an_error() {
    let mut kit = leg(true);
    // The drive's high level reaches only 8.9 V: the P-channel keeps −3.1 V.
    kit.analysis.switches[0].vgs_off_v = Some(point(-3.1, "VH high"));
    let found = kit.show(shoot_through::check);
    assert_eq!(found.len(), 1);
    assert_eq!(found[0].severity, Severity::Error);
    assert_eq!(kit.element_at(found[0].span), "MPH");
    // Not reported twice.
    assert!(kit.run(gate_cannot_turn_off::check).is_empty());
}

#[test]
fn separate_drives_with_dead_time_are_quiet() {
    // VH on (low) for 20 µs from 0, VL on from 25 µs for 20 µs: 5 µs dead time each side.
    let kit = leg(false);
    assert!(kit.run(shoot_through::check).is_empty());
}

#[test]
fn separate_drives_that_overlap_are_an_error() {
    let mut kit = leg(false);
    let vl = kit.analysis.switches[1].driver.as_ref().unwrap().device;
    let e = kit.device(vl).element;
    kit.netlist.elements[e].source = Some(pulse(0.0, 12.0, 10e-6, 20e-6, 50e-6));
    let found = kit.show(shoot_through::check);
    assert_eq!(found.len(), 1);
    assert_eq!(found[0].severity, Severity::Error);
    // VH's on-window ends at 20 µs, VL's starts at 10 µs: 10 µs overlap.
    assert!((value(&found[0], "overlap_time") - 10e-6).abs() < 2e-8);
}

#[test]
fn vrrm_below_the_rail_is_an_error_and_below_twice_a_warning() {
    let mut kit = valve_on_npn(Some(("DV vc v12 DSW", Kind::Schottky, false)));
    let dv = kit.analysis.switches[0].freewheel[0].device;
    kit.device_mut(dv).data.values.insert(
        "vrrm".into(),
        Rated {
            value: 20.0,
            source: "from .model DSW BV".into(),
        },
    );
    let found = kit.show(flyback_underrated::check);
    assert_eq!(found.len(), 1);
    // 20 V ≥ 12 V rail but below 24 V: warning.
    assert_eq!(found[0].severity, Severity::Warning);
    kit.device_mut(dv).data.values.insert(
        "vrrm".into(),
        Rated {
            value: 10.0,
            source: "from .model DSW BV".into(),
        },
    );
    let found = kit.show(flyback_underrated::check);
    assert_eq!(found[0].severity, Severity::Error);
}

#[test]
fn a_standard_recovery_diode_on_fast_pwm_is_a_warning_and_a_schottky_is_not() {
    let mut kit = pump_on_timer(12.0, 1.0);
    let d = kit.two(
        "D1 d vcc 1N4004",
        Kind::Diode,
        &[
            ("vrrm", 400.0),
            ("if_avg", 1.0),
            ("ifsm", 30.0),
            ("trr", 2e-6),
        ],
    );
    let sw = &mut kit.analysis.switches[0];
    sw.freewheel
        .push(freewheel(d, FreewheelKind::AcrossLoad, false));
    sw.duty = Some(range(0.1, 0.9, "RV1 at 0 %", "RV1 at 100 %"));
    sw.frequency_hz = Some(point(20e3, "XU1"));
    let found = kit.show(flyback_underrated::check);
    assert_eq!(found.len(), 1, "{found:#?}");
    assert!(found[0].message.contains("standard-recovery"));
    assert!(
        found[0].help.as_deref().unwrap().contains("1N5818"),
        "{:?}",
        found[0].help
    );
    kit.device_mut(d).kind = Kind::Schottky;
    assert!(kit.run(flyback_underrated::check).is_empty());
}
