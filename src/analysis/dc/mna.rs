//! Modified nodal analysis: the unknowns of a network and the linear system of one Newton
//! step, built from the devices' companion models (conductances plus equivalent currents).

use super::linear::Matrix;
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
}

impl Layout {
    pub(crate) fn new(net: &Network) -> Self {
        let mut size = net.node_count().saturating_sub(1);
        let mut internal = vec![None; net.elements.len()];
        for (slot, element) in internal.iter_mut().zip(&net.elements) {
            if let Element::Diode { params, .. } = element {
                if params.rs > 0.0 {
                    *slot = Some(size);
                    size += 1;
                }
            }
        }
        let voltage_unknowns = size;
        let mut branch = vec![None; net.elements.len()];
        for (slot, element) in branch.iter_mut().zip(&net.elements) {
            if branch_ends(element).is_some() {
                *slot = Some(size);
                size += 1;
            }
        }
        Self {
            size,
            voltage_unknowns,
            internal,
            branch,
        }
    }

    /// The net names to blame when unknown `k` misbehaves: a node's own name, a junction
    /// node's anode (the name callers know), a branch current's two ends. Only errors need
    /// them, so they are found when asked for.
    pub(crate) fn label(&self, net: &Network, k: usize) -> Vec<String> {
        if k + 1 < net.node_count() {
            return vec![net.node_name(Node(k + 1)).to_string()];
        }
        let owner = |slots: &[Slot]| slots.iter().position(|s| *s == Some(k));
        if let Some(Element::Diode { anode, .. }) =
            owner(&self.internal).and_then(|e| net.elements.get(e))
        {
            return vec![net.node_name(*anode).to_string()];
        }
        match owner(&self.branch)
            .and_then(|e| net.elements.get(e))
            .and_then(branch_ends)
        {
            Some((p, n)) => [p, n]
                .iter()
                .filter(|node| node.0 != 0)
                .map(|&node| net.node_name(node).to_string())
                .collect(),
            None => Vec::new(),
        }
    }

    /// The unknown holding a node's voltage.
    pub(crate) fn node(&self, node: Node) -> Slot {
        node.0.checked_sub(1)
    }

    /// Voltage of a node in a solution vector (0 for ground or an unknown node).
    pub(crate) fn voltage(&self, x: &[f64], node: Node) -> f64 {
        value(x, self.node(node))
    }
}

/// The two ends of an element solved with a branch-current unknown.
fn branch_ends(element: &Element) -> Option<(Node, Node)> {
    match *element {
        Element::VoltageSource { p, n, .. } | Element::Vcvs { p, n, .. } => Some((p, n)),
        Element::Resistor { a, b, ohms } if ohms < SHORT_OHMS => Some((a, b)),
        _ => None,
    }
}

/// Value of an unknown, 0 for ground.
pub(crate) fn value(x: &[f64], slot: Slot) -> f64 {
    slot.and_then(|k| x.get(k).copied()).unwrap_or(0.0)
}

/// Controlling voltages of each nonlinear element, the point its model is linearised at:
/// diode junction `[v, 0]`, BJT `[vbe, vbc]`, MOSFET `[vgs, vds]`, current-limited resistor
/// `[v, 0]`; linear elements `[0, 0]`.
pub(crate) type DeviceVoltages = Vec<[f64; 2]>;

/// Reads each element's controlling voltages from a solution vector.
pub(crate) fn device_voltages(net: &Network, layout: &Layout, x: &[f64]) -> DeviceVoltages {
    let mut out = Vec::with_capacity(net.elements.len());
    device_voltages_into(net, layout, x, &mut out);
    out
}

/// As [`device_voltages`], into a buffer kept between Newton iterations.
pub(crate) fn device_voltages_into(
    net: &Network,
    layout: &Layout,
    x: &[f64],
    out: &mut DeviceVoltages,
) {
    let v = |node: Node| layout.voltage(x, node);
    out.clear();
    out.extend(net.elements.iter().zip(&layout.internal).map(
        |(element, internal)| match *element {
            Element::Diode { anode, cathode, .. } => {
                let junction = internal.map_or_else(|| v(anode), |k| value(x, Some(k)));
                [junction - v(cathode), 0.0]
            }
            Element::Bjt { c, b, e, .. } => [v(b) - v(e), v(b) - v(c)],
            Element::Mosfet { d, g, s, .. } => [v(g) - v(s), v(d) - v(s)],
            Element::CurrentLimited { a, b, .. } => [v(a) - v(b), 0.0],
            _ => [0.0, 0.0],
        },
    ));
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

/// Where stamped terms go: the matrix and right-hand side of a Newton step, or only the
/// per-row weights the convergence test needs.
trait Sink {
    fn add(&mut self, row: usize, col: usize, value: f64);
    fn add_rhs(&mut self, row: usize, value: f64);
}

/// The matrix and right-hand side of one Newton step, kept between iterations so that each
/// one stamps into the same storage.
#[derive(Debug, Default)]
pub(crate) struct System {
    pub a: Matrix,
    pub b: Vec<f64>,
}

impl System {
    fn reset(&mut self, size: usize) {
        self.a.reset(size);
        self.b.clear();
        self.b.resize(size, 0.0);
    }
}

impl Sink for System {
    fn add(&mut self, row: usize, col: usize, value: f64) {
        self.a.add(row, col, value);
    }

    fn add_rhs(&mut self, row: usize, value: f64) {
        if let Some(entry) = self.b.get_mut(row) {
            *entry += value;
        }
    }
}

/// Per row, `Σ|term|` over every stamped term before cancellation, each matrix term weighed
/// by the iterate's value of its unknown. It bounds the rounding error of the row, so the KCL
/// test does not demand more precision than the arithmetic has.
struct RowWeights<'x> {
    weight: &'x mut Vec<f64>,
    x: &'x [f64],
}

impl Sink for RowWeights<'_> {
    fn add(&mut self, row: usize, col: usize, value: f64) {
        if let (Some(x), Some(w)) = (self.x.get(col), self.weight.get_mut(row)) {
            *w += (value * x).abs();
        }
    }

    fn add_rhs(&mut self, row: usize, value: f64) {
        if let Some(w) = self.weight.get_mut(row) {
            *w += value.abs();
        }
    }
}

/// Stamping helpers over a [`Sink`], skipping ground.
struct Stamper<'s, S: Sink>(&'s mut S);

impl<S: Sink> Stamper<'_, S> {
    fn add(&mut self, row: Slot, col: Slot, value: f64) {
        if let (Some(r), Some(c)) = (row, col) {
            self.0.add(r, c, value);
        }
    }

    fn add_rhs(&mut self, row: Slot, value: f64) {
        if let Some(r) = row {
            self.0.add_rhs(r, value);
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
/// device replaced by its tangent at `lin`, into `sys` (its storage reused).
pub(crate) fn assemble_into(
    net: &Network,
    layout: &Layout,
    lin: &[[f64; 2]],
    step: StepSettings,
    sys: &mut System,
) {
    sys.reset(layout.size);
    stamp_all(net, layout, lin, step, &mut Stamper(sys));
}

/// As [`assemble_into`], into a system of its own.
pub(crate) fn assemble(
    net: &Network,
    layout: &Layout,
    lin: &[[f64; 2]],
    step: StepSettings,
) -> System {
    let mut sys = System::default();
    assemble_into(net, layout, lin, step, &mut sys);
    sys
}

/// The per-row weights of the system linearised at `lin`, against the iterate `x`, into
/// `weight` (see [`RowWeights`]).
pub(crate) fn row_weights(
    net: &Network,
    layout: &Layout,
    lin: &[[f64; 2]],
    step: StepSettings,
    x: &[f64],
    weight: &mut Vec<f64>,
) {
    weight.clear();
    weight.resize(layout.size, 0.0);
    let mut sink = RowWeights { weight, x };
    stamp_all(net, layout, lin, step, &mut Stamper(&mut sink));
}

fn stamp_all<S: Sink>(
    net: &Network,
    layout: &Layout,
    lin: &[[f64; 2]],
    step: StepSettings,
    sys: &mut Stamper<'_, S>,
) {
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
}
