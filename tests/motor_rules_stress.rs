//! The ratings and stress rules against the facts contract: loads over their rating, supplies
//! out of range, switch voltage margin, overloaded pins, hot resistors and switches, pot wipers,
//! capacitors and bulk capacitance.

mod motor_rules_kit;

use kickback::analysis::{
    CapacitorFacts, EffectiveMethod, FreewheelKind, ResistorFacts, Side, SupplyFacts,
};
use kickback::circuit::{Kind, PinRole};
use kickback::diagnostic::Severity;
use kickback::rules::{
    bulk_capacitance_missing, capacitor_overvoltage, capacitor_reversed, driver_overload,
    load_overvoltage, pot_wiper_overcurrent, resistor_overpower, supply_out_of_range,
    switch_dissipation, switch_voltage_margin,
};
use motor_rules_kit::{freewheel, load, point, range, rated, supply, switch, timer, value, Kit};

use PinRole::*;

const TIMER_PINS: [(PinRole, &str); 8] = [
    (Gnd, "0"),
    (Trig, "tc"),
    (Out, "out"),
    (Reset, "vcc"),
    (Ctrl, "ctl"),
    (Thr, "tc"),
    (Dis, "dis"),
    (Vcc, "vcc"),
];

/// A 3 V motor on a low-side N-channel from a rail of `rail` volts, PWM at 50–90 % duty with
/// a period long against the motor's L/R (RMS).
fn small_motor(rail: f64) -> Kit {
    let mut kit = Kit::new();
    let v = supply(&mut kit, "V1 vm 0 DC 6", rail);
    let m = kit.part(
        "M1 d g 0 0 NCH",
        Kind::Nmos,
        &[(Drain, "d"), (Gate, "g"), (Source, "0"), (Bulk, "0")],
        &[],
    );
    let mot = kit.part(
        "XM1 vm d FAN3",
        Kind::DcMotor,
        &[(Pos, "vm"), (Neg, "d")],
        &[("rated_voltage", 3.0)],
    );
    let mut sw = switch(m, Kind::Nmos, Side::Low);
    sw.rail_supply = Some(v);
    sw.rail_v = Some(point(rail, "V1"));
    sw.load = Some(0);
    sw.branch = vec![mot];
    let mut l = load(mot, Kind::DcMotor);
    l.rated_v = rated(3.0, "from config [parts.FAN3]");
    l.peak_v = Some(point(rail - 0.05, "M1 on"));
    l.duty = Some(range(0.5, 0.9, "RV1 at 0 %", "RV1 at 100 %"));
    l.effective_v = Some(range(
        (rail - 0.05) * 0.5f64.sqrt(),
        (rail - 0.05) * 0.9f64.sqrt(),
        "RV1 at 0 %",
        "RV1 at 100 %",
    ));
    l.effective_method = EffectiveMethod::RmsAssumed;
    // L/R unknown: the duty that keeps Vpk·√D at the rating is (V/Vpk)², as the analysis
    // publishes it.
    l.duty_limit = Some((3.0 / (rail - 0.05)).powi(2));
    l.switch = Some(m);
    kit.analysis.loads.push(l);
    kit.analysis.switches.push(sw);
    kit
}

#[test]
fn a_3_v_motor_on_pulsed_6_v_is_a_warning_and_on_9_v_an_error() {
    // Common practice: a stretch worth a warning on 6 V, a failure on 9 V.
    let found = small_motor(6.0).show(load_overvoltage::check);
    assert_eq!(found.len(), 1);
    assert_eq!(found[0].severity, Severity::Warning);
    // RMS: (3 / 5.95)² = 25.4 %.
    assert!((value(&found[0], "duty_limit") - 0.2542).abs() < 1e-3);
    assert!(found[0].message.contains("50–90 %"), "{}", found[0].message);
    let found = small_motor(9.0).show(load_overvoltage::check);
    assert_eq!(found.len(), 1);
    assert_eq!(found[0].severity, Severity::Error);
}

#[test]
fn a_load_within_its_rating_is_quiet() {
    let mut kit = small_motor(3.0);
    kit.analysis.loads[0].peak_v = Some(point(2.95, "M1 on"));
    kit.analysis.loads[0].effective_v = Some(point(2.8, "M1 on"));
    assert!(kit.run(load_overvoltage::check).is_empty());
}

fn timer_on(v: f64, min: f64) -> Kit {
    let mut kit = Kit::new();
    let s = kit.dc("V1 vcc 0 DC 20", v);
    kit.analysis.supplies.push(SupplyFacts {
        device: s,
        nominal: v,
        min,
        max: v,
        source: "test".into(),
    });
    let u = kit.part(
        "XU1 0 tc out vcc ctl tc dis vcc TIMER555",
        Kind::Timer555,
        &TIMER_PINS,
        &[
            ("supply_min", 4.5),
            ("supply_max", 16.0),
            ("supply_abs_max", 18.0),
        ],
    );
    let mut t = timer(u, v);
    t.supply_v = Some(range(min, v, "V1 at min", "V1 at max"));
    kit.analysis.timers.push(t);
    kit
}

#[test]
fn a_555_on_20_v_is_an_error() {
    // From memory: bipolar 555 abs max 18 V.
    let kit = timer_on(20.0, 20.0);
    let found = kit.show(supply_out_of_range::check);
    assert_eq!(found.len(), 1);
    assert_eq!(found[0].severity, Severity::Error);
    assert_eq!(kit.element_at(found[0].span), "XU1");
    assert_eq!(kit.labelled(&found[0]), vec!["V1"]);
}

#[test]
fn a_555_battery_at_end_of_life_below_4_5_v_is_a_warning() {
    let found = timer_on(9.0, 4.0).show(supply_out_of_range::check);
    assert_eq!(found.len(), 1);
    assert_eq!(found[0].severity, Severity::Warning);
    assert!(found[0].message.contains("V1 at min"));
    assert!(timer_on(9.0, 7.0)
        .run(supply_out_of_range::check)
        .is_empty());
}

#[test]
fn switch_margin_over_rail_and_diode() {
    let mut kit = small_motor(24.0);
    let d = kit.two("D1 d vm DSW", Kind::Schottky, &[("vf", 0.5)]);
    let sw = &mut kit.analysis.switches[0];
    sw.inductive = true;
    sw.freewheel
        .push(freewheel(d, FreewheelKind::AcrossLoad, false));
    let m = sw.device;
    // 30 V against 24.5 V: within the rating but under 1.25 × (30.6 V wanted).
    kit.device_mut(m)
        .data
        .set_if_absent("vds_max", 30.0, "from config [parts.NCH]");
    let found = kit.show(switch_voltage_margin::check);
    assert_eq!(found.len(), 1);
    assert_eq!(found[0].severity, Severity::Warning);
    assert!(found[0].help.as_deref().unwrap().contains("40 V part"));
    kit.device_mut(m)
        .data
        .values
        .get_mut("vds_max")
        .unwrap()
        .value = 20.0;
    assert_eq!(
        kit.run(switch_voltage_margin::check)[0].severity,
        Severity::Error
    );
    kit.device_mut(m)
        .data
        .values
        .get_mut("vds_max")
        .unwrap()
        .value = 40.0;
    assert!(kit.run(switch_voltage_margin::check).is_empty());
}

#[test]
fn a_tvs_clamping_above_the_switch_rating_is_an_error() {
    let mut kit = small_motor(12.0);
    let t = kit.two("DZ 0 d TVS33", Kind::Tvs, &[("vclamp", 45.0)]);
    let sw = &mut kit.analysis.switches[0];
    sw.inductive = true;
    sw.freewheel.push(freewheel(t, FreewheelKind::Clamp, false));
    let m = sw.device;
    kit.device_mut(m)
        .data
        .set_if_absent("vds_max", 40.0, "from config [parts.NCH]");
    let found = kit.show(switch_voltage_margin::check);
    assert_eq!(found.len(), 1);
    assert_eq!(found[0].severity, Severity::Error);
    assert!(
        found[0].message.contains("avalanches"),
        "{}",
        found[0].message
    );
}

#[test]
fn a_motor_hung_on_a_555_output_overloads_it() {
    let mut kit = timer_on(12.0, 12.0);
    let mot = kit.part(
        "XM1 out 0 FAN12",
        Kind::DcMotor,
        &[(Pos, "out"), (Neg, "0")],
        &[],
    );
    let mut l = load(mot, Kind::DcMotor);
    l.current_a = Some(point(1.03, "XU1 high"));
    kit.analysis.loads.push(l);
    kit.analysis.timers[0].output_current_a = Some(point(1.03, "XU1 high"));
    let u = kit.analysis.timers[0].device;
    kit.device_mut(u).data.set_if_absent(
        "out_current_max",
        0.2,
        "built-in default for timer-555 (from memory)",
    );
    let found = kit.show(driver_overload::check);
    assert_eq!(found.len(), 1);
    assert_eq!(kit.element_at(found[0].span), "XM1");
    assert!(kit.labelled(&found[0]).contains(&"XU1".to_string()));
    assert!(found[0]
        .help
        .as_deref()
        .unwrap()
        .contains("logic-level N-channel MOSFET"));
}

#[test]
fn a_555_driving_a_gate_is_not_overloaded() {
    let mut kit = timer_on(12.0, 12.0);
    kit.analysis.timers[0].output_current_a = Some(point(1e-6, "XU1 high"));
    assert!(kit.run(driver_overload::check).is_empty());
}

/// Common practice: 100 Ω from a 9 V supply into a 555's discharge pin at a pot's zero end.
fn discharge_short() -> Kit {
    let mut kit = timer_on(9.0, 9.0);
    let pot = kit.part(
        "XRV1 v9 w dis POT10K",
        Kind::Potentiometer,
        &[(A, "v9"), (Wiper, "w"), (B, "dis")],
        &[("resistance", 10e3), ("power_rating", 0.25)],
    );
    let r = kit.two("R1 w dis 100", Kind::Resistor, &[("power_rating", 0.25)]);
    let t = &mut kit.analysis.timers[0];
    t.discharge_chain = vec![pot, r];
    t.pots = vec![pot];
    // 9 V across 100 Ω (the pin's own drop neglected): 90 mA, 0.81 W.
    kit.analysis.resistors.push(ResistorFacts {
        device: r,
        power_w: range(
            0.0,
            0.81,
            "XU1 high",
            "V1 at 9 V, XU1 low, XRV1 wiper at 0 %",
        ),
        peak_power_w: range(
            0.0,
            0.81,
            "XU1 high",
            "V1 at 9 V, XU1 low, XRV1 wiper at 0 %",
        ),
        wiper_current_a: None,
        current_a: None,
        set_by_linear_stage: None,
    });
    kit.analysis.resistors.push(ResistorFacts {
        device: pot,
        power_w: range(0.0, 0.2, "XU1 high", "XU1 low, XRV1 wiper at 40 %"),
        peak_power_w: range(0.0, 0.2, "XU1 high", "XU1 low, XRV1 wiper at 40 %"),
        wiper_current_a: Some(range(
            0.0,
            0.09,
            "XU1 high",
            "V1 at 9 V, XU1 low, XRV1 wiper at 0 %",
        )),
        current_a: None,
        set_by_linear_stage: None,
    });
    kit
}

#[test]
fn a_100_ohm_resistor_into_the_discharge_pin_overheats() {
    let kit = discharge_short();
    let found = kit.show(resistor_overpower::check);
    // R1 is over its rating; the pot at 0.2 W is above 60 % of its 0.25 W: a warning.
    assert_eq!(found.len(), 2, "{found:#?}");
    let r1 = found
        .iter()
        .find(|f| kit.element_at(f.span) == "R1")
        .unwrap();
    assert_eq!(r1.severity, Severity::Error);
    assert!(
        r1.message.contains("810 mW") && r1.message.contains("wiper at 0 %"),
        "{}",
        r1.message
    );
    assert!(kit.labelled(r1).contains(&"XU1".to_string()));
    assert!(kit.labelled(r1).contains(&"XRV1".to_string()));
    // √(0.81 × 100) = 9 V; 81 / 0.15 = 540 Ω → E12 up 560 Ω.
    assert!(
        r1.help.as_deref().unwrap().contains("2 W part"),
        "{:?}",
        r1.help
    );
    assert!(
        r1.help.as_deref().unwrap().contains("560 Ω"),
        "{:?}",
        r1.help
    );
}

#[test]
fn the_pots_wiper_carries_90_ma() {
    let kit = discharge_short();
    let found = kit.show(pot_wiper_overcurrent::check);
    assert_eq!(found.len(), 1);
    let f = &found[0];
    // √(0.25 W / 10 kΩ) = 5 mA.
    assert!((value(f, "wiper_current_max") - 5e-3).abs() < 1e-9);
    assert!(
        f.message.contains("90 mA") && f.message.contains("wiper at 0 %"),
        "{}",
        f.message
    );
    // 9 V / 5 mA = 1.8 kΩ.
    assert!(
        f.help.as_deref().unwrap().contains("1.8 kΩ"),
        "{:?}",
        f.help
    );
}

#[test]
fn a_cool_resistor_is_quiet() {
    let mut kit = discharge_short();
    kit.analysis.resistors[0].power_w = point(0.1, "XU1 low");
    kit.analysis.resistors[1].power_w = point(0.1, "XU1 low");
    kit.analysis.resistors[1].wiper_current_a = Some(point(4e-3, "XU1 low"));
    assert!(kit.run(resistor_overpower::check).is_empty());
    assert!(kit.run(pot_wiper_overcurrent::check).is_empty());
}

#[test]
fn conduction_loss_above_a_watt_is_a_warning() {
    let mut kit = small_motor(12.0);
    let m = kit.analysis.switches[0].device;
    kit.device_mut(m)
        .data
        .set_if_absent("pd_max", 1.0, "built-in default for nmos");
    let sw = &mut kit.analysis.switches[0];
    sw.current_a = Some(point(4.0, "M1 on"));
    sw.duty = Some(range(0.1, 0.9, "a", "b"));
    sw.dissipation_w = Some(range(0.12, 1.08, "RV1 at 0 %", "RV1 at 100 %"));
    let found = kit.show(switch_dissipation::check);
    assert_eq!(found.len(), 1);
    // 1 W / (1.5 × 16 A² × 0.9) = 46 mΩ.
    assert!(
        found[0].help.as_deref().unwrap().contains("46.3 mΩ"),
        "{:?}",
        found[0].help
    );
    kit.analysis.switches[0].dissipation_w = Some(point(0.4, "x"));
    assert!(kit.run(switch_dissipation::check).is_empty());
}

fn cap_on_24(line: &str, pos: &str, neg: &str, v: f64, rating: f64) -> Kit {
    let mut kit = Kit::new();
    supply(&mut kit, "V24 v24 0 DC 24", 24.0);
    let c = kit.part(
        line,
        Kind::Capacitor,
        &[(Pos, pos), (Neg, neg)],
        &[("voltage_rating", rating), ("polarized", 1.0)],
    );
    kit.analysis.capacitors.push(CapacitorFacts {
        device: c,
        voltage_v: point(v, "V24 at 24 V"),
    });
    kit
}

#[test]
fn a_16_v_capacitor_on_24_v_is_an_error() {
    let kit = cap_on_24("C1 v24 0 470u", "v24", "0", 24.0, 16.0);
    let found = kit.show(capacitor_overvoltage::check);
    assert_eq!(found.len(), 1);
    assert_eq!(found[0].severity, Severity::Error);
    assert!(
        found[0].help.as_deref().unwrap().contains("50 V part"),
        "{:?}",
        found[0].help
    );
    assert!(kit.run(capacitor_reversed::check).is_empty());
    // 24 V on a 35 V part: above 35/1.5 = 23.3 V, a warning; 50 V is quiet.
    let kit = cap_on_24("C1 v24 0 470u", "v24", "0", 24.0, 35.0);
    assert_eq!(
        kit.run(capacitor_overvoltage::check)[0].severity,
        Severity::Warning
    );
    let kit = cap_on_24("C1 v24 0 470u", "v24", "0", 24.0, 50.0);
    assert!(kit.run(capacitor_overvoltage::check).is_empty());
}

#[test]
fn an_electrolytic_with_plus_on_ground_and_minus_on_24_v_is_reversed() {
    let kit = cap_on_24("C1 0 v24 470u", "0", "v24", -24.0, 50.0);
    let found = kit.show(capacitor_reversed::check);
    assert_eq!(found.len(), 1);
    assert!(
        found[0].help.as_deref().unwrap().contains("to v24"),
        "{:?}",
        found[0].help
    );
    assert_eq!(kit.labelled(&found[0]), vec!["V24"]);
}

#[test]
fn an_unrated_capacitor_is_not_guessed_at() {
    let mut kit = cap_on_24("C1 v24 0 470u", "v24", "0", 24.0, 16.0);
    kit.parts
        .device_mut(kit.parts.devices().len() - 1)
        .unwrap()
        .data
        .values
        .clear();
    assert!(kit.run(capacitor_overvoltage::check).is_empty());
    assert!(kit.run(capacitor_reversed::check).is_empty());
}

fn pwm_pump(bulk: Option<&str>) -> Kit {
    let mut kit = small_motor(12.0);
    let sw = &mut kit.analysis.switches[0];
    sw.inductive = true;
    sw.frequency_hz = Some(point(20e3, "VPWM"));
    sw.duty = Some(range(0.5, 0.9, "a", "b"));
    kit.two(
        "CDEC vm 0 100n",
        Kind::Capacitor,
        &[("capacitance", 100e-9)],
    );
    if let Some(line) = bulk {
        kit.two(line, Kind::Capacitor, &[("capacitance", 470e-6)]);
    }
    kit
}

#[test]
fn a_pwm_motor_rail_with_only_decoupling_needs_bulk() {
    let kit = pwm_pump(None);
    let found = kit.show(bulk_capacitance_missing::check);
    assert_eq!(found.len(), 1);
    assert_eq!(kit.element_at(found[0].span), "V1");
    assert!(
        found[0].message.contains("only 100 nF"),
        "{}",
        found[0].message
    );
    assert!(
        found[0]
            .help
            .as_deref()
            .unwrap()
            .contains("10 µF rated 25 V"),
        "{:?}",
        found[0].help
    );
    assert!(pwm_pump(Some("CBULK vm 0 470u"))
        .run(bulk_capacitance_missing::check)
        .is_empty());
}

#[test]
fn a_full_bridge_that_pumps_its_rail_needs_more_bulk() {
    let mut kit = Kit::new();
    let v = supply(&mut kit, "V12 v12 0 DC 12", 12.0);
    let ha = kit.part(
        "MHA a ga v12 v12 PCH",
        Kind::Pmos,
        &[(Drain, "a"), (Gate, "ga"), (Source, "v12"), (Bulk, "v12")],
        &[],
    );
    let lb = kit.part(
        "MLB b gb 0 0 NCH",
        Kind::Nmos,
        &[(Drain, "b"), (Gate, "gb"), (Source, "0"), (Bulk, "0")],
        &[],
    );
    let hoist = kit.part(
        "XH a b HOIST12",
        Kind::DcMotor,
        &[(Pos, "a"), (Neg, "b")],
        &[],
    );
    kit.two("CB v12 0 22u", Kind::Capacitor, &[("capacitance", 22e-6)]);
    let (a, b) = (kit.net("a"), kit.net("b"));
    for (dev, k, net) in [(ha, Kind::Pmos, a), (lb, Kind::Nmos, b)] {
        let mut sw = switch(dev, k, Side::Bridge);
        sw.rail_supply = Some(v);
        sw.rail_v = Some(point(12.0, "V12"));
        sw.switched_net = Some(net);
        sw.load = Some(0);
        sw.branch = vec![hoist];
        sw.inductive = true;
        kit.analysis.switches.push(sw);
    }
    let mut l = load(hoist, Kind::DcMotor);
    l.inductance = rated(10e-3, "from config");
    l.current_a = Some(point(4.0, "on"));
    kit.analysis.loads.push(l);
    // ΔV = √(144 + 0.01 × 16 / 22 µF) − 12 = √7417 − 12 = 74.1 V: far above 10 %.
    let found = kit.show(bulk_capacitance_missing::check);
    assert_eq!(found.len(), 1, "{found:#?}");
    assert!(
        (value(&found[0], "rail_pump") - 74.12).abs() < 0.05,
        "{}",
        value(&found[0], "rail_pump")
    );
    // C ≥ L·I² / ((1.1·V)² − V²) = 0.16 / 30.24 = 5.3 mF → E6 6.8 mF.
    assert!((value(&found[0], "suggested_capacitance") - 6.8e-3).abs() < 1e-9);
    // The same winding on a half-bridge leg to ground circulates its current: no pumping.
    kit.analysis.switches.truncate(1);
    assert!(kit.run(bulk_capacitance_missing::check).is_empty());
}
