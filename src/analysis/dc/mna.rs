//! Modified nodal analysis: the unknowns of a network and the linear system of one Newton
//! step, built from the devices' companion models (conductances plus equivalent currents).

use nalgebra::{DMatrix, DVector};

use super::models;
use super::network::{Element, Network, Node, SHORT_OHMS};

/// Index of an unknown, or `None` for ground (which has no unknown).
pub(crate) type Slot = Option<usize>;

/// Where each quantity sits in the solution vector: node voltages first, then the internal
/// nodes behind diode series resistances, then branch currents of voltage-defined elements.
#[derive(Clone, Debug)]
pub(crate) struct Layout {
    pub size: usize,
    /// Number of voltage unknowns (external plus internal nodes).
    pub voltage_unknowns: usize,
    /// Per element: the internal junction node of a diode with series resistance.
    pub internal: Vec<Slot>,
    /// Per element: the branch-current unknown of a voltage source, VCVS or shorting resistor.
    pub branch: Vec<Slot>,
    /// Per unknown: the net names to blame when that unknown misbehaves.
    pub labels: Vec<Vec<String>>,
}

impl Layout {
    pub(crate) fn new(net: &Network) -> Self {
        let mut labels: Vec<Vec<String>> = (1..net.node_count())
            .map(|k| vec![net.node_name(Node(k)).to_string()])
            .collect();
        let mut internal = vec![None; net.elements.len()];
        for (slot, element) in internal.iter_mut().zip(&net.elements) {
            if let Element::Diode { anode, params, .. } = element {
                if params.rs > 0.0 {
                    // The junction node is blamed on the anode's net, the name callers know.
                    *slot = Some(labels.len());
                    labels.push(vec![net.node_name(*anode).to_string()]);
                }
            }
        }
        let voltage_unknowns = labels.len();
        let mut branch = vec![None; net.elements.len()];
        for (slot, element) in branch.iter_mut().zip(&net.elements) {
            let ends = match *element {
                Element::VoltageSource { p, n, .. } | Element::Vcvs { p, n, .. } => Some((p, n)),
                Element::Resistor { a, b, ohms } if ohms < SHORT_OHMS => Some((a, b)),
                _ => None,
            };
            if let Some((p, n)) = ends {
                *slot = Some(labels.len());
                labels.push(
                    [p, n]
                        .iter()
                        .filter(|node| node.0 != 0)
                        .map(|&node| net.node_name(node).to_string())
                        .collect(),
                );
            }
        }
        Self {
            size: labels.len(),
            voltage_unknowns,
            internal,
            branch,
            labels,
        }
    }

    /// The unknown holding a node's voltage.
    pub(crate) fn node(&self, node: Node) -> Slot {
        node.0.checked_sub(1)
    }

    /// Voltage of a node in a solution vector (0 for ground or an unknown node).
    pub(crate) fn voltage(&self, x: &DVector<f64>, node: Node) -> f64 {
        value(x, self.node(node))
    }
}

/// Value of an unknown, 0 for ground.
pub(crate) fn value(x: &DVector<f64>, slot: Slot) -> f64 {
    slot.and_then(|k| x.get(k).copied()).unwrap_or(0.0)
}

/// Controlling voltages of each nonlinear element, the point its model is linearised at:
/// diode junction `[v, 0]`, BJT `[vbe, vbc]`, MOSFET `[vgs, vds]`, current-limited resistor
/// `[v, 0]`; linear elements `[0, 0]`.
pub(crate) type DeviceVoltages = Vec<[f64; 2]>;

/// Reads each element's controlling voltages from a solution vector.
pub(crate) fn device_voltages(net: &Network, layout: &Layout, x: &DVector<f64>) -> DeviceVoltages {
    let v = |node: Node| layout.voltage(x, node);
    net.elements
        .iter()
        .zip(&layout.internal)
        .map(|(element, internal)| match *element {
            Element::Diode { anode, cathode, .. } => {
                let junction = internal.map_or_else(|| v(anode), |k| value(x, Some(k)));
                [junction - v(cathode), 0.0]
            }
            Element::Bjt { c, b, e, .. } => [v(b) - v(e), v(b) - v(c)],
            Element::Mosfet { d, g, s, .. } => [v(g) - v(s), v(d) - v(s)],
            Element::CurrentLimited { a, b, .. } => [v(a) - v(b), 0.0],
            _ => [0.0, 0.0],
        })
        .collect()
}

/// Settings of one linear system beyond the devices' linearisation points.
#[derive(Clone, Copy, Debug)]
pub(crate) struct StepSettings {
    /// Factor on every independent source (source stepping), 1 normally.
    pub source_scale: f64,
    /// Extra conductance from every node to ground (gmin stepping), 0 normally.
    pub shunt: f64,
    pub gmin: f64,
    pub vt: f64,
}

/// The matrix and right-hand side of one Newton step.
pub(crate) struct System {
    pub a: DMatrix<f64>,
    pub b: DVector<f64>,
    /// Per row, `Σ|term|` over every stamped term before cancellation, each matrix term
    /// weighed by the iterate's value of its unknown. It bounds the rounding error of the
    /// row, so the KCL test does not demand more precision than the arithmetic has.
    pub row_weight: DVector<f64>,
    weigh_against: Option<DVector<f64>>,
}

impl System {
    fn new(size: usize, weigh_against: Option<DVector<f64>>) -> Self {
        Self {
            a: DMatrix::zeros(size, size),
            b: DVector::zeros(size),
            row_weight: DVector::zeros(size),
            weigh_against,
        }
    }

    fn add(&mut self, row: Slot, col: Slot, value: f64) {
        if let (Some(r), Some(c)) = (row, col) {
            if let Some(entry) = self.a.get_mut((r, c)) {
                *entry += value;
            }
            if let Some(x) = self.weigh_against.as_ref().and_then(|x| x.get(c)) {
                if let Some(w) = self.row_weight.get_mut(r) {
                    *w += (value * x).abs();
                }
            }
        }
    }

    fn add_rhs(&mut self, row: Slot, value: f64) {
        if let Some(r) = row {
            if let Some(entry) = self.b.get_mut(r) {
                *entry += value;
            }
            if let Some(w) = self.row_weight.get_mut(r) {
                *w += value.abs();
            }
        }
    }

    fn conductance(&mut self, a: Slot, b: Slot, g: f64) {
        self.add(a, a, g);
        self.add(b, b, g);
        self.add(a, b, -g);
        self.add(b, a, -g);
    }

    /// A current that leaves node `row` into a device terminal, linearised as
    /// `i0 + Σ g·(V(p) − V(n) − v0)` over its controlling voltages `(p, n, g, v0)`.
    fn terminal_current(&mut self, row: Slot, i0: f64, controls: &[(Slot, Slot, f64, f64)]) {
        let mut equivalent = i0;
        for &(p, n, g, v0) in controls {
            self.add(row, p, g);
            self.add(row, n, -g);
            equivalent -= g * v0;
        }
        self.add_rhs(row, -equivalent);
    }

    /// A branch current unknown `k` flowing into `p` and out of `n`, constrained by
    /// `V(p) − V(n) − Σ gain·(V(cp) − V(cn)) = rhs`.
    fn voltage_branch(
        &mut self,
        k: Slot,
        p: Slot,
        n: Slot,
        rhs: f64,
        control: Option<(Slot, Slot, f64)>,
    ) {
        self.add(p, k, 1.0);
        self.add(n, k, -1.0);
        self.add(k, p, 1.0);
        self.add(k, n, -1.0);
        if let Some((cp, cn, gain)) = control {
            self.add(k, cp, -gain);
            self.add(k, cn, gain);
        }
        self.add_rhs(k, rhs);
    }
}

/// Builds the linear system whose solution is the next Newton iterate, with every nonlinear
/// device replaced by its tangent at `lin`.
pub(crate) fn assemble(
    net: &Network,
    layout: &Layout,
    lin: &[[f64; 2]],
    step: StepSettings,
) -> System {
    stamp_all(net, layout, lin, step, System::new(layout.size, None))
}

/// As [`assemble`], also filling [`System::row_weight`] against the iterate `x`.
pub(crate) fn assemble_weighted(
    net: &Network,
    layout: &Layout,
    lin: &[[f64; 2]],
    step: StepSettings,
    x: &DVector<f64>,
) -> System {
    stamp_all(
        net,
        layout,
        lin,
        step,
        System::new(layout.size, Some(x.clone())),
    )
}

fn stamp_all(
    net: &Network,
    layout: &Layout,
    lin: &[[f64; 2]],
    step: StepSettings,
    mut sys: System,
) -> System {
    let at = |node: Node| layout.node(node);
    for (index, element) in net.elements.iter().enumerate() {
        let point = lin.get(index).copied().unwrap_or([0.0, 0.0]);
        let internal = layout.internal.get(index).copied().flatten();
        let branch = layout.branch.get(index).copied().flatten();
        match *element {
            Element::Resistor { a, b, ohms } => {
                if branch.is_some() {
                    sys.voltage_branch(branch, at(a), at(b), 0.0, None);
                } else {
                    sys.conductance(at(a), at(b), 1.0 / ohms);
                }
            }
            Element::VoltageSource { p, n, volts } => {
                sys.voltage_branch(branch, at(p), at(n), step.source_scale * volts, None);
            }
            Element::CurrentSource { p, n, amps } => {
                sys.add_rhs(at(p), -step.source_scale * amps);
                sys.add_rhs(at(n), step.source_scale * amps);
            }
            Element::Vcvs { p, n, cp, cn, gain } => {
                sys.voltage_branch(branch, at(p), at(n), 0.0, Some((at(cp), at(cn), gain)));
            }
            Element::Vccs { p, n, cp, cn, gm } => {
                let control = [(at(cp), at(cn), gm, 0.0)];
                sys.terminal_current(at(p), 0.0, &control);
                let reverse = [(at(cp), at(cn), -gm, 0.0)];
                sys.terminal_current(at(n), 0.0, &reverse);
            }
            Element::Diode {
                anode,
                cathode,
                params,
            } => {
                let junction = match internal {
                    Some(k) => {
                        sys.conductance(at(anode), Some(k), 1.0 / params.rs);
                        Some(k)
                    }
                    None => at(anode),
                };
                let j = models::diode_junction(point[0], &params, step.vt, step.gmin);
                let k = at(cathode);
                sys.terminal_current(
                    junction,
                    j.current,
                    &[(junction, k, j.conductance, point[0])],
                );
                let back = [(junction, k, -j.conductance, point[0])];
                sys.terminal_current(k, -j.current, &back);
            }
            Element::Bjt { c, b, e, params } => {
                let m = models::bjt(point[0], point[1], &params, step.vt, step.gmin);
                let (nc, nb, ne) = (at(c), at(b), at(e));
                let ctl = |dbe: f64, dbc: f64| [(nb, ne, dbe, point[0]), (nb, nc, dbc, point[1])];
                sys.terminal_current(nc, m.ic, &ctl(m.dic_dvbe, m.dic_dvbc));
                sys.terminal_current(nb, m.ib, &ctl(m.dib_dvbe, m.dib_dvbc));
                let emitter = ctl(-(m.dic_dvbe + m.dib_dvbe), -(m.dic_dvbc + m.dib_dvbc));
                sys.terminal_current(ne, -(m.ic + m.ib), &emitter);
            }
            Element::Mosfet { d, g, s, params } => {
                let m = models::mosfet(point[0], point[1], &params, step.gmin);
                let (nd, ng, ns) = (at(d), at(g), at(s));
                let ctl = |sign: f64| {
                    [
                        (ng, ns, sign * m.did_dvgs, point[0]),
                        (nd, ns, sign * m.did_dvds, point[1]),
                    ]
                };
                sys.terminal_current(nd, m.id, &ctl(1.0));
                sys.terminal_current(ns, -m.id, &ctl(-1.0));
            }
            Element::CurrentLimited {
                a,
                b,
                ohms,
                i_limit,
            } => {
                let m = models::current_limited(point[0], ohms, i_limit, step.gmin);
                let (na, nb) = (at(a), at(b));
                sys.terminal_current(na, m.current, &[(na, nb, m.conductance, point[0])]);
                sys.terminal_current(nb, -m.current, &[(na, nb, -m.conductance, point[0])]);
            }
        }
    }
    if step.shunt > 0.0 {
        for k in 0..layout.voltage_unknowns {
            sys.add(Some(k), Some(k), step.shunt);
        }
    }
    sys
}
