//! What triggers a monostable, how long its trigger input stays below the trigger threshold
//! each period, and what the output does when the pulse outlasts the period.
//!
//! The driver is a PULSE source or another timer's output, on the TRIG net itself or behind
//! one resistor. The trigger net is DC-solved with the driver at each level, so a series
//! resistor, a pull-up or a divider moves the levels the input actually sees. For a PULSE
//! source the time below the threshold counts the part of each slow edge that lies below it;
//! for a timer its output's low time (or its whole period when both levels sit below the
//! threshold).

use super::config::{self, NetIndex, Setup};
use super::sweep;
use crate::analysis::facts::{Range, TimerFacts, TimerMode, TriggerFacts};
use crate::analysis::partition::Fixed;
use crate::analysis::states::{Context, State};
use crate::circuit::{DeviceId, Kind, NetId, PinRole};
use crate::netlist::Waveform;

/// The driver of a trigger net.
#[derive(Clone, Debug, PartialEq)]
pub struct Driver {
    pub device: DeviceId,
    pub via: Vec<DeviceId>,
    pub is_timer: bool,
}

fn is_pulse_net(cx: &Context<'_>, net: NetId) -> Option<DeviceId> {
    match config::fixed_by(cx, net)? {
        Fixed::Source { device, .. } if cx.is_pulse_source(device) => Some(device),
        _ => None,
    }
}

fn timer_output_on(
    cx: &Context<'_>,
    index: &NetIndex,
    net: NetId,
    not: DeviceId,
) -> Option<DeviceId> {
    index.on(net).iter().find_map(|&(d, role)| {
        (d != not && role == PinRole::Out && cx.circuit.devices()[d].kind.is_timer()).then_some(d)
    })
}

/// Finds the driver of a timer's TRIG net: on the net, or one resistor away.
pub fn driver(cx: &Context<'_>, index: &NetIndex, setup: &Setup) -> Option<Driver> {
    let trig = setup.trig?;
    if let Some(src) = is_pulse_net(cx, trig) {
        return Some(Driver {
            device: src,
            via: Vec::new(),
            is_timer: false,
        });
    }
    if let Some(t) = timer_output_on(cx, index, trig, setup.device) {
        return Some(Driver {
            device: t,
            via: Vec::new(),
            is_timer: true,
        });
    }
    for (r, far) in config::resistors_on(cx, index, trig) {
        if cx.circuit.devices()[r].kind != Kind::Resistor {
            continue;
        }
        if let Some(src) = is_pulse_net(cx, far) {
            return Some(Driver {
                device: src,
                via: vec![r],
                is_timer: false,
            });
        }
        if let Some(t) = timer_output_on(cx, index, far, setup.device) {
            return Some(Driver {
                device: t,
                via: vec![r],
                is_timer: true,
            });
        }
    }
    None
}

/// Voltage on the TRIG net with the driver at one level.
fn trig_level(
    cx: &Context<'_>,
    setup: &Setup,
    driver: &Driver,
    state: &State,
    high: bool,
) -> Option<f64> {
    let trig = setup.trig?;
    let mut s = sweep::with_level(state, driver.device, high);
    s = sweep::with_level(&s, setup.device, false);
    if let Some(v) = cx.fixed_voltage(trig, &s) {
        return Some(v);
    }
    let component = cx
        .partition
        .net_component
        .get(trig)
        .copied()
        .flatten()
        .and_then(|c| cx.partition.components.get(c))?;
    cx.solve(component, &s).ok()?.voltage(trig)
}

/// Fraction of a straight edge between `a` and `b` that lies below `threshold`.
fn fraction_below(a: f64, b: f64, threshold: f64) -> f64 {
    let (lo, hi) = (a.min(b), a.max(b));
    if threshold <= lo {
        0.0
    } else if threshold >= hi {
        1.0
    } else {
        (threshold - lo) / (hi - lo)
    }
}

/// Time per period a PULSE source holds the trigger below `threshold`, given the trigger's
/// voltage at the source's `v1` and `v2` levels; and the period.
pub fn pulse_time_below(
    wave: &Waveform,
    at_v1: f64,
    at_v2: f64,
    threshold: f64,
) -> Option<(f64, f64)> {
    let Waveform::Pulse {
        rise,
        fall,
        width,
        period,
        ..
    } = *wave
    else {
        return None;
    };
    if !(period.is_finite() && period > 0.0) {
        return None;
    }
    let (rise, fall, width) = (rise.max(0.0), fall.max(0.0), width.max(0.0));
    let at_v1_time = (period - rise - fall - width).max(0.0);
    let edges = (rise + fall) * fraction_below(at_v1, at_v2, threshold);
    let mut below = edges;
    if at_v1 < threshold {
        below += at_v1_time;
    }
    if at_v2 < threshold {
        below += width;
    }
    Some((below.min(period), period))
}

/// The output of a one-shot of width `w` triggered every `t`: it retriggers at the first
/// trigger after the pulse ends, so its period is the smallest whole multiple `k·t` above `w`.
/// Returns (frequency, duty, k).
pub fn divided(w: f64, t: f64) -> Option<(f64, f64, u32)> {
    if !(w.is_finite() && t.is_finite() && t > 0.0 && w >= 0.0) {
        return None;
    }
    let k = ((w / t).floor() + 1.0).clamp(1.0, 1e9);
    Some((1.0 / (k * t), w / (k * t), k as u32))
}

/// Fills `trigger`, `period_s`, `frequency_hz`, `duty`, `low_s` and the divided frequency of
/// every monostable whose driver is known, drivers first (a one-shot driven by a one-shot
/// waits for its driver's facts).
pub fn resolve(cx: &Context<'_>, index: &NetIndex, setups: &[Setup], facts: &mut [TimerFacts]) {
    let mut done = vec![false; setups.len()];
    for _ in 0..=setups.len() {
        let mut progressed = false;
        for i in 0..setups.len() {
            if done[i] || setups[i].mode != TimerMode::Monostable {
                done[i] = true;
                continue;
            }
            let Some(drv) = driver(cx, index, &setups[i]) else {
                done[i] = true;
                continue;
            };
            let driver_facts = if drv.is_timer {
                match setups.iter().position(|s| s.device == drv.device) {
                    Some(j) if !done[j] => continue,
                    Some(j) => facts.get(j).cloned(),
                    None => None,
                }
            } else {
                None
            };
            done[i] = true;
            progressed = true;
            let trigger = trigger_facts(cx, index, &setups[i], &drv, driver_facts.as_ref());
            if let Some(t) = trigger {
                apply(cx, &mut facts[i], t);
            }
        }
        if !progressed {
            break;
        }
    }
}

fn trigger_facts(
    cx: &Context<'_>,
    index: &NetIndex,
    setup: &Setup,
    drv: &Driver,
    driver_facts: Option<&TimerFacts>,
) -> Option<TriggerFacts> {
    let name = cx.name(drv.device).to_string();
    let mut lows: Vec<(f64, String)> = Vec::new();
    let mut periods: Vec<(f64, String)> = Vec::new();
    let mut thresholds: Vec<(f64, String)> = Vec::new();
    for &corner in sweep::corners(cx) {
        let state = State {
            corner,
            high: Vec::new(),
            wipers: Default::default(),
        };
        let describe = state.describe(cx, &[]);
        let th = super::phase::thresholds(cx, index, setup, &state)
            .ok()
            .flatten()?;
        thresholds.push((th.lower, describe.clone()));
        let at_low = trig_level(cx, setup, drv, &state, false)?;
        let at_high = trig_level(cx, setup, drv, &state, true)?;
        if drv.is_timer {
            let f = driver_facts?;
            let (low, period) = (f.low_s.as_ref()?, f.period_s.as_ref()?);
            let both_below = at_low < th.lower && at_high < th.lower;
            let none_below = at_low >= th.lower && at_high >= th.lower;
            let (lo_v, hi_v, lo_s, hi_s) = if both_below {
                (period.min, period.max, &period.min_state, &period.max_state)
            } else if none_below {
                (0.0, 0.0, &low.min_state, &low.max_state)
            } else {
                (low.min, low.max, &low.min_state, &low.max_state)
            };
            lows.push((lo_v, driver_state(&name, lo_s)));
            lows.push((hi_v, driver_state(&name, hi_s)));
            periods.push((period.min, driver_state(&name, &period.min_state)));
            periods.push((period.max, driver_state(&name, &period.max_state)));
        } else {
            let element = cx
                .circuit
                .devices()
                .get(drv.device)
                .and_then(|d| cx.netlist.elements.get(d.element))?;
            let spec = element.source.as_ref()?;
            // State "high" is the higher level, which is `v1` for a PULSE written high-to-low.
            let (at_v1, at_v2) = if spec.pulses_low() {
                (at_high, at_low)
            } else {
                (at_low, at_high)
            };
            let (below, period) = pulse_time_below(&spec.wave, at_v1, at_v2, th.lower)?;
            lows.push((below, describe.clone()));
            periods.push((period, describe));
        }
    }
    let from = |v: &[(f64, String)]| Range::from_samples(v.iter().map(|(x, s)| (*x, s.as_str())));
    Some(TriggerFacts {
        driver: drv.device,
        via: drv.via.clone(),
        low_s: from(&lows)?,
        period_s: from(&periods)?,
        threshold_v: from(&thresholds)?,
    })
}

/// A driver timer's state, named after it (`U1: RV1 wiper at 0 %`).
fn driver_state(name: &str, state: &str) -> String {
    if state == "the steady state" {
        state.to_string()
    } else {
        format!("{name}: {state}")
    }
}

/// The state of a one-shot's output: its own (pulse) state and its trigger's.
fn joint(pulse: &str, trigger: &str) -> String {
    const STEADY: &str = "the steady state";
    match (pulse == STEADY, trigger == STEADY) {
        (true, true) => STEADY.to_string(),
        (false, true) => pulse.to_string(),
        (true, false) => format!("trigger at {trigger}"),
        (false, false) => format!("{pulse}; trigger at {trigger}"),
    }
}

/// A one-shot's output timing from its pulse width and its trigger.
fn apply(cx: &Context<'_>, facts: &mut TimerFacts, trigger: TriggerFacts) {
    let _ = cx;
    if let Some(width) = facts.high_s.clone() {
        let t = &trigger.period_s;
        let mut periods = Vec::new();
        let mut freqs = Vec::new();
        let mut duties = Vec::new();
        for (w, ws) in [(width.min, &width.min_state), (width.max, &width.max_state)] {
            for (p, ps) in [(t.min, &t.min_state), (t.max, &t.max_state)] {
                if let Some((f, d, _)) = divided(w, p) {
                    let state = joint(ws, ps);
                    periods.push((1.0 / f, state.clone()));
                    freqs.push((f, state.clone()));
                    duties.push((d, state));
                }
            }
        }
        let from =
            |v: &[(f64, String)]| Range::from_samples(v.iter().map(|(x, s)| (*x, s.as_str())));
        facts.period_s = from(&periods);
        facts.frequency_hz = from(&freqs);
        facts.duty = from(&duties);
        if t.min > width.max {
            facts.low_s = Some(Range {
                min: t.min - width.max,
                max: t.max - width.min,
                min_state: joint(&width.max_state, &t.min_state),
                max_state: joint(&width.min_state, &t.max_state),
            });
        }
        if width.max >= t.min {
            if let Some((f, d, _)) = divided(width.max, t.min) {
                facts.divided_frequency_hz = Some(f);
                facts.divided_duty = Some(d);
            }
        }
    }
    facts.trigger = Some(trigger);
}
