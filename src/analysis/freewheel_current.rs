//! The average current a freewheel diode carries under PWM: the closed-form RL steady state of
//! a stalled winding, worst over the duty and frequency ranges. `flyback-underrated` compares
//! it with the diode's `if_avg`.

use super::Range;

/// The diode's average current in the RL steady state of a stalled winding (I = V/R with the
/// switch on, ideal switch and diode), worst over the duty and frequency ranges.
///
/// First-order RL response, i(t) = I∞ + (i₀ − I∞)·e^(−t/τ): with a = e^(−T_on/τ) and
/// b = e^(−T_off/τ) the current peaks at I_max = I·(1 − a)/(1 − a·b) and decays to I_max·b
/// through the diode, which carries the charge τ·I_max·(1 − b) each period. In the limits this
/// is (1 − D)·D·I (τ ≫ T, the current barely ripples) and 0 (τ ≪ T).
pub fn worst_rl_average(i: f64, tau: f64, f: &Range, duty: &Range) -> (f64, f64) {
    let mut best = (0.0, duty.min);
    let steps = 20;
    for freq in [f.min, f.max] {
        if freq <= 0.0 || !freq.is_finite() {
            continue;
        }
        let period = 1.0 / freq;
        let mut ds: Vec<f64> = (0..=steps)
            .map(|k| duty.min + (duty.max - duty.min) * k as f64 / steps as f64)
            .collect();
        ds.push(0.5f64.clamp(duty.min, duty.max));
        for d in ds {
            let d = d.clamp(0.0, 1.0);
            let a = (-(d * period) / tau).exp();
            let b = (-((1.0 - d) * period) / tau).exp();
            let denominator = 1.0 - a * b;
            if denominator <= 0.0 {
                continue;
            }
            let i_max = i * (1.0 - a) / denominator;
            let avg = tau * i_max * (1.0 - b) / period;
            if avg > best.0 {
                best = (avg, d);
            }
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::worst_rl_average;
    use super::Range;

    // First-order RL steady state: its limits are (1 − D)·D·I for τ ≫ T and 0 for τ ≪ T.
    #[test]
    fn rl_average_has_the_textbook_limits() {
        let d = Range::point(0.3, "");
        let f = Range::point(20e3, "");
        let (slow, _) = worst_rl_average(2.0, 1.0, &f, &d);
        assert!((slow - 0.7 * 0.3 * 2.0).abs() < 1e-3, "{slow}");
        let (fast, _) = worst_rl_average(2.0, 1e-9, &f, &d);
        assert!(fast < 1e-3, "{fast}");
        // Over a duty range the worst is at D = 0.5 when the current barely ripples.
        let range = Range {
            min: 0.1,
            max: 0.9,
            min_state: String::new(),
            max_state: String::new(),
        };
        let (worst, at) = worst_rl_average(2.0, 1.0, &f, &range);
        assert!((worst - 0.5).abs() < 1e-3 && (at - 0.5).abs() < 1e-9);
    }
}
