//! Which parts of a board share a DC reference: sections of nets joined by DC paths, and the
//! switches whose drive has no return path to their own source. `supply-unreferenced` reports
//! them; the drive-strength rules leave such switches to it, since the gate voltage the DC
//! engine finds for them means nothing.

use crate::circuit::{Device, DeviceId, Kind, NetId, PinRole};
use crate::rules::hygiene_util::Tracer;
use crate::rules::RuleContext;
use petgraph::unionfind::UnionFind;

/// Whether a pin conducts DC to the device's other conducting pins.
pub fn joins(kind: Kind, letter: char, role: PinRole) -> bool {
    match kind {
        Kind::Capacitor | Kind::CurrentSource | Kind::Coupling => false,
        Kind::Nmos | Kind::Pmos => role != PinRole::Gate,
        Kind::ControlledSource if matches!(letter, 'F' | 'G') => false,
        Kind::ControlledSource | Kind::Switch => {
            !matches!(role, PinRole::CtrlPos | PinRole::CtrlNeg)
        }
        // Outputs and the control ladder are tied to the supply pins; TRIG, THR and RESET are
        // comparator inputs.
        Kind::Timer555 | Kind::Timer555Cmos => matches!(
            role,
            PinRole::Gnd | PinRole::Vcc | PinRole::Out | PinRole::Dis | PinRole::Ctrl
        ),
        _ => true,
    }
}

/// Nets joined by DC-conducting pins: `(all, apart)`, where `apart` leaves out the passive parts
/// on a gate or base net (a pull-down from the gate to a switch's source is not a shared ground).
/// `apart` is `None` when the circuit has no transistor switch.
pub fn sections(cx: &RuleContext<'_>) -> (UnionFind<usize>, Option<UnionFind<usize>>) {
    let nets = cx.circuit.nets().len();
    let mut gate_net = vec![false; nets];
    let mut any_switch = false;
    for device in cx
        .circuit
        .devices()
        .iter()
        .filter(|d| d.kind.is_switch_transistor())
    {
        any_switch = true;
        for pin in device
            .pins
            .iter()
            .filter(|p| matches!(p.role, PinRole::Gate | PinRole::Base))
        {
            if let Some(flag) = gate_net.get_mut(pin.net) {
                *flag = true;
            }
        }
    }
    let mut sets = UnionFind::<usize>::new(nets);
    let mut held_back = Vec::new();
    for device in cx.circuit.devices() {
        let passive = matches!(
            device.kind,
            Kind::Resistor | Kind::Potentiometer | Kind::Inductor
        ) || device.kind.is_diode_like();
        if any_switch
            && passive
            && device
                .pins
                .iter()
                .any(|p| gate_net.get(p.net).copied().unwrap_or(false))
        {
            held_back.push(device);
            continue;
        }
        join(cx, device, &mut sets);
    }
    if !any_switch {
        return (sets, None);
    }
    let apart = sets.clone();
    for device in held_back {
        join(cx, device, &mut sets);
    }
    (sets, Some(apart))
}

pub fn join(cx: &RuleContext<'_>, device: &Device, sets: &mut UnionFind<usize>) {
    let letter = cx
        .netlist
        .elements
        .get(device.element)
        .map_or('?', |e| e.letter);
    let mut first = None;
    for pin in device
        .pins
        .iter()
        .filter(|p| joins(device.kind, letter, p.role))
    {
        match first {
            None => first = Some(pin.net),
            Some(f) => {
                sets.union(f, pin.net);
            }
        }
    }
}

/// How many sections hold the reference or a voltage source (counting stops at two).
pub fn supplied_sections(cx: &RuleContext<'_>, sets: &UnionFind<usize>) -> usize {
    let mut first = None;
    let grounds = cx
        .circuit
        .nets()
        .iter()
        .enumerate()
        .filter(|(_, n)| n.is_ground)
        .map(|(i, _)| i);
    let sources = cx
        .circuit
        .devices()
        .iter()
        .filter(|d| d.kind == Kind::VoltageSource)
        .flat_map(|d| d.pins.iter().map(|p| p.net));
    for net in grounds.chain(sources) {
        let root = sets.find(net);
        match first {
            None => first = Some(root),
            Some(r) if r != root => return 2,
            Some(_) => {}
        }
    }
    usize::from(first.is_some())
}

/// The net a driver's output is referenced to.
pub fn driver_reference(cx: &RuleContext<'_>, id: DeviceId, driven: NetId) -> Option<NetId> {
    let device = cx.circuit.devices().get(id)?;
    match device.kind {
        k if k.is_timer() => device.pin(PinRole::Gnd),
        Kind::LogicOutput => device
            .pin(PinRole::Gnd)
            .or_else(|| cx.circuit.nets().iter().position(|n| n.is_ground)),
        Kind::VoltageSource => device.pins.iter().map(|p| p.net).find(|&n| n != driven),
        Kind::ControlledSource => device.pin(PinRole::Neg),
        Kind::Nmos | Kind::Pmos => device.pin(PinRole::Source),
        Kind::Npn | Kind::Pnp => device.pin(PinRole::Emitter),
        _ => None,
    }
}

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
        let Some(reference) = driver_reference(cx, driver, driven) else {
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
    let (_, Some(apart)) = sections(cx) else {
        return Vec::new();
    };
    if supplied_sections(cx, &apart) <= 1 {
        return Vec::new();
    }
    let mut ids: Vec<DeviceId> = unreferenced_drives(cx, &apart)
        .into_iter()
        .map(|u| u.switch)
        .collect();
    ids.sort_unstable();
    ids
}
