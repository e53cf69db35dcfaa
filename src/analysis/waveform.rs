//! Waveforms for a person to look at: a timer's capacitor voltage, output, discharge and
//! trigger over two periods, and a switch's gate drive and load current over one PWM period.
//! Every curve is sampled from the expressions the other facts come from — the timer's phase
//! times ([`super::timer::trace`]) and the winding's closed-form steady state
//! ([`super::switching::winding`]) — so a picture cannot disagree with a number. Only
//! `kickback report` in its page formats asks for them; `check` never pays for them.

use super::facts::{
    LoadFacts, Stage, SwitchFacts, SwitchWaveform, TimeMark, TimerFacts, TimerMode, TimerWaveform,
    Trace, Waveforms,
};
use super::states::{Context, Corner, State};
use super::switching::winding;
use super::timer::{config, sweep, trace};
use super::Analysis;
use crate::circuit::Circuit;
use crate::config::Config;
use crate::netlist::FlatNetlist;
use std::collections::BTreeMap;

/// Diagrams drawn at most, of each kind: a page with more is not looked at, and the solves
/// behind them stay bounded.
pub const MAX_DIAGRAMS: usize = 40;
/// Trigger periods a one-shot's diagram covers at most.
const MAX_TRIGGER_PERIODS: f64 = 8.0;
/// Points of the gate and current curves over one period.
const POINTS: usize = 120;
/// 10–90 % of a first-order edge is 2.2 time constants (common practice).
const TEN_NINETY: f64 = 2.2;
/// A duty this close to 1 leaves no off time worth drawing.
const FULL: f64 = 0.999;

/// The waveforms of the first [`MAX_DIAGRAMS`] timers and switches in netlist order.
pub fn sample(
    netlist: &FlatNetlist,
    circuit: &Circuit,
    config: &Config,
    analysis: &Analysis,
) -> Waveforms {
    let cx = Context::new(netlist, circuit, config);
    let index = config::NetIndex::new(&cx);
    let mut timers: Vec<&TimerFacts> = analysis.timers.iter().collect();
    timers.sort_by_key(|t| t.device);
    let mut switches: Vec<&SwitchFacts> = analysis.switches.iter().collect();
    switches.sort_by_key(|s| s.device);
    Waveforms {
        timers: timers
            .into_iter()
            .filter(|t| t.mode != TimerMode::Unknown)
            .take(MAX_DIAGRAMS)
            .filter_map(|t| timer(&cx, &index, t))
            .collect(),
        switches: switches
            .into_iter()
            .filter(|s| s.stage == Stage::Switch)
            .take(MAX_DIAGRAMS)
            .filter_map(|s| switch(circuit, analysis, s))
            .collect(),
    }
}

/// The reference state (nominal supply, every pot at mid travel), the pots' ends, and the
/// supply's corners with the pots at mid travel.
fn cases(cx: &Context<'_>, pots: &[crate::circuit::DeviceId]) -> Vec<State> {
    let at = |corner: Corner, x: f64| State {
        corner,
        high: Vec::new(),
        wipers: pots.iter().map(|&p| (p, x)).collect::<BTreeMap<_, _>>(),
    };
    let mut out = vec![at(Corner::Nominal, 0.5)];
    if !pots.is_empty() {
        out.push(at(Corner::Nominal, 0.0));
        out.push(at(Corner::Nominal, 1.0));
    }
    if sweep::corners(cx).len() > 1 {
        out.push(at(Corner::Min, 0.5));
        out.push(at(Corner::Max, 0.5));
    }
    out
}

fn timer(cx: &Context<'_>, index: &config::NetIndex, facts: &TimerFacts) -> Option<TimerWaveform> {
    let setup = config::recognise(cx, index, facts.device);
    let traced: Vec<(String, trace::CaseTrace)> = cases(cx, &setup.pots)
        .iter()
        .filter_map(|s| Some((s.describe(cx, &[]), trace::case(cx, index, &setup, s)?)))
        .collect();
    let (_, reference) = traced.first()?;
    let mut wave = TimerWaveform {
        device: facts.device,
        mode: facts.mode,
        capacitor: Vec::new(),
        upper_v: reference.upper,
        lower_v: reference.lower,
        span_s: 0.0,
        output_high: Vec::new(),
        discharge_on: Vec::new(),
        trigger_low: Vec::new(),
        ignored_triggers: Vec::new(),
        marks: Vec::new(),
        no_pulse: Vec::new(),
    };
    match facts.mode {
        TimerMode::Astable => astable(&mut wave, &traced),
        TimerMode::Monostable => monostable(&mut wave, &traced, facts),
        TimerMode::Unknown => return None,
    }
    (wave.span_s.is_finite() && wave.span_s > 0.0).then_some(wave)
}

fn astable(wave: &mut TimerWaveform, traced: &[(String, trace::CaseTrace)]) {
    let Some((_, reference)) = traced.first() else {
        return;
    };
    let Some(low) = &reference.low else {
        return;
    };
    let (h, l) = (reference.high.seconds, low.seconds);
    wave.span_s = 2.0 * (h + l);
    if wave.span_s <= 0.0 {
        return;
    }
    for k in 0..2 {
        let t0 = k as f64 * (h + l);
        wave.output_high.push((t0, t0 + h));
        wave.discharge_on.push((t0 + h, t0 + h + l));
    }
    wave.marks.push(TimeMark {
        what: "high",
        start_s: 0.0,
        end_s: h,
    });
    wave.marks.push(TimeMark {
        what: "low",
        start_s: h,
        end_s: h + l,
    });
    for (state, case) in traced {
        let Some(low) = &case.low else { continue };
        let period = case.high.seconds + low.seconds;
        if period <= 0.0 {
            continue;
        }
        let mut points = Vec::new();
        let mut t0 = 0.0;
        // Whole periods past the span would only be cut: at most as many as fit, plus one.
        let periods = (wave.span_s / period).ceil().min(1000.0) as usize + 1;
        for _ in 0..periods {
            for &(t, v) in &case.high.points {
                points.push((t0 + t, v));
            }
            let t1 = t0 + case.high.seconds;
            for &(t, v) in &low.points {
                points.push((t1 + t, v));
            }
            t0 += period;
            if t0 > wave.span_s {
                break;
            }
        }
        wave.capacitor.push(Trace {
            state: state.clone(),
            points: clip(points, wave.span_s),
        });
    }
}

fn monostable(wave: &mut TimerWaveform, traced: &[(String, trace::CaseTrace)], facts: &TimerFacts) {
    let Some((_, reference)) = traced.first() else {
        return;
    };
    let width = reference.high.seconds;
    let trigger = facts
        .trigger
        .as_ref()
        .map(|t| (t.period_s.min, t.low_s.min))
        .filter(|(p, l)| p.is_finite() && *p > 0.0 && l.is_finite() && *l >= 0.0);
    let (period, edges) = match trigger {
        Some((period, low)) => {
            let periods = if width <= 2.0 * period {
                2.0
            } else {
                ((width / period).ceil() + 1.0).min(MAX_TRIGGER_PERIODS)
            };
            wave.span_s = periods * period;
            let edges: Vec<f64> = (0..periods as usize).map(|k| k as f64 * period).collect();
            for &e in &edges {
                wave.trigger_low.push((e, (e + low).min(wave.span_s)));
            }
            wave.marks.push(TimeMark {
                what: "trigger period",
                start_s: 0.0,
                end_s: period,
            });
            wave.marks.push(TimeMark {
                what: "trigger low",
                start_s: 0.0,
                end_s: low,
            });
            (Some(period), edges)
        }
        None => {
            wave.span_s = 2.0 * width;
            (None, vec![0.0])
        }
    };
    let _ = period;
    wave.marks.push(TimeMark {
        what: "pulse",
        start_s: 0.0,
        end_s: width,
    });
    for (i, (state, case)) in traced.iter().enumerate() {
        let w = case.high.seconds;
        if i > 0 && w <= 0.0 {
            wave.no_pulse.push(state.clone());
            continue;
        }
        let rest = case.high.points.first().map_or(0.0, |p| p.1);
        let mut points = vec![(0.0, rest)];
        let mut busy_until = f64::NEG_INFINITY;
        for &e in &edges {
            if e < busy_until {
                if i == 0 {
                    wave.ignored_triggers.push(e);
                }
                continue;
            }
            for &(t, v) in &case.high.points {
                points.push((e + t, v));
            }
            points.push((e + w, rest));
            busy_until = e + w;
            if i == 0 {
                wave.output_high.push((e, (e + w).min(wave.span_s)));
                let next = edges.iter().copied().find(|&n| n >= e + w);
                wave.discharge_on
                    .push(((e + w).min(wave.span_s), next.unwrap_or(wave.span_s)));
            }
        }
        points.push((wave.span_s, rest));
        wave.capacitor.push(Trace {
            state: state.clone(),
            points: clip(points, wave.span_s),
        });
    }
    if wave.output_high.first().is_some_and(|o| o.0 > 0.0) {
        wave.discharge_on.insert(0, (0.0, wave.output_high[0].0));
    }
}

/// The points up to `span`, the last one cut at `span` on the straight line between its
/// neighbours.
fn clip(points: Vec<(f64, f64)>, span: f64) -> Vec<(f64, f64)> {
    let mut out: Vec<(f64, f64)> = Vec::with_capacity(points.len());
    for (t, v) in points {
        if !(t.is_finite() && v.is_finite()) {
            continue;
        }
        if t <= span {
            out.push((t, v));
            continue;
        }
        if let Some(&(t0, v0)) = out.last() {
            if t0 < span && t > t0 {
                out.push((span, v0 + (v - v0) * (span - t0) / (t - t0)));
            }
        }
        break;
    }
    out
}

fn switch(circuit: &Circuit, analysis: &Analysis, s: &SwitchFacts) -> Option<SwitchWaveform> {
    let load: Option<&LoadFacts> = s.load.and_then(|i| analysis.loads.get(i));
    let drive = load.and_then(|l| l.drive.as_ref());
    let (duty, period) = match drive {
        Some(d) => (d.duty, d.period_s),
        None => {
            let duty = s.duty.as_ref()?.max;
            let f = s.frequency_hz.as_ref()?.min;
            (duty, 1.0 / f)
        }
    };
    if !(duty.is_finite() && period.is_finite() && period > 0.0) {
        return None;
    }
    // At full duty the switch never turns off and the period shows nothing: then the
    // lowest duty of the drive is drawn (the highest is still drawn as a second current).
    let lowest = load
        .and_then(|l| l.duty.as_ref())
        .or(s.duty.as_ref())
        .map(|r| r.min)
        .filter(|d| d.is_finite() && *d < FULL);
    let duty = match lowest {
        Some(low) if duty >= FULL => low,
        _ => duty,
    }
    .clamp(0.0, 1.0);
    let on = s.enhancement_on()?;
    let off = s.enhancement_off().map_or(0.0, |r| r.max);
    let t_on = duty * period;
    let (rise, fall) = s.gate_edges.as_ref().map_or((0.0, 0.0), |e| {
        (e.rise_s / TEN_NINETY, e.fall_s / TEN_NINETY)
    });
    let gate = gate_trace(on.min, off, t_on, period, rise, fall);
    let threshold = threshold_band(circuit, s);
    let (current, peak_a, freewheel) = match drive {
        Some(d) if d.load_ohms > 0.0 => {
            let at = |duty: f64| -> Option<Trace> {
                let points: Vec<(f64, f64)> =
                    winding::sample(&d.winding, duty, d.period_s, POINTS / 2)
                        .into_iter()
                        .map(|(t, v)| (t, v / d.load_ohms))
                        .collect();
                let state = if (duty - d.duty).abs() <= 1e-9 {
                    d.state.clone()
                } else {
                    format!("the same peak at the lowest duty, {:.1} %", duty * 100.0)
                };
                (!points.is_empty()).then_some(Trace { state, points })
            };
            let mut traces: Vec<Trace> = at(duty).into_iter().collect();
            if (duty - d.duty).abs() > 1e-9 {
                traces.extend(at(d.duty));
            }
            let peak =
                winding::steady_state(&d.winding, duty, d.period_s).map(|p| p.max_v / d.load_ohms);
            let fw = load
                .and_then(|l| l.freewheel)
                .and(winding::freewheel_time(&d.winding, duty, d.period_s))
                .map(|t| (t_on, t_on + t));
            (traces, peak, fw)
        }
        _ => (Vec::new(), s.current_a.as_ref().map(|c| c.max), None),
    };
    Some(SwitchWaveform {
        device: s.device,
        period_s: period,
        duty,
        gate: Trace {
            state: on.min_state.clone(),
            points: gate,
        },
        edges_known: s.gate_edges.is_some(),
        threshold_v: threshold.as_ref().map(|t| t.0),
        threshold_source: threshold.map(|t| t.1).unwrap_or_default(),
        load: load.map(|l| l.device),
        current,
        peak_a,
        freewheel,
        freewheel_device: load.and_then(|l| l.freewheel),
    })
}

/// First-order gate edges from `off` to `on` at 0 and back at `t_on`; a time constant of zero
/// is a square edge.
fn gate_trace(on: f64, off: f64, t_on: f64, period: f64, rise: f64, fall: f64) -> Vec<(f64, f64)> {
    let mut times: Vec<f64> = (0..=POINTS)
        .map(|k| period * k as f64 / POINTS as f64)
        .collect();
    for k in 0..=30 {
        let x = k as f64 / 30.0;
        times.push(6.0 * rise * x);
        times.push(t_on + 6.0 * fall * x);
    }
    times.retain(|t| t.is_finite() && *t >= 0.0 && *t <= period);
    times.push(t_on);
    times.sort_by(f64::total_cmp);
    times.dedup();
    let edge = |from: f64, to: f64, t: f64, tau: f64| {
        if tau > 0.0 {
            to + (from - to) * (-t / tau).exp()
        } else {
            to
        }
    };
    let at_turn_off = edge(off, on, t_on, rise);
    let mut out = Vec::with_capacity(times.len() + 1);
    for t in times {
        if t < t_on {
            out.push((t, edge(off, on, t, rise)));
        } else {
            if t == t_on {
                out.push((t, at_turn_off));
            }
            out.push((t, edge(at_turn_off, off, t - t_on, fall)));
        }
    }
    out
}

/// A MOSFET's threshold band: the engine's threshold and the rated `vgs_th_min`/`vgs_th_max`,
/// as magnitudes, with where they came from.
fn threshold_band(circuit: &Circuit, s: &SwitchFacts) -> Option<((f64, f64), String)> {
    let device = circuit.devices().get(s.device)?;
    if !device.kind.is_mos() {
        return None;
    }
    let mut values = Vec::new();
    let mut sources = Vec::new();
    if let Some(g) = &s.gain {
        if !g.placeholder || device.data.get("vgs_th_max").is_none() {
            values.push(g.threshold_v.abs());
            sources.push(format!("V_T the solver uses ({}, {})", g.how, g.source));
        }
    }
    for key in ["vgs_th_min", "vgs_th_max"] {
        if let Some(r) = device.data.get(key) {
            values.push(r.value.abs());
            sources.push(format!("{key} {}", r.source));
        }
    }
    let finite: Vec<f64> = values.into_iter().filter(|v| v.is_finite()).collect();
    let lo = finite.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = finite.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    sources.dedup();
    (lo.is_finite() && hi.is_finite()).then(|| ((lo, hi), sources.join("; ")))
}
