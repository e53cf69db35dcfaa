//! The operating point of a solved network: node voltages and, per element, its current,
//! control-terminal current, dissipated power and transistor region.

use super::mna::{value, Layout};
use super::models::{self, MosRegion};
use super::network::{Element, ElementId, Network, Node};
use super::newton::Fallback;

/// Operating region of a bipolar transistor.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum BjtRegion {
    /// Neither junction conducts.
    Cutoff,
    /// Base-emitter conducts, collector current limited by βF.
    Active,
    /// Both junctions conduct; the collector takes less than βF times the base current.
    Saturation,
    /// Base-collector conducts, base-emitter does not: collector and emitter swapped.
    Reverse,
}

/// Operating region of a transistor element, if it is one.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Region {
    None,
    Mos(MosRegion),
    Bjt(BjtRegion),
}

/// The solved state of one element.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct ElementState {
    current: f64,
    control_current: f64,
    power: f64,
    region: Region,
}

/// Node voltages and element currents of one solved [`super::Network`].
///
/// Current directions: for a two-terminal element, the current flowing *into its first
/// terminal* (resistor `a`, source `p`, diode anode), so a source delivering power has a
/// negative current. For a MOSFET the current into the drain, for a BJT into the collector;
/// [`OperatingPoint::control_current`] gives the current into the gate or base. Power is what
/// the element absorbs: positive for resistors and conducting devices, negative for a source
/// that delivers energy.
#[derive(Clone, Debug, PartialEq)]
pub struct OperatingPoint {
    voltages: Vec<f64>,
    /// The full solution vector, kept as a starting point for [`super::solve_from`].
    pub(crate) solution: Vec<f64>,
    elements: Vec<ElementState>,
    iterations: usize,
    fallback: Fallback,
}

/// A junction counts as conducting once its diffusion current exceeds a million times its
/// saturation current (about 0.36 V for N = 1 at room temperature).
const CONDUCTING_RATIO: f64 = 1e6;
/// In saturation the forced gain Ic/Ib falls below this fraction of βF.
const SATURATED_GAIN: f64 = 0.9;

impl OperatingPoint {
    pub(crate) fn build(
        net: &Network,
        layout: &Layout,
        x: &[f64],
        vt: f64,
        gmin: f64,
        iterations: usize,
        fallback: Fallback,
    ) -> Self {
        let voltages: Vec<f64> = (0..net.node_count())
            .map(|k| layout.voltage(x, Node(k)))
            .collect();
        let v = |node: Node| voltages.get(node.0).copied().unwrap_or(0.0);
        let elements = net
            .elements
            .iter()
            .enumerate()
            .map(|(index, element)| {
                let branch = layout.branch.get(index).copied().flatten();
                let internal = layout.internal.get(index).copied().flatten();
                element_state(
                    element,
                    &v,
                    value(x, branch),
                    internal.map(|k| value(x, Some(k))),
                    vt,
                    gmin,
                )
            })
            .collect();
        Self {
            voltages,
            solution: x.to_vec(),
            elements,
            iterations,
            fallback,
        }
    }

    /// Voltage of a node against ground; `None` for a node of another network.
    pub fn voltage(&self, node: Node) -> Option<f64> {
        self.voltages.get(node.0).copied()
    }

    /// `V(a) − V(b)`.
    pub fn voltage_between(&self, a: Node, b: Node) -> Option<f64> {
        Some(self.voltage(a)? - self.voltage(b)?)
    }

    /// Current through the element in the documented direction (see the type's docs).
    pub fn current(&self, element: ElementId) -> Option<f64> {
        self.elements.get(element.0).map(|e| e.current)
    }

    /// Current into a MOSFET's gate (always 0) or a BJT's base; 0 for other elements.
    pub fn control_current(&self, element: ElementId) -> Option<f64> {
        self.elements.get(element.0).map(|e| e.control_current)
    }

    /// Power absorbed by the element in watts (negative when it delivers power).
    pub fn power(&self, element: ElementId) -> Option<f64> {
        self.elements.get(element.0).map(|e| e.power)
    }

    /// Region of a MOSFET; `None` for any other element.
    pub fn mos_region(&self, element: ElementId) -> Option<MosRegion> {
        match self.elements.get(element.0)?.region {
            Region::Mos(r) => Some(r),
            _ => None,
        }
    }

    /// Region of a BJT; `None` for any other element.
    pub fn bjt_region(&self, element: ElementId) -> Option<BjtRegion> {
        match self.elements.get(element.0)?.region {
            Region::Bjt(r) => Some(r),
            _ => None,
        }
    }

    /// Newton iterations spent, over all attempts.
    pub fn iterations(&self) -> usize {
        self.iterations
    }

    /// Which fallback produced the solution.
    pub fn fallback(&self) -> Fallback {
        self.fallback
    }
}

fn two_terminal(current: f64, across: f64) -> ElementState {
    ElementState {
        current,
        control_current: 0.0,
        power: current * across,
        region: Region::None,
    }
}

fn element_state(
    element: &Element,
    v: &dyn Fn(Node) -> f64,
    branch_current: f64,
    internal_voltage: Option<f64>,
    vt: f64,
    gmin: f64,
) -> ElementState {
    match *element {
        Element::Resistor { a, b, ohms } => {
            let across = v(a) - v(b);
            let current = if ohms < super::network::SHORT_OHMS {
                branch_current
            } else {
                across / ohms
            };
            two_terminal(current, across)
        }
        Element::VoltageSource { p, n, .. } | Element::Vcvs { p, n, .. } => {
            two_terminal(branch_current, v(p) - v(n))
        }
        Element::CurrentSource { p, n, amps } => two_terminal(amps, v(p) - v(n)),
        Element::Vccs { p, n, cp, cn, gm } => two_terminal(gm * (v(cp) - v(cn)), v(p) - v(n)),
        Element::Diode {
            anode,
            cathode,
            params,
        } => {
            let across = v(anode) - v(cathode);
            let current = match internal_voltage {
                Some(junction) => (v(anode) - junction) / params.rs,
                None => models::diode_junction(across, &params, vt, gmin).current,
            };
            two_terminal(current, across)
        }
        Element::CurrentLimited {
            a,
            b,
            ohms,
            i_limit,
        } => {
            let across = v(a) - v(b);
            two_terminal(
                models::current_limited(across, ohms, i_limit, gmin).current,
                across,
            )
        }
        Element::Mosfet { d, g, s, params } => {
            let (vgs, vds) = (v(g) - v(s), v(d) - v(s));
            let m = models::mosfet(vgs, vds, &params, gmin);
            ElementState {
                current: m.id,
                control_current: 0.0,
                power: m.id * vds,
                region: Region::Mos(m.region),
            }
        }
        Element::Bjt { c, b, e, params } => {
            let (vbe, vbc) = (v(b) - v(e), v(b) - v(c));
            let m = models::bjt(vbe, vbc, &params, vt, gmin);
            let threshold = CONDUCTING_RATIO * params.is;
            let region = match (m.forward > threshold, m.reverse > threshold) {
                (false, false) => BjtRegion::Cutoff,
                (true, false) => BjtRegion::Active,
                (false, true) => BjtRegion::Reverse,
                (true, true) => {
                    let sign = models::bjt_sign(&params);
                    if sign * m.ic >= SATURATED_GAIN * params.beta_f * sign * m.ib {
                        BjtRegion::Active
                    } else {
                        BjtRegion::Saturation
                    }
                }
            };
            ElementState {
                current: m.ic,
                control_current: m.ib,
                power: m.ic * (v(c) - v(e)) + m.ib * vbe,
                region: Region::Bjt(region),
            }
        }
    }
}
