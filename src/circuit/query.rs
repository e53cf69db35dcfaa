//! Queries over the circuit graph. Each is answered from an index or by a walk over the part of
//! the graph it concerns, never by a scan of every device.

use super::graph::GraphNode;
use super::{Circuit, Device, DeviceId, Kind, Net, NetId};
use petgraph::graph::NodeIndex;
use std::collections::{HashMap, HashSet, VecDeque};

/// A run of two-terminal devices joined through nets that connect only those two devices.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SeriesChain {
    /// The devices in order, starting with the one the walk started from.
    pub devices: Vec<DeviceId>,
    /// The nets along the chain, `devices.len() + 1` of them: the start net, the inner nets
    /// (degree 2), and the end net.
    pub nets: Vec<NetId>,
    /// True when the chain came back to a net or device it had already passed (a ring).
    pub closed: bool,
}

impl SeriesChain {
    /// The net where the chain stops (a junction, a rail, ground or a dangling end).
    pub fn end(&self) -> NetId {
        self.nets.last().copied().unwrap_or_default()
    }
}

impl Circuit {
    pub fn net(&self, id: NetId) -> Option<&Net> {
        self.nets.get(id)
    }

    pub fn device(&self, id: DeviceId) -> Option<&Device> {
        self.devices.get(id)
    }

    /// The net of this name, case-insensitive; every ground alias names the ground net.
    pub fn net_named(&self, name: &str) -> Option<NetId> {
        let ground = self.ground.filter(|_| {
            self.ground_aliases
                .iter()
                .any(|a| a.eq_ignore_ascii_case(name))
        });
        ground.or_else(|| self.net_names.get(&self.nets, name))
    }

    /// The reference net (all ground aliases merged), when the circuit has one.
    pub fn ground(&self) -> Option<NetId> {
        self.ground
    }

    /// Every pin on a net: (device, index of the pin on that device).
    pub fn devices_on(&self, net: NetId) -> &[(DeviceId, usize)] {
        let Some(&start) = self.pin_offsets.get(net) else {
            return &[];
        };
        let end = net
            .checked_add(1)
            .and_then(|next| self.pin_offsets.get(next))
            .copied()
            .unwrap_or(start);
        self.pins_on.get(start..end).unwrap_or(&[])
    }

    /// The number of pins on a net (a device with both pins on it counts twice).
    pub fn net_degree(&self, net: NetId) -> usize {
        self.devices_on(net).len()
    }

    /// True for devices with exactly two pins (R, C, L, diodes, loads, sources...).
    pub fn is_two_terminal(&self, device: DeviceId) -> bool {
        self.devices
            .get(device)
            .is_some_and(|d| d.pins.len() == 2 && d.kind != Kind::Coupling)
    }

    /// Two-terminal devices with one pin on `a` and the other on `b`, either way round, in
    /// device order. With `a == b`: the devices shorted on that net.
    pub fn elements_between(&self, a: NetId, b: NetId) -> Vec<DeviceId> {
        let (near, far) = if self.net_degree(a) <= self.net_degree(b) {
            (a, b)
        } else {
            (b, a)
        };
        let mut found: Vec<DeviceId> = self
            .devices_on(near)
            .iter()
            .map(|&(device, _)| device)
            .filter(|&device| {
                self.is_two_terminal(device) && self.other_end(device, near) == Some(far)
            })
            .collect();
        found.sort_unstable();
        found.dedup();
        found
    }

    /// For a two-terminal device with a pin on `net`: the net on its other pin.
    pub fn other_end(&self, device: DeviceId, net: NetId) -> Option<NetId> {
        if !self.is_two_terminal(device) {
            return None;
        }
        match self.devices.get(device)?.pins.as_slice() {
            [first, second] if first.net == net => Some(second.net),
            [first, second] if second.net == net => Some(first.net),
            _ => None,
        }
    }

    /// Walks from `start_net` through `from_device` and on through every net that joins exactly
    /// two pins, while the next device is two-terminal. Stops at a junction, at ground, at a
    /// dangling end or where the walk comes round again. `None` when `from_device` is not a
    /// two-terminal device on `start_net`.
    pub fn series_chain(&self, start_net: NetId, from_device: DeviceId) -> Option<SeriesChain> {
        let mut net = start_net;
        let mut device = from_device;
        let mut chain = SeriesChain {
            devices: vec![device],
            nets: vec![start_net],
            closed: false,
        };
        let mut seen = HashSet::from([device]);
        loop {
            let next = self.other_end(device, net)?;
            chain.nets.push(next);
            if next == start_net {
                chain.closed = true;
                break;
            }
            if Some(next) == self.ground || self.net_degree(next) != 2 {
                break;
            }
            let Some(&(onward, _)) = self.devices_on(next).iter().find(|(d, _)| *d != device)
            else {
                break;
            };
            if !self.is_two_terminal(onward) {
                break;
            }
            if !seen.insert(onward) {
                chain.closed = true;
                break;
            }
            chain.devices.push(onward);
            device = onward;
            net = next;
        }
        Some(chain)
    }

    /// A shortest path of devices from net `a` to net `b` (breadth first), passing only
    /// through devices that `through` accepts and that are not in `avoid`. A device is a hub:
    /// entering it at any pin leaves it at any other. `Some(vec![])` when `a == b`.
    pub fn path_between(
        &self,
        a: NetId,
        b: NetId,
        avoid: &[DeviceId],
        through: impl Fn(&Device) -> bool,
    ) -> Option<Vec<DeviceId>> {
        if a >= self.nets.len() || b >= self.nets.len() {
            return None;
        }
        if a == b {
            return Some(Vec::new());
        }
        let avoid: HashSet<DeviceId> = avoid.iter().copied().collect();
        let graph = self.graph();
        let start = NodeIndex::new(a);
        let goal = NodeIndex::new(b);
        let mut came_from: HashMap<NodeIndex, NodeIndex> = HashMap::new();
        let mut queue = VecDeque::from([start]);
        came_from.insert(start, start);
        while let Some(node) = queue.pop_front() {
            if node == goal {
                return Some(self.devices_back(&came_from, start, goal));
            }
            for next in graph.neighbors(node) {
                if came_from.contains_key(&next) {
                    continue;
                }
                if let Some(GraphNode::Device(id)) = graph.node_weight(next) {
                    let usable = !avoid.contains(id) && self.devices.get(*id).is_some_and(&through);
                    if !usable {
                        continue;
                    }
                }
                came_from.insert(next, node);
                queue.push_back(next);
            }
        }
        None
    }

    fn devices_back(
        &self,
        came_from: &HashMap<NodeIndex, NodeIndex>,
        start: NodeIndex,
        goal: NodeIndex,
    ) -> Vec<DeviceId> {
        let mut path = Vec::new();
        let mut node = goal;
        while node != start {
            if let Some(GraphNode::Device(id)) = self.graph().node_weight(node) {
                path.push(*id);
            }
            match came_from.get(&node) {
                Some(&previous) => node = previous,
                None => break,
            }
        }
        path.reverse();
        path
    }

    /// The nets connected to `net` through any device (itself included), in net order.
    pub fn connected_component(&self, net: NetId) -> &[NetId] {
        let Some(&c) = self.component.get(net) else {
            return &[];
        };
        let start = self.component_offsets.get(c).copied().unwrap_or(0);
        let end = self.component_offsets.get(c + 1).copied().unwrap_or(start);
        self.component_nets.get(start..end).unwrap_or(&[])
    }

    /// A label shared by all nets of one connected component.
    pub fn component_of(&self, net: NetId) -> Option<usize> {
        self.component.get(net).copied()
    }

    /// A label shared by all nets joined through DC-conducting paths.
    pub fn dc_component_of(&self, net: NetId) -> Option<usize> {
        self.dc_component.get(net).copied()
    }

    /// True when a DC path (through resistors, inductors, sources, junctions, channels — not
    /// capacitors, current sources, gates or control inputs) joins `net` to ground.
    pub fn has_dc_path_to_ground(&self, net: NetId) -> bool {
        match (self.ground, self.dc_component_of(net)) {
            (Some(ground), Some(c)) => self.dc_component_of(ground) == Some(c),
            _ => false,
        }
    }

    /// Every device of a kind, in device order.
    pub fn devices_of(&self, kind: Kind) -> &[DeviceId] {
        self.by_kind.get(&kind).map_or(&[], Vec::as_slice)
    }

    /// The device with this flattened path (`XDRV.M1`), case-insensitive.
    pub fn device_named(&self, path: &str) -> Option<DeviceId> {
        self.path_index().get(&path.to_ascii_lowercase()).copied()
    }
}
