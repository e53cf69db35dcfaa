//! What drives a switch's gate or base: a bounded walk back from the control pin through
//! resistors, diodes and ferrites to a pulse source, a timer output, a logic output or the
//! output of a controlled source (E, F, G, H, B: an amplifier or a behavioural driver, whose
//! output is whatever its input makes it); failing that, another transistor whose drain or
//! collector pulls the gate (a pre-driver). A pre-driver's or a controlled source's own input
//! is then followed once more to the switching input behind it. Also whether a bootstrap
//! lifts the drive above the rail.

use super::nets::{self, NetMap};
use super::topology::SwitchTopology;
use crate::analysis::states::Context;
use crate::circuit::{DeviceId, Kind, NetId, PinRole};
use std::collections::VecDeque;

/// Parts walked between the control pin and its driver at most.
const MAX_DRIVE_PARTS: usize = 4;
/// Pre-driver stages followed at most.
const MAX_STAGES: usize = 2;

#[derive(Clone, Debug, Default, PartialEq)]
pub struct GateDrive {
    /// The pulse source, timer, logic output or pre-driver transistor found.
    pub driver: Option<DeviceId>,
    /// The switching input (pulse source, timer, logic output) the on/off state follows:
    /// the driver itself, or a pre-driver's own driver.
    pub control: Option<DeviceId>,
    /// Parts between the control pin and the driver, nearest the pin first.
    pub network: Vec<DeviceId>,
    /// A capacitor from the switched node to a net a diode feeds (a bootstrap).
    pub bootstrap: Option<Bootstrap>,
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Bootstrap {
    pub capacitor: DeviceId,
    pub diode: DeviceId,
    /// The net feeding the diode's anode.
    pub feed: NetId,
}

pub fn control_pin(cx: &Context<'_>, device: DeviceId) -> Option<NetId> {
    let d = cx.circuit.devices().get(device)?;
    if d.kind.is_mos() {
        d.pin(PinRole::Gate)
    } else {
        d.pin(PinRole::Base)
    }
}

pub fn find(cx: &Context<'_>, nets: &NetMap, topology: &SwitchTopology) -> GateDrive {
    let mut drive = GateDrive::default();
    if let Some(pin) = control_pin(cx, topology.device) {
        let (driver, network) = walk_back(cx, nets, pin, topology.device);
        drive.driver = driver;
        drive.network = network;
        drive.control = driver.and_then(|d| control_of(cx, nets, d, MAX_STAGES));
    }
    if topology.switched_is_source {
        if let Some(node) = topology.switched {
            drive.bootstrap = bootstrap(cx, nets, node);
        }
    }
    drive
}

/// True for the parts that only switch between levels: pulse sources, timers, logic outputs.
pub fn is_switching_input(cx: &Context<'_>, device: DeviceId) -> bool {
    match cx.circuit.devices().get(device).map(|d| d.kind) {
        Some(k) if k.is_timer() || k == Kind::LogicOutput => true,
        Some(Kind::VoltageSource) => cx.is_pulse_source(device),
        _ => false,
    }
}

fn control_of(
    cx: &Context<'_>,
    nets: &NetMap,
    driver: DeviceId,
    stages: usize,
) -> Option<DeviceId> {
    if is_switching_input(cx, driver) {
        return Some(driver);
    }
    if stages == 0 {
        return None;
    }
    if is_controlled_source(cx, driver) {
        // A linear controlled source switches when its input does: follow its control pins
        // (a behavioural `B` source has none, and its levels stay unknown).
        let d = cx.circuit.devices().get(driver)?;
        return [PinRole::CtrlPos, PinRole::CtrlNeg]
            .iter()
            .filter_map(|&role| d.pin(role))
            .filter(|&net| nets::rail(cx, net).is_none())
            .find_map(|net| {
                let (next, _) = walk_back(cx, nets, net, driver);
                control_of(cx, nets, next?, stages - 1)
            });
    }
    let pin = control_pin(cx, driver)?;
    let (next, _) = walk_back(cx, nets, pin, driver);
    control_of(cx, nets, next?, stages - 1)
}

/// E, F, G, H and B elements: their output is set by an expression or another part's
/// voltage or current.
pub fn is_controlled_source(cx: &Context<'_>, device: DeviceId) -> bool {
    cx.circuit
        .devices()
        .get(device)
        .is_some_and(|d| d.kind == Kind::ControlledSource)
}

/// A driver on `net` other than `except` (the part whose input is being traced): a pulse
/// source holding it, a timer's or logic output's `out` pin, a pulse source floating between
/// it and another net, or a controlled source's output.
fn driver_on(cx: &Context<'_>, nets: &NetMap, net: NetId, except: DeviceId) -> Option<DeviceId> {
    if let Some(src) = nets::pulse_source_on(cx, net) {
        return Some(src);
    }
    nets.on(net).iter().find_map(|&(d, role)| {
        if d == except {
            return None;
        }
        let kind = cx.circuit.devices().get(d)?.kind;
        let drives = match kind {
            k if k.is_timer() || k == Kind::LogicOutput => role == PinRole::Out,
            Kind::VoltageSource => cx.is_pulse_source(d),
            Kind::ControlledSource => matches!(role, PinRole::Pos | PinRole::Neg),
            _ => false,
        };
        drives.then_some(d)
    })
}

/// A transistor whose drain or collector sits on `net` (not `except`).
fn pre_driver_on(nets: &NetMap, net: NetId, except: DeviceId) -> Option<DeviceId> {
    nets.on(net).iter().find_map(|&(d, role)| {
        (d != except && matches!(role, PinRole::Drain | PinRole::Collector)).then_some(d)
    })
}

/// Breadth-first from the control pin through resistors, diodes and inductors (not across
/// rails) to the nearest driver; the nearest pre-driver when there is none. The nearest wins:
/// a controlled source on the gate's own net drives it, whatever pulse source lies further on
/// through a feedback or bias resistor.
pub fn walk_back(
    cx: &Context<'_>,
    nets: &NetMap,
    pin: NetId,
    switch: DeviceId,
) -> (Option<DeviceId>, Vec<DeviceId>) {
    // (net, index of the parent entry, device that led here)
    let mut seen: Vec<(NetId, usize, Option<DeviceId>)> = vec![(pin, 0, None)];
    let mut queue = VecDeque::from([(0usize, 0usize)]);
    let mut pre_driver: Option<(DeviceId, usize)> = None;
    let chain = |seen: &[(NetId, usize, Option<DeviceId>)], mut at: usize| {
        let mut out = Vec::new();
        while let Some(&(_, parent, Some(device))) = seen.get(at) {
            out.push(device);
            at = parent;
        }
        out.reverse();
        out
    };
    while let Some((at, depth)) = queue.pop_front() {
        let Some(&(net, _, _)) = seen.get(at) else {
            break;
        };
        if let Some(driver) = driver_on(cx, nets, net, switch) {
            return (Some(driver), chain(&seen, at));
        }
        if pre_driver.is_none() {
            pre_driver = pre_driver_on(nets, net, switch).map(|d| (d, at));
        }
        if nets::rail(cx, net).is_some() || depth >= MAX_DRIVE_PARTS {
            continue;
        }
        for &(device, _) in nets.on(net) {
            let kind = cx
                .circuit
                .devices()
                .get(device)
                .map_or(Kind::Unknown, |d| d.kind);
            if !(matches!(kind, Kind::Resistor | Kind::Inductor) || kind.is_diode_like()) {
                continue;
            }
            let Some(next) = nets::other_end(cx, device, net) else {
                continue;
            };
            if seen.iter().any(|&(n, _, _)| n == next) {
                continue;
            }
            seen.push((next, at, Some(device)));
            queue.push_back((seen.len() - 1, depth + 1));
        }
    }
    match pre_driver {
        Some((d, at)) => (Some(d), chain(&seen, at)),
        None => (None, Vec::new()),
    }
}

/// A capacitor from the switched node to a net whose diode is fed from elsewhere.
fn bootstrap(cx: &Context<'_>, nets: &NetMap, node: NetId) -> Option<Bootstrap> {
    nets.on(node).iter().find_map(|&(cap, _)| {
        if cx.circuit.devices().get(cap)?.kind != Kind::Capacitor {
            return None;
        }
        let top = nets::other_end(cx, cap, node)?;
        if top == node {
            return None;
        }
        nets.on(top).iter().find_map(|&(diode, role)| {
            let d = cx.circuit.devices().get(diode)?;
            if !d.kind.is_diode_like() || role != PinRole::Cathode {
                return None;
            }
            let feed = d.pin(PinRole::Anode)?;
            (feed != node && feed != top).then_some(Bootstrap {
                capacitor: cap,
                diode,
                feed,
            })
        })
    })
}
