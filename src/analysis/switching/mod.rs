//! Switches and their loads: topology (side, load branch, freewheel paths, drivers, bridge
//! legs), on- and off-state gate drive, currents, dissipation and load voltages.
//!
//! Work stays local: each switch's sub-network ([`crate::analysis::partition`]) is solved once
//! in its states ([`solves`]) and every switch and load in it reads those solves. The cost is
//! the number of sub-networks times their states, so it grows with the board, not its square.

pub mod drive;
pub mod edges;
pub mod freewheel;
pub mod gate_network;
pub mod load;
pub mod nets;
pub mod solves;
pub mod stage;
pub mod topology;
pub mod winding;

use super::facts::{
    DriverFacts, Freewheel, FreewheelKind, LoadFacts, Range, SharedDrive, Stage, SwitchFacts,
    TimerFacts, SATURATED_BJT_DROP_V,
};
use super::states::{Context, Corner};
use crate::circuit::{DeviceId, Kind};
use crate::diagnostic::Finding;
use drive::OnOff;
use gate_network::GateDrive;
use load::LoadSetting;
use nets::NetMap;
use rayon::prelude::*;
use solves::ComponentSolves;
use std::collections::BTreeMap;
use topology::SwitchTopology;

/// Timer facts by timer device.
pub type Timers<'a> = BTreeMap<DeviceId, &'a TimerFacts>;

/// Wiper positions a switch's sub-network is solved at (pots there are rare: a gate divider).
const SWITCH_WIPER_GRID: [f64; 3] = [0.0, 0.5, 1.0];

pub fn analyze(
    cx: &Context<'_>,
    timers: &[TimerFacts],
) -> (Vec<SwitchFacts>, Vec<LoadFacts>, Vec<Finding>) {
    let nets = NetMap::new(cx);
    let timers: Timers<'_> = timers.iter().map(|t| (t.device, t)).collect();
    let timers = &timers;
    let topologies = topology::classify_all(cx, &nets);
    let position: BTreeMap<DeviceId, usize> = topologies
        .iter()
        .enumerate()
        .map(|(i, t)| (t.device, i))
        .collect();
    let drives: Vec<GateDrive> = topologies
        .iter()
        .map(|t| gate_network::find(cx, &nets, t))
        .collect();
    let stages: Vec<(Stage, String)> = topologies
        .iter()
        .zip(&drives)
        .map(|(t, d)| stage::classify(cx, &nets, t, d))
        .collect();
    let mut findings = Vec::new();

    let mut by_component: BTreeMap<usize, Vec<usize>> = BTreeMap::new();
    for (i, t) in topologies.iter().enumerate() {
        if let Some(&c) = cx
            .partition
            .device_components
            .get(t.device)
            .and_then(|v| v.first())
        {
            by_component.entry(c).or_default().push(i);
        }
    }
    // Each sub-network is solved on its own, in parallel (answers do not depend on the thread
    // or the memo); the indexed collect keeps component order for the findings.
    let work: Vec<(usize, &Vec<usize>)> = by_component.iter().map(|(&c, m)| (c, m)).collect();
    let done: Vec<Option<(usize, ComponentSolves)>> = work
        .par_iter()
        .map(|&(c, members)| {
            let mut keys: Vec<DeviceId> =
                members.iter().filter_map(|&i| drives[i].control).collect();
            keys.sort_unstable();
            keys.dedup();
            solves::solve_component(cx, c, &keys, &SWITCH_WIPER_GRID).map(|s| (c, s))
        })
        .collect();
    let mut solved: BTreeMap<usize, ComponentSolves> = BTreeMap::new();
    for (c, s) in done.into_iter().flatten() {
        if let Some(first) = by_component.get(&c).and_then(|m| m.first()) {
            findings.extend(solves::failure_finding(cx, &s, topologies[*first].device));
        }
        solved.insert(c, s);
    }
    let component_of = |device: DeviceId| -> Option<usize> {
        cx.partition
            .device_components
            .get(device)
            .and_then(|v| v.first())
            .copied()
    };

    let on_levels: Vec<Option<bool>> = topologies
        .iter()
        .zip(&drives)
        .map(|(t, d)| {
            let s = solved.get(&component_of(t.device)?)?;
            drive::on_level(cx, t, d.control, s)
        })
        .collect();

    let mut switches = Vec::new();
    let mut loads: Vec<LoadFacts> = Vec::new();
    let mut load_index: BTreeMap<DeviceId, usize> = BTreeMap::new();
    let mut freewheels = freewheel::CandidateCache::default();
    for (i, t) in topologies.iter().enumerate() {
        let Some(s) = component_of(t.device).and_then(|c| solved.get(&c)) else {
            switches.push(bare_switch(cx, t, &topologies, stages[i].clone()));
            continue;
        };
        let partner = t.partner.and_then(|p| {
            let j = *position.get(&p)?;
            Some((drives[j].control?, on_levels[j]?))
        });
        let states = drive::on_off(t, drives[i].control, on_levels[i], partner, s);
        let mut facts = switch_facts(
            cx,
            timers,
            &nets,
            t,
            &topologies,
            &drives[i],
            &states,
            s,
            &mut freewheels,
        );
        (facts.stage, facts.stage_reason) = stages[i].clone();
        for &load_device in t.load.iter().chain(t.parallel_loads.iter()) {
            if load_index.contains_key(&load_device) {
                continue;
            }
            let branch: Vec<DeviceId> = if Some(load_device) == t.load {
                t.branch.devices.clone()
            } else {
                vec![load_device]
            };
            let path = facts.freewheel.iter().find(|f| !f.reversed);
            let full_on_v = (Some(load_device) == t.load)
                .then(|| full_on_voltage(cx, &facts, load_device, s, &states.conducting))
                .flatten();
            let setting = LoadSetting {
                solves: s,
                conducting: &states.conducting,
                duty: facts.duty.clone(),
                frequency_hz: facts.frequency_hz.clone(),
                branch: &branch,
                switch: Some(t.device),
                freewheel: path.map(|f| f.device),
                freewheel_drop_v: path.map(|f| freewheel_drop(cx, f, &facts)),
                full_on_v,
                driven_by: None,
            };
            load_index.insert(load_device, loads.len());
            let mut this_load = load::load_facts(cx, load_device, &setting);
            if ramps(cx, &branch) {
                this_load.current_a = None;
                this_load.stored_energy_j = None;
            }
            loads.push(this_load);
        }
        switches.push(facts);
    }

    // Loads no switch interrupts: straight on a rail, a pulse source or a timer's pin.
    for (device, d) in cx.circuit.devices.iter().enumerate() {
        if !d.kind.is_load() || load_index.contains_key(&device) {
            continue;
        }
        let Some(c) = component_of(device) else {
            continue;
        };
        if let std::collections::btree_map::Entry::Vacant(slot) = solved.entry(c) {
            let Some(component) = cx.partition.components.get(c) else {
                continue;
            };
            let inputs = cx.inputs(component);
            if let Some(s) = solves::solve_component(cx, c, &inputs, &SWITCH_WIPER_GRID) {
                findings.extend(solves::failure_finding(cx, &s, device));
                slot.insert(s);
            }
        }
        let Some(s) = solved.get(&c) else { continue };
        load_index.insert(device, loads.len());
        loads.push(unswitched_load(cx, timers, &nets, device, s));
    }

    // Loads in device order; switches point at them by index.
    let mut order: Vec<usize> = (0..loads.len()).collect();
    order.sort_by_key(|&i| loads[i].device);
    let mut new_index = vec![0usize; loads.len()];
    for (new, &old) in order.iter().enumerate() {
        new_index[old] = new;
    }
    let mut sorted: Vec<Option<LoadFacts>> = loads.into_iter().map(Some).collect();
    let loads: Vec<LoadFacts> = order.iter().filter_map(|&i| sorted[i].take()).collect();
    for (sw, t) in switches.iter_mut().zip(&topologies) {
        sw.load = t
            .load
            .and_then(|d| load_index.get(&d))
            .map(|&i| new_index[i]);
        sw.parallel_loads = t
            .parallel_loads
            .iter()
            .filter_map(|d| load_index.get(d))
            .map(|&i| new_index[i])
            .collect();
    }
    share_drives(&mut switches);
    (switches, loads, findings)
}

/// Notes, on each driver, the other switches driven from the same device: one list per
/// driver, shared by its switches.
fn share_drives(switches: &mut [SwitchFacts]) {
    let mut by_driver: BTreeMap<DeviceId, Vec<DeviceId>> = BTreeMap::new();
    for s in switches.iter() {
        if let Some(d) = &s.driver {
            by_driver.entry(d.device).or_default().push(s.device);
        }
    }
    let lists: BTreeMap<DeviceId, std::sync::Arc<[DeviceId]>> = by_driver
        .into_iter()
        .map(|(driver, mut all)| {
            all.sort_unstable();
            all.dedup();
            (driver, all.into())
        })
        .collect();
    for s in switches.iter_mut() {
        let me = s.device;
        if let Some(driver) = &mut s.driver {
            driver.shared_with = lists
                .get(&driver.device)
                .map(|all| SharedDrive::new(all.clone(), me))
                .unwrap_or_default();
        }
    }
}

fn rail_range(
    cx: &Context<'_>,
    t: &SwitchTopology,
    all: &[SwitchTopology],
) -> (Option<Range>, Option<nets::Rail>) {
    let Some(rail) = t.supply_rail(cx, all) else {
        return (None, None);
    };
    let name = rail.supply.map_or("ground", |d| cx.name(d)).to_string();
    let corners: &[Corner] = if cx.supplies.iter().any(|s| s.min != s.max) {
        &Corner::ALL
    } else {
        &[Corner::Nominal]
    };
    let labels: Vec<(f64, String)> = corners
        .iter()
        .map(|&c| {
            (
                nets::rail_at(cx, &rail, c),
                format!("{name} at {}", c.as_str()),
            )
        })
        .collect();
    (
        Range::from_samples(labels.iter().map(|(v, l)| (*v, l.as_str()))),
        Some(rail),
    )
}

/// A switch whose sub-network could not be found: topology only.
fn bare_switch(
    cx: &Context<'_>,
    t: &SwitchTopology,
    all: &[SwitchTopology],
    (stage, stage_reason): (Stage, String),
) -> SwitchFacts {
    let (rail_v, rail) = rail_range(cx, t, all);
    SwitchFacts {
        device: t.device,
        kind: t.kind,
        stage,
        stage_reason,
        side: t.side,
        switched_net: t.switched,
        anchor_net: t.anchor.map(|a| a.net),
        rail_v,
        rail_net: rail.map(|r| r.net),
        rail_supply: rail.and_then(|r| r.supply),
        load: None,
        parallel_loads: Vec::new(),
        branch: t.branch.devices.clone(),
        inductive: t.inductive,
        driver: None,
        freewheel: Vec::new(),
        bridge_partner: t.partner,
        vgs_on_v: None,
        vgs_off_v: None,
        base_current_a: None,
        vds_on_v: None,
        current_a: None,
        rds_on_ohm: None,
        dissipation_w: None,
        duty: None,
        frequency_hz: None,
        follower: t.switched_is_source,
        linear_region: false,
        gain: None,
        saturated_current_a: None,
        gate_edges: None,
    }
}

#[allow(clippy::too_many_arguments)]
fn switch_facts(
    cx: &Context<'_>,
    timers: &Timers<'_>,
    nets: &NetMap,
    t: &SwitchTopology,
    all: &[SwitchTopology],
    gate: &GateDrive,
    states: &OnOff,
    s: &ComponentSolves,
    freewheels: &mut freewheel::CandidateCache,
) -> SwitchFacts {
    let branch_parts: Vec<DeviceId> = t
        .branch
        .devices
        .iter()
        .chain(t.parallel_loads.iter())
        .copied()
        .collect();
    let ramps = ramps(cx, &branch_parts);
    let current_known = !ramps
        && s.ok().next().is_some_and(|(_, solved)| {
            branch_parts
                .iter()
                .all(|&d| solved.elements(d).is_none_or(|e| !e.assumed))
        });
    let mut numbers = drive::numbers(cx, t, gate, states, s, current_known);
    if ramps {
        numbers.linear_region = false;
    }
    let conducts = match (&numbers.vgs_on_v, cx.circuit.devices.get(t.device)) {
        (Some(v), Some(d)) => {
            let needed = if d.kind.is_mos() {
                crate::analysis::stand_in::mos_threshold(&d.data)
            } else {
                0.5
            };
            let worst = if t.n_type { v.min } else { -v.max };
            worst >= needed
        }
        _ => false,
    };
    let (duty, frequency_hz) = match (gate.control, states.on_high) {
        (Some(c), Some(on_high)) => {
            let (d, f) = drive::input_timing(cx, timers, c);
            (drive::switch_duty(d, on_high), f)
        }
        _ if conducts => (
            Some(Range::point(1.0, "no switching drive: always on")),
            None,
        ),
        _ => (None, None),
    };
    let dissipation_w = numbers.on_loss_w.as_ref().map(|p| match &duty {
        Some(d) => drive::times_duty(p, d),
        None => {
            let mut p = p.clone();
            p.max_state = format!("{}; duty unknown, taken as 100 %", p.max_state);
            p.min_state = format!("{}; duty unknown, taken as 100 %", p.min_state);
            p
        }
    });
    let boosted = gate.bootstrap.is_some() || (t.switched_is_source && numbers.drive_above_rail);
    let load_current = t.load.and_then(|l| {
        drive::range_over(s, &states.conducting, &|_, solved| load::through(l, solved))
    });
    let candidates = freewheel::candidates_cached(cx, nets, t, freewheels);
    let freewheel = freewheel::orient(
        cx.circuit,
        &candidates,
        states,
        s,
        load_current.as_ref(),
        duty.as_ref(),
    );
    let driver = gate.driver.map(|device| {
        let kind_of = |d: DeviceId| cx.circuit.devices.get(d).map(|x| x.kind);
        DriverFacts {
            device,
            control: gate.control,
            on_when_high: states.on_high,
            network: gate.network.clone(),
            shared_with: SharedDrive::default(),
            boosted,
            bootstrap: gate.bootstrap.map(|b| (b.capacitor, b.diode)),
            can_float: kind_of(device) == Some(Kind::LogicOutput)
                || gate.control.and_then(kind_of) == Some(Kind::LogicOutput),
        }
    });
    let (rail_v, rail) = rail_range(cx, t, all);
    let device = cx.circuit.devices.get(t.device);
    let gain = device
        .filter(|d| d.kind.is_mos())
        .map(|d| crate::analysis::stand_in::mos_gain_fact(&d.data));
    let saturated_current_a = rail_v.as_ref().and_then(|rail| {
        let (drop_v, ohms) = match (&gain, device) {
            (Some(g), Some(d)) => {
                let rated = d.data.value("vgs_rated").unwrap_or(10.0);
                (0.0, g.rds_at(rated).unwrap_or(0.0))
            }
            _ => (SATURATED_BJT_DROP_V, 0.0),
        };
        load::saturated_current(cx, &t.branch.devices, rail, drop_v, ohms, cx.name(t.device))
    });
    let enhancement = numbers
        .vgs_on_v
        .as_ref()
        .map(|v| if t.n_type { v.max } else { -v.min });
    let edge_current = [
        numbers.current_a.as_ref().map(|r| r.max),
        saturated_current_a.as_ref().map(|r| r.max),
    ]
    .into_iter()
    .flatten()
    .reduce(f64::max);
    let gate_edges = edges::gate_edges(
        cx,
        t.device,
        &edges::EdgeSetting {
            drive: gate,
            vgs_on_v: enhancement,
            rail_v: rail_v.as_ref(),
            current_a: edge_current,
            frequency_hz: frequency_hz.as_ref(),
        },
    );
    SwitchFacts {
        device: t.device,
        kind: t.kind,
        // Set by the caller from the stage classification.
        stage: Stage::Unknown,
        stage_reason: String::new(),
        side: t.side,
        switched_net: t.switched,
        anchor_net: t.anchor.map(|a| a.net),
        rail_v,
        rail_net: rail.map(|r| r.net),
        rail_supply: rail.and_then(|r| r.supply),
        load: None,
        parallel_loads: Vec::new(),
        branch: t.branch.devices.clone(),
        inductive: t.inductive,
        driver,
        freewheel,
        bridge_partner: t.partner,
        vgs_on_v: numbers.vgs_on_v,
        vgs_off_v: numbers.vgs_off_v,
        base_current_a: numbers.base_current_a,
        vds_on_v: numbers.vds_on_v,
        current_a: numbers.current_a,
        rds_on_ohm: numbers.rds_on_ohm,
        dissipation_w,
        duty,
        frequency_hz,
        follower: t.switched_is_source && !boosted,
        linear_region: numbers.linear_region,
        gain,
        saturated_current_a,
        gate_edges,
    }
}

/// True for a branch of bare windings (no resistor, no stated winding resistance): a
/// converter's inductor or a transformer's primary. Its current ramps at V/L while the switch
/// is on; a DC solve, which takes the winding for a short, does not give it.
fn ramps(cx: &Context<'_>, branch: &[DeviceId]) -> bool {
    !branch.is_empty()
        && branch.iter().all(|&d| {
            cx.circuit.devices.get(d).is_some_and(|dev| {
                dev.kind == Kind::Inductor
                    && crate::analysis::stand_in::winding_resistance(cx, dev).is_none()
            })
        })
}

/// A load no switch interrupts: energised while the switching input it hangs on is at the
/// level that puts more voltage across it, or always when it hangs on none.
fn unswitched_load(
    cx: &Context<'_>,
    timers: &Timers<'_>,
    nets: &NetMap,
    device: DeviceId,
    s: &ComponentSolves,
) -> LoadFacts {
    let driven_by = cx
        .circuit
        .devices
        .get(device)
        .map(|d| d.pins.clone())
        .unwrap_or_default()
        .iter()
        .find_map(|p| {
            let (d, _) = gate_network::walk_back(cx, nets, p.net, device);
            d.filter(|&d| gate_network::is_switching_input(cx, d))
        });
    let mean_across = |high: bool, input: DeviceId| -> Option<f64> {
        let v: Vec<f64> = s
            .ok()
            .filter(|(st, _)| st.state.is_high(input) == high)
            .filter_map(|(_, solved)| load::across(cx, device, solved))
            .collect();
        (!v.is_empty()).then(|| v.iter().sum::<f64>() / v.len() as f64)
    };
    let on_high = driven_by
        .filter(|d| s.inputs.contains(d))
        .and_then(|d| Some(mean_across(true, d)? >= mean_across(false, d)?));
    let on: Vec<usize> = s
        .states
        .iter()
        .enumerate()
        .filter(|(_, st)| st.solved.is_some())
        .filter(|(_, st)| match (driven_by, on_high) {
            (Some(d), Some(level)) => st.state.is_high(d) == level,
            _ => true,
        })
        .map(|(i, _)| i)
        .collect();
    let conducting: Vec<usize> = Corner::ALL
        .iter()
        .filter_map(|&corner| {
            on.iter()
                .copied()
                .filter(|&i| s.states[i].state.corner == corner)
                .filter_map(|i| Some((i, load::across(cx, device, s.states[i].solved.as_ref()?)?)))
                .fold(None, |best: Option<(usize, f64)>, (i, v)| match best {
                    Some((_, b)) if b >= v => best,
                    _ => Some((i, v)),
                })
                .map(|(i, _)| i)
        })
        .collect();
    let (duty, frequency_hz) = match (driven_by, on_high) {
        (Some(d), Some(level)) => {
            let (duty, f) = drive::input_timing(cx, timers, d);
            (drive::switch_duty(duty, level), f)
        }
        (Some(_), None) => (None, None),
        (None, _) => (Some(Range::point(1.0, "not switched: always on")), None),
    };
    let branch = [device];
    let setting = LoadSetting {
        solves: s,
        conducting: &conducting,
        duty,
        frequency_hz,
        branch: &branch,
        switch: None,
        freewheel: None,
        // Hung on a pin or a source: the pin's own output stage carries the current both ways.
        freewheel_drop_v: Some(0.0),
        full_on_v: None,
        driven_by,
    };
    load::load_facts(cx, device, &setting)
}

/// Forward drop of a freewheel path while it carries the winding's current: a diode's from its
/// Shockley model (IS, N, RS) at the load's on-state current, a clamp's breakdown above the
/// rail, a body diode about 0.7 V (common practice).
fn freewheel_drop(cx: &Context<'_>, path: &Freewheel, sw: &SwitchFacts) -> f64 {
    const BODY_DIODE_V: f64 = 0.7;
    /// Thermal voltage kT/q at 300 K.
    const VT: f64 = 0.025_85;
    let Some(d) = cx.circuit.devices.get(path.device) else {
        return BODY_DIODE_V;
    };
    match path.kind {
        // A converter's winding hands its current on through a capacitor or another winding:
        // what it sees while off is the converter's output, not a drop this engine knows; a
        // diode's drop stands in so the winding's current still decays as it would.
        FreewheelKind::OppositeBodyDiode
        | FreewheelKind::ThroughCapacitor
        | FreewheelKind::CoupledWinding => BODY_DIODE_V,
        FreewheelKind::Clamp => {
            let p = crate::analysis::stand_in::diode_params(d.kind, &d.data);
            let rail = sw.rail_v.as_ref().map_or(0.0, |r| r.max);
            p.bv.map_or(BODY_DIODE_V, |bv| (bv - rail).max(BODY_DIODE_V))
        }
        FreewheelKind::AcrossLoad | FreewheelKind::ToRail => {
            let p = crate::analysis::stand_in::diode_params(d.kind, &d.data);
            let i = path.peak_current_a.filter(|i| *i > 0.0).unwrap_or(0.1);
            let v = p.n * VT * (i / p.is + 1.0).ln() + i * p.rs;
            if v.is_finite() && v >= 0.0 {
                v
            } else {
                BODY_DIODE_V
            }
        }
    }
}

/// The load's on-state voltage with its switch saturated, when the switch now runs in its
/// linear region or as a follower and saturating it would put more across the load.
fn full_on_voltage(
    cx: &Context<'_>,
    sw: &SwitchFacts,
    load_device: DeviceId,
    s: &ComponentSolves,
    conducting: &[usize],
) -> Option<Range> {
    if !(sw.linear_region || sw.follower) {
        return None;
    }
    let i = sw.saturated_current_a.as_ref()?;
    let d = cx.circuit.devices.get(load_device)?;
    let r = crate::analysis::stand_in::winding_resistance(cx, d)
        .or_else(|| crate::analysis::stand_in::resistance(cx, d))?;
    let solved = drive::range_over(s, conducting, &|_, x| load::across(cx, load_device, x));
    let full = Range {
        min: i.min * r,
        max: i.max * r,
        min_state: i.min_state.clone(),
        max_state: i.max_state.clone(),
    };
    match solved {
        Some(v) if v.max >= full.max => None,
        _ => Some(full),
    }
}
