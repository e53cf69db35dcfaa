//! Kirchhoff's current law evaluated exactly at an iterate: each device's terminal currents
//! computed from its own equations, summed per node. Newton accepts an iterate only when
//! these sums are small next to the currents meeting at each node.

use super::mna::{value, Layout, Slot, StepSettings};
use super::models;
use super::network::{Element, Network, Node, SHORT_OHMS};

/// Per voltage unknown: the net current leaving the node into elements (zero when KCL holds)
/// and the sum of the magnitudes of those currents.
pub(crate) struct Balance {
    pub residual: Vec<f64>,
    pub magnitude: Vec<f64>,
}

impl Balance {
    fn add(&mut self, slot: Slot, current: f64) {
        if let Some(k) = slot {
            if let (Some(r), Some(m)) = (self.residual.get_mut(k), self.magnitude.get_mut(k)) {
                *r += current;
                *m += current.abs();
            }
        }
    }

    /// A current entering an element at `from` and leaving it at `to`.
    fn through(&mut self, from: Slot, to: Slot, current: f64) {
        self.add(from, current);
        self.add(to, -current);
    }
}

/// Evaluates KCL at `x` for every node and internal node.
pub(crate) fn node_balance(
    net: &Network,
    layout: &Layout,
    x: &[f64],
    step: StepSettings,
) -> Balance {
    let mut balance = Balance {
        residual: vec![0.0; layout.voltage_unknowns],
        magnitude: vec![0.0; layout.voltage_unknowns],
    };
    let at = |node: Node| layout.node(node);
    let v = |node: Node| layout.voltage(x, node);
    for (index, element) in net.elements.iter().enumerate() {
        let branch = layout.branch.get(index).copied().flatten();
        let internal = layout.internal.get(index).copied().flatten();
        match *element {
            Element::Resistor { a, b, ohms } => {
                let current = if ohms < SHORT_OHMS {
                    value(x, branch)
                } else {
                    (v(a) - v(b)) / ohms
                };
                balance.through(at(a), at(b), current);
            }
            Element::VoltageSource { p, n, .. } | Element::Vcvs { p, n, .. } => {
                balance.through(at(p), at(n), value(x, branch));
            }
            Element::CurrentSource { p, n, amps } => {
                balance.through(at(p), at(n), step.source_scale * amps);
            }
            Element::Vccs { p, n, cp, cn, gm } => {
                balance.through(at(p), at(n), gm * (v(cp) - v(cn)));
            }
            Element::Diode {
                anode,
                cathode,
                params,
            } => {
                let junction_node = internal.or(at(anode));
                if let Some(k) = internal {
                    let rs_current = (v(anode) - value(x, Some(k))) / params.rs;
                    balance.through(at(anode), Some(k), rs_current);
                }
                let vj = value(x, junction_node) - v(cathode);
                let j = models::diode_junction(vj, &params, step.vt, step.gmin);
                balance.through(junction_node, at(cathode), j.current);
            }
            Element::Bjt { c, b, e, params } => {
                let m = models::bjt(v(b) - v(e), v(b) - v(c), &params, step.vt, step.gmin);
                balance.add(at(c), m.ic);
                balance.add(at(b), m.ib);
                balance.add(at(e), -(m.ic + m.ib));
            }
            Element::Mosfet { d, g, s, params } => {
                let m = models::mosfet(v(g) - v(s), v(d) - v(s), &params, step.gmin);
                balance.through(at(d), at(s), m.id);
            }
            Element::CurrentLimited {
                a,
                b,
                ohms,
                i_limit,
            } => {
                let m = models::current_limited(v(a) - v(b), ohms, i_limit, step.gmin);
                balance.through(at(a), at(b), m.current);
            }
        }
    }
    if step.shunt > 0.0 {
        for k in 0..layout.voltage_unknowns {
            balance.add(Some(k), step.shunt * value(x, Some(k)));
        }
    }
    balance
}
