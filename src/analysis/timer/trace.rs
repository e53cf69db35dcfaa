//! A timer's capacitor voltage through its phases, sampled from the same phase times
//! ([`super::phase::time`]) the timing facts come from: an exponential toward the phase's
//! Thevenin voltage, a straight line at the discharge pin's current limit, or the
//! quasi-static integral `t = C·∫ dV / I(V)` taken in steps.

use super::config::{NetIndex, Setup};
use super::phase::{self, Method, Outcome, Phase};
use super::sweep;
use crate::analysis::facts::TimerMode;
use crate::analysis::states::{Context, State};

/// Points per phase.
const POINTS: usize = 40;
/// Steps of the integral when the current is neither straight nor constant.
const STEPS: usize = 16;

/// One phase of the capacitor voltage: `(t, v)` from the phase's start, and its length.
#[derive(Clone, Debug, PartialEq)]
pub struct PhaseTrace {
    pub seconds: f64,
    pub points: Vec<(f64, f64)>,
}

/// The phases of one state.
#[derive(Clone, Debug, PartialEq)]
pub struct CaseTrace {
    pub upper: f64,
    pub lower: f64,
    /// Charging (output high); a one-shot's pulse.
    pub high: PhaseTrace,
    /// Discharging (output low); `None` for a one-shot, whose capacitor the discharge pin
    /// empties at once.
    pub low: Option<PhaseTrace>,
}

/// The phases of a timer in `state`; `None` when a phase cannot be timed (stuck, unsolved).
pub fn case(cx: &Context<'_>, index: &NetIndex, setup: &Setup, state: &State) -> Option<CaseTrace> {
    let c = setup.capacitance?;
    let high = sweep::with_level(state, setup.device, true);
    let low = sweep::with_level(state, setup.device, false);
    let th_high = phase::thresholds(cx, index, setup, &high).ok()??;
    let th_low = phase::thresholds(cx, index, setup, &low).ok()??;
    match setup.mode {
        TimerMode::Astable => {
            let charge = Phase {
                setup,
                state: &high,
                v_start: th_low.lower,
                v_end: th_high.upper,
                capacitance: c,
            };
            let discharge = Phase {
                setup,
                state: &low,
                v_start: th_high.upper,
                v_end: th_low.lower,
                capacitance: c,
            };
            Some(CaseTrace {
                upper: th_high.upper,
                lower: th_high.lower,
                high: sampled(cx, &charge)?,
                low: Some(sampled(cx, &discharge)?),
            })
        }
        TimerMode::Monostable => {
            let net = setup.timing_net?;
            let component = setup
                .component
                .and_then(|i| cx.partition.components.get(i))?;
            let v_start = cx.solve(component, &low).ok()?.voltage(net)?;
            let pulse = Phase {
                setup,
                state: &high,
                v_start: v_start.min(th_high.upper),
                v_end: th_high.upper,
                capacitance: c,
            };
            Some(CaseTrace {
                upper: th_high.upper,
                lower: th_high.lower,
                high: sampled(cx, &pulse)?,
                low: None,
            })
        }
        TimerMode::Unknown => None,
    }
}

fn sampled(cx: &Context<'_>, phase: &Phase<'_>) -> Option<PhaseTrace> {
    let outcome = phase::time(cx, phase).ok()??;
    let Outcome::Time { seconds, method } = outcome else {
        return None;
    };
    let (vs, ve) = (phase.v_start, phase.v_end);
    if !(seconds.is_finite() && seconds >= 0.0) {
        return None;
    }
    let points = match method {
        Method::Exponential { v_inf, ohms } => {
            let tau = ohms * phase.capacitance;
            (0..=POINTS)
                .map(|k| {
                    let t = seconds * k as f64 / POINTS as f64;
                    (t, v_inf + (vs - v_inf) * (-t / tau).exp())
                })
                .collect()
        }
        Method::ConstantCurrent { .. } => vec![(0.0, vs), (seconds, ve)],
        Method::Integrated => integrated(cx, phase, seconds)?,
    };
    Some(PhaseTrace { seconds, points })
}

/// `t(V)` by the trapezoid rule on `C/|I(V)|`, scaled to the phase's own time so that the
/// curve ends where the fact says.
fn integrated(cx: &Context<'_>, phase: &Phase<'_>, seconds: f64) -> Option<Vec<(f64, f64)>> {
    let (vs, ve) = (phase.v_start, phase.v_end);
    let direction = if ve >= vs { 1.0 } else { -1.0 };
    let mut volts = Vec::with_capacity(STEPS + 1);
    let mut inverse = Vec::with_capacity(STEPS + 1);
    for k in 0..=STEPS {
        let v = vs + (ve - vs) * k as f64 / STEPS as f64;
        let i = direction * phase::held_current(cx, phase.setup, phase.state, v).ok()??;
        if i <= 0.0 {
            return None;
        }
        volts.push(v);
        inverse.push(phase.capacitance / i);
    }
    let dv = (ve - vs).abs() / STEPS as f64;
    let mut t = 0.0;
    let mut raw = vec![(0.0, vs)];
    for k in 1..=STEPS {
        t += 0.5 * (inverse[k - 1] + inverse[k]) * dv;
        raw.push((t, volts[k]));
    }
    let scale = if t > 0.0 { seconds / t } else { 0.0 };
    Some(raw.into_iter().map(|(t, v)| (t * scale, v)).collect())
}
