//! Unit checks of the timer analysis on circuits built by hand (no parser involved). The
//! reference values are the 555 datasheet equations; where a number is a fact of the trade it
//! says "common practice".

use super::*;
use crate::analysis::facts::TimerMode;
use crate::circuit::{CircuitBuilder, Device, Net, NetId, PartData, Pin, PinRole, Rated};
use crate::config::Config;
use crate::netlist::{FlatElement, FlatNetlist, Num, SourceSpec, Waveform};
use crate::source::Span;
use std::collections::BTreeMap;

#[derive(Default)]
struct Deck {
    pub netlist: FlatNetlist,
    pub circuit: CircuitBuilder,
    nets: BTreeMap<String, NetId>,
}

fn element(name: &str, nodes: &[&str]) -> FlatElement {
    FlatElement {
        path: name.to_string(),
        name: name.to_string(),
        letter: name.chars().next().unwrap_or('X').to_ascii_uppercase(),
        nodes: nodes.iter().map(|s| s.to_string()).collect(),
        model: None,
        model_index: None,
        value: None,
        value_text: None,
        value_span: None,
        params: Vec::new(),
        source: None,
        refs: Vec::new(),
        subckt: None,
        span: Span::default(),
        instances: Vec::new(),
    }
}

impl Deck {
    fn net(&mut self, name: &str) -> NetId {
        let key = name.to_ascii_lowercase();
        if let Some(&n) = self.nets.get(&key) {
            return n;
        }
        let id = self.circuit.add_net(Net {
            name: name.to_string(),
            is_ground: key == "0" || key == "gnd",
        });
        self.nets.insert(key, id);
        id
    }

    fn add(
        &mut self,
        e: FlatElement,
        kind: Kind,
        roles: &[PinRole],
        data: &[(&str, f64)],
    ) -> DeviceId {
        let pins = e
            .nodes
            .clone()
            .iter()
            .zip(roles)
            .map(|(n, &role)| Pin {
                role,
                net: self.net(n),
            })
            .collect();
        let mut pd = PartData::default();
        for (k, v) in data {
            pd.values.insert(
                k.to_string(),
                Rated {
                    value: *v,
                    source: "test".into(),
                },
            );
        }
        self.netlist.elements.push(e);
        self.circuit.add_device(Device {
            element: self.netlist.elements.len() - 1,
            kind,
            pins,
            data: pd,
        })
    }

    pub fn v(&mut self, name: &str, pos: &str, neg: &str, dc: f64) -> DeviceId {
        let mut e = element(name, &[pos, neg]);
        e.value = Some(Num::Known(dc));
        e.source = Some(SourceSpec {
            dc: Some(dc),
            wave: Waveform::Dc,
        });
        self.add(e, Kind::VoltageSource, &[PinRole::Pos, PinRole::Neg], &[])
    }

    #[allow(clippy::too_many_arguments)]
    pub fn pulse(
        &mut self,
        name: &str,
        pos: &str,
        v1: f64,
        v2: f64,
        rise: f64,
        fall: f64,
        width: f64,
        period: f64,
    ) -> DeviceId {
        let mut e = element(name, &[pos, "0"]);
        e.source = Some(SourceSpec {
            dc: Some(v1),
            wave: Waveform::Pulse {
                v1,
                v2,
                delay: 0.0,
                rise,
                fall,
                width,
                period,
            },
        });
        self.add(e, Kind::VoltageSource, &[PinRole::Pos, PinRole::Neg], &[])
    }

    pub fn r(&mut self, name: &str, a: &str, b: &str, ohms: f64) -> DeviceId {
        let mut e = element(name, &[a, b]);
        e.value = Some(Num::Known(ohms));
        self.add(e, Kind::Resistor, &[PinRole::Pos, PinRole::Neg], &[])
    }

    pub fn c(&mut self, name: &str, a: &str, b: &str, farads: f64) -> DeviceId {
        let mut e = element(name, &[a, b]);
        e.value = Some(Num::Known(farads));
        self.add(e, Kind::Capacitor, &[PinRole::Pos, PinRole::Neg], &[])
    }

    pub fn d(&mut self, name: &str, anode: &str, cathode: &str) -> DeviceId {
        let e = element(name, &[anode, cathode]);
        // A small-signal silicon diode (about 0.65 V at 1 mA).
        let data = [("is", 2.5e-9), ("n", 1.75), ("rs", 0.6)];
        self.add(e, Kind::Diode, &[PinRole::Anode, PinRole::Cathode], &data)
    }

    pub fn pot(&mut self, name: &str, a: &str, w: &str, b: &str, ohms: f64) -> DeviceId {
        let mut e = element(name, &[a, w, b]);
        e.params.push(("r".into(), Num::Known(ohms)));
        self.add(
            e,
            Kind::Potentiometer,
            &[PinRole::A, PinRole::Wiper, PinRole::B],
            &[],
        )
    }

    /// A bipolar 555 in DIP-8 order: gnd trig out reset ctrl thr dis vcc.
    pub fn timer(&mut self, name: &str, nodes: [&str; 8]) -> DeviceId {
        let e = element(name, &nodes);
        let roles = [
            PinRole::Gnd,
            PinRole::Trig,
            PinRole::Out,
            PinRole::Reset,
            PinRole::Ctrl,
            PinRole::Thr,
            PinRole::Dis,
            PinRole::Vcc,
        ];
        // Bipolar 555 defaults (from memory, as the built-in part knowledge).
        let data = [
            ("out_high_drop", 1.7),
            ("discharge_current_rated", 0.015),
            ("discharge_current_max", 0.1),
            ("ladder_resistance", 5e3),
            ("trigger_bias_current", 0.5e-6),
            ("threshold_bias_current", 0.25e-6),
        ];
        self.add(e, Kind::Timer555, &roles, &data)
    }

    pub fn analyze(&self) -> Vec<TimerFacts> {
        let config = Config::default();
        let circuit = self.circuit.build(&self.netlist, &config);
        let cx = Context::new(&self.netlist, &circuit, &config);
        analyze(&cx).0
    }
}

/// An astable in the datasheet's form: RA from VCC to DIS, RB from DIS to the capacitor.
fn astable(ra: f64, rb: f64, c: f64, vcc: f64) -> Deck {
    let mut d = Deck::default();
    d.v("V1", "vcc", "0", vcc);
    d.timer("XU1", ["0", "tc", "out", "vcc", "ctl", "tc", "dis", "vcc"]);
    d.r("RA", "vcc", "dis", ra);
    d.r("RB", "dis", "tc", rb);
    d.c("C1", "tc", "0", c);
    d.c("CC", "ctl", "0", 10e-9);
    d
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

#[test]
fn astable_follows_the_datasheet_equation() {
    // 555 datasheet: f ≈ 1.44/((RA + 2·RB)·C), duty (RA + RB)/(RA + 2·RB).
    let facts = astable(1e3, 10e3, 100e-9, 9.0).analyze();
    let t = &facts[0];
    assert_eq!(t.mode, TimerMode::Astable);
    let f = t.frequency_hz.as_ref().expect("frequency");
    let ideal = 1.44 / ((1e3 + 2.0 * 10e3) * 100e-9);
    assert!(rel(f.min, ideal) < 0.05, "f {} vs {}", f.min, ideal);
    let duty = t.duty.as_ref().expect("duty");
    assert!(rel(duty.min, 11.0 / 21.0) < 0.05, "duty {}", duty.min);
    assert!(t.stuck.is_none());
}

#[test]
fn monostable_width_is_1_1_rc() {
    // 555 datasheet: monostable width ≈ 1.1·R·C.
    let mut d = Deck::default();
    d.v("V1", "vcc", "0", 9.0);
    d.pulse("VT", "trig", 9.0, 0.0, 1e-7, 1e-7, 10e-6, 10e-3);
    d.timer("XU1", ["0", "trig", "out", "vcc", "ctl", "tc", "tc", "vcc"]);
    d.r("R1", "vcc", "tc", 100e3);
    d.c("C1", "tc", "0", 10e-9);
    let facts = d.analyze();
    let t = &facts[0];
    assert_eq!(t.mode, TimerMode::Monostable);
    let w = t.high_s.as_ref().expect("width");
    assert!(rel(w.min, 1.1 * 100e3 * 10e-9) < 0.03, "w {}", w.min);
    let trig = t.trigger.as_ref().expect("trigger");
    // 10 µs low plus the part of each 100 ns edge below 3 V (a third of it: the pulse swings
    // from 9 V to 0 V).
    assert!(
        rel(trig.low_s.max, 10e-6 + 2.0 * 1e-7 / 3.0) < 1e-3,
        "{}",
        trig.low_s.max
    );
    assert!(rel(trig.period_s.min, 10e-3) < 1e-9);
    assert!(t.divided_frequency_hz.is_none());
}

#[test]
fn one_shot_longer_than_its_period_divides() {
    // For T < W < 2T the output runs at f/2 with duty W/(2T).
    let mut d = Deck::default();
    d.v("V1", "vcc", "0", 9.0);
    d.pulse("VT", "trig", 9.0, 0.0, 1e-7, 1e-7, 10e-6, 1e-3);
    d.timer("XU1", ["0", "trig", "out", "vcc", "ctl", "tc", "tc", "vcc"]);
    d.r("R1", "vcc", "tc", 100e3);
    d.c("C1", "tc", "0", 15e-9);
    let t = &d.analyze()[0];
    let w = t.high_s.as_ref().expect("width").max;
    let f = t.divided_frequency_hz.expect("divided");
    assert!(rel(f, 500.0) < 1e-6, "f {f}");
    assert!(rel(t.divided_duty.expect("duty"), w / 2e-3) < 1e-6);
}

#[test]
fn bias_current_through_a_huge_resistor_stops_the_charge() {
    // 555 datasheet: the threshold current sets the largest total timing resistance,
    // R ≤ (VCC − 2/3·VCC)/I_THR: 12 MΩ at 9 V with 0.25 µA (from memory).
    let t = &astable(1e3, 22e6, 1e-9, 9.0).analyze()[0];
    let stuck = t.stuck.as_ref().expect("stuck");
    assert_eq!(stuck.phase, "high");
    assert!(stuck.bias_a.is_some());
    assert!(stuck.settles_v < 6.0);
    let quiet = &astable(1e3, 4.7e6, 1e-9, 9.0).analyze()[0];
    assert!(quiet.stuck.is_none());
}

#[test]
fn diode_across_rb_makes_the_low_time_a_spike() {
    // Common practice: a diode across the discharge resistor dumps the capacitor into the
    // discharge pin, so the low time becomes a tiny fraction of the high time.
    let mut d = astable(47e3, 4.7e3, 10e-9, 12.0);
    d.d("D1", "tc", "dis");
    let t = &d.analyze()[0];
    let high = t.high_s.as_ref().expect("high").min;
    let low = t.low_s.as_ref().expect("low").max;
    assert!(low < 0.01 * high, "low {low} high {high}");
    let (diode, peak) = t.discharge_dump.expect("dump");
    assert_eq!(cx_name(&d, diode), "D1");
    assert!(peak > 0.05, "peak {peak}");
}

fn cx_name(d: &Deck, device: DeviceId) -> String {
    d.netlist.elements[d.circuit.devices()[device].element]
        .path
        .clone()
}

fn rheostat_monostable(series: Option<f64>) -> Deck {
    let mut d = Deck::default();
    d.v("V1", "vcc", "0", 9.0);
    d.pulse("VT", "trig", 9.0, 0.0, 1e-7, 1e-7, 10e-6, 10e-3);
    d.timer("XU1", ["0", "trig", "out", "vcc", "ctl", "tc", "tc", "vcc"]);
    match series {
        Some(r) => {
            d.r("R1", "vcc", "top", r);
            d.pot("XRV1", "top", "tc", "tc", 10e3);
        }
        None => {
            d.pot("XRV1", "vcc", "tc", "tc", 10e3);
        }
    }
    d.c("C1", "tc", "0", 100e-9);
    d
}

#[test]
fn bare_rheostat_on_the_discharge_pin_is_a_dead_short() {
    // Common practice: a bare pot between the discharge pin and the supply is a dead short at
    // its zero end; 100 Ω in series stops the short but leaves about 90 mA; 1 kΩ keeps the pin
    // within its characterised current.
    let t = &rheostat_monostable(None).analyze()[0];
    let i = t.discharge_current_a.as_ref().expect("current");
    assert!(i.max > 0.2, "i {}", i.max);
    assert!(t.discharge_source_ohms.as_ref().expect("ohms").min < 1.0);
    let t = &rheostat_monostable(Some(100.0)).analyze()[0];
    let i = t.discharge_current_a.as_ref().expect("current");
    assert!(i.max > 0.07 && i.max < 0.1, "i {}", i.max);
    let t = &rheostat_monostable(Some(1e3)).analyze()[0];
    let i = t.discharge_current_a.as_ref().expect("current");
    assert!(i.max < 0.015, "i {}", i.max);
    assert!(!t.discharge_chain.is_empty());
}

#[test]
fn control_voltage_moves_the_thresholds() {
    // t_high = R·C·ln((Vcc − Vc/2)/(Vcc − Vc)) for a capacitor charged from VCC through R
    // between Vc/2 and Vc (the 555 datasheet's exponential with the thresholds moved).
    let mut d = astable(10e3, 10e3, 10e-9, 9.0);
    d.v("VC", "ctl", "0", 4.0);
    let t = &d.analyze()[0];
    let upper = t.upper_threshold_v.as_ref().expect("upper").min;
    assert!((upper - 4.0).abs() < 1e-9);
    let high = t.high_s.as_ref().expect("high").min;
    let expect = 20e3 * 10e-9 * ((9.0f64 - 2.0) / (9.0 - 4.0)).ln();
    assert!(rel(high, expect) < 0.01, "{high} vs {expect}");
}

#[test]
fn timer_driving_a_one_shot_hands_over_its_low_time() {
    let mut d = astable(1e3, 10e3, 10e-9, 9.0);
    d.timer(
        "XU2",
        ["0", "out", "out2", "vcc", "ctl2", "tc2", "tc2", "vcc"],
    );
    d.r("R2", "vcc", "tc2", 10e3);
    d.c("C2", "tc2", "0", 2.2e-9);
    let facts = d.analyze();
    let (u1, u2) = (&facts[0], &facts[1]);
    assert_eq!(u2.mode, TimerMode::Monostable);
    let trig = u2.trigger.as_ref().expect("trigger");
    assert_eq!(trig.driver, u1.device);
    let low = u1.low_s.as_ref().expect("low");
    assert!(rel(trig.low_s.max, low.max) < 1e-9);
    // The astable's low time (about 0.69·10 kΩ·10 nF) outlasts the one-shot (1.1·10 kΩ·2.2 nF).
    assert!(trig.low_s.max > u2.high_s.as_ref().expect("w").min);
}

#[test]
fn steering_diodes_and_a_duty_pot_keep_the_period_and_move_the_duty() {
    // The common PWM astable: the pot's wiper on DIS, its ends through two diodes to the
    // capacitor. Charge through RA and the a-side, discharge through the b-side: the period
    // hardly moves over the travel, the duty runs from near RA/(RA + R) to near 1 (common
    // practice).
    let mut d = Deck::default();
    d.v("V1", "vcc", "0", 12.0);
    d.timer("XU1", ["0", "tc", "out", "vcc", "ctl", "tc", "dis", "vcc"]);
    d.r("RA", "vcc", "dis", 1e3);
    d.pot("XRV1", "na", "dis", "nb", 100e3);
    d.d("D1", "na", "tc");
    d.d("D2", "tc", "nb");
    d.c("C1", "tc", "0", 10e-9);
    let t = &d.analyze()[0];
    let duty = t.duty.as_ref().expect("duty");
    assert!(duty.min < 0.1 && duty.max > 0.9, "duty {duty:?}");
    assert_eq!(duty.min_state, "XRV1 wiper at 0 %");
    let period = t.period_s.as_ref().expect("period");
    assert!(period.max / period.min < 1.2, "period {period:?}");
    // Diode drops lengthen both phases a little past 0.693·101 kΩ·10 nF (555 datasheet).
    assert!(period.min > 0.693 * 101e3 * 10e-9, "period {period:?}");
}

#[test]
fn fifty_percent_astable_charges_from_its_output() {
    // THR and TRIG on the capacitor, charged and discharged from OUT through one resistor.
    let mut d = Deck::default();
    d.v("V1", "vcc", "0", 9.0);
    d.timer("XU1", ["0", "tc", "out", "vcc", "ctl", "tc", "dis", "vcc"]);
    d.r("R1", "out", "tc", 10e3);
    d.c("C1", "tc", "0", 10e-9);
    let t = &d.analyze()[0];
    assert_eq!(t.mode, TimerMode::Astable);
    assert!(t.stuck.is_none());
    let high = t.high_s.as_ref().expect("high").min;
    // Output high at 9 V − 1.7 V: R·C·ln((7.3 − 3)/(7.3 − 6)).
    let expect = 10e3 * 10e-9 * ((7.3f64 - 3.0) / (7.3 - 6.0)).ln();
    assert!(rel(high, expect) < 0.01, "{high} vs {expect}");
}

#[test]
fn a_timer_with_no_timing_capacitor_is_unknown() {
    let mut d = Deck::default();
    d.v("V1", "vcc", "0", 9.0);
    d.pulse("VT", "in", 0.0, 9.0, 1e-6, 1e-6, 1e-3, 2e-3);
    d.timer("XU1", ["0", "in", "out", "vcc", "ctl", "in", "dis", "vcc"]);
    let t = &d.analyze()[0];
    assert_eq!(t.mode, TimerMode::Unknown);
    assert!(t.high_s.is_none() && t.stuck.is_none());
}

#[test]
fn a_rheostat_ra_at_zero_leaves_the_discharge_pin_unable_to_pull_down() {
    // With RA a bare rheostat at its zero end, the discharge pin sits at its current limit and
    // its net stays near the supply: the low phase never reaches the trigger threshold.
    let mut d = Deck::default();
    d.v("V1", "vcc", "0", 9.0);
    d.timer("XU1", ["0", "tc", "out", "vcc", "ctl", "tc", "dis", "vcc"]);
    d.pot("XRA", "vcc", "dis", "dis", 10e3);
    d.r("RB", "dis", "tc", 10e3);
    d.c("C1", "tc", "0", 10e-9);
    let t = &d.analyze()[0];
    let stuck = t.stuck.as_ref().expect("stuck");
    assert_eq!(stuck.phase, "low");
    assert!(stuck.reason.contains("discharge pin"), "{}", stuck.reason);
    assert!(stuck.state.contains("wiper at 0 %"), "{}", stuck.state);
}
