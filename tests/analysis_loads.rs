//! Load voltages: peak, average and effective over the duty range, and the τ = L/R rule.

mod analysis_support;

use analysis_support::{assert_close, Board};
use kickback::analysis::EffectiveMethod;
use kickback::circuit::Kind;

/// A motor (10 Ω) on a low-side switch driven hard at 25 % duty and the given period.
fn pwm_motor(period: f64, inductance: Option<f64>) -> Board {
    let mut b = Board::new();
    b.dc("V12", "v12", "0", 12.0);
    b.pulse("VG", "g", "0", 0.0, 10.0, 0.25 * period - 1e-9, period);
    b.nmos("M1", "d", "g", "0", 2.0, 50.0);
    let mut data = vec![("resistance", 10.0)];
    if let Some(l) = inductance {
        data.push(("inductance", l));
    }
    b.load("XM", Kind::DcMotor, "v12", "d", &data);
    b.diode("D1", Kind::Schottky, "d", "v12");
    b
}

#[test]
fn effective_voltage_follows_the_r_l_closed_form() {
    // τ = L/R = 10 mH / 10 Ω = 1 ms. First-order R-L step response in its periodic steady
    // state: the effective voltage I_rms·R tends to the average Vpk·D when T ≪ τ and to the
    // RMS Vpk·√D when T ≫ τ (the current then follows each pulse).
    for (period, toward_average) in [(20e-6, true), (100e-3, false)] {
        let (a, _) = pwm_motor(period, Some(10e-3)).analyze();
        let load = &a.loads[0];
        assert_close(load.time_constant_s.expect("tau"), 1e-3, 1e-12, "tau");
        assert_eq!(load.effective_method, EffectiveMethod::ClosedForm);
        let peak = load.peak_v.as_ref().expect("peak").max;
        let eff = load.effective_v.as_ref().expect("effective").max;
        let avg = load.avg_v.as_ref().expect("average").max;
        // The freewheel drop pulls the average a little below Vpk·D; never above it.
        assert!(
            avg <= peak * 0.25 + 1e-9 && avg > peak * 0.2,
            "avg {avg} of {peak}"
        );
        if toward_average {
            assert!((eff - avg).abs() < 0.01 * avg, "{eff} vs {avg}");
        } else {
            assert!(
                (eff - peak * 0.5).abs() < 0.03 * peak * 0.5,
                "{eff} vs {peak}"
            );
        }
        assert!(eff >= avg - 1e-9);
        assert!(load.ripple_a.is_some());
    }
}

#[test]
fn rms_when_tau_is_unknown() {
    let (a, _) = pwm_motor(50e-6, None).analyze();
    let load = &a.loads[0];
    assert_eq!(load.time_constant_s, None);
    assert_eq!(load.effective_method, EffectiveMethod::RmsAssumed);
    let peak = load.peak_v.as_ref().expect("peak").max;
    assert_close(
        load.effective_v.as_ref().expect("eff").max,
        peak * 0.5,
        1e-6,
        "RMS",
    );
}

#[test]
fn unknown_winding_resistance_leaves_current_unknown() {
    let mut b = Board::new();
    b.dc("V12", "v12", "0", 12.0);
    b.pulse("VG", "g", "0", 0.0, 10.0, 25e-6, 50e-6);
    b.nmos("M1", "d", "g", "0", 2.0, 2.0);
    b.load("XM", Kind::DcMotor, "v12", "d", &[("rated_voltage", 12.0)]);
    let (a, _) = b.analyze();
    let load = &a.loads[0];
    // Solved as a light placeholder: nearly the whole rail across it, current unknown.
    assert!(load.peak_v.as_ref().expect("peak").max > 11.9);
    assert_eq!(load.current_a, None);
    assert_eq!(load.stored_energy_j, None);
    assert_eq!(a.switches[0].current_a, None);
    assert_eq!(a.switches[0].dissipation_w, None);
    assert!(a.switches[0].inductive);
    assert!(a.switches[0].freewheel.is_empty());
}

/// A 3 V motor (5 Ω) straight on a PULSE supply of `volts` at 50 % duty, 1 kHz.
fn motor_on_pulsed_supply(volts: f64) -> Board {
    let mut b = Board::new();
    b.pulse("VP", "m", "0", 0.0, volts, 0.5e-3 - 1e-9, 1e-3);
    b.load(
        "XM",
        Kind::DcMotor,
        "m",
        "0",
        &[("rated_voltage", 3.0), ("resistance", 5.0)],
    );
    b
}

#[test]
fn three_volt_motor_on_pulsed_6_and_9_volts() {
    // Common practice: a 3 V motor on a pulsed 6 V supply is a stretch worth a warning but not
    // a failure; on 9 V it is a failure. With τ unknown the effective voltage is RMS, Vpk·√D.
    let (a6, _) = motor_on_pulsed_supply(6.0).analyze();
    let (a9, _) = motor_on_pulsed_supply(9.0).analyze();
    let (l6, l9) = (&a6.loads[0], &a9.loads[0]);
    for (load, volts) in [(l6, 6.0), (l9, 9.0)] {
        assert_eq!(load.switch, None);
        assert!(load.driven_by.is_some());
        assert_close(load.peak_v.as_ref().expect("peak").max, volts, 1e-9, "peak");
        assert_close(load.duty.as_ref().expect("duty").max, 0.5, 1e-5, "duty");
        assert_close(
            load.effective_v.as_ref().expect("effective").max,
            volts * 0.5f64.sqrt(),
            1e-5,
            "effective",
        );
        // 5 Ω at the peak.
        assert_close(
            load.current_a.as_ref().expect("i").max,
            volts / 5.0,
            1e-9,
            "current",
        );
    }
    // Against the load-overvoltage thresholds (DESIGN §6): 6 V pulsed is above 1.1 × 3 V
    // effective (warning) but within 2 × effective and 2.5 × peak; 9 V pulsed exceeds 2.5 × 3 V
    // peak (error).
    let rated = l6.rated_v.as_ref().expect("rated").value;
    let eff6 = l6.effective_v.as_ref().expect("e").max;
    let pk6 = l6.peak_v.as_ref().expect("p").max;
    assert!(eff6 > 1.1 * rated && eff6 <= 2.0 * rated && pk6 <= 2.5 * rated);
    assert!(l9.peak_v.as_ref().expect("p").max > 2.5 * rated);
}

#[test]
fn duty_and_frequency_come_from_the_driving_timer() {
    // A 555 astable: RA 1 kΩ, RB 10 kΩ, C 10 nF (about 6.9 kHz at about 52 %).
    let mut b = Board::new();
    b.dc("V12", "v12", "0", 12.0);
    let u = b.timer("XU1", ["0", "tc", "out", "v12", "ctl", "tc", "dis", "v12"]);
    b.r("RA", "v12", "dis", 1e3);
    b.r("RB", "dis", "tc", 10e3);
    b.c("CT", "tc", "0", 10e-9);
    b.c("CC", "ctl", "0", 10e-9);
    b.r("RG", "out", "g", 47.0);
    b.nmos("M1", "d", "g", "0", 2.0, 2.0);
    b.load(
        "XM",
        Kind::DcMotor,
        "v12",
        "d",
        &[("resistance", 10.0), ("inductance", 1e-3)],
    );
    b.diode("D1", Kind::Diode, "d", "v12");
    let (a, _) = b.analyze();
    let timer = a
        .timers
        .iter()
        .find(|t| t.device == u)
        .expect("timer facts");
    let sw = &a.switches[0];
    assert_eq!(sw.driver.as_ref().map(|d| d.device), Some(u));
    // The switch conducts while the output is high: its duty is the timer's.
    assert_eq!(sw.duty, timer.duty);
    assert_eq!(sw.frequency_hz, timer.frequency_hz);
    let duty = sw.duty.as_ref().expect("timer duty");
    let f = sw.frequency_hz.as_ref().expect("timer frequency");
    // τ = 1 mH / 10 Ω = 100 µs against T ≈ 145 µs: the closed form lands between the average
    // Vpk·D and the RMS Vpk·√D at each end of the duty range.
    let load = &a.loads[0];
    assert!(1.0 / f.min > 1e-4 / 3.0);
    assert_eq!(load.effective_method, EffectiveMethod::ClosedForm);
    let peak = load.peak_v.as_ref().expect("peak");
    let eff = load.effective_v.as_ref().expect("eff");
    assert!(eff.min > peak.min * duty.min * 0.95 && eff.min < peak.min * duty.min.sqrt());
    assert!(eff.max > peak.max * duty.max * 0.95 && eff.max < peak.max * duty.max.sqrt());
    // The 555's output high, 12 − 1.7 V, on the gate (no gate current at DC).
    assert_close(sw.vgs_on_v.as_ref().expect("vgs").min, 10.3, 1e-6, "gate");
}
