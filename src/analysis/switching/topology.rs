//! Switch–load topology: which rail each switch returns to, which node it switches, the load
//! branch it interrupts, and the bridge legs.
//!
//! Every MOSFET and BJT is a switch. Its two main terminals are the *upper* one (N-channel
//! drain, NPN collector, P-channel source, PNP emitter: the end current enters when it
//! conducts normally) and the *lower* one. The terminal that sits on a rail (ground or a DC
//! supply) is the anchor; the other is the switched node:
//! - anchored at the lower terminal (an N-channel source on ground): **low side**;
//! - anchored at the upper terminal (a P-channel source on the rail, or an N-channel drain on
//!   the rail with its source toward the load, the follower case): **high side**;
//! - a high-side and a low-side switch that share their switched node form a **bridge leg**
//!   (P/N or N/N); both are marked `Bridge` and name each other.
//!
//! When neither terminal sits on a rail, a resistor of at most [`SENSE_OHMS`] from a terminal
//! to a rail (a current-sense or emitter resistor) anchors it; failing that the switch is taken
//! as low side for N/NPN and high side for P/PNP, unanchored.
//!
//! The load branch is found by a bounded depth-first walk from the switched node through
//! resistors, inductors and load parts to a rail on the far side (above the anchor for a low
//! side, below it for a high side, any rail but its own or another leg's switched node for a
//! bridge: the lower switch of a half-bridge whose motor returns to ground has no branch of its
//! own, it brakes the motor the upper switch drives). Of
//! the complete paths, one with a load part wins, then one with an inductor, then the
//! shortest; load parts on the other paths are loads in parallel on the same switch.

use super::nets::{self, NetMap, Rail};
use crate::analysis::facts::Side;
use crate::analysis::stand_in;
use crate::analysis::states::Context;
use crate::circuit::{DeviceId, Kind, NetId, PinRole};

/// Largest resistor from a switch terminal to a rail still read as a sense or emitter
/// resistor that anchors the switch (a load is larger).
pub const SENSE_OHMS: f64 = 10.0;
/// Longest load branch walked, in parts.
const MAX_BRANCH_PARTS: usize = 6;
/// Complete branch paths collected per switch at most.
const MAX_BRANCH_PATHS: usize = 32;
/// Steps of the branch walk per switch at most.
const MAX_WALK_STEPS: usize = 512;

/// One series path from the switched node to the branch's far end.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Branch {
    /// Parts in order from the switched node.
    pub devices: Vec<DeviceId>,
    /// Nets in order: the switched node, the inner nets, the far end (`devices.len() + 1`).
    pub nets: Vec<NetId>,
}

impl Branch {
    pub fn end(&self) -> Option<NetId> {
        if self.devices.is_empty() {
            None
        } else {
            self.nets.last().copied()
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct SwitchTopology {
    pub device: DeviceId,
    pub kind: Kind,
    /// N-channel or NPN.
    pub n_type: bool,
    pub side: Side,
    /// The net the switch connects to its rail (`None` when both terminals sit on rails).
    pub switched: Option<NetId>,
    /// The terminal on the switched node is the source/emitter (a follower if not boosted).
    pub switched_is_source: bool,
    /// The rail the switch returns to.
    pub anchor: Option<Rail>,
    pub branch: Branch,
    /// The load part (or, with none, the inductor) of the branch.
    pub load: Option<DeviceId>,
    /// Load parts on other complete paths from the switched node: in parallel with `load`.
    pub parallel_loads: Vec<DeviceId>,
    pub inductive: bool,
    pub partner: Option<DeviceId>,
}

impl SwitchTopology {
    /// The rail feeding the branch from above: the branch's far end for a low side, the
    /// anchor for a high side, the upper anchor of a bridge leg.
    pub fn supply_rail(&self, cx: &Context<'_>, all: &[SwitchTopology]) -> Option<Rail> {
        match self.side {
            Side::Low => self.branch.end().and_then(|n| nets::rail(cx, n)),
            Side::High => self.anchor,
            Side::Bridge => {
                let partner = self
                    .partner
                    .and_then(|p| all.iter().find(|t| t.device == p))
                    .and_then(|t| t.anchor);
                match (self.anchor, partner) {
                    (Some(a), Some(b)) => Some(if a.nominal >= b.nominal { a } else { b }),
                    (a, b) => a.or(b),
                }
            }
        }
    }
}

/// The (upper, lower) main terminals of a switch and whether it is N-type.
pub fn main_terminals(cx: &Context<'_>, device: DeviceId) -> Option<(NetId, NetId, bool)> {
    let d = cx.circuit.devices().get(device)?;
    let (upper, lower, n_type) = match d.kind {
        Kind::Nmos => (PinRole::Drain, PinRole::Source, true),
        Kind::Pmos => (PinRole::Source, PinRole::Drain, false),
        Kind::Npn => (PinRole::Collector, PinRole::Emitter, true),
        Kind::Pnp => (PinRole::Emitter, PinRole::Collector, false),
        _ => return None,
    };
    Some((d.pin(upper)?, d.pin(lower)?, n_type))
}

/// Classifies every switch, pairs bridge legs and finds each load branch.
pub fn classify_all(cx: &Context<'_>, nets: &NetMap) -> Vec<SwitchTopology> {
    let mut all: Vec<SwitchTopology> = cx
        .circuit
        .devices()
        .iter()
        .enumerate()
        .filter(|(_, d)| d.kind.is_switch_transistor())
        .filter_map(|(id, _)| classify(cx, nets, id))
        .collect();
    pair_bridges(&mut all);
    let leg_nodes: Vec<NetId> = all
        .iter()
        .filter(|t| t.side == Side::Bridge)
        .filter_map(|t| t.switched)
        .collect();
    for t in &mut all {
        let Some(start) = t.switched else { continue };
        let anchor = t.anchor.map(|a| a.nominal);
        let side = t.side;
        let n_type = t.n_type;
        let own_rail = t.anchor.map(|a| a.net);
        let accept = |net: NetId| -> bool {
            // A path back to the switch's own rail runs in parallel with it: the switch shorts
            // that load (a half-bridge's lower switch brakes a motor to ground), it does not
            // interrupt it.
            if net == start || Some(net) == own_rail {
                return false;
            }
            match (side, nets::rail(cx, net)) {
                (Side::Bridge, Some(_)) => true,
                (Side::Bridge, None) => leg_nodes.contains(&net),
                (Side::Low, Some(r)) => r.nominal > anchor.unwrap_or(0.0),
                (Side::High, Some(r)) => match anchor {
                    Some(a) => r.nominal < a,
                    None => r.nominal <= 0.0 || !n_type,
                },
                _ => false,
            }
        };
        let paths = walk_branches(cx, nets, start, &accept);
        let best = paths
            .iter()
            .enumerate()
            .max_by_key(|(i, p)| {
                (
                    p.devices.iter().any(|&d| kind_of(cx, d).is_load()),
                    p.devices.iter().any(|&d| is_inductive(cx, d)),
                    usize::MAX - p.devices.len(),
                    usize::MAX - i,
                )
            })
            .map(|(i, _)| i);
        if let Some(i) = best {
            t.branch = paths[i].clone();
        }
        t.load = t
            .branch
            .devices
            .iter()
            .copied()
            .find(|&d| kind_of(cx, d).is_load())
            .or_else(|| {
                t.branch
                    .devices
                    .iter()
                    .copied()
                    .find(|&d| kind_of(cx, d) == Kind::Inductor)
            });
        let mut parallel: Vec<DeviceId> = paths
            .iter()
            .flat_map(|p| p.devices.iter().copied())
            .filter(|&d| kind_of(cx, d).is_load() && !t.branch.devices.contains(&d))
            .collect();
        parallel.sort_unstable();
        parallel.dedup();
        t.inductive = t
            .branch
            .devices
            .iter()
            .chain(parallel.iter())
            .any(|&d| is_inductive(cx, d));
        t.parallel_loads = parallel;
    }
    all
}

fn kind_of(cx: &Context<'_>, device: DeviceId) -> Kind {
    cx.circuit
        .devices()
        .get(device)
        .map_or(Kind::Unknown, |d| d.kind)
}

/// Inductors, motors, relay coils and solenoids, and any part that states an inductance.
pub fn is_inductive(cx: &Context<'_>, device: DeviceId) -> bool {
    cx.circuit.devices().get(device).is_some_and(|d| {
        d.kind.is_inductive() || d.data.value("inductance").is_some_and(|l| l > 0.0)
    })
}

fn classify(cx: &Context<'_>, nets: &NetMap, device: DeviceId) -> Option<SwitchTopology> {
    let kind = kind_of(cx, device);
    let (upper, lower, n_type) = main_terminals(cx, device)?;
    let direct = (nets::rail(cx, upper), nets::rail(cx, lower));
    let (upper_rail, lower_rail) = match direct {
        (None, None) => (sense_anchor(cx, nets, upper), sense_anchor(cx, nets, lower)),
        other => other,
    };
    let (side, switched, anchor, switched_terminal_is_lower) = match (upper_rail, lower_rail) {
        (None, Some(l)) => (Side::Low, Some(upper), Some(l), false),
        (Some(u), None) => (Side::High, Some(lower), Some(u), true),
        (Some(u), Some(l)) => {
            // Straight across two rails: nothing is switched.
            if n_type {
                (Side::Low, None, Some(l), false)
            } else {
                (Side::High, None, Some(u), true)
            }
        }
        (None, None) => {
            if n_type {
                (Side::Low, Some(upper), None, false)
            } else {
                (Side::High, Some(lower), None, true)
            }
        }
    };
    // The lower terminal of an N-type device is its source/emitter; the upper of a P-type.
    let switched_is_source = switched.is_some() && (switched_terminal_is_lower == n_type);
    Some(SwitchTopology {
        device,
        kind,
        n_type,
        side,
        switched,
        switched_is_source,
        anchor,
        branch: Branch::default(),
        load: None,
        parallel_loads: Vec::new(),
        inductive: false,
        partner: None,
    })
}

/// A rail reached from `net` through one small resistor (sense or emitter resistor).
fn sense_anchor(cx: &Context<'_>, nets: &NetMap, net: NetId) -> Option<Rail> {
    nets.on(net).iter().find_map(|&(d, _)| {
        let device = cx.circuit.devices().get(d)?;
        if device.kind != Kind::Resistor {
            return None;
        }
        let r = stand_in::resistance(cx, device)?;
        if r > SENSE_OHMS {
            return None;
        }
        nets::rail(cx, nets::other_end(cx, d, net)?)
    })
}

/// Marks a high-side and a low-side switch sharing their switched node as a bridge leg.
fn pair_bridges(all: &mut [SwitchTopology]) {
    let mut by_node: std::collections::BTreeMap<NetId, (Vec<usize>, Vec<usize>)> =
        std::collections::BTreeMap::new();
    for (i, t) in all.iter().enumerate() {
        if let (Some(node), Some(_)) = (t.switched, t.anchor) {
            let entry = by_node.entry(node).or_default();
            match t.side {
                Side::High => entry.0.push(i),
                Side::Low => entry.1.push(i),
                Side::Bridge => {}
            }
        }
    }
    for (highs, lows) in by_node.values() {
        for (&h, &l) in highs.iter().zip(lows.iter()) {
            let (Some(ha), Some(la)) = (all[h].anchor, all[l].anchor) else {
                continue;
            };
            if ha.nominal <= la.nominal {
                continue;
            }
            let (hd, ld) = (all[h].device, all[l].device);
            all[h].side = Side::Bridge;
            all[h].partner = Some(ld);
            all[l].side = Side::Bridge;
            all[l].partner = Some(hd);
        }
    }
}

/// Every series path of branch parts from `start` to a net `accept` takes, bounded in depth,
/// count and steps. Paths stop at rails and pulse-source nets they do not accept.
fn walk_branches(
    cx: &Context<'_>,
    nets: &NetMap,
    start: NetId,
    accept: &dyn Fn(NetId) -> bool,
) -> Vec<Branch> {
    let mut found = Vec::new();
    let mut path = Branch {
        devices: Vec::new(),
        nets: vec![start],
    };
    let mut steps = 0usize;
    walk(cx, nets, &mut path, accept, &mut found, &mut steps);
    found
}

fn walk(
    cx: &Context<'_>,
    nets: &NetMap,
    path: &mut Branch,
    accept: &dyn Fn(NetId) -> bool,
    found: &mut Vec<Branch>,
    steps: &mut usize,
) {
    let Some(&here) = path.nets.last() else {
        return;
    };
    for &(device, _) in nets.on(here) {
        if found.len() >= MAX_BRANCH_PATHS || *steps >= MAX_WALK_STEPS {
            return;
        }
        *steps += 1;
        if !nets::is_branch_part(kind_of(cx, device)) || path.devices.contains(&device) {
            continue;
        }
        let Some(next) = nets::other_end(cx, device, here) else {
            continue;
        };
        if path.nets.contains(&next) {
            continue;
        }
        path.devices.push(device);
        path.nets.push(next);
        if accept(next) {
            found.push(path.clone());
        } else if nets::rail(cx, next).is_none()
            && nets::pulse_source_on(cx, next).is_none()
            && path.devices.len() < MAX_BRANCH_PARTS
        {
            walk(cx, nets, path, accept, found, steps);
        }
        path.devices.pop();
        path.nets.pop();
    }
}
