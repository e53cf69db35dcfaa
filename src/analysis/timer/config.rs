//! Which configuration a 555 is wired in, read from the nets on its pins.
//!
//! - **Astable**: THR and TRIG share the timing-capacitor net, and something besides the
//!   capacitor (a resistor, pot or diode) charges and discharges it. The capacitor runs between
//!   the two thresholds for ever.
//! - **Monostable**: a capacitor on THR, TRIG on another net (driven from elsewhere), and DIS on
//!   the THR net or joined to it by one resistor, pot or diode, so that the discharge pin holds
//!   the capacitor empty until a trigger.
//! - **Unknown**: anything else (a 555 used as a comparator, a Schmitt trigger, a driver).
//!
//! Pins that meet through 0 V sources (ammeters such as `Vsense thr trig 0`) share a node: the
//! topology reads those sources as wires (`Circuit::same_wire`); the DC engine keeps them.

use crate::analysis::facts::TimerMode;
use crate::analysis::partition::Fixed;
use crate::analysis::states::Context;
use crate::circuit::{Device, DeviceId, Kind, NetId, PinRole};

/// Every pin on each net, built once from the devices (cheap, and independent of the graph's
/// own indexes).
pub struct NetIndex {
    pins: Vec<Vec<(DeviceId, PinRole)>>,
}

impl NetIndex {
    pub fn new(cx: &Context<'_>) -> NetIndex {
        let mut pins = vec![Vec::new(); cx.circuit.nets().len()];
        for (id, device) in cx.circuit.devices().iter().enumerate() {
            for pin in &device.pins {
                if let Some(list) = pins.get_mut(pin.net) {
                    list.push((id, pin.role));
                }
            }
        }
        NetIndex { pins }
    }

    pub fn on(&self, net: NetId) -> &[(DeviceId, PinRole)] {
        self.pins.get(net).map(Vec::as_slice).unwrap_or(&[])
    }
}

/// A timer's pins, its configuration and the parts that time it.
#[derive(Clone, Debug, PartialEq)]
pub struct Setup {
    pub device: DeviceId,
    pub mode: TimerMode,
    pub thr: Option<NetId>,
    pub trig: Option<NetId>,
    pub dis: Option<NetId>,
    pub ctrl: Option<NetId>,
    pub out: Option<NetId>,
    /// The net the timing capacitor charges (THR's net) when a capacitor sits on it.
    pub timing_net: Option<NetId>,
    /// Capacitors from the timing net to a fixed net, largest first, and their sum.
    pub capacitors: Vec<DeviceId>,
    pub capacitance: Option<f64>,
    /// Partition component of the timing net (the sub-network that times the phases).
    pub component: Option<usize>,
    /// Pots that move the timing or the thresholds.
    pub pots: Vec<DeviceId>,
}

/// Does the device conduct at DC between its pins (a path the capacitor can charge through)?
fn conducts(kind: Kind) -> bool {
    matches!(kind, Kind::Resistor | Kind::Potentiometer) || kind.is_diode_like()
}

/// A capacitor's value: its part data, else the element's value.
pub fn capacitance(cx: &Context<'_>, device: &Device) -> Option<f64> {
    crate::analysis::part_values::capacitance(cx.netlist, device)
}

fn is_fixed(cx: &Context<'_>, net: NetId) -> bool {
    matches!(cx.partition.fixed.get(net), Some(Some(_)))
}

/// The net at a two-terminal device's other end.
fn other_net(device: &Device, net: NetId) -> Option<NetId> {
    if device.pins.len() != 2 {
        return None;
    }
    let (a, b) = (device.pins[0].net, device.pins[1].net);
    if a == net {
        Some(b)
    } else if b == net {
        Some(a)
    } else {
        None
    }
}

/// True when one conducting part (resistor, pot, diode) joins the two nodes (0 V sources read
/// as wires).
fn joined(cx: &Context<'_>, index: &NetIndex, a: NetId, b: NetId) -> bool {
    node_pins(cx, index, a).iter().any(|&(d, _)| {
        let device = &cx.circuit.devices()[d];
        conducts(device.kind) && device.pins.iter().any(|p| cx.circuit.same_wire(p.net, b))
    })
}

/// Pins on the node `net` belongs to once 0 V sources (ammeters) are read as wires, the
/// ammeters' own pins left out.
fn node_pins(cx: &Context<'_>, index: &NetIndex, net: NetId) -> Vec<(DeviceId, PinRole)> {
    cx.circuit
        .wire_nets(net)
        .into_iter()
        .flat_map(|n| index.on(n).iter().copied())
        .filter(|&(d, _)| !cx.circuit.is_ammeter(d))
        .collect()
}

/// For a two-terminal device on the node of `net`: the net at its other end, when that lies on
/// another node.
fn far_end(cx: &Context<'_>, device: &Device, net: NetId) -> Option<NetId> {
    let [a, b] = device.pins.as_slice() else {
        return None;
    };
    let (here_a, here_b) = (
        cx.circuit.same_wire(a.net, net),
        cx.circuit.same_wire(b.net, net),
    );
    match (here_a, here_b) {
        (true, false) => Some(b.net),
        (false, true) => Some(a.net),
        _ => None,
    }
}

pub fn recognise(cx: &Context<'_>, index: &NetIndex, id: DeviceId) -> Setup {
    let device = &cx.circuit.devices()[id];
    let thr = device.pin(PinRole::Thr);
    let trig = device.pin(PinRole::Trig);
    let dis = device.pin(PinRole::Dis);
    let mut setup = Setup {
        device: id,
        mode: TimerMode::Unknown,
        thr,
        trig,
        dis,
        ctrl: device.pin(PinRole::Ctrl),
        out: device.pin(PinRole::Out),
        timing_net: None,
        capacitors: Vec::new(),
        capacitance: None,
        component: None,
        pots: Vec::new(),
    };
    let Some(thr) = thr.filter(|&n| !is_fixed(cx, n)) else {
        return setup;
    };
    // Topology reads 0 V sources (ammeters) as wires: pins that meet through one share a node.
    let on_thr = node_pins(cx, index, thr);
    let mut caps: Vec<(DeviceId, f64)> = on_thr
        .iter()
        .filter(|&&(d, _)| d != id)
        .filter_map(|&(d, _)| {
            let c = &cx.circuit.devices()[d];
            if c.kind != Kind::Capacitor {
                return None;
            }
            let far = far_end(cx, c, thr)?;
            is_fixed(cx, far).then_some(())?;
            Some((d, capacitance(cx, c)?))
        })
        .collect();
    caps.sort_by(|a, b| b.1.total_cmp(&a.1).then(a.0.cmp(&b.0)));
    caps.dedup_by_key(|c| c.0);
    if caps.is_empty() {
        return setup;
    }
    setup.timing_net = Some(thr);
    setup.capacitance = Some(caps.iter().map(|c| c.1).sum());
    setup.capacitors = caps.iter().map(|c| c.0).collect();
    setup.component = cx.partition.net_component.get(thr).copied().flatten();

    let charged = on_thr.iter().any(|&(d, _)| {
        d != id
            && conducts(cx.circuit.devices()[d].kind)
            && far_end(cx, &cx.circuit.devices()[d], thr).is_some()
    });
    let same = |a: NetId, b: NetId| cx.circuit.same_wire(a, b);
    let dis_on_timing = dis.is_some_and(|d| same(d, thr) || joined(cx, index, d, thr));
    setup.mode = match trig {
        Some(t) if same(t, thr) && charged => TimerMode::Astable,
        Some(t) if !same(t, thr) && dis_on_timing => TimerMode::Monostable,
        _ => TimerMode::Unknown,
    };

    let mut pots = Vec::new();
    let mut components = Vec::new();
    components.extend(setup.component);
    if let Some(ctrl) = setup.ctrl {
        components.extend(cx.partition.net_component.get(ctrl).copied().flatten());
    }
    for c in components {
        if let Some(component) = cx.partition.components.get(c) {
            pots.extend(cx.pots(component));
        }
    }
    pots.sort_unstable();
    pots.dedup();
    setup.pots = pots;
    setup
}

/// True when the net carries nothing but this timer's pin and capacitors to fixed nets (a
/// bypassed or open control pin: the internal ladder alone sets the thresholds).
pub fn only_capacitors(cx: &Context<'_>, index: &NetIndex, net: NetId, timer: DeviceId) -> bool {
    index.on(net).iter().all(|&(d, _)| {
        let device = &cx.circuit.devices()[d];
        d == timer
            || (device.kind == Kind::Capacitor
                && other_net(device, net).is_some_and(|far| is_fixed(cx, far)))
    })
}

/// What fixes a net, when a supply, pulse source or ground does.
pub fn fixed_by(cx: &Context<'_>, net: NetId) -> Option<Fixed> {
    cx.partition.fixed.get(net).copied().flatten()
}

/// Two-terminal resistors and pots on a net, with the net at their other end.
pub fn resistors_on(cx: &Context<'_>, index: &NetIndex, net: NetId) -> Vec<(DeviceId, NetId)> {
    let mut out = Vec::new();
    for &(d, role) in index.on(net) {
        let device = &cx.circuit.devices()[d];
        match device.kind {
            Kind::Resistor => {
                if let Some(far) = other_net(device, net) {
                    out.push((d, far));
                }
            }
            // A pot used as a series element: any other pin's net.
            Kind::Potentiometer => {
                for p in &device.pins {
                    if p.net != net && p.role != role {
                        out.push((d, p.net));
                    }
                }
            }
            _ => {}
        }
    }
    out.sort_unstable();
    out.dedup();
    out
}
