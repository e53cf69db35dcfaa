//! 555-family timers: configuration, thresholds, phase times, frequency and duty over pot
//! travel and supply corners, discharge-pin current, monostable triggering.
//!
//! - [`config`] reads the configuration from the pins' nets.
//! - [`phase`] times one phase with the DC engine (thresholds, held-node currents, the
//!   exponential, constant-current or integrated time, stuck phases).
//! - [`sweep`] samples corners and pot travel and builds ranges that remember their states.
//! - [`discharge`] covers the discharge pin's current and what feeds it.
//! - [`trigger`] finds a one-shot's driver, its trigger width and period, and the divided
//!   output when the pulse outlasts the period.

pub mod config;
pub mod discharge;
pub mod phase;
pub mod sweep;
pub mod trace;
pub mod trigger;

use super::budget;
use super::dc::DcError;
use super::facts::{Range, StuckPhase, TimerFacts, TimerMode};
use super::stand_in;
use super::states::{Context, State};
use crate::circuit::{DeviceId, Kind};
use crate::diagnostic::{Finding, Severity};
use config::{NetIndex, Setup};
use phase::{Outcome, Phase, Thresholds};
use rayon::prelude::*;

pub fn analyze(cx: &Context<'_>) -> (Vec<TimerFacts>, Vec<Finding>) {
    let index = NetIndex::new(cx);
    let setups: Vec<Setup> = cx
        .circuit
        .devices()
        .iter()
        .enumerate()
        .filter(|(_, d)| d.kind.is_timer())
        .map(|(id, _)| config::recognise(cx, &index, id))
        .collect();
    // Timers are independent of one another and a solve's answer does not depend on which
    // thread asks or what the memo holds, so they run in parallel; an indexed collect keeps
    // their order, and their findings follow in timer order.
    let each: Vec<(TimerFacts, Vec<Finding>)> = setups
        .par_iter()
        .map(|s| {
            let mut own = Vec::new();
            let facts = bounded_timer_facts(cx, &index, s, &mut own);
            (facts, own)
        })
        .collect();
    let mut findings = Vec::new();
    let mut facts = Vec::with_capacity(each.len());
    for (f, own) in each {
        facts.push(f);
        findings.extend(own);
    }
    trigger::resolve(cx, &index, &setups, &mut facts);
    (facts, findings)
}

/// One sampled state's phases.
#[derive(Clone, Debug)]
struct Sample {
    high: Outcome,
    /// The discharge phase of an astable; `None` for a one-shot (its trigger sets the rest).
    low: Option<Outcome>,
    upper: f64,
    lower: f64,
}

impl Sample {
    fn high_s(&self) -> Option<f64> {
        self.high.seconds()
    }

    fn low_s(&self) -> Option<f64> {
        self.low.as_ref()?.seconds()
    }

    fn period_s(&self) -> Option<f64> {
        Some(self.high_s()? + self.low_s()?)
    }

    fn duty(&self) -> Option<f64> {
        let p = self.period_s()?;
        (p > 0.0).then(|| self.high_s().unwrap_or(0.0) / p)
    }
}

fn empty_facts(setup: &Setup) -> TimerFacts {
    TimerFacts {
        device: setup.device,
        mode: setup.mode,
        supply_v: None,
        high_s: None,
        low_s: None,
        period_s: None,
        frequency_hz: None,
        duty: None,
        discharge_current_a: None,
        discharge_chain: Vec::new(),
        discharge_dump: None,
        discharge_dump_state: None,
        timing_capacitor: setup.capacitors.first().copied(),
        pots: setup.pots.clone(),
        stuck: None,
        trigger: None,
        divided_frequency_hz: None,
        divided_duty: None,
        output_current_a: None,
        upper_threshold_v: None,
        lower_threshold_v: None,
        discharge_source_ohms: None,
        discharge_open_v: None,
        charge_path: Vec::new(),
        discharge_path: Vec::new(),
    }
}

/// One timer's facts within its work bound (`Context::timer_solves`); a timing network too
/// large to solve, or one that spends the bound, gets a `solve-failed` finding that says so.
fn bounded_timer_facts(
    cx: &Context<'_>,
    index: &NetIndex,
    setup: &Setup,
    findings: &mut Vec<Finding>,
) -> TimerFacts {
    if let Some(e) = setup
        .component
        .and_then(|c| cx.partition.components.get(c))
        .and_then(|c| cx.oversized(c))
    {
        findings.push(solve_failed(cx, setup, &e));
        return empty_facts(setup);
    }
    let scope = budget::Scope::open(cx.timer_solves);
    let mut own = Vec::new();
    let facts = timer_facts(cx, index, setup, &mut own);
    match scope.exhausted() {
        Some(limit) => {
            let bound = DcError::WorkBound { limit };
            findings.push(solve_failed(cx, setup, &bound));
        }
        None => findings.extend(own),
    }
    facts
}

fn timer_facts(
    cx: &Context<'_>,
    index: &NetIndex,
    setup: &Setup,
    findings: &mut Vec<Finding>,
) -> TimerFacts {
    let mut facts = empty_facts(setup);
    let describe = |s: &State| s.describe(cx, &[]);
    facts.supply_v = supply_range(cx, setup);
    let dis = discharge::analyze(cx, index, setup, &describe);
    facts.discharge_current_a = dis.current_a;
    facts.discharge_source_ohms = dis.source_ohms;
    facts.discharge_open_v = dis.open_v;
    facts.discharge_chain = dis.chain;
    facts.discharge_dump = dis.dump;
    facts.discharge_dump_state = dis.dump_state;
    facts.output_current_a = output_current(cx, setup);
    if setup.mode == TimerMode::Unknown {
        return facts;
    }

    let points = sweep::points(cx, &setup.pots, &[]);
    let mut failure: Option<DcError> = None;
    let samples: Vec<Option<Sample>> = points
        .iter()
        .map(|p| match evaluate(cx, index, setup, &p.state) {
            Ok(s) => s,
            Err(e) => {
                failure.get_or_insert(e);
                None
            }
        })
        .collect();
    if let Some(e) = failure {
        findings.push(solve_failed(cx, setup, &e));
    }
    let eval_with = |f: fn(&Sample) -> Option<f64>| {
        move |s: &State| {
            evaluate(cx, index, setup, s)
                .ok()
                .flatten()
                .as_ref()
                .and_then(f)
        }
    };
    let values = |f: fn(&Sample) -> Option<f64>| -> Vec<Option<f64>> {
        samples.iter().map(|s| s.as_ref().and_then(f)).collect()
    };
    let range_of =
        |f: fn(&Sample) -> Option<f64>| sweep::range(&points, &values(f), &eval_with(f), &describe);
    facts.upper_threshold_v = range_of(|s| Some(s.upper));
    facts.lower_threshold_v = range_of(|s| Some(s.lower));
    facts.high_s = range_of(Sample::high_s);
    if setup.mode == TimerMode::Astable {
        facts.low_s = range_of(Sample::low_s);
        facts.period_s = range_of(Sample::period_s);
        facts.duty = range_of(Sample::duty);
        facts.frequency_hz = facts.period_s.as_ref().and_then(reciprocal);
    }
    facts.stuck = samples.iter().zip(&points).find_map(|(s, p)| {
        let s = s.as_ref()?;
        let (phase, outcome) = match (&s.high, &s.low) {
            (Outcome::Stuck(_), _) => ("high", &s.high),
            (_, Some(low @ Outcome::Stuck(_))) => ("low", low),
            _ => return None,
        };
        let Outcome::Stuck(stuck) = outcome else {
            return None;
        };
        Some(StuckPhase {
            phase,
            reason: stuck.reason.clone(),
            devices: stuck.devices.clone(),
            settles_v: stuck.settles_v,
            threshold_v: stuck.threshold_v,
            bias_a: stuck.bias_a,
            bias_ohms: stuck.bias_ohms,
            discharge_limited: stuck.discharge_limited,
            state: describe(&p.state),
        })
    });
    let mid = mid_state(cx, setup);
    let th = phase::thresholds(
        cx,
        index,
        setup,
        &sweep::with_level(&mid, setup.device, true),
    )
    .ok()
    .flatten();
    if let Some(th) = th {
        let v = 0.5 * (th.upper + th.lower);
        facts.charge_path =
            path_devices(cx, setup, &sweep::with_level(&mid, setup.device, true), v);
        if setup.mode == TimerMode::Astable {
            facts.discharge_path =
                path_devices(cx, setup, &sweep::with_level(&mid, setup.device, false), v);
        }
    }
    facts
}

/// Times both phases in one state (corner and wipers; the timer's own level is set per phase).
fn evaluate(
    cx: &Context<'_>,
    index: &NetIndex,
    setup: &Setup,
    state: &State,
) -> Result<Option<Sample>, DcError> {
    let Some(c) = setup.capacitance else {
        return Ok(None);
    };
    let high = sweep::with_level(state, setup.device, true);
    let low = sweep::with_level(state, setup.device, false);
    let (Some(th_high), Some(th_low)) = (
        phase::thresholds(cx, index, setup, &high)?,
        phase::thresholds(cx, index, setup, &low)?,
    ) else {
        return Ok(None);
    };
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
            let (Some(h), Some(l)) = (phase::time(cx, &charge)?, phase::time(cx, &discharge)?)
            else {
                return Ok(None);
            };
            Ok(Some(sample(h, Some(l), th_high)))
        }
        TimerMode::Monostable => {
            let Some(net) = setup.timing_net else {
                return Ok(None);
            };
            let Some(component) = setup.component.and_then(|c| cx.partition.components.get(c))
            else {
                return Ok(None);
            };
            // The pulse starts from wherever the discharge pin holds the capacitor.
            let Some(v_start) = cx.solve(component, &low)?.voltage(net) else {
                return Ok(None);
            };
            if v_start >= th_high.upper {
                let zero = Outcome::Time {
                    seconds: 0.0,
                    method: phase::Method::Integrated,
                };
                return Ok(Some(sample(zero, None, th_high)));
            }
            let pulse = Phase {
                setup,
                state: &high,
                v_start,
                v_end: th_high.upper,
                capacitance: c,
            };
            Ok(phase::time(cx, &pulse)?.map(|h| sample(h, None, th_high)))
        }
        TimerMode::Unknown => Ok(None),
    }
}

fn sample(high: Outcome, low: Option<Outcome>, th: Thresholds) -> Sample {
    Sample {
        high,
        low,
        upper: th.upper,
        lower: th.lower,
    }
}

fn reciprocal(r: &Range) -> Option<Range> {
    if r.min <= 0.0 || r.max <= 0.0 {
        return None;
    }
    Some(Range {
        min: 1.0 / r.max,
        max: 1.0 / r.min,
        min_state: r.max_state.clone(),
        max_state: r.min_state.clone(),
    })
}

/// Nominal corner, pots at mid travel.
fn mid_state(cx: &Context<'_>, setup: &Setup) -> State {
    let _ = cx;
    State {
        corner: super::states::Corner::Nominal,
        high: Vec::new(),
        wipers: setup.pots.iter().map(|&p| (p, 0.5)).collect(),
    }
}

/// Parts carrying at least a tenth of the capacitor's current with the capacitor held at `v`.
fn path_devices(cx: &Context<'_>, setup: &Setup, state: &State, v: f64) -> Vec<DeviceId> {
    let (Some(net), Some(component)) = (
        setup.timing_net,
        setup.component.and_then(|c| cx.partition.components.get(c)),
    ) else {
        return Vec::new();
    };
    let mut built = cx.build(component, state);
    let Some(node) = built.node(net) else {
        return Vec::new();
    };
    let ground = built.network.ground();
    let hold = built.network.add_voltage_source(node, ground, v);
    let Ok(solved) = built.solve_in(cx) else {
        return Vec::new();
    };
    let Some(total) = solved.current(hold).map(f64::abs).filter(|i| *i > 0.0) else {
        return Vec::new();
    };
    let mut out = Vec::new();
    for &d in &component.devices {
        let device = &cx.circuit.devices()[d];
        let is_path = matches!(device.kind, Kind::Resistor | Kind::Potentiometer)
            || device.kind.is_diode_like();
        if !is_path {
            continue;
        }
        let Some(el) = solved.elements(d) else {
            continue;
        };
        let i = [el.main, el.wiper_b]
            .into_iter()
            .flatten()
            .filter_map(|e| solved.current(e))
            .fold(0.0f64, |m, i| m.max(i.abs()));
        if i >= 0.1 * total {
            out.push(d);
        }
    }
    out
}

fn supply_range(cx: &Context<'_>, setup: &Setup) -> Option<Range> {
    let device = cx.circuit.devices().get(setup.device)?;
    let mut samples = Vec::new();
    for &corner in sweep::corners(cx) {
        let state = State {
            corner,
            high: Vec::new(),
            wipers: Default::default(),
        };
        if let Some(v) = stand_in::timer_supply(cx, device, &state) {
            samples.push((v, state.describe(cx, &[])));
        }
    }
    Range::from_samples(samples.iter().map(|(v, s)| (*v, s.as_str())))
}

/// The output pin's current with the output high and low, at each corner: positive sourcing.
fn output_current(cx: &Context<'_>, setup: &Setup) -> Option<Range> {
    let out = setup.out?;
    let component = cx
        .partition
        .net_component
        .get(out)
        .copied()
        .flatten()
        .and_then(|c| cx.partition.components.get(c))?;
    let pots = cx.pots(component);
    let mut samples = Vec::new();
    for &corner in sweep::corners(cx) {
        for high in [true, false] {
            let state = State {
                corner,
                high: if high { vec![setup.device] } else { Vec::new() },
                wipers: pots.iter().map(|&p| (p, 0.5)).collect(),
            };
            let Ok(solved) = cx.solve(component, &state) else {
                continue;
            };
            let Some(i) = solved
                .elements(setup.device)
                .and_then(|e| e.main)
                .and_then(|e| solved.current(e))
            else {
                continue;
            };
            samples.push((i, state.describe(cx, &[setup.device])));
        }
    }
    Range::from_samples(samples.iter().map(|(v, s)| (*v, s.as_str())))
}

fn solve_failed(cx: &Context<'_>, setup: &Setup, e: &DcError) -> Finding {
    let element = cx
        .circuit
        .devices()
        .get(setup.device)
        .and_then(|d| cx.netlist.elements.get(d.element));
    let span = element.map(|e| e.span).unwrap_or_default();
    let message = match e {
        DcError::WorkBound { limit } => format!(
            "the analysis of {} stopped at its bound of {limit} DC solves; its frequency and duty are not fully checked",
            cx.name(setup.device)
        ),
        _ => format!(
            "the timing network of {} could not be solved ({e}); its frequency and duty are not checked",
            cx.name(setup.device)
        ),
    };
    // A note: the engine could not judge the timer, which says nothing against the circuit.
    let help = match e {
        DcError::WorkBound { .. } => {
            "the timing network needs more DC solves than one timer is allowed (many pots or \
             steering diodes on one capacitor); check the stage on its own in a smaller deck"
        }
        _ => {
            "the frequency and duty checks of this timer were skipped; a simpler model of the \
             parts on its timing nets, or a resistance where a net has no DC path, lets \
             kickback judge it"
        }
    };
    let mut f = Finding::new("solve-failed", Severity::Note, span, message).with_help(help);
    if let Some(e) = element {
        f = f.with_element(e.name.clone(), e.instance_path());
    }
    f
}

#[cfg(test)]
mod tests;
