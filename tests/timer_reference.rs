//! The timer analysis against the outside world: the 555 datasheet equations and facts of the
//! trade. Each netlist goes through the whole pipeline (parser → circuit → analysis).
//!
//! The analysis solves the real network, so it departs from the ideal equations by what the
//! ideal leaves out: the threshold input's bias current (0.25 µA, from memory) drawn through the
//! timing resistors, the discharge pin's on-resistance (about 10 Ω, from memory) in series with
//! RB, and the current RA pours into the discharge node while the pin is on, which lifts the
//! voltage the capacitor discharges toward. Over the sets below these stay within a few per
//! cent, hence the tolerances.

use kickback::analysis::{self, TimerFacts, TimerMode};
use kickback::circuit::{parts, Circuit};
use kickback::config::Config;
use kickback::netlist::{self, Limits};
use kickback::source::SourceMap;
use std::io::Write;

fn facts(deck: &str) -> Vec<TimerFacts> {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("timer.cir");
    std::fs::File::create(&path)
        .and_then(|mut f| f.write_all(deck.as_bytes()))
        .expect("write deck");
    let config = Config::default();
    let keep = |name: &str| parts::keeps_whole(name, &config);
    let mut sources = SourceMap::new();
    let (flat, _) =
        netlist::load(&path, &mut sources, &Limits::default(), &keep).expect("deck loads");
    let (circuit, _) = Circuit::build(&flat, &config);
    let (analysis, _) = analysis::analyze(&flat, &circuit, &config);
    analysis.timers
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// The datasheet astable: RA from VCC to DIS, RB from DIS to the capacitor.
fn astable(ra: f64, rb: f64, c: f64, extra: &str) -> String {
    format!(
        "astable
V1 vcc 0 DC 12
XU1 0 tc out vcc ctl tc dis vcc TIMER555
RA vcc dis {ra}
RB dis tc {rb}
C1 tc 0 {c}
CC ctl 0 10n
{extra}
.end
"
    )
}

#[test]
fn astable_frequency_and_duty_follow_the_datasheet() {
    // 555 datasheet: f ≈ 1.44/((RA + 2·RB)·C), duty (RA + RB)/(RA + 2·RB).
    // Tolerance 5 % on f and 3 % on duty: bias current, discharge on-resistance and RA's
    // current into the discharge node (see the module notes).
    let sets = [
        (1e3, 10e3, 100e-9),
        (4.7e3, 47e3, 10e-9),
        (10e3, 100e3, 1e-9),
        (2.2e3, 2.2e3, 1e-6),
        (100e3, 220e3, 100e-9),
        (1e3, 1e3, 10e-6),
    ];
    for (ra, rb, c) in sets {
        let t = &facts(&astable(ra, rb, c, ""))[0];
        assert_eq!(t.mode, TimerMode::Astable);
        let f = t.frequency_hz.as_ref().expect("frequency").min;
        let ideal = 1.44 / ((ra + 2.0 * rb) * c);
        assert!(
            rel(f, ideal) < 0.05,
            "RA {ra} RB {rb} C {c}: f {f} vs {ideal}"
        );
        let duty = t.duty.as_ref().expect("duty").min;
        let ideal_duty = (ra + rb) / (ra + 2.0 * rb);
        assert!(
            rel(duty, ideal_duty) < 0.03,
            "RA {ra} RB {rb} C {c}: duty {duty} vs {ideal_duty}"
        );
    }
}

#[test]
fn monostable_width_is_1_1_rc() {
    // 555 datasheet: monostable width ≈ 1.1·R·C (ln 3 = 1.0986). Tolerance 3 %: the threshold
    // bias current through R and the discharge pin's residual voltage at the start (at 1 MΩ
    // and 12 V the bias current alone lengthens the pulse by about 4 %).
    for (r, c) in [
        (10e3, 10e-9),
        (100e3, 100e-9),
        (470e3, 2.2e-9),
        (4.7e3, 1e-6),
    ] {
        let deck = format!(
            "one-shot
V1 vcc 0 DC 12
VT trig 0 PULSE(12 0 0 1u 1u 1u 1)
XU1 0 trig out vcc ctl tc tc vcc TIMER555
R1 vcc tc {r}
C1 tc 0 {c}
CC ctl 0 10n
.end
"
        );
        let t = &facts(&deck)[0];
        assert_eq!(t.mode, TimerMode::Monostable);
        let w = t.high_s.as_ref().expect("width").min;
        assert!(rel(w, 1.1 * r * c) < 0.03, "R {r} C {c}: {w}");
    }
}

#[test]
fn control_voltage_moves_the_thresholds() {
    // The capacitor charges from VCC through RA + RB between Vc/2 and Vc:
    // t_high = (RA + RB)·C·ln((VCC − Vc/2)/(VCC − Vc)) (the 555 datasheet's exponential with
    // the thresholds moved). Tolerance 1 %: the bias current through 20 kΩ.
    for vc in [4.0, 6.0, 10.0] {
        let t = &facts(&astable(10e3, 10e3, 10e-9, &format!("VC ctl 0 DC {vc}")))[0];
        let upper = t.upper_threshold_v.as_ref().expect("upper").min;
        assert!((upper - vc).abs() < 1e-6);
        let high = t.high_s.as_ref().expect("high").min;
        let expect = 20e3 * 10e-9 * ((12.0 - vc / 2.0) / (12.0 - vc)).ln();
        assert!(rel(high, expect) < 0.01, "Vc {vc}: {high} vs {expect}");
    }
    // A resistor from CTRL to ground pulls against the internal 5 kΩ / 10 kΩ ladder (from
    // memory): 10 kΩ ∥ 10 kΩ below 5 kΩ puts CTRL at VCC/2.
    let t = &facts(&astable(10e3, 10e3, 10e-9, "RC ctl 0 10k"))[0];
    let upper = t.upper_threshold_v.as_ref().expect("upper").min;
    assert!(rel(upper, 6.0) < 1e-6, "{upper}");
    let lower = t.lower_threshold_v.as_ref().expect("lower").min;
    assert!(rel(lower, 3.0) < 1e-6, "{lower}");
}

#[test]
fn diode_across_rb_turns_the_low_time_into_a_spike() {
    // Common practice: a diode across the astable's discharge resistor gives short trigger
    // spikes — the low time becomes a tiny fraction of the high time.
    let deck = astable(47e3, 4.7e3, 10e-9, "DB tc dis 1N4148");
    let t = &facts(&deck)[0];
    let high = t.high_s.as_ref().expect("high").min;
    let low = t.low_s.as_ref().expect("low").max;
    assert!(low < 0.01 * high, "low {low} high {high}");
    // The charge still runs through RA + RB: 0.693·(RA + RB)·C (555 datasheet).
    assert!(rel(high, 0.693 * 51.7e3 * 10e-9) < 0.03, "high {high}");
    assert!(t.discharge_dump.is_some());
}

#[test]
fn rheostat_with_a_parallel_resistor_and_series_resistor_spans_its_range() {
    // Common practice: 10 kΩ ∥ 4.7 kΩ ≈ 3.2 kΩ, so a 10 kΩ rheostat with 4.7 kΩ across it and
    // 100 Ω in series spans about 0.1 to 3.3 kΩ.
    let deck = "rheostat
V1 vcc 0 DC 9
VT trig 0 PULSE(9 0 0 1u 1u 2u 10m)
XU1 0 trig out vcc ctl tc tc vcc TIMER555
R1 vcc top 100
XRV1 top tc tc POT r=10k
RP top tc 4.7k
C1 tc 0 100n
CC ctl 0 10n
.end
";
    let t = &facts(deck)[0];
    let r = t.discharge_source_ohms.as_ref().expect("ohms");
    assert!(rel(r.min, 100.0) < 0.01, "min {}", r.min);
    assert!(r.max > 3.2e3 && r.max < 3.3e3, "max {}", r.max);
    // The pulse follows: 1.1·R·C at both ends (555 datasheet), 3 % for the bias current.
    let w = t.high_s.as_ref().expect("width");
    assert!(rel(w.max, 1.1 * 3297.6 * 100e-9) < 0.03, "w {}", w.max);
}

#[test]
fn bare_pot_on_the_discharge_pin_is_a_dead_short() {
    // Common practice: a bare pot between the discharge pin and the supply is a dead short at
    // its zero end; about 100 Ω in series prevents the short but leaves about 90 mA at 9 V
    // (above the 15 mA the pin is characterised at); about 1 kΩ keeps it within.
    let deck = |series: &str| {
        format!(
            "pot on DIS
V1 vcc 0 DC 9
VT trig 0 PULSE(9 0 0 1u 1u 2u 10m)
XU1 0 trig out vcc ctl tc tc vcc TIMER555
{series}
XRV1 top tc tc POT r=10k
C1 tc 0 100n
.end
"
        )
    };
    let bare = &facts(&deck("R1 vcc top 0"))[0];
    assert!(bare.discharge_source_ohms.as_ref().expect("ohms").min < 1.0);
    let with_100 = &facts(&deck("R1 vcc top 100"))[0];
    let i = with_100.discharge_current_a.as_ref().expect("current").max;
    assert!(i > 0.07 && i < 0.1, "{i}");
    let with_1k = &facts(&deck("R1 vcc top 1k"))[0];
    let i = with_1k.discharge_current_a.as_ref().expect("current").max;
    assert!(i < 0.015, "{i}");
}

#[test]
fn slow_trigger_edges_count_below_the_threshold() {
    // A 12 V → 0 V trigger pulse with 30 µs edges spends a third of each edge below the 4 V
    // trigger threshold (1/3 VCC, 555 datasheet) besides its 5 µs low level.
    let deck = "slow edges
V1 vcc 0 DC 12
VT trig 0 PULSE(12 0 0 30u 30u 5u 2m)
XU1 0 trig out vcc ctl tc tc vcc TIMER555
R1 vcc tc 10k
C1 tc 0 10n
CC ctl 0 10n
.end
";
    let t = &facts(deck)[0];
    let trig = t.trigger.as_ref().expect("trigger");
    assert!(rel(trig.low_s.max, 5e-6 + 2.0 * 30e-6 / 3.0) < 1e-6);
    assert!(rel(trig.period_s.min, 2e-3) < 1e-9);
}
