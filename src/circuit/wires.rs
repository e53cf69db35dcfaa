//! Zero-volt sources used as ammeters (`Vsense a b 0`, `DC 0`) are wires for every topology
//! question: which pins share a net, which nets dangle, how a timer is wired. The source stays
//! an element for the DC engine (it is still the ammeter); only the topology looks through it.
//!
//! A 0 V source with another role is not a wire: a waveform, or corners from `[supply.NAME]`.

use super::{Circuit, DeviceId, Kind, NetId};
use crate::config::Config;
use crate::netlist::{FlatElement, FlatNetlist, Waveform};
use petgraph::unionfind::UnionFind;

/// Nets joined through 0 V sources.
#[derive(Clone, Debug, Default)]
pub(super) struct Wires {
    /// The 0 V sources, in device order.
    ammeters: Vec<DeviceId>,
    /// For each net: its group in `groups`, `usize::MAX` for a net no ammeter touches.
    group_of: Vec<usize>,
    /// Nets of each group, in net order.
    groups: Vec<Vec<NetId>>,
}

/// True for an independent voltage source fixed at 0 V with no other role.
fn is_ammeter(element: &FlatElement, config: &Config) -> bool {
    if element.letter != 'V' || config.supply(&element.name).is_some() {
        return false;
    }
    let Some(spec) = &element.source else {
        return false;
    };
    matches!(spec.wave, Waveform::Dc) && spec.dc == Some(0.0)
}

impl Wires {
    pub(super) fn build(circuit: &Circuit, netlist: &FlatNetlist, config: &Config) -> Wires {
        let ammeters: Vec<DeviceId> = circuit
            .devices
            .iter()
            .enumerate()
            .filter(|(_, d)| d.kind == Kind::VoltageSource && d.pins.len() == 2)
            .filter(|(_, d)| {
                netlist
                    .elements
                    .get(d.element)
                    .is_some_and(|e| is_ammeter(e, config))
            })
            .map(|(id, _)| id)
            .collect();
        if ammeters.is_empty() {
            return Wires::default();
        }
        let count = circuit.nets.len();
        let mut sets = UnionFind::<usize>::new(count);
        let mut touched = Vec::new();
        for &id in &ammeters {
            if let Some([a, b]) = circuit
                .devices
                .get(id)
                .map(|d| [d.pins[0].net, d.pins[1].net])
            {
                if a < count && b < count {
                    sets.union(a, b);
                    touched.extend([a, b]);
                }
            }
        }
        touched.sort_unstable();
        touched.dedup();
        let mut group_of = vec![usize::MAX; count];
        let mut groups: Vec<Vec<NetId>> = Vec::new();
        let mut group_of_root: std::collections::HashMap<usize, usize> = Default::default();
        for net in touched {
            let root = sets.find(net);
            let group = *group_of_root.entry(root).or_insert_with(|| {
                groups.push(Vec::new());
                groups.len() - 1
            });
            if let (Some(slot), Some(members)) = (group_of.get_mut(net), groups.get_mut(group)) {
                *slot = group;
                members.push(net);
            }
        }
        Wires {
            ammeters,
            group_of,
            groups,
        }
    }

    fn group(&self, net: NetId) -> Option<&[NetId]> {
        let group = *self.group_of.get(net)?;
        self.groups.get(group).map(Vec::as_slice)
    }
}

impl Circuit {
    /// True for a 0 V source that topology reads as a wire (an ammeter).
    pub fn is_ammeter(&self, device: DeviceId) -> bool {
        self.wires.ammeters.binary_search(&device).is_ok()
    }

    /// The nets joined to `net` through 0 V sources, itself included, in net order.
    pub fn wire_nets(&self, net: NetId) -> Vec<NetId> {
        match self.wires.group(net) {
            Some(nets) => nets.to_vec(),
            None => vec![net],
        }
    }

    /// One net standing for every net joined to `net` through 0 V sources (the lowest).
    pub fn wire_of(&self, net: NetId) -> NetId {
        self.wires
            .group(net)
            .and_then(|nets| nets.first().copied())
            .unwrap_or(net)
    }

    /// True when the two nets are one node once 0 V sources are read as wires.
    pub fn same_wire(&self, a: NetId, b: NetId) -> bool {
        a == b || self.wire_of(a) == self.wire_of(b)
    }

    /// Every pin on the nets joined to `net` through 0 V sources, the sources' own pins left
    /// out: what the node really connects.
    pub fn wire_pins(&self, net: NetId) -> Vec<(DeviceId, usize)> {
        let nets = self.wires.group(net).unwrap_or(std::slice::from_ref(&net));
        nets.iter()
            .flat_map(|&n| self.devices_on(n).iter().copied())
            .filter(|&(device, _)| !self.is_ammeter(device))
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use crate::circuit::Circuit;
    use crate::config::Config;
    use crate::netlist::parse_str;

    #[test]
    fn zero_volt_sources_join_nets_for_topology() {
        let deck = "ammeters\n\
                    V1 vcc 0 9\n\
                    R1 vcc a 1k\n\
                    Vsense a b 0\n\
                    Vm b c DC 0\n\
                    C1 c 0 1u\n\
                    Vstep d 0 PULSE(0 5 0 1n 1n 1m 2m)\n\
                    R2 d 0 1k\n\
                    .end\n";
        let (netlist, _, _) = parse_str("t.cir", deck);
        let config = Config::default();
        let (circuit, _) = Circuit::build(&netlist, &config);
        let net = |n: &str| circuit.net_named(n).unwrap();
        assert!(circuit.same_wire(net("a"), net("c")));
        assert!(!circuit.same_wire(net("vcc"), net("a")));
        assert!(!circuit.same_wire(net("d"), net("0")));
        assert_eq!(circuit.wire_nets(net("b")).len(), 3);
        // R1 and C1 are what the node joins; the ammeters are wires.
        let pins = circuit.wire_pins(net("b"));
        assert_eq!(pins.len(), 2);
        assert!(circuit.is_ammeter(circuit.device_named("Vsense").unwrap()));
        assert!(!circuit.is_ammeter(circuit.device_named("V1").unwrap()));
        assert!(!circuit.is_ammeter(circuit.device_named("Vstep").unwrap()));
    }
}
