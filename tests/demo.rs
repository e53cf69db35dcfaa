//! The demo board shows what the tool is for, and its fixed twin checks clean.

use kickback::check::{check_file, CheckOptions};
use kickback::diagnostic::Severity;
use std::path::Path;

fn rules_at(file: &str, severity: Severity) -> Vec<String> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("testdata/demo")
        .join(file);
    let report = check_file(&path, &CheckOptions::default());
    assert!(report.failure.is_none(), "{:?}", report.failure);
    report
        .findings
        .iter()
        .filter(|f| f.severity == severity)
        .map(|f| f.rule.clone())
        .collect()
}

#[test]
fn demo_board_shows_its_mistakes() {
    let errors = rules_at("doser.cir", Severity::Error);
    for rule in [
        "discharge-unprotected",
        "gate-underdrive",
        "base-underdrive",
        "flyback-missing",
        "resistor-overpower",
    ] {
        assert!(
            errors.iter().any(|r| r == rule),
            "{rule} missing: {errors:?}"
        );
    }
    let warnings = rules_at("doser.cir", Severity::Warning);
    for rule in ["shoot-through", "load-overvoltage", "pot-wiper-overcurrent"] {
        assert!(
            warnings.iter().any(|r| r == rule),
            "{rule} missing: {warnings:?}"
        );
    }
}

#[test]
fn fixed_board_has_no_errors_and_no_warnings() {
    assert_eq!(
        rules_at("doser-fixed.cir", Severity::Error),
        Vec::<String>::new()
    );
    assert_eq!(
        rules_at("doser-fixed.cir", Severity::Warning),
        Vec::<String>::new()
    );
}

/// The stirrer's numbers re-derived by hand: first-order R-L step response in its periodic
/// steady state (on: the rail across the winding; off: minus the freewheel diode's drop), the
/// effective voltage being I_rms·R. The demo's stirrer: 6 Ω, 0.8 mH (τ = 133 µs), 20 kHz at
/// 90 %, on the 12.6 V corner with MST saturated (its rds_on of 50 mΩ in series).
#[test]
fn stirrer_effective_voltage_by_hand() {
    use kickback::check::report_file;
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("testdata/demo/doser.cir");
    let facts = report_file(&path, &CheckOptions::default()).expect("demo facts");
    let stir = facts
        .analysis
        .loads
        .iter()
        .find(|l| {
            facts
                .circuit
                .devices()
                .get(l.device)
                .and_then(|d| facts.netlist.elements.get(d.element))
                .is_some_and(|e| e.path == "XSTIR")
        })
        .expect("XSTIR");
    let (r, l) = (6.0, 0.8e-3);
    let tau = l / r;
    assert!((stir.time_constant_s.expect("tau") - tau).abs() < 1e-12);
    // MST starves at V_GS 3.3 V, so the stirrer is judged with MST saturated: 12.6 V over
    // 6 Ω + 50 mΩ, times 6 Ω.
    let vpk = 12.6 * r / (r + 0.05);
    let full_on = stir.full_on_v.as_ref().expect("judged with MST saturated");
    assert!((full_on.max - vpk).abs() < 1e-6, "{full_on:?}");
    // DST (IS 30 µA, N 1.05, RS 50 mΩ) at the winding's solved current, Shockley equation.
    let i = stir.current_a.as_ref().expect("current").max;
    let vf = 1.05 * 0.025_85 * (i / 30e-6 + 1.0).ln() + i * 0.05;
    let off = -vf * r / r;
    // Periodic steady state, continuous conduction: i_max = V1(1−a) + a·i_min and
    // i_min = V2(1−b) + b·i_max with a = e^(−DT/τ), b = e^(−(1−D)T/τ), in volts across R.
    // The PULSE's duty counts half of each 20 ns edge: 90.04 % of 50 µs.
    let d = stir.duty.as_ref().expect("duty").max;
    let t = 1.0 / stir.frequency_hz.as_ref().expect("frequency").min;
    assert!((d - 0.9).abs() < 1e-3 && (t - 50e-6).abs() < 1e-9);
    let (a, b) = ((-d * t / tau).exp(), (-(1.0 - d) * t / tau).exp());
    let max = (vpk * (1.0 - a) + a * (1.0 - b) * off) / (1.0 - a * b);
    let min = off * (1.0 - b) + b * max;
    assert!(min > 0.0, "continuous conduction");
    // ∫(A + B·e^(−s/τ))² ds over each phase.
    let square = |x: f64, y: f64, t1: f64| {
        let e = (-t1 / tau).exp();
        x * x * t1 + 2.0 * x * y * tau * (1.0 - e) + y * y * tau / 2.0 * (1.0 - e * e)
    };
    let rms = ((square(vpk, min - vpk, d * t) + square(off, max - off, (1.0 - d) * t)) / t).sqrt();
    let eff = stir.effective_v.as_ref().expect("effective").max;
    assert!((eff - rms).abs() < 1e-6, "analysis {eff} vs by hand {rms}");
    // About 11.3 V: near the average 12.5 V × 0.9, far below Vpk·√D ≈ 11.9 V.
    assert!((eff - 11.3).abs() < 0.1, "{eff}");
    // The duty that keeps the 6 V winding at its rating, from the same closed form: about
    // half (6 / 12.5 = 48 % for the average alone), not (6 / 12.5)² = 23 %.
    let limit = stir.duty_limit.expect("duty limit");
    assert!((0.46..0.51).contains(&limit), "{limit}");
}
