//! Freewheeling paths of a switched branch, found from the topology: diodes of every kind
//! across the branch (alone, or in series with one more diode, zener or resistor through a
//! net of their own), diodes from the switched node to a rail other than the switch's own, a
//! TVS or zener across the switch, and the body diode of the opposite switch of a bridge leg.
//! A plain diode across the switch itself is parallel to its own body diode and carries no
//! load current at turn-off, so it is not a freewheel path.
//!
//! Whether each is fitted the right way round is decided later from the solved on state
//! (see [`super::drive`]).

use super::drive::{with_duty, OnOff};
use super::nets::{self, NetMap};
use super::solves::ComponentSolves;
use super::topology::SwitchTopology;
use crate::analysis::facts::{Freewheel, FreewheelKind, Range};
use crate::analysis::states::Context;
use crate::circuit::{DeviceId, Kind, NetId, PinRole};

/// A freewheel path before its orientation is checked.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Candidate {
    pub device: DeviceId,
    pub kind: FreewheelKind,
}

pub fn candidates(cx: &Context<'_>, nets: &NetMap, t: &SwitchTopology) -> Vec<Candidate> {
    let mut out: Vec<Candidate> = Vec::new();
    let Some(switched) = t.switched else {
        return out;
    };
    if t.branch.devices.is_empty() {
        // No branch of its own to interrupt, nothing to freewheel.
        return out;
    }
    let mut branch_nets: Vec<NetId> = t.branch.nets.clone();
    if branch_nets.is_empty() {
        branch_nets.push(switched);
    }
    let far_end = t.branch.end();
    let anchor = t.anchor.map(|a| a.net);
    let push = |device: DeviceId, kind: FreewheelKind, out: &mut Vec<Candidate>| {
        if !out.iter().any(|c| c.device == device) {
            out.push(Candidate { device, kind });
        }
    };
    // A rail at the far end of the branch holds every channel's parts: walking it for each
    // switch would make the analysis quadratic. Whatever crosses from it to the branch is found
    // from the branch's own nets instead, a series pair by the reverse walk below.
    let skipped = |net: NetId| net != switched && nets::rail(cx, net).is_some();
    for &net in branch_nets.iter().filter(|&&n| !skipped(n)) {
        for &(device, _) in nets.on(net) {
            let Some(d) = cx.circuit.devices.get(device) else {
                continue;
            };
            if let Some(diode) = rail_side_diode(cx, nets, device, net) {
                if branch_nets
                    .iter()
                    .any(|&n| skipped(n) && Some(n) == diode.1)
                {
                    push(diode.0, FreewheelKind::AcrossLoad, &mut out);
                }
            }
            if !d.kind.is_diode_like() {
                continue;
            }
            let (Some(a), Some(k)) = (d.pin(PinRole::Anode), d.pin(PinRole::Cathode)) else {
                continue;
            };
            if a == k {
                continue;
            }
            let other = if a == net { k } else { a };
            if branch_nets.contains(&other) {
                push(device, FreewheelKind::AcrossLoad, &mut out);
                continue;
            }
            if net == switched && nets::rail(cx, other).is_some() {
                if Some(other) == anchor {
                    if matches!(d.kind, Kind::Zener | Kind::Tvs) {
                        push(device, FreewheelKind::Clamp, &mut out);
                    }
                } else if Some(other) == far_end {
                    push(device, FreewheelKind::AcrossLoad, &mut out);
                } else {
                    push(device, FreewheelKind::ToRail, &mut out);
                }
                continue;
            }
            // Diode in series with one more part through a net of their own.
            if let Some(end) = series_partner_end(cx, nets, device, other) {
                if branch_nets.contains(&end) {
                    push(device, FreewheelKind::AcrossLoad, &mut out);
                } else if net == switched && nets::rail(cx, end).is_some() && Some(end) != anchor {
                    push(device, FreewheelKind::ToRail, &mut out);
                }
            }
        }
    }
    out.sort_by_key(|c| (order(c.kind), c.device));
    if let Some(partner) = t.partner {
        if cx
            .circuit
            .devices
            .get(partner)
            .is_some_and(|d| d.kind.is_mos())
        {
            out.push(Candidate {
                device: partner,
                kind: FreewheelKind::OppositeBodyDiode,
            });
        }
    }
    out
}

fn order(kind: FreewheelKind) -> u8 {
    match kind {
        FreewheelKind::AcrossLoad => 0,
        FreewheelKind::ToRail => 1,
        FreewheelKind::Clamp => 2,
        FreewheelKind::OppositeBodyDiode => 3,
    }
}

/// The reverse of [`series_partner_end`]: `partner` (a resistor or diode on `net`) leads to a
/// net of its own holding one diode; that diode and the net at its far end.
fn rail_side_diode(
    cx: &Context<'_>,
    nets: &NetMap,
    partner: DeviceId,
    net: NetId,
) -> Option<(DeviceId, Option<NetId>)> {
    let kind = cx.circuit.devices.get(partner)?.kind;
    if !(kind.is_diode_like() || kind == Kind::Resistor) {
        return None;
    }
    let mid = nets::other_end(cx, partner, net).filter(|&m| m != net)?;
    let [(a, _), (b, _)] = nets.on(mid) else {
        return None;
    };
    let diode = if *a == partner { *b } else { *a };
    let d = cx.circuit.devices.get(diode)?;
    let (Some(anode), Some(cathode)) = (d.pin(PinRole::Anode), d.pin(PinRole::Cathode)) else {
        return None;
    };
    if diode == partner || !d.kind.is_diode_like() || anode == cathode {
        return None;
    }
    if series_partner_end(cx, nets, diode, mid) != Some(net) {
        return None;
    }
    let end = if anode == mid { cathode } else { anode };
    Some((diode, Some(end)))
}

/// When `mid` holds only `diode` and one more diode or resistor, the far end of that part.
fn series_partner_end(
    cx: &Context<'_>,
    nets: &NetMap,
    diode: DeviceId,
    mid: NetId,
) -> Option<NetId> {
    if nets::rail(cx, mid).is_some() {
        return None;
    }
    let others: Vec<DeviceId> = nets
        .on(mid)
        .iter()
        .map(|&(d, _)| d)
        .filter(|&d| d != diode)
        .collect();
    let [partner] = others.as_slice() else {
        return None;
    };
    let kind = cx.circuit.devices.get(*partner)?.kind;
    if !(kind.is_diode_like() || kind == Kind::Resistor) {
        return None;
    }
    nets::other_end(cx, *partner, mid).filter(|&end| end != mid)
}

/// Forward current above which a freewheel diode counts as conducting in a state where it must
/// block (a reversed diode shorts the supply through the switch and carries far more).
pub const REVERSED_CURRENT_A: f64 = 1e-3;

/// Checks each candidate's orientation in the solved states and adds its currents.
/// `load_current` is the load's on-state current; `duty` the switch's duty.
pub fn orient(
    candidates: &[Candidate],
    states: &OnOff,
    solves: &ComponentSolves,
    load_current: Option<&Range>,
    duty: Option<&Range>,
) -> Vec<Freewheel> {
    candidates
        .iter()
        .map(|c| {
            let forward = |indices: &[usize]| -> Option<f64> {
                indices
                    .iter()
                    .filter_map(|&i| {
                        let s = solves.states.get(i)?.solved.as_ref()?;
                        s.current(s.elements(c.device)?.main?)
                    })
                    .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.max(v))))
            };
            let (mut on_current, mut off_current) = (None, None);
            let reversed = match c.kind {
                FreewheelKind::AcrossLoad | FreewheelKind::ToRail => {
                    on_current = forward(&states.on).filter(|&i| i > REVERSED_CURRENT_A);
                    on_current.is_some()
                }
                FreewheelKind::Clamp => {
                    off_current = forward(&states.off).filter(|&i| i > REVERSED_CURRENT_A);
                    off_current.is_some()
                }
                FreewheelKind::OppositeBodyDiode => false,
            };
            let carries = !reversed;
            let peak = load_current.filter(|_| carries).map(|r| r.max.abs());
            let avg = match (load_current, duty) {
                (Some(i), Some(d)) if carries && c.kind != FreewheelKind::Clamp => Some(Range {
                    min: (1.0 - d.max).max(0.0) * i.min.abs(),
                    max: (1.0 - d.min).max(0.0) * i.max.abs(),
                    min_state: with_duty(&i.min_state, d, true),
                    max_state: with_duty(&i.max_state, d, false),
                }),
                _ => None,
            };
            Freewheel {
                device: c.device,
                kind: c.kind,
                reversed,
                on_state_current_a: on_current,
                off_state_current_a: off_current,
                peak_current_a: peak,
                avg_current_a: avg,
            }
        })
        .collect()
}
