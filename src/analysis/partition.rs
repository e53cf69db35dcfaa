//! Splits the circuit into small DC sub-networks so that every solve stays local.
//!
//! A net held by an ideal voltage source against ground (a supply rail, a pulse source's output)
//! has a potential fixed by the state, whatever else hangs on it; the same holds for ground. Such
//! nets are boundaries: two channels that share only the 12 V rail and ground are solved apart.
//! Capacitors are open at DC and a timer's pins are independent stand-ins, so neither joins the
//! nets on its two sides. What remains is grouped by union–find.

use crate::circuit::{Circuit, DeviceId, Kind, NetId, PinRole};
use crate::netlist::FlatNetlist;
use petgraph::unionfind::UnionFind;

/// What holds a fixed net at its potential.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Fixed {
    Ground,
    /// The device is an independent voltage source from this net to ground; `sign` is +1 when
    /// the net is its positive terminal, −1 when it is the negative one.
    Source {
        device: DeviceId,
        sign: f64,
    },
}

/// One sub-network: the nets free to move and every device that touches them.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Component {
    pub nets: Vec<NetId>,
    pub devices: Vec<DeviceId>,
}

#[derive(Clone, Debug, Default)]
pub struct Partition {
    pub components: Vec<Component>,
    /// For each net: the component it belongs to (`None` for fixed nets).
    pub net_component: Vec<Option<usize>>,
    /// For each net: what fixes it, when something does.
    pub fixed: Vec<Option<Fixed>>,
    /// For each device: the components it takes part in (a timer may sit in several).
    pub device_components: Vec<Vec<usize>>,
}

/// Devices whose terminals do not conduct into each other at DC.
fn joins_its_nets(kind: Kind) -> bool {
    !matches!(
        kind,
        Kind::Capacitor
            | Kind::Timer555
            | Kind::Timer555Cmos
            | Kind::LogicOutput
            | Kind::Coupling
            | Kind::TransmissionLine
            | Kind::Unknown
    )
}

pub fn partition(circuit: &Circuit, netlist: &FlatNetlist) -> Partition {
    let nets = circuit.nets().len();
    let mut fixed: Vec<Option<Fixed>> = circuit
        .nets()
        .iter()
        .map(|n| n.is_ground.then_some(Fixed::Ground))
        .collect();
    for (id, device) in circuit.devices().iter().enumerate() {
        if device.kind != Kind::VoltageSource {
            continue;
        }
        let (Some(pos), Some(neg)) = (device.pin(PinRole::Pos), device.pin(PinRole::Neg)) else {
            continue;
        };
        let known = netlist
            .elements
            .get(device.element)
            .and_then(|e| e.source.as_ref())
            .is_some();
        if !known {
            continue;
        }
        let pos_ground = matches!(fixed.get(pos), Some(Some(Fixed::Ground)));
        let neg_ground = matches!(fixed.get(neg), Some(Some(Fixed::Ground)));
        if neg_ground && !pos_ground && fixed[pos].is_none() {
            fixed[pos] = Some(Fixed::Source {
                device: id,
                sign: 1.0,
            });
        } else if pos_ground && !neg_ground && fixed[neg].is_none() {
            fixed[neg] = Some(Fixed::Source {
                device: id,
                sign: -1.0,
            });
        }
    }

    let mut uf = UnionFind::new(nets);
    for device in circuit.devices() {
        if !joins_its_nets(device.kind) {
            continue;
        }
        let mut free = device
            .pins
            .iter()
            .map(|p| p.net)
            .filter(|&n| n < nets && fixed[n].is_none());
        if let Some(first) = free.next() {
            for other in free {
                uf.union(first, other);
            }
        }
    }

    let mut root_component = vec![usize::MAX; nets];
    let mut net_component = vec![None; nets];
    let mut components: Vec<Component> = Vec::new();
    for net in 0..nets {
        if fixed[net].is_some() {
            continue;
        }
        let root = uf.find_mut(net);
        if root_component[root] == usize::MAX {
            root_component[root] = components.len();
            components.push(Component::default());
        }
        let c = root_component[root];
        components[c].nets.push(net);
        net_component[net] = Some(c);
    }

    let mut device_components = vec![Vec::new(); circuit.devices().len()];
    for (id, device) in circuit.devices().iter().enumerate() {
        let mut touched: Vec<usize> = device
            .pins
            .iter()
            .filter_map(|p| net_component.get(p.net).copied().flatten())
            .collect();
        touched.sort_unstable();
        touched.dedup();
        if touched.is_empty() && !device.pins.is_empty() && device.kind != Kind::VoltageSource {
            // Everything on fixed nets (a resistor across the rail): a component of its own.
            touched.push(components.len());
            components.push(Component::default());
        }
        for &c in &touched {
            components[c].devices.push(id);
        }
        device_components[id] = touched;
    }
    Partition {
        components,
        net_component,
        fixed,
        device_components,
    }
}
