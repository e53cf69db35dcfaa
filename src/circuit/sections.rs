//! Which parts of a board share a DC reference: sections of nets joined by DC paths, whether
//! more than one of them holds a supply, and the net each kind of driver is referenced to.
//! `supply-unreferenced` reports sections and drives that never meet the reference; the
//! drive-strength rules leave such switches to it.

use super::{Circuit, Device, DeviceId, Kind, NetId, PinRole};
use crate::netlist::FlatNetlist;
use petgraph::unionfind::UnionFind;

/// Whether a pin conducts DC to the device's other conducting pins, as a reference does: a
/// timer's supply, output, discharge and control pins are tied together inside it, its comparator
/// inputs are not.
pub fn joins_reference(kind: Kind, letter: char, role: PinRole) -> bool {
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

impl Circuit {
    /// Nets joined by DC-conducting pins: `(all, apart)`, where `apart` leaves out the passive
    /// parts on a gate or base net (a pull-down from the gate to a switch's source is not a
    /// shared ground). `apart` is `None` when the circuit has no transistor switch.
    pub fn dc_sections(
        &self,
        netlist: &FlatNetlist,
    ) -> (UnionFind<usize>, Option<UnionFind<usize>>) {
        let nets = self.nets().len();
        let mut gate_net = vec![false; nets];
        let mut any_switch = false;
        for device in self
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
        for device in self.devices() {
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
            Self::join_dc(netlist, device, nets, &mut sets);
        }
        if !any_switch {
            return (sets, None);
        }
        let apart = sets.clone();
        for device in held_back {
            Self::join_dc(netlist, device, nets, &mut sets);
        }
        (sets, Some(apart))
    }

    /// Joins the DC-conducting pins of `device` (pins on nets past `nets` are left out).
    fn join_dc(netlist: &FlatNetlist, device: &Device, nets: usize, sets: &mut UnionFind<usize>) {
        let letter = netlist
            .elements
            .get(device.element)
            .map_or('?', |e| e.letter);
        let mut first = None;
        for pin in device
            .pins
            .iter()
            .filter(|p| p.net < nets && joins_reference(device.kind, letter, p.role))
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
    pub fn supplied_sections(&self, sets: &UnionFind<usize>) -> usize {
        let mut first = None;
        let grounds = self
            .nets()
            .iter()
            .enumerate()
            .filter(|(_, n)| n.is_ground)
            .map(|(i, _)| i);
        let sources = self
            .devices()
            .iter()
            .filter(|d| d.kind == Kind::VoltageSource)
            .flat_map(|d| d.pins.iter().map(|p| p.net));
        let count = self.nets().len();
        for net in grounds.chain(sources).filter(|&n| n < count) {
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
    pub fn driver_reference(&self, id: DeviceId, driven: NetId) -> Option<NetId> {
        let device = self.devices().get(id)?;
        match device.kind {
            k if k.is_timer() => device.pin(PinRole::Gnd),
            Kind::LogicOutput => device
                .pin(PinRole::Gnd)
                .or_else(|| self.nets().iter().position(|n| n.is_ground)),
            Kind::VoltageSource => device.pins.iter().map(|p| p.net).find(|&n| n != driven),
            Kind::ControlledSource => device.pin(PinRole::Neg),
            Kind::Nmos | Kind::Pmos => device.pin(PinRole::Source),
            Kind::Npn | Kind::Pnp => device.pin(PinRole::Emitter),
            _ => None,
        }
    }
}
