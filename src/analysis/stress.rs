//! Worst-state stress on passives: resistor and pot dissipation (wipers searched), pot wiper
//! current, capacitor voltage.
//!
//! Each sub-network is solved once in its states (every corner and input combination, each
//! pot on [`STRESS_WIPER_GRID`], at most [`solves::MAX_STATES`] states; see
//! [`crate::analysis::switching::solves`]) and every resistor, pot and capacitor in it reads
//! those solves. Where the sub-network has pots, the worst grid state of each objective (a
//! part's dissipation, a pot's wiper current) is refined along each pot's travel, since the
//! worst position can lie between grid points (a pot's own dissipation peaks just off its zero
//! end): one scan of [`SCAN_POINTS`] positions serves every objective with the same base
//! state, then a golden-section search of [`REFINE_STEPS`] steps brackets each objective's
//! maximum. Searches run most-stressed part first (against its rating) until
//! [`MAX_SEARCH_SOLVES`] solves are spent in that sub-network; the rest keep their grid
//! values. So the cost per sub-network is bounded (at most [`solves::MAX_STATES`] +
//! [`MAX_SEARCH_SOLVES`] solves) and the total grows with the number of sub-networks.

use super::facts::{CapacitorFacts, Range, ResistorFacts, TimerFacts};
use super::partition::Component;
use super::states::{Context, Solved, State};
use super::switching::solves::{self, ComponentSolves};
use crate::circuit::defaults::RESISTOR_POWER_RATING_W;
use crate::circuit::{DeviceId, Kind, NetId, PinRole};
use crate::diagnostic::Finding;
use rayon::prelude::*;
use std::collections::BTreeMap;

/// Wiper positions every pot is solved at before the search (which scans the whole travel).
pub const STRESS_WIPER_GRID: [f64; 3] = [0.0, 0.5, 1.0];
/// Solves spent on wiper searches per sub-network at most.
pub const MAX_SEARCH_SOLVES: usize = 512;
/// Wiper positions of the shared scan along one pot's travel (every 5 %).
pub const SCAN_POINTS: usize = 21;
/// Golden-section steps around an objective's best scan point: the 10 % bracket shrinks to
/// 7 ppm of the travel, fine enough for a peak a few tenths of a percent off the pot's end.
pub const REFINE_STEPS: usize = 20;
/// Switching inputs averaged over at most this many at once (2⁴ duty corners per group).
const MAX_AVERAGED_INPUTS: usize = 4;
/// Below this frequency an input is an on/off command, not a PWM: a resistor is judged at its
/// worst level, not at its average (common practice: the same 20 Hz that separates PWM from
/// on/off elsewhere).
const PWM_MIN_HZ: f64 = 20.0;

pub fn analyze(
    cx: &Context<'_>,
    timers: &[TimerFacts],
    switches: &[super::SwitchFacts],
) -> (Vec<ResistorFacts>, Vec<CapacitorFacts>, Vec<Finding>) {
    // Transistors kickback could not place (driven by a stage that is not switched, say): what
    // they conduct rests on a bias the DC solve does not settle. A stage taken for an
    // amplifier has a bias the solve does settle (a divider, degeneration), and is judged.
    let linear: BTreeMap<DeviceId, ()> = switches
        .iter()
        .filter(|s| s.stage == super::Stage::Unknown)
        .map(|s| (s.device, ()))
        .collect();
    let timer_map: super::switching::Timers<'_> = timers.iter().map(|t| (t.device, t)).collect();
    let mut by_component: BTreeMap<usize, Vec<DeviceId>> = BTreeMap::new();
    for (id, d) in cx.circuit.devices().iter().enumerate() {
        if !matches!(
            d.kind,
            Kind::Resistor | Kind::Potentiometer | Kind::Capacitor
        ) {
            continue;
        }
        for &c in cx.partition.device_components.get(id).into_iter().flatten() {
            by_component.entry(c).or_default().push(id);
        }
    }
    // Sub-networks are independent and a solve's answer does not depend on the thread or the
    // memo, so they are solved in parallel; the indexed collect keeps component order, which
    // is the order findings and facts were always gathered in.
    let work: Vec<(usize, &Vec<DeviceId>)> = by_component.iter().map(|(&c, m)| (c, m)).collect();
    // Each sub-network's solves are read while they are at hand and dropped with the closure:
    // resistor facts and what each capacitor touching it sees; nothing holds the solves of
    // every sub-network at once.
    type Done = (
        usize,
        Option<Finding>,
        Vec<ResistorFacts>,
        Vec<(DeviceId, CapacitorSeen)>,
    );
    let done: Vec<Option<Done>> = work
        .par_iter()
        .map(|&(c, members)| -> Option<Done> {
            let component = cx.partition.components.get(c)?;
            let inputs = cx.inputs(component);
            let s = solves::solve_component(cx, c, &inputs, &STRESS_WIPER_GRID)?;
            // Sub-networks with a switch or a load report their failures from the switching
            // analysis, which solves them too.
            let reported_elsewhere = component.devices.iter().any(|&d| {
                cx.circuit
                    .devices()
                    .get(d)
                    .is_some_and(|x| x.kind.is_switch_transistor() || x.kind.is_load())
            });
            let finding = if reported_elsewhere {
                None
            } else {
                members
                    .first()
                    .and_then(|&first| solves::failure_finding(cx, &s, first))
            };
            let parts: Vec<DeviceId> = members
                .iter()
                .copied()
                .filter(|&d| cx.circuit.devices()[d].kind != Kind::Capacitor)
                .collect();
            // A part whose model is defined nowhere was solved as a generic stand-in: the
            // currents it lets through say nothing about the real board, so no dissipation
            // from this sub-network becomes a fact (the missing model is reported instead).
            let rests_on_unknown_part = component
                .devices
                .iter()
                .any(|&d| cx.circuit.unknown_part(d).is_some());
            let facts = if rests_on_unknown_part {
                Vec::new()
            } else {
                let mut facts = resistor_facts(cx, &timer_map, component, &s, &parts);
                let carried = carried_by_unplaced_stages(cx, component, &linear);
                for f in &mut facts {
                    f.set_by_linear_stage = carried.get(&f.device).copied();
                }
                facts
            };
            let seen = members
                .iter()
                .copied()
                .filter(|&d| cx.circuit.devices()[d].kind == Kind::Capacitor)
                .filter_map(|d| Some((d, capacitor_seen(cx, &s, d)?)))
                .collect();
            Some((c, finding, facts, seen))
        })
        .collect();
    let mut findings = Vec::new();
    let mut seen: BTreeMap<(DeviceId, usize), CapacitorSeen> = BTreeMap::new();
    let mut resistors = Vec::new();
    for (c, finding, facts, caps) in done.into_iter().flatten() {
        findings.extend(finding);
        resistors.extend(facts);
        for (d, cap) in caps {
            seen.insert((d, c), cap);
        }
    }
    resistors.sort_by_key(|r: &ResistorFacts| r.device);
    resistors.dedup_by_key(|r| r.device);

    let mut capacitors: Vec<CapacitorFacts> = cx
        .circuit
        .devices()
        .iter()
        .enumerate()
        .filter(|(_, d)| d.kind == Kind::Capacitor)
        .filter_map(|(id, _)| capacitor_facts(cx, &seen, id))
        .collect();
    capacitors.sort_by_key(|c| c.device);
    for c in &mut capacitors {
        timing_swing(timers, c);
    }
    (resistors, capacitors, findings)
}

/// Resistors that carry the main current of a transistor kickback could not place: reached
/// from its drain and source (collector and emitter) through resistors, without crossing a
/// rail, by transistor. The first transistor (in device order) that reaches one names it.
fn carried_by_unplaced_stages(
    cx: &Context<'_>,
    component: &Component,
    unplaced: &BTreeMap<DeviceId, ()>,
) -> BTreeMap<DeviceId, DeviceId> {
    let mut carried = BTreeMap::new();
    for &t in component
        .devices
        .iter()
        .filter(|d| unplaced.contains_key(d))
    {
        let device = &cx.circuit.devices()[t];
        let mut nets: Vec<NetId> = [
            PinRole::Drain,
            PinRole::Source,
            PinRole::Collector,
            PinRole::Emitter,
        ]
        .into_iter()
        .filter_map(|role| device.pin(role))
        .collect();
        let mut seen: Vec<NetId> = Vec::new();
        while let Some(net) = nets.pop() {
            let held = cx.partition.fixed.get(net).copied().flatten().is_some();
            if held || seen.contains(&net) {
                continue;
            }
            seen.push(net);
            for &(other, _) in cx.circuit.devices_on(net) {
                let d = &cx.circuit.devices()[other];
                if !matches!(d.kind, Kind::Resistor | Kind::Potentiometer) {
                    continue;
                }
                carried.entry(other).or_insert(t);
                nets.extend(d.pins.iter().map(|p| p.net).filter(|&n| n != net));
            }
        }
    }
    carried
}

/// What is measured on a part.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Objective {
    Power,
    WiperCurrent,
}

fn measure(device: DeviceId, objective: Objective, s: &Solved) -> Option<f64> {
    let e = s.elements(device)?;
    let main = e.main?;
    match (objective, e.wiper_b) {
        (Objective::Power, None) => s.power(main),
        (Objective::Power, Some(b)) => Some(s.power(main)? + s.power(b)?),
        // Current into the wiper node from the a half, less what leaves through the b half:
        // what the wiper terminal carries.
        (Objective::WiperCurrent, Some(b)) => Some((s.current(main)? - s.current(b)?).abs()),
        (Objective::WiperCurrent, None) => None,
    }
}

fn largest_current(device: DeviceId, s: &Solved) -> Option<f64> {
    let e = s.elements(device)?;
    let a = s.current(e.main?)?.abs();
    Some(match e.wiper_b.and_then(|b| s.current(b)) {
        Some(b) => a.max(b.abs()),
        None => a,
    })
}

fn sampled(
    solves: &ComponentSolves,
    f: &dyn Fn(&Solved) -> Option<f64>,
) -> Option<(Range, Option<usize>)> {
    let mut range: Option<Range> = None;
    let mut worst: Option<usize> = None;
    for (i, s) in solves.states.iter().enumerate() {
        let Some(v) = s.solved.as_ref().and_then(f) else {
            continue;
        };
        if !v.is_finite() {
            continue;
        }
        match &mut range {
            Some(r) => {
                if v > r.max {
                    worst = Some(i);
                }
                r.include(v, &s.label);
            }
            None => {
                range = Some(Range::point(v, s.label.clone()));
                worst = Some(i);
            }
        }
    }
    range.map(|r| (r, worst))
}

/// A switching input that is averaged over: a PWM (at least [`PWM_MIN_HZ`]) with a known duty.
struct InputDuty {
    device: DeviceId,
    low: f64,
    high: f64,
}

fn pwm_inputs(
    cx: &Context<'_>,
    timers: &super::switching::Timers<'_>,
    inputs: &[DeviceId],
) -> Vec<InputDuty> {
    let mut out: Vec<InputDuty> = inputs
        .iter()
        .filter_map(|&device| {
            let (duty, freq) = super::switching::drive::input_timing(cx, timers, device);
            let (duty, freq) = (duty?, freq?);
            (freq.min >= PWM_MIN_HZ).then(|| InputDuty {
                device,
                low: duty.min.clamp(0.0, 1.0),
                high: duty.max.clamp(0.0, 1.0),
            })
        })
        .collect();
    out.truncate(MAX_AVERAGED_INPUTS);
    out
}

/// Dissipation averaged over the PWM period of `pwm` inputs: states that differ only in those
/// inputs' levels are weighed by the share of time each level holds (`D` high, `1 − D` low),
/// at the duty ends that give the most (the average is linear in each duty, so an end is the
/// worst). `None` when a group misses a solve.
fn averaged(
    cx: &Context<'_>,
    s: &ComponentSolves,
    pwm: &[InputDuty],
    f: &dyn Fn(&Solved) -> Option<f64>,
) -> Option<Range> {
    let others: Vec<DeviceId> = s
        .inputs
        .iter()
        .copied()
        .filter(|i| !pwm.iter().any(|p| p.device == *i))
        .collect();
    // Group key: the state with the PWM inputs' levels removed.
    let mut groups: Vec<(State, Vec<(f64, &State)>)> = Vec::new();
    for st in &s.states {
        let value = st.solved.as_ref().and_then(f).filter(|v| v.is_finite())?;
        let mut key = st.state.clone();
        key.high.retain(|d| !pwm.iter().any(|p| p.device == *d));
        match groups.iter_mut().find(|(k, _)| *k == key) {
            Some((_, members)) => members.push((value, &st.state)),
            None => groups.push((key, vec![(value, &st.state)])),
        }
    }
    let names: Vec<&str> = pwm.iter().map(|p| cx.name(p.device)).collect();
    let mut range: Option<Range> = None;
    for (key, members) in &groups {
        let mut best = f64::NEG_INFINITY;
        let mut least = f64::INFINITY;
        for corner in 0..(1usize << pwm.len()) {
            let duty = |i: usize| {
                if corner & (1 << i) == 0 {
                    pwm[i].low
                } else {
                    pwm[i].high
                }
            };
            let total: f64 = members
                .iter()
                .map(|(v, st)| {
                    let w: f64 = (0..pwm.len())
                        .map(|i| {
                            if st.is_high(pwm[i].device) {
                                duty(i)
                            } else {
                                1.0 - duty(i)
                            }
                        })
                        .product();
                    w * v
                })
                .sum();
            best = best.max(total);
            least = least.min(total);
        }
        let label = format!(
            "{}; averaged over the PWM period of {}",
            key.describe(cx, &others),
            names.join(" and ")
        );
        match &mut range {
            Some(r) => {
                r.include(best, &label);
                r.include(least, &label);
            }
            None => {
                range = Some(Range::point(best, label.clone()));
                if let Some(r) = &mut range {
                    r.include(least, &label);
                }
            }
        }
    }
    range
}

fn resistor_facts(
    cx: &Context<'_>,
    timers: &super::switching::Timers<'_>,
    component: &Component,
    s: &ComponentSolves,
    parts: &[DeviceId],
) -> Vec<ResistorFacts> {
    let pwm = pwm_inputs(cx, timers, &s.inputs);
    let mut facts: Vec<ResistorFacts> = Vec::new();
    // (device, objective, worst state index, stress against rating)
    let mut searches: Vec<(usize, Objective, usize, f64)> = Vec::new();
    for &device in parts {
        let Some((power, worst)) = sampled(s, &|x| measure(device, Objective::Power, x)) else {
            continue;
        };
        let data = &cx.circuit.devices()[device].data;
        let rating = data
            .value("power_rating")
            .filter(|r| *r > 0.0)
            .unwrap_or(RESISTOR_POWER_RATING_W);
        if let Some(w) = worst {
            searches.push((facts.len(), Objective::Power, w, power.max / rating));
        }
        let is_pot = cx.circuit.devices()[device].kind == Kind::Potentiometer;
        let wiper = if is_pot {
            sampled(s, &|x| measure(device, Objective::WiperCurrent, x))
        } else {
            None
        };
        if let Some((current, Some(w))) = &wiper {
            let limit = data
                .value("wiper_current_max")
                .filter(|r| *r > 0.0)
                .unwrap_or(1.0);
            searches.push((
                facts.len(),
                Objective::WiperCurrent,
                *w,
                current.max / limit,
            ));
        }
        let average = if pwm.is_empty() {
            None
        } else {
            averaged(cx, s, &pwm, &|x| measure(device, Objective::Power, x))
        };
        facts.push(ResistorFacts {
            device,
            power_w: average.unwrap_or_else(|| power.clone()),
            peak_power_w: power,
            wiper_current_a: wiper.map(|(r, _)| r),
            current_a: sampled(s, &|x| largest_current(device, x)).map(|(r, _)| r),
            set_by_linear_stage: None,
        });
    }
    let grid_peaks: Vec<f64> = facts.iter().map(|f| f.peak_power_w.max).collect();
    let pots = cx.pots(component);
    if !pots.is_empty() {
        searches.sort_by(|a, b| b.3.total_cmp(&a.3));
        refine(cx, component, s, &mut facts, &searches, &pots);
    }
    // A wiper search that found a worse peak raises the average by the same share the grid's
    // worst state had of its average (the search moves a wiper, not a duty).
    for (fact, grid) in facts.iter_mut().zip(grid_peaks) {
        let peak = &fact.peak_power_w;
        if peak.max > grid && grid > 0.0 {
            let share = (fact.power_w.max / grid).clamp(0.0, 1.0);
            let (value, label) = (peak.max * share, peak.max_state.clone());
            fact.power_w.include(value, &label);
        }
    }
    facts
}

/// A timing capacitor swings between the timer's thresholds (⅓ and ⅔ of its control voltage):
/// its voltage is the thresholds' range, not what a DC solve with the capacitor open shows.
fn timing_swing(timers: &[TimerFacts], c: &mut CapacitorFacts) {
    let Some(t) = timers
        .iter()
        .find(|t| t.timing_capacitor == Some(c.device) && t.mode != super::TimerMode::Unknown)
    else {
        return;
    };
    let (Some(lower), Some(upper)) = (&t.lower_threshold_v, &t.upper_threshold_v) else {
        return;
    };
    let (min, min_state) = if t.mode == super::TimerMode::Monostable {
        // A one-shot's capacitor rests discharged between pulses.
        (0.0, "discharged between pulses".to_string())
    } else {
        (
            lower.min,
            format!("{} (the trigger threshold)", lower.min_state),
        )
    };
    c.voltage_v = Range {
        min,
        max: upper.max,
        min_state,
        max_state: format!(
            "{} (the threshold, ⅔ of the control voltage)",
            upper.max_state
        ),
    };
}

/// Objectives that share a base state (the searched pot's own wiper aside): one scan of the
/// pot's travel serves them all.
struct Job {
    base: State,
    pot: DeviceId,
    members: Vec<(usize, Objective)>,
}

/// Refines each objective's worst grid state along each pot's travel: a scan of
/// [`SCAN_POINTS`] positions shared by the objectives of a base state, then a golden-section
/// search of [`REFINE_STEPS`] steps around each objective's best scan point.
fn refine(
    cx: &Context<'_>,
    component: &Component,
    s: &ComponentSolves,
    facts: &mut [ResistorFacts],
    searches: &[(usize, Objective, usize, f64)],
    pots: &[DeviceId],
) {
    let mut jobs: Vec<Job> = Vec::new();
    for &(index, objective, worst, _) in searches {
        let Some(state) = s.states.get(worst).map(|x| &x.state) else {
            continue;
        };
        for &pot in pots {
            let mut base = state.clone();
            base.wipers.remove(&pot);
            match jobs.iter_mut().find(|j| j.pot == pot && j.base == base) {
                Some(job) => job.members.push((index, objective)),
                None => jobs.push(Job {
                    base,
                    pot,
                    members: vec![(index, objective)],
                }),
            }
        }
    }
    let mut budget = MAX_SEARCH_SOLVES;
    for job in jobs {
        if budget < SCAN_POINTS {
            return;
        }
        budget -= SCAN_POINTS;
        let at = |x: f64| -> State {
            let mut state = job.base.clone();
            state.wipers.insert(job.pot, x);
            state
        };
        let step = 1.0 / (SCAN_POINTS - 1) as f64;
        let scan: Vec<(f64, Option<Solved>)> = (0..SCAN_POINTS)
            .map(|i| {
                let x = i as f64 * step;
                (x, cx.solve(component, &at(x)).ok())
            })
            .collect();
        for &(index, objective) in &job.members {
            if budget < REFINE_STEPS + 2 {
                return;
            }
            budget -= REFINE_STEPS + 2;
            let device = facts[index].device;
            let value = |x: f64| -> Option<f64> {
                measure(device, objective, &cx.solve(component, &at(x)).ok()?)
            };
            let Some((best_x, best_v)) = scan
                .iter()
                .filter_map(|(x, solved)| Some((*x, measure(device, objective, solved.as_ref()?)?)))
                .fold(None, |best: Option<(f64, f64)>, (x, v)| match best {
                    Some((_, b)) if b >= v => best,
                    _ => Some((x, v)),
                })
            else {
                continue;
            };
            let (x, v) = golden(
                &value,
                (best_x - step).max(0.0),
                (best_x + step).min(1.0),
                (best_x, best_v),
            );
            let label = at(x).describe(cx, &s.inputs);
            let range = match objective {
                Objective::Power => Some(&mut facts[index].peak_power_w),
                Objective::WiperCurrent => facts[index].wiper_current_a.as_mut(),
            };
            if let Some(r) = range {
                r.include(v, &label);
            }
        }
    }
}

/// Golden-section search for the maximum of `f` on `[lo, hi]`, reusing one point per step;
/// returns the best of what it saw and `start`.
fn golden(
    f: &dyn Fn(f64) -> Option<f64>,
    mut lo: f64,
    mut hi: f64,
    start: (f64, f64),
) -> (f64, f64) {
    let phi = 0.5 * (5f64.sqrt() - 1.0);
    let mut best = start;
    let see = |x: f64, v: Option<f64>, best: &mut (f64, f64)| {
        if let Some(v) = v.filter(|v| v.is_finite()) {
            if v > best.1 {
                *best = (x, v);
            }
        }
        v.unwrap_or(f64::NEG_INFINITY)
    };
    let (mut c, mut d) = (hi - phi * (hi - lo), lo + phi * (hi - lo));
    let mut fc = see(c, f(c), &mut best);
    let mut fd = see(d, f(d), &mut best);
    for _ in 0..REFINE_STEPS {
        if fc >= fd {
            hi = d;
            d = c;
            fd = fc;
            c = hi - phi * (hi - lo);
            fc = see(c, f(c), &mut best);
        } else {
            lo = c;
            c = d;
            fc = fd;
            d = lo + phi * (hi - lo);
            fd = see(d, f(d), &mut best);
        }
    }
    best
}

/// Potential of `net` in a solve of `component`: fixed nets from the state, the component's
/// own nets from the solve; `None` for nets of another component.
fn net_voltage(
    cx: &Context<'_>,
    solves: &ComponentSolves,
    solved: &Solved,
    state: &State,
    net: NetId,
) -> Option<f64> {
    if let Some(v) = cx.fixed_voltage(net, state) {
        return Some(v);
    }
    match cx.partition.net_component.get(net).copied().flatten() {
        Some(c) if c == solves.component => solved.voltage(net),
        _ => None,
    }
}

/// What one sub-network's solves say about a capacitor touching it: the voltage across it
/// when the solves see both ends, and the range of each end that lies in this sub-network.
/// `None` for a capacitor straight across two fixed nets (it needs no solve).
struct CapacitorSeen {
    across: Option<Range>,
    pos: Option<Range>,
    neg: Option<Range>,
}

/// A capacitor's two nets (`Pos`/`Neg`, else its first two pins).
fn capacitor_nets(cx: &Context<'_>, device: DeviceId) -> Option<(NetId, NetId)> {
    let d = cx.circuit.devices().get(device)?;
    let pos = d
        .pin(PinRole::Pos)
        .or_else(|| d.pins.first().map(|p| p.net))?;
    let neg = d
        .pin(PinRole::Neg)
        .or_else(|| d.pins.get(1).map(|p| p.net))?;
    Some((pos, neg))
}

fn capacitor_seen(
    cx: &Context<'_>,
    s: &ComponentSolves,
    device: DeviceId,
) -> Option<CapacitorSeen> {
    let (pos, neg) = capacitor_nets(cx, device)?;
    let fixed = |net: NetId| cx.partition.fixed.get(net).copied().flatten().is_some();
    if fixed(pos) && fixed(neg) {
        return None;
    }
    // Both ends seen in one solve: the exact difference, state by state.
    let across = Range::from_samples(s.ok().filter_map(|(st, x)| {
        let v = net_voltage(cx, s, x, &st.state, pos)? - net_voltage(cx, s, x, &st.state, neg)?;
        Some((v, st.label.as_str()))
    }));
    // Each end on its own, where it lies in this sub-network.
    let end_range = |net: NetId| -> Option<Range> {
        if cx.partition.net_component.get(net).copied().flatten() != Some(s.component) {
            return None;
        }
        Range::from_samples(s.ok().filter_map(|(st, x)| {
            Some((net_voltage(cx, s, x, &st.state, net)?, st.label.as_str()))
        }))
    };
    Some(CapacitorSeen {
        across,
        pos: end_range(pos),
        neg: end_range(neg),
    })
}

fn capacitor_facts(
    cx: &Context<'_>,
    seen: &BTreeMap<(DeviceId, usize), CapacitorSeen>,
    device: DeviceId,
) -> Option<CapacitorFacts> {
    let (pos, neg) = capacitor_nets(cx, device)?;
    let own = cx.partition.device_components.get(device)?;
    let fixed = |net: NetId| cx.partition.fixed.get(net).copied().flatten().is_some();
    if fixed(pos) && fixed(neg) {
        // Straight across two fixed nets (bulk and decoupling capacitors): no solve needed.
        let component = cx.partition.components.get(*own.first()?)?;
        let inputs = cx.inputs(component);
        let states = cx.states(component, &[0.5]);
        let samples: Vec<(f64, String)> = states
            .iter()
            .filter_map(|st| {
                let v = cx.fixed_voltage(pos, st)? - cx.fixed_voltage(neg, st)?;
                Some((v, st.describe(cx, &inputs)))
            })
            .collect();
        return Range::from_samples(samples.iter().map(|(v, l)| (*v, l.as_str())))
            .map(|voltage_v| CapacitorFacts { device, voltage_v });
    }
    let components: Vec<(usize, &CapacitorSeen)> = own
        .iter()
        .filter_map(|&c| Some((c, seen.get(&(device, c))?)))
        .collect();
    // Both ends seen in one solve: the exact difference, state by state.
    if let Some(range) = components.iter().find_map(|(_, s)| s.across.clone()) {
        return Some(CapacitorFacts {
            device,
            voltage_v: range,
        });
    }
    // The two ends in different sub-networks: the widest difference of their own ranges.
    let end_range = |net: NetId, pick: fn(&CapacitorSeen) -> &Option<Range>| -> Option<Range> {
        let c = cx.partition.net_component.get(net).copied().flatten()?;
        let (_, s) = components.iter().find(|(own, _)| *own == c)?;
        pick(s).clone()
    };
    let (p, n) = (end_range(pos, |s| &s.pos)?, end_range(neg, |s| &s.neg)?);
    Some(CapacitorFacts {
        device,
        voltage_v: Range {
            min: p.min - n.max,
            max: p.max - n.min,
            min_state: format!("{} with {}", p.min_state, n.max_state),
            max_state: format!("{} with {}", p.max_state, n.min_state),
        },
    })
}
