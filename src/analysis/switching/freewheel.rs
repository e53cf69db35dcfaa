//! Freewheeling paths of a switched branch, found from the topology: diodes of every kind
//! across the branch (alone, or in series with one more diode, zener or resistor through a
//! net of their own), diodes from the switched node to a rail other than the switch's own, a
//! TVS or zener across the switch, and the body diode of the opposite switch of a bridge leg.
//! A plain diode across the switch itself is parallel to its own body diode and carries no
//! load current at turn-off, so it is not a freewheel path.
//!
//! When none of those exists, paths through capacitors and coupled windings (converters and
//! transformers) are looked for: see [`ac_paths`].
//!
//! Whether each is fitted the right way round is decided later from the solved on state
//! (see [`super::drive`]).

use super::drive::{with_duty, OnOff};
use super::nets::{self, NetMap};
use super::solves::ComponentSolves;
use super::topology::SwitchTopology;
use crate::analysis::facts::{Freewheel, FreewheelKind, Range, Side};
use crate::analysis::states::{Context, Solved};
use crate::circuit::{Circuit, DeviceId, Kind, NetId, PinRole};
use std::collections::HashMap;

/// A freewheel path before its orientation is checked.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Candidate {
    pub device: DeviceId,
    pub kind: FreewheelKind,
}

/// The walks behind [`candidates_cached`] depend on a switch's branch, never on the switch: switches
/// in parallel on one branch (thousands of MOSFETs on one drain net) share one walk instead of
/// each walking every part on the net.
#[derive(Debug, Default)]
pub struct CandidateCache {
    known: HashMap<BranchKey, Vec<Candidate>>,
}

/// What the branch walks read: the switched net, the side, the anchor net and the branch.
type BranchKey = (Option<NetId>, u8, Option<NetId>, Vec<DeviceId>, Vec<NetId>);

/// Every freewheel path a switch may have, before orientation: what its branch gives (walked
/// once per branch, through `cache`) and, for a bridge leg, its partner's body diode.
pub fn candidates_cached(
    cx: &Context<'_>,
    nets: &NetMap,
    t: &SwitchTopology,
    cache: &mut CandidateCache,
) -> Vec<Candidate> {
    let side = match t.side {
        Side::Low => 0,
        Side::High => 1,
        Side::Bridge => 2,
    };
    let key: BranchKey = (
        t.switched,
        side,
        t.anchor.map(|a| a.net),
        t.branch.devices.clone(),
        t.branch.nets.clone(),
    );
    let mut out = cache
        .known
        .entry(key)
        .or_insert_with(|| branch_candidates(cx, nets, t))
        .clone();
    add_partner(cx, t, &mut out);
    out
}

/// A bridge leg's opposite MOSFET conducts the winding's current through its body diode.
fn add_partner(cx: &Context<'_>, t: &SwitchTopology, out: &mut Vec<Candidate>) {
    if t.switched.is_none() || t.branch.devices.is_empty() {
        // No branch of its own: nothing to freewheel.
        return;
    }
    if let Some(partner) = t.partner {
        if cx
            .circuit
            .devices()
            .get(partner)
            .is_some_and(|d| d.kind.is_mos())
        {
            out.push(Candidate {
                device: partner,
                kind: FreewheelKind::OppositeBodyDiode,
            });
        }
    }
}

/// The candidates the switch's branch gives, whichever switch it is.
fn branch_candidates(cx: &Context<'_>, nets: &NetMap, t: &SwitchTopology) -> Vec<Candidate> {
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
            let Some(d) = cx.circuit.devices().get(device) else {
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
    if out.is_empty() {
        out.extend(ac_paths(cx, nets, t, switched));
    }
    out
}

fn order(kind: FreewheelKind) -> u8 {
    match kind {
        FreewheelKind::AcrossLoad => 0,
        FreewheelKind::ToRail => 1,
        FreewheelKind::Clamp => 2,
        FreewheelKind::OppositeBodyDiode => 3,
        FreewheelKind::ThroughCapacitor => 4,
        FreewheelKind::CoupledWinding => 5,
    }
}

/// Paths a DC walk cannot see: at turn-off the winding's current is a fast edge, and a
/// capacitor conducts it as well as a wire; a coupled winding takes the stored energy
/// magnetically.
/// - a diode from the switched node into a net a capacitor holds against a rail or the branch
///   (a boost converter's rectifier and output capacitor);
/// - a capacitor from the switched node to a net with a diode, or a winding or load, to a
///   rail or the branch (a Ćuk or SEPIC coupling capacitor);
/// - a winding of the branch that a `K` element couples with another winding carrying a load,
///   a diode or a capacitor (a flyback or forward transformer).
fn ac_paths(
    cx: &Context<'_>,
    nets: &NetMap,
    t: &SwitchTopology,
    switched: NetId,
) -> Vec<Candidate> {
    let mut out = Vec::new();
    let anchor = t.anchor.map(|a| a.net);
    let returns =
        |net: NetId| -> bool { t.branch.nets.contains(&net) || nets::rail(cx, net).is_some() };
    // At turn-off a low side's winding pushes its current out of the switched node and a high
    // side's pulls it in: a diode in the path must conduct that way, or it is no path at all
    // (DC solves of a converter take its winding for a short and cannot tell).
    let conducts_on = |diode: DeviceId, from: NetId| -> bool {
        let Some(d) = cx.circuit.devices().get(diode) else {
            return false;
        };
        match t.side {
            Side::Low => d.pin(PinRole::Anode) == Some(from),
            Side::High => d.pin(PinRole::Cathode) == Some(from),
            Side::Bridge => true,
        }
    };
    for &(device, _) in nets.on(switched) {
        let Some(d) = cx.circuit.devices().get(device) else {
            continue;
        };
        let Some(far) = nets::other_end(cx, device, switched) else {
            continue;
        };
        if far == switched || returns(far) {
            continue;
        }
        let found = if d.kind.is_diode_like() {
            part_to(cx, nets, far, device, &|k| k == Kind::Capacitor, &returns)
                .filter(|_| conducts_on(device, switched))
                .map(|_| device)
        } else if d.kind == Kind::Capacitor {
            part_to(cx, nets, far, device, &|k| k.is_diode_like(), &returns)
                .filter(|&diode| conducts_on(diode, far))
                .or_else(|| {
                    part_to(
                        cx,
                        nets,
                        far,
                        device,
                        &|k| k == Kind::Inductor || k.is_load(),
                        &|n| Some(n) != anchor && returns(n),
                    )
                    .map(|_| device)
                })
        } else {
            None
        };
        if let Some(found) = found {
            if !out.iter().any(|c: &Candidate| c.device == found) {
                out.push(Candidate {
                    device: found,
                    kind: FreewheelKind::ThroughCapacitor,
                });
            }
        }
    }
    for &winding in &t.branch.devices {
        for &other in nets.coupled_with(winding) {
            if t.branch.devices.contains(&other) || !carries_energy(cx, nets, other) {
                continue;
            }
            if !out.iter().any(|c: &Candidate| c.device == other) {
                out.push(Candidate {
                    device: other,
                    kind: FreewheelKind::CoupledWinding,
                });
            }
        }
    }
    out
}

/// A part of the kind `want` on `net` (not `except`) whose far end `ok` takes.
fn part_to(
    cx: &Context<'_>,
    nets: &NetMap,
    net: NetId,
    except: DeviceId,
    want: &dyn Fn(Kind) -> bool,
    ok: &dyn Fn(NetId) -> bool,
) -> Option<DeviceId> {
    nets.on(net).iter().find_map(|&(d, _)| {
        let kind = cx.circuit.devices().get(d)?.kind;
        if d == except || !want(kind) {
            return None;
        }
        let far = nets::other_end(cx, d, net)?;
        (far != net && ok(far)).then_some(d)
    })
}

/// A winding with something on it that takes energy: a load, a resistor, a diode or a
/// capacitor on either of its nets, other than the winding itself.
fn carries_energy(cx: &Context<'_>, nets: &NetMap, winding: DeviceId) -> bool {
    let Some((a, b)) = nets::two_pins(cx, winding) else {
        return false;
    };
    if a == b {
        return false;
    }
    [a, b].iter().any(|&n| {
        nets::rail(cx, n).is_none()
            && nets.on(n).iter().any(|&(d, _)| {
                d != winding
                    && cx.circuit.devices().get(d).is_some_and(|x| {
                        x.kind.is_diode_like()
                            || x.kind.is_load()
                            || matches!(x.kind, Kind::Resistor | Kind::Capacitor)
                    })
            })
    })
}

/// The reverse of [`series_partner_end`]: `partner` (a resistor or diode on `net`) leads to a
/// net of its own holding one diode; that diode and the net at its far end.
fn rail_side_diode(
    cx: &Context<'_>,
    nets: &NetMap,
    partner: DeviceId,
    net: NetId,
) -> Option<(DeviceId, Option<NetId>)> {
    let kind = cx.circuit.devices().get(partner)?.kind;
    if !(kind.is_diode_like() || kind == Kind::Resistor) {
        return None;
    }
    let mid = nets::other_end(cx, partner, net).filter(|&m| m != net)?;
    let [(a, _), (b, _)] = nets.on(mid) else {
        return None;
    };
    let diode = if *a == partner { *b } else { *a };
    let d = cx.circuit.devices().get(diode)?;
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
    let kind = cx.circuit.devices().get(*partner)?.kind;
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
    circuit: &Circuit,
    candidates: &[Candidate],
    states: &OnOff,
    solves: &ComponentSolves,
    load_current: Option<&Range>,
    duty: Option<&Range>,
) -> Vec<Freewheel> {
    candidates
        .iter()
        .map(|c| {
            // The largest of a quantity over the solved states among `indices`.
            let largest = |indices: &[usize], of: &dyn Fn(&Solved) -> Option<f64>| {
                indices
                    .iter()
                    .filter_map(|&i| of(solves.states.get(i)?.solved.as_ref()?))
                    .filter(|v| v.is_finite())
                    .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.max(v))))
            };
            let forward =
                |indices: &[usize]| largest(indices, &|s| s.current(s.elements(c.device)?.main?));
            let on_reverse = largest(&states.on, &|s| {
                s.pin_voltage(circuit, c.device, PinRole::Cathode, PinRole::Anode)
            });
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
                // Oriented by the topology when found (see `ac_paths`).
                FreewheelKind::OppositeBodyDiode
                | FreewheelKind::ThroughCapacitor
                | FreewheelKind::CoupledWinding => false,
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
                on_state_reverse_v: on_reverse,
            }
        })
        .collect()
}
