//! A component's network in one state, before and after its DC solve, with the maps from the
//! circuit's nets and devices to the engine's nodes and elements.

use super::dc::{self, DcError, ElementId, Network, Node, OperatingPoint, SolveOptions};
use super::stand_in::DeviceElements;
use super::states::Context;
use crate::circuit::{Circuit, DeviceId, NetId, PinRole};
use std::collections::BTreeMap;

/// One component's network in one state, with the map from nets and devices to its nodes and
/// elements, not yet solved.
pub struct Built {
    pub network: Network,
    pub nodes: BTreeMap<NetId, Node>,
    pub devices: BTreeMap<DeviceId, DeviceElements>,
    /// Why the component was not built (too large to solve); solving reports it.
    pub refused: Option<DcError>,
}

impl Built {
    pub fn node(&self, net: NetId) -> Option<Node> {
        self.nodes.get(&net).copied()
    }

    pub fn solve(self, options: &SolveOptions) -> Result<Solved, DcError> {
        self.solve_by(|network| dc::solve(network, options))
    }

    /// As [`Built::solve`], through the context's memo.
    pub fn solve_in(self, cx: &Context<'_>) -> Result<Solved, DcError> {
        self.solve_by(|network| cx.solve_network(network))
    }

    fn solve_by(
        self,
        solve: impl FnOnce(&Network) -> Result<OperatingPoint, DcError>,
    ) -> Result<Solved, DcError> {
        if let Some(e) = self.refused {
            return Err(e);
        }
        let mut network = self.network;
        if network.node_count() <= 1 {
            // Nothing to solve (a capacitor straight across two rails stamps nothing), but the
            // engine wants at least one unknown: a grounded node of its own changes nothing.
            let spare = network.add_named_node("(no free net)");
            let ground = network.ground();
            network.add_resistor(spare, ground, 1.0);
        }
        let op = solve(&network)?;
        Ok(Solved {
            op,
            nodes: self.nodes,
            devices: self.devices,
            notes: Vec::new(),
        })
    }
}

/// The operating point of one component in one state, with the map from nets and devices to
/// the engine's nodes and elements.
pub struct Solved {
    pub op: OperatingPoint,
    pub nodes: BTreeMap<NetId, Node>,
    pub devices: BTreeMap<DeviceId, DeviceElements>,
    /// How the state was solved where that differs from the stand-ins' defaults (an ideal
    /// inductor taken as a current ramp), for the provenance of its numbers.
    pub notes: Vec<String>,
}

impl Solved {
    pub fn voltage(&self, net: NetId) -> Option<f64> {
        self.op.voltage(*self.nodes.get(&net)?)
    }

    pub fn elements(&self, device: DeviceId) -> Option<&DeviceElements> {
        self.devices.get(&device)
    }

    pub fn current(&self, element: ElementId) -> Option<f64> {
        self.op.current(element)
    }

    pub fn power(&self, element: ElementId) -> Option<f64> {
        self.op.power(element)
    }

    /// Voltage between two pins of a device.
    pub fn pin_voltage(
        &self,
        circuit: &Circuit,
        device: DeviceId,
        a: PinRole,
        b: PinRole,
    ) -> Option<f64> {
        let d = circuit.devices().get(device)?;
        Some(self.voltage(d.pin(a)?)? - self.voltage(d.pin(b)?)?)
    }
}
