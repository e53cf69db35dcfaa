//! The switches whose drive has no return path to their own source: `supply-unreferenced`
//! reports them; the drive-strength rules leave such switches to it, since the gate voltage the
//! DC engine finds for them means nothing. The sections themselves are the circuit's
//! (`Circuit::dc_sections`).

use crate::circuit::{Device, DeviceId, Kind, NetId, PinRole};
use crate::rules::support::hygiene::Tracer;
use crate::rules::RuleContext;
use petgraph::unionfind::UnionFind;

/// The driver of a switch's gate or base: from the switch analysis when it ran, else the first
/// active output (or pulse source) the gate network reaches.
pub fn gate_driver(
    cx: &RuleContext<'_>,
    tracer: &Tracer<'_, '_>,
    id: DeviceId,
    device: &Device,
) -> Option<(DeviceId, NetId)> {
    let gate = device.pin(PinRole::Gate).or(device.pin(PinRole::Base))?;
    let source = device
        .pin(PinRole::Source)
        .or(device.pin(PinRole::Emitter))?;
    if let Some(facts) = cx.analysis.switches.iter().find(|s| s.device == id) {
        let driver = facts.driver.as_ref()?.device;
        let net = cx
            .circuit
            .devices()
            .get(driver)?
            .pins
            .first()
            .map(|p| p.net)?;
        return Some((driver, net));
    }
    let trace = tracer.trace(gate, &[source]);
    let active = trace
        .drivers
        .iter()
        .chain(trace.may_float.iter())
        .find(|(d, role)| {
            *d != id
                && !matches!(role, PinRole::Vcc | PinRole::Gnd)
                && cx
                    .circuit
                    .devices()
                    .get(*d)
                    .is_some_and(|x| x.kind != Kind::Unknown)
        });
    if let Some(&(driver, _)) = active {
        let net = trace.nets.first().copied().unwrap_or(gate);
        return Some((driver, net));
    }
    trace
        .fixed
        .iter()
        .find_map(|&(net, source_dev)| source_dev.map(|s| (s, net)))
        .filter(|(_, net)| *net != source)
}

/// A switch whose gate driver is referenced to a net its own source never meets at DC.
pub struct Unreferenced {
    pub switch: DeviceId,
    pub driver: DeviceId,
    pub source: NetId,
    pub reference: NetId,
}

pub fn unreferenced_drives(cx: &RuleContext<'_>, apart: &UnionFind<usize>) -> Vec<Unreferenced> {
    let tracer = Tracer::new(cx);
    let mut found = Vec::new();
    for (id, device) in cx.circuit.devices().iter().enumerate() {
        if !device.kind.is_switch_transistor() {
            continue;
        }
        let Some(source) = device.pin(PinRole::Source).or(device.pin(PinRole::Emitter)) else {
            continue;
        };
        let Some((driver, driven)) = gate_driver(cx, &tracer, id, device) else {
            continue;
        };
        let Some(reference) = cx.circuit.driver_reference(driver, driven) else {
            continue;
        };
        if apart.find(source) != apart.find(reference) {
            found.push(Unreferenced {
                switch: id,
                driver,
                source,
                reference,
            });
        }
    }
    found
}

/// Switches whose drive has no return path to their own source (this rule's finding): the
/// gate voltage the DC engine finds for them means nothing, so the drive-strength rules leave
/// them to this one.
pub fn switches_without_reference(cx: &RuleContext<'_>) -> Vec<DeviceId> {
    let (_, Some(apart)) = cx.circuit.dc_sections(cx.netlist) else {
        return Vec::new();
    };
    if cx.circuit.supplied_sections(&apart) <= 1 {
        return Vec::new();
    }
    let mut ids: Vec<DeviceId> = unreferenced_drives(cx, &apart)
        .into_iter()
        .map(|u| u.switch)
        .collect();
    ids.sort_unstable();
    ids
}
