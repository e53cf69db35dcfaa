//! The current in a PWM-switched R-L winding over one period, in closed form.
//!
//! First-order R-L step response, periodic steady state: in each phase the current moves
//! exponentially (time constant τ = L/R) toward that phase's asymptote — the on-state current
//! while the rail is across the branch, `−V_f/R` while the freewheel path holds it (V_f the
//! freewheel drop). Steady state means the current at the end of a period equals the current
//! at its start, which fixes both turning points; the mean and RMS follow from integrating the
//! two exponentials. When the off phase would drive the current below zero the freewheel diode
//! blocks and the current rests at zero for the rest of the period (discontinuous conduction);
//! with no freewheel path at all the current collapses to zero at turn-off (its energy goes
//! into the switch's breakdown, a separate finding), so every on phase starts from zero.
//!
//! The effective voltage of the winding is `I_rms·R`: it tends to the average `Vpk·D` when
//! T ≪ L/R (the current barely ripples) and to `Vpk·√D` when T ≫ L/R (the current follows each
//! pulse). Everything here works in volts across the winding's own resistance (`i·R_load`), so
//! the caller passes the on-state (peak) voltage across the load and the off-state asymptote in
//! the same units.

/// The winding and its drive, in volts across the load's own resistance.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Winding {
    /// On-state asymptote: the voltage across the load with the switch on (its peak).
    pub on_v: f64,
    /// Off-state asymptote (≤ 0): minus the freewheel drop, scaled to the load's share of the
    /// branch resistance. Ignored when `freewheel` is false.
    pub off_v: f64,
    /// τ = L/R of the branch, seconds.
    pub tau_s: f64,
    /// A freewheel path carries the current on after turn-off.
    pub freewheel: bool,
}

/// Steady-state current over one period, in volts across the load's resistance.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Periodic {
    /// Mean over the period (the average voltage `I_avg·R`).
    pub mean_v: f64,
    /// RMS over the period (`I_rms·R`, the effective voltage: what heats the winding).
    pub rms_v: f64,
    /// Highest and lowest current in the period, and their difference (the ripple).
    pub max_v: f64,
    pub min_v: f64,
    /// The current rests at zero for part of the period.
    pub discontinuous: bool,
}

impl Periodic {
    pub fn ripple_v(&self) -> f64 {
        self.max_v - self.min_v
    }
}

/// ∫ of (A + B·e^(−t/τ)) and of its square over [0, t1].
fn segment(a: f64, b: f64, t1: f64, tau: f64) -> (f64, f64) {
    if t1 <= 0.0 {
        return (0.0, 0.0);
    }
    let e = (-t1 / tau).exp();
    let first = a * t1 + b * tau * (1.0 - e);
    let second = a * a * t1 + 2.0 * a * b * tau * (1.0 - e) + b * b * tau / 2.0 * (1.0 - e * e);
    (first, second)
}

/// The periodic steady state at duty `duty` (0–1) and period `period_s`. `None` when the
/// inputs are not finite or τ or the period is not positive.
pub fn steady_state(w: &Winding, duty: f64, period_s: f64) -> Option<Periodic> {
    let finite = [w.on_v, w.off_v, w.tau_s, duty, period_s]
        .iter()
        .all(|v| v.is_finite());
    if !finite || w.tau_s <= 0.0 || period_s <= 0.0 {
        return None;
    }
    let d = duty.clamp(0.0, 1.0);
    let (t_on, t_off) = (d * period_s, (1.0 - d) * period_s);
    let tau = w.tau_s;
    let a = (-t_on / tau).exp();
    let b = (-t_off / tau).exp();
    let v_on = w.on_v;
    let v_off = w.off_v.min(0.0);
    if w.freewheel {
        // Continuous conduction: i_max = V_on(1−a) + a·i_min, i_min = V_off(1−b) + b·i_max.
        let denominator = 1.0 - a * b;
        if denominator > 0.0 {
            let max = (v_on * (1.0 - a) + a * (1.0 - b) * v_off) / denominator;
            let min = v_off * (1.0 - b) + b * max;
            if min >= 0.0 {
                let (s1, q1) = segment(v_on, min - v_on, t_on, tau);
                let (s2, q2) = segment(v_off, max - v_off, t_off, tau);
                return Some(Periodic {
                    mean_v: (s1 + s2) / period_s,
                    rms_v: ((q1 + q2) / period_s).max(0.0).sqrt(),
                    max_v: max,
                    min_v: min,
                    discontinuous: false,
                });
            }
        } else {
            // D = 1 (or 0 with a zero-length period): DC.
            return Some(dc(v_on, d));
        }
    }
    // Every on phase starts from zero.
    let max = v_on * (1.0 - a);
    let (s1, q1) = segment(v_on, -v_on, t_on, tau);
    let (s2, q2) = if w.freewheel && v_off < 0.0 && max > 0.0 {
        // Decays toward V_off until it reaches zero, then the diode blocks.
        let t_zero = (tau * ((max - v_off) / -v_off).ln()).min(t_off);
        segment(v_off, max - v_off, t_zero, tau)
    } else {
        (0.0, 0.0)
    };
    Some(Periodic {
        mean_v: (s1 + s2) / period_s,
        rms_v: ((q1 + q2) / period_s).max(0.0).sqrt(),
        max_v: max,
        min_v: 0.0,
        discontinuous: d < 1.0,
    })
}

/// The current over one period of the steady state, as `(t, i·R)` points from turn-on
/// (`t = 0`) to the end of the period, from the same turning points as [`steady_state`]:
/// `samples` points on each phase, more where an exponential moves fast. Empty when
/// [`steady_state`] has no answer.
pub fn sample(w: &Winding, duty: f64, period_s: f64, samples: usize) -> Vec<(f64, f64)> {
    let Some(p) = steady_state(w, duty, period_s) else {
        return Vec::new();
    };
    let d = duty.clamp(0.0, 1.0);
    let (t_on, t_off) = (d * period_s, (1.0 - d) * period_s);
    let tau = w.tau_s;
    let n = samples.clamp(2, 2000);
    let start = if p.discontinuous { 0.0 } else { p.min_v };
    let v_off = if w.freewheel { w.off_v.min(0.0) } else { 0.0 };
    let mut out = Vec::with_capacity(2 * n + 4);
    // Denser near each switching instant: the exponential moves fastest there.
    let times = |length: f64| -> Vec<f64> {
        (0..=n)
            .map(|k| {
                let x = k as f64 / n as f64;
                length * x * x
            })
            .collect()
    };
    for t in times(t_on) {
        out.push((t, w.on_v + (start - w.on_v) * (-t / tau).exp()));
    }
    if t_off <= 0.0 {
        return out;
    }
    if !w.freewheel {
        // The current collapses at turn-off.
        out.push((t_on, 0.0));
        out.push((period_s, 0.0));
        return out;
    }
    let peak = p.max_v;
    for t in times(t_off).into_iter().skip(1) {
        let i = v_off + (peak - v_off) * (-t / tau).exp();
        out.push((t_on + t, i.max(0.0)));
    }
    out
}

/// When the freewheel path stops carrying the current after turn-off, in seconds after
/// turn-off: the whole off phase in continuous conduction, until the current reaches zero
/// otherwise; `None` with no freewheel path or no steady state.
pub fn freewheel_time(w: &Winding, duty: f64, period_s: f64) -> Option<f64> {
    let p = steady_state(w, duty, period_s)?;
    if !w.freewheel {
        return None;
    }
    let t_off = (1.0 - duty.clamp(0.0, 1.0)) * period_s;
    let v_off = w.off_v.min(0.0);
    if !p.discontinuous || p.max_v <= 0.0 {
        return Some(t_off);
    }
    if v_off >= 0.0 {
        return Some(t_off);
    }
    Some((w.tau_s * ((p.max_v - v_off) / -v_off).ln()).clamp(0.0, t_off))
}

fn dc(v_on: f64, duty: f64) -> Periodic {
    let v = if duty > 0.0 { v_on } else { 0.0 };
    Periodic {
        mean_v: v,
        rms_v: v.abs(),
        max_v: v,
        min_v: v,
        discontinuous: false,
    }
}

/// The largest duty whose effective voltage (`I_rms·R`) stays at or below `limit_v`, solved on
/// the same closed form (the RMS rises with the duty, so bisection finds it). 1 when even full
/// duty stays within the limit, 0 when none does.
pub fn duty_for_effective(w: &Winding, period_s: f64, limit_v: f64) -> Option<f64> {
    let at = |d: f64| steady_state(w, d, period_s).map(|p| p.rms_v);
    if at(1.0)? <= limit_v {
        return Some(1.0);
    }
    if limit_v <= 0.0 {
        return Some(0.0);
    }
    let (mut lo, mut hi) = (0.0f64, 1.0f64);
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if at(mid)? > limit_v {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    Some(lo)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    // Reference: first-order R-L step response, periodic steady state (any circuits text's
    // treatment of a chopper-fed R-L load; the closed forms below are re-derived by hand).

    #[test]
    fn twelve_volt_motor_on_24_v_at_40_percent_and_2_khz() {
        // 4.8 Ω, 4 mH: τ = 833 µs against T = 500 µs; ideal freewheel (no drop).
        let w = Winding {
            on_v: 24.0,
            off_v: 0.0,
            tau_s: 4e-3 / 4.8,
            freewheel: true,
        };
        let p = steady_state(&w, 0.4, 0.5e-3).unwrap();
        assert!(close(p.mean_v, 9.6, 1e-9), "{p:?}");
        assert!(close(p.rms_v, 9.65, 0.01), "{p:?}");
        // Peak-to-peak ripple: i_max − i_min, 0.715 A on 4.8 Ω.
        assert!(close(p.ripple_v() / 4.8, 0.715, 0.002), "{p:?}");
        assert!(!p.discontinuous);
    }

    #[test]
    fn freewheel_drop_lowers_the_average() {
        let w = Winding {
            on_v: 24.0,
            off_v: -0.7,
            tau_s: 4e-3 / 4.8,
            freewheel: true,
        };
        let p = steady_state(&w, 0.4, 0.5e-3).unwrap();
        // Continuous conduction: the mean is exactly D·V_on + (1−D)·V_off.
        assert!(close(p.mean_v, 0.4 * 24.0 - 0.6 * 0.7, 1e-9), "{p:?}");
    }

    #[test]
    fn short_period_tends_to_the_average_and_long_to_the_rms() {
        let w = Winding {
            on_v: 10.0,
            off_v: 0.0,
            tau_s: 1e-3,
            freewheel: true,
        };
        let fast = steady_state(&w, 0.25, 1e-7).unwrap();
        assert!(close(fast.rms_v, 2.5, 1e-3), "{fast:?}");
        let slow = steady_state(&w, 0.25, 10.0).unwrap();
        assert!(close(slow.rms_v, 10.0 * 0.5, 0.01), "{slow:?}");
        assert!(slow.discontinuous || slow.min_v < 1e-6);
    }

    #[test]
    fn no_freewheel_collapses_the_current_each_period() {
        let w = Winding {
            on_v: 24.0,
            off_v: 0.0,
            tau_s: 4e-3 / 4.8,
            freewheel: false,
        };
        let p = steady_state(&w, 0.4, 0.5e-3).unwrap();
        let tau: f64 = 4e-3 / 4.8;
        let max = 24.0 * (1.0 - (-0.2e-3 / tau).exp());
        assert!(close(p.max_v, max, 1e-9), "{p:?}");
        assert_eq!(p.min_v, 0.0);
        assert!(p.discontinuous);
    }

    #[test]
    fn discontinuous_conduction_stops_at_zero() {
        // A long period and a large freewheel drop: the current reaches zero in the off phase.
        let w = Winding {
            on_v: 12.0,
            off_v: -12.0,
            tau_s: 1e-4,
            freewheel: true,
        };
        let p = steady_state(&w, 0.5, 1e-3).unwrap();
        assert!(p.discontinuous, "{p:?}");
        assert!(p.mean_v > 0.0 && p.mean_v < 6.0, "{p:?}");
    }

    #[test]
    fn duty_limit_comes_from_the_same_closed_form() {
        let w = Winding {
            on_v: 12.6,
            off_v: 0.0,
            tau_s: 0.8e-3 / 6.0,
            freewheel: true,
        };
        let d = duty_for_effective(&w, 50e-6, 6.0).unwrap();
        assert!(close(d, 0.475, 0.002), "{d}");
        let at = steady_state(&w, d, 50e-6).unwrap();
        assert!(close(at.rms_v, 6.0, 1e-6), "{at:?}");
        assert_eq!(duty_for_effective(&w, 50e-6, 20.0), Some(1.0));
    }

    #[test]
    fn samples_run_through_the_turning_points() {
        // The 24 V / 4.8 Ω / 4 mH case above: the samples start at i_min and peak at i_max.
        let w = Winding {
            on_v: 24.0,
            off_v: -0.7,
            tau_s: 4e-3 / 4.8,
            freewheel: true,
        };
        let p = steady_state(&w, 0.4, 0.5e-3).unwrap();
        let s = sample(&w, 0.4, 0.5e-3, 50);
        assert!(close(s[0].1, p.min_v, 1e-9));
        let top = s.iter().fold(f64::MIN, |m, x| m.max(x.1));
        assert!(close(top, p.max_v, 1e-9));
        let end = s.last().unwrap();
        assert!(
            close(end.0, 0.5e-3, 1e-15) && close(end.1, p.min_v, 1e-6),
            "{end:?}"
        );
        assert_eq!(freewheel_time(&w, 0.4, 0.5e-3), Some(0.6 * 0.5e-3));
    }
}
