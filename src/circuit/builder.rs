//! A circuit put together from nets and devices given one by one, for tests and tools that
//! describe a board without a netlist's part knowledge. [`CircuitBuilder::build`] makes the same
//! indexes [`Circuit::build`] makes, so a circuit never exists without them.

use super::names::NameIndex;
use super::{Circuit, Device, DeviceId, Net, NetId};
use crate::config::Config;
use crate::netlist::FlatNetlist;

/// Nets and devices collected before the circuit is built. Each device's `element` indexes the
/// netlist later given to [`CircuitBuilder::build`].
#[derive(Clone, Debug, Default)]
pub struct CircuitBuilder {
    nets: Vec<Net>,
    devices: Vec<Device>,
}

impl CircuitBuilder {
    pub fn new() -> CircuitBuilder {
        CircuitBuilder::default()
    }

    /// Adds a net as given (no merging by name); the first ground net becomes the reference.
    pub fn add_net(&mut self, net: Net) -> NetId {
        self.nets.push(net);
        self.nets.len() - 1
    }

    /// Adds a device; its pins name nets already added.
    pub fn add_device(&mut self, device: Device) -> DeviceId {
        self.devices.push(device);
        self.devices.len() - 1
    }

    pub fn nets(&self) -> &[Net] {
        &self.nets
    }

    pub fn devices(&self) -> &[Device] {
        &self.devices
    }

    /// A device added earlier, to change before the circuit is built.
    pub fn device_mut(&mut self, id: DeviceId) -> Option<&mut Device> {
        self.devices.get_mut(id)
    }

    /// The circuit with every index: net names, device paths (from `netlist`), devices by kind,
    /// pins on each net, components, nets joined through ammeters. Pins that name a net never
    /// added are dropped from the indexes, as the graph cannot place them.
    pub fn build(&self, netlist: &FlatNetlist, config: &Config) -> Circuit {
        let mut circuit = Circuit {
            nets: self.nets.clone(),
            devices: self.devices.clone(),
            net_names: NameIndex::with_capacity(self.nets.len()),
            ..Circuit::default()
        };
        for (id, net) in self.nets.iter().enumerate() {
            if net.is_ground {
                if circuit.ground.is_none() {
                    circuit.set_ground(id, &net.name, config);
                }
            } else {
                circuit.net_names.insert(id, &net.name);
            }
        }
        circuit.paths.reserve(self.devices.len());
        for (id, device) in self.devices.iter().enumerate() {
            let path = netlist
                .elements
                .get(device.element)
                .map_or("", |e| e.path.as_str());
            circuit.paths.push(path);
            circuit.by_kind.entry(device.kind).or_default().push(id);
        }
        circuit.index(netlist, config);
        circuit
    }
}
