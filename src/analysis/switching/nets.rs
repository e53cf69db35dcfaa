//! What the switching analysis needs to know about nets: which pins sit on each net, and which
//! nets are rails (ground or a DC supply) with their potentials.

use crate::analysis::partition::Fixed;
use crate::analysis::states::{Context, Corner};
use crate::circuit::{DeviceId, Kind, NetId, PinRole};
use std::collections::BTreeMap;

/// The pins on each net, built once in one pass over the devices, and the windings each `K`
/// element couples.
pub struct NetMap {
    pins: Vec<Vec<(DeviceId, PinRole)>>,
    /// Inductor → the inductors a `K` element couples it with.
    coupled: BTreeMap<DeviceId, Vec<DeviceId>>,
}

impl NetMap {
    pub fn new(cx: &Context<'_>) -> NetMap {
        let mut pins = vec![Vec::new(); cx.circuit.nets().len()];
        let mut has_coupling = false;
        for (id, device) in cx.circuit.devices().iter().enumerate() {
            has_coupling |= device.kind == Kind::Coupling;
            for pin in &device.pins {
                if let Some(list) = pins.get_mut(pin.net) {
                    list.push((id, pin.role));
                }
            }
        }
        let coupled = if has_coupling {
            couplings(cx)
        } else {
            BTreeMap::new()
        };
        NetMap { pins, coupled }
    }

    /// Every (device, role) on a net, in device order.
    pub fn on(&self, net: NetId) -> &[(DeviceId, PinRole)] {
        self.pins.get(net).map_or(&[], Vec::as_slice)
    }

    /// The windings a `K` element couples with `inductor`, in device order.
    pub fn coupled_with(&self, inductor: DeviceId) -> &[DeviceId] {
        self.coupled.get(&inductor).map_or(&[], Vec::as_slice)
    }
}

/// Inductor → coupled inductors, from the `K` elements (their references are flattened paths).
fn couplings(cx: &Context<'_>) -> BTreeMap<DeviceId, Vec<DeviceId>> {
    let by_path: BTreeMap<String, DeviceId> = cx
        .circuit
        .devices()
        .iter()
        .enumerate()
        .filter(|(_, d)| d.kind == Kind::Inductor)
        .filter_map(|(id, d)| {
            let e = cx.netlist.elements.get(d.element)?;
            Some((e.path.to_ascii_lowercase(), id))
        })
        .collect();
    let mut out: BTreeMap<DeviceId, Vec<DeviceId>> = BTreeMap::new();
    for d in cx
        .circuit
        .devices()
        .iter()
        .filter(|d| d.kind == Kind::Coupling)
    {
        let Some(e) = cx.netlist.elements.get(d.element) else {
            continue;
        };
        let windings: Vec<DeviceId> = e
            .refs
            .iter()
            .filter_map(|r| by_path.get(&r.to_ascii_lowercase()).copied())
            .collect();
        for &a in &windings {
            for &b in windings.iter().filter(|&&b| b != a) {
                let list = out.entry(a).or_default();
                if !list.contains(&b) {
                    list.push(b);
                }
            }
        }
    }
    for list in out.values_mut() {
        list.sort_unstable();
    }
    out
}

/// A net whose potential a DC supply or the reference fixes.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Rail {
    pub net: NetId,
    /// The supply holding it (`None` for ground).
    pub supply: Option<DeviceId>,
    /// +1 when the net is the supply's positive terminal, −1 when it is the negative one.
    pub sign: f64,
    /// Potential at the nominal corner.
    pub nominal: f64,
}

/// The rail on `net`, if it is one. Pulse sources fix their nets too, but those are drives,
/// not rails.
pub fn rail(cx: &Context<'_>, net: NetId) -> Option<Rail> {
    match cx.partition.fixed.get(net).copied().flatten()? {
        Fixed::Ground => Some(Rail {
            net,
            supply: None,
            sign: 1.0,
            nominal: 0.0,
        }),
        Fixed::Source { device, sign } => {
            let supply = cx.supply(device)?;
            Some(Rail {
                net,
                supply: Some(device),
                sign,
                nominal: sign * supply.nominal,
            })
        }
    }
}

/// Potential of a rail at a corner.
pub fn rail_at(cx: &Context<'_>, rail: &Rail, corner: Corner) -> f64 {
    match rail.supply.and_then(|d| cx.supply(d)) {
        Some(s) => rail.sign * s.at(corner),
        None => 0.0,
    }
}

/// The pulse source fixing `net`, if one does.
pub fn pulse_source_on(cx: &Context<'_>, net: NetId) -> Option<DeviceId> {
    match cx.partition.fixed.get(net).copied().flatten()? {
        Fixed::Source { device, .. } if cx.is_pulse_source(device) => Some(device),
        _ => None,
    }
}

/// The two pins of a two-terminal device, in node order.
pub fn two_pins(cx: &Context<'_>, device: DeviceId) -> Option<(NetId, NetId)> {
    let d = cx.circuit.devices().get(device)?;
    match d.pins.as_slice() {
        [a, b] => Some((a.net, b.net)),
        _ => None,
    }
}

/// The other end of a two-terminal device from `net`.
pub fn other_end(cx: &Context<'_>, device: DeviceId, net: NetId) -> Option<NetId> {
    let (a, b) = two_pins(cx, device)?;
    if a == net {
        Some(b)
    } else if b == net {
        Some(a)
    } else {
        None
    }
}

/// Two-terminal parts a load branch may run through: resistors, inductors and load parts.
pub fn is_branch_part(kind: Kind) -> bool {
    matches!(kind, Kind::Resistor | Kind::Inductor) || kind.is_load()
}
