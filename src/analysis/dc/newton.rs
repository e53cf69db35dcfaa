//! Newton–Raphson on the MNA system, with junction limiting, a two-sided convergence test
//! (iterate step and KCL residual), and the fallbacks that rescue hard starts: gmin stepping,
//! then source stepping. Every loop is bounded by the iteration budget.

use super::balance::node_balance;
use super::linear::{LinearFailure, LinearSolver};
use super::mna::{
    assemble_into, device_voltages, device_voltages_into, row_weights, DeviceVoltages, Layout,
    StepSettings, System,
};
use super::models;
use super::network::{Element, Network};
use super::options::SolveOptions;

/// How the accepted solution was reached.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Fallback {
    /// Plain Newton–Raphson converged (from a zero start, or from the given starting point).
    None,
    /// A shunt conductance on every node was stepped down to zero.
    GminStepping,
    /// The independent sources were ramped up from zero.
    SourceStepping,
}

/// A converged iterate and the device voltages its last linearisation used.
#[derive(Clone, Debug)]
pub(crate) struct Converged {
    pub x: Vec<f64>,
    pub lin: DeviceVoltages,
}

/// Why one Newton run stopped without converging.
#[derive(Clone, Debug)]
pub(crate) enum Failure {
    /// The linear system had degenerate unknowns (indices into the layout).
    Singular(Vec<usize>),
    /// Iterations ran out or the iterate blew up; the unknowns still moving, largest first.
    Diverged(Vec<usize>),
}

/// Outcome of a full solve with fallbacks.
pub(crate) struct Outcome {
    pub result: Result<(Converged, Fallback), Failure>,
    pub iterations: usize,
}

pub(crate) struct Solver<'a> {
    pub net: &'a Network,
    pub layout: &'a Layout,
    pub options: &'a SolveOptions,
    pub vt: f64,
    /// Newton iterations left over all attempts.
    budget: usize,
    used: usize,
    work: Work,
}

/// Storage every Newton iteration reuses: the system, the factorisation's scratch space and
/// the per-iteration vectors. Solves here are small and many, so allocating these afresh in
/// each iteration cost more than the arithmetic.
#[derive(Debug, Default)]
struct Work {
    system: System,
    linear: LinearSolver,
    next: Vec<f64>,
    raw: DeviceVoltages,
    exact: DeviceVoltages,
    weights: Vec<f64>,
}

/// Shunt tried first in gmin stepping, in siemens, and the most it may grow to (a decade per
/// failure) when even that start fails: large enough to pin nodes fed through fractions of
/// an ohm.
const GMIN_START: f64 = 1e-3;
const GMIN_CEILING: f64 = 1e3;
/// Relative rounding allowed in the KCL check: a few hundred ulps of the largest terms.
const ROUNDING_SLACK: f64 = 1e-13;
/// Bounds on the number of stepping stages, beyond the iteration budget.
const MAX_STAGES: usize = 200;

impl<'a> Solver<'a> {
    pub(crate) fn new(net: &'a Network, layout: &'a Layout, options: &'a SolveOptions) -> Self {
        Self {
            net,
            layout,
            options,
            vt: options.thermal_voltage(),
            budget: options.max_total_iterations,
            used: 0,
            work: Work::default(),
        }
    }

    fn settings(&self, source_scale: f64, shunt: f64) -> StepSettings {
        StepSettings {
            source_scale,
            shunt,
            gmin: self.options.gmin,
            vt: self.vt,
        }
    }

    /// Plain Newton, then gmin stepping, then source stepping. A singular matrix on the way
    /// does not end the attempt at once (devices may pass through states that isolate a
    /// node); the first failure is what gets reported when every attempt fails.
    ///
    /// A `start` of the right size (the solution of the same network with other values) is
    /// tried first; a failure from there falls back to the zero start.
    pub(crate) fn solve(mut self, start: Option<&[f64]>) -> Outcome {
        let zero = vec![0.0; self.layout.size];
        let zero_lin = vec![[0.0, 0.0]; self.net.elements.len()];
        if let Some(start) = start.filter(|s| s.len() == self.layout.size) {
            let x0 = start.to_vec();
            let lin0 = device_voltages(self.net, self.layout, &x0);
            if let Ok(done) = self.newton(&x0, &lin0, self.settings(1.0, 0.0)) {
                return self.finish(Ok((done, Fallback::None)));
            }
        }
        let plain = self.newton(&zero, &zero_lin, self.settings(1.0, 0.0));
        let first_failure = match plain {
            Ok(done) => return self.finish(Ok((done, Fallback::None))),
            Err(failure) => failure,
        };
        if let Some(done) = self.gmin_stepping(&zero, &zero_lin) {
            return self.finish(Ok((done, Fallback::GminStepping)));
        }
        if let Some(done) = self.source_stepping(&zero, &zero_lin) {
            return self.finish(Ok((done, Fallback::SourceStepping)));
        }
        self.finish(Err(first_failure))
    }

    fn finish(&self, result: Result<(Converged, Fallback), Failure>) -> Outcome {
        Outcome {
            result,
            iterations: self.used,
        }
    }

    /// Shunts every node with a conductance that starts large (making the system nearly
    /// linear) and shrinks it a decade at a time, halving the step in log space on failure.
    fn gmin_stepping(&mut self, x0: &[f64], lin0: &DeviceVoltages) -> Option<Converged> {
        let mut shunt = GMIN_START;
        let mut good: Option<(Converged, f64)> = None;
        let mut factor: f64 = 10.0;
        for _ in 0..MAX_STAGES {
            if self.budget == 0 {
                return None;
            }
            let (x, lin) = good.as_ref().map_or((x0, lin0), |(c, _)| (&c.x, &c.lin));
            match self.newton(x, lin, self.settings(1.0, shunt)) {
                Ok(done) => {
                    if shunt == 0.0 {
                        return Some(done);
                    }
                    let next = shunt / factor;
                    good = Some((done, shunt));
                    shunt = if next < self.options.gmin { 0.0 } else { next };
                }
                Err(_) => match &good {
                    None if shunt < GMIN_CEILING => shunt *= 10.0,
                    None => return None,
                    Some((_, last)) => {
                        factor = factor.sqrt();
                        if factor < 1.001 {
                            return None;
                        }
                        shunt = last / factor;
                    }
                },
            }
        }
        None
    }

    /// Ramps every independent source from 0 to its value, growing the step after each
    /// success and cutting it after each failure.
    fn source_stepping(&mut self, x0: &[f64], lin0: &DeviceVoltages) -> Option<Converged> {
        let mut good = self.newton(x0, lin0, self.settings(0.0, 0.0)).ok()?;
        let mut scale: f64 = 0.0;
        let mut step: f64 = 0.1;
        for _ in 0..MAX_STAGES {
            if self.budget == 0 {
                return None;
            }
            let target = (scale + step).min(1.0);
            match self.newton(&good.x, &good.lin, self.settings(target, 0.0)) {
                Ok(done) => {
                    if target >= 1.0 {
                        return Some(done);
                    }
                    good = done;
                    scale = target;
                    step = (step * 2.0).min(0.5);
                }
                Err(_) => {
                    step /= 4.0;
                    if step < 1e-6 {
                        return None;
                    }
                }
            }
        }
        None
    }

    /// One Newton–Raphson run from `x0`, linearised first around `lin0`.
    pub(crate) fn newton(
        &mut self,
        x0: &[f64],
        lin0: &DeviceVoltages,
        step: StepSettings,
    ) -> Result<Converged, Failure> {
        let mut x = x0.to_vec();
        let mut lin = lin0.clone();
        let mut blame = Vec::new();
        let mut work = std::mem::take(&mut self.work);
        for _ in 0..self.options.max_iterations {
            if self.budget == 0 {
                break;
            }
            self.budget -= 1;
            self.used += 1;
            device_voltages_into(self.net, self.layout, &x, &mut work.raw);
            let limited = self.limit(&work.raw, &mut lin);
            assemble_into(self.net, self.layout, &lin, step, &mut work.system);
            match work
                .linear
                .solve(&work.system.a, &work.system.b, &mut work.next)
            {
                Ok(()) => {}
                Err(LinearFailure::Degenerate(unknowns)) => {
                    self.work = work;
                    return Err(Failure::Singular(unknowns));
                }
                Err(LinearFailure::NotFinite) => break,
            }
            let mut moving = self.moving_unknowns(&x, &work.next);
            if !moving.is_empty() && moving.iter().all(|&k| k >= self.layout.voltage_unknowns) {
                moving = self.beyond_rounding(moving, &x, step, &mut work);
            }
            std::mem::swap(&mut x, &mut work.next);
            blame = if !moving.is_empty() {
                moving
            } else if !limited.is_empty() {
                self.terminal_unknowns(&limited)
            } else {
                let failing = self.residual_failures(&x, step, &mut work);
                if failing.is_empty() {
                    let lin = std::mem::take(&mut work.exact);
                    self.work = work;
                    return Ok(Converged { x, lin });
                }
                failing
            };
        }
        self.work = work;
        if blame.is_empty() {
            let nonlinear: Vec<usize> = (0..self.net.elements.len()).collect();
            blame = self.terminal_unknowns(&nonlinear);
        }
        Err(Failure::Diverged(blame))
    }

    /// Voltage unknowns of the terminals of the given nonlinear elements.
    fn terminal_unknowns(&self, elements: &[usize]) -> Vec<usize> {
        let mut unknowns = Vec::new();
        for element in elements.iter().filter_map(|&k| self.net.elements.get(k)) {
            if matches!(
                element,
                Element::Diode { .. }
                    | Element::Bjt { .. }
                    | Element::Mosfet { .. }
                    | Element::CurrentLimited { .. }
            ) {
                unknowns.extend(
                    element
                        .terminals()
                        .into_iter()
                        .filter_map(|n| self.layout.node(n)),
                );
            }
        }
        unknowns.sort_unstable();
        unknowns.dedup();
        unknowns
    }

    /// Replaces `lin` by the limited device voltages for the new iterate and returns the
    /// elements whose limit acted (their step is then not trusted for convergence).
    fn limit(&self, raw: &DeviceVoltages, lin: &mut DeviceVoltages) -> Vec<usize> {
        let mut hits = Vec::new();
        for (index, ((element, new), old)) in self
            .net
            .elements
            .iter()
            .zip(raw)
            .zip(lin.iter_mut())
            .enumerate()
        {
            let (limited, hit) = match element {
                Element::Diode { params, .. } => {
                    let (v, hit) = models::limit_diode(new[0], old[0], params, self.vt);
                    ([v, 0.0], hit)
                }
                Element::Bjt { params, .. } => {
                    let sign = models::bjt_sign(params);
                    let nvt = params.n * self.vt;
                    let (be, hit_be) =
                        models::limit_junction(sign * new[0], sign * old[0], nvt, params.is);
                    let (bc, hit_bc) =
                        models::limit_junction(sign * new[1], sign * old[1], nvt, params.is);
                    ([sign * be, sign * bc], hit_be || hit_bc)
                }
                Element::Mosfet { params, .. } => {
                    let ((gs, ds), hit) =
                        models::limit_mosfet((new[0], new[1]), (old[0], old[1]), params);
                    ([gs, ds], hit)
                }
                _ => (*new, false),
            };
            *old = limited;
            if hit {
                hits.push(index);
            }
        }
        hits
    }

    /// Unknowns whose change exceeds `reltol·max(|old|, |new|)` plus the absolute tolerance
    /// (volts for nodes, amperes for branch currents), largest change first.
    fn moving_unknowns(&self, old: &[f64], new: &[f64]) -> Vec<usize> {
        let o = self.options;
        let mut moving: Vec<(usize, f64)> = old
            .iter()
            .zip(new.iter())
            .enumerate()
            .filter_map(|(k, (&a, &b))| {
                let absolute = if k < self.layout.voltage_unknowns {
                    o.vntol
                } else {
                    o.abstol
                };
                let delta = (b - a).abs();
                (delta > o.reltol * a.abs().max(b.abs()) + absolute).then_some((k, delta))
            })
            .collect();
        moving.sort_by(|a, b| b.1.total_cmp(&a.1));
        moving.into_iter().map(|(k, _)| k).collect()
    }

    /// The branch currents among `moving` that move by more than their nodes can resolve. A
    /// branch's current is what flows through the conductances at its nodes, whose voltages
    /// are only held to `reltol`: the current is judged against `reltol` of those rows'
    /// stamped-term weights, as the KCL check that follows judges the nodes. Without that, a
    /// loop carrying nothing through a winding stood in by a micro-ohm resistor never settles:
    /// a nanovolt of wander at 24 V is nanoamperes in it, far above `abstol`. Only asked when
    /// nothing but branch currents moves, so the ordinary iteration pays nothing for it.
    fn beyond_rounding(
        &self,
        moving: Vec<usize>,
        old: &[f64],
        step: StepSettings,
        work: &mut Work,
    ) -> Vec<usize> {
        device_voltages_into(self.net, self.layout, &work.next, &mut work.exact);
        row_weights(
            self.net,
            self.layout,
            &work.exact,
            step,
            &work.next,
            &mut work.weights,
        );
        let o = self.options;
        moving
            .into_iter()
            .filter(|&k| {
                let Some(element) = self
                    .layout
                    .branch
                    .iter()
                    .position(|slot| *slot == Some(k))
                    .and_then(|e| self.net.elements.get(e))
                else {
                    return true;
                };
                let floor = element
                    .terminals()
                    .into_iter()
                    .filter_map(|n| self.layout.node(n))
                    .filter_map(|row| work.weights.get(row).copied())
                    .fold(0.0, f64::max);
                let (a, b) = (old[k], work.next[k]);
                (b - a).abs() > o.reltol * (a.abs().max(b.abs()) + floor) + o.abstol
            })
            .collect()
    }

    /// Nodes where KCL fails at `x` with the devices evaluated exactly there, worst first. A
    /// node's residual current may be `reltol` of the currents meeting at it plus `abstol`,
    /// plus the rounding floor of the arithmetic that produced the iterate
    /// ([`ROUNDING_SLACK`] times the row's stamped-term weight).
    /// Leaves the device voltages at `x` in `work.exact`.
    fn residual_failures(&self, x: &[f64], step: StepSettings, work: &mut Work) -> Vec<usize> {
        let balance = node_balance(self.net, self.layout, x, step);
        device_voltages_into(self.net, self.layout, x, &mut work.exact);
        row_weights(
            self.net,
            self.layout,
            &work.exact,
            step,
            x,
            &mut work.weights,
        );
        let weights = &work.weights;
        let o = self.options;
        let mut failing: Vec<(usize, f64)> = balance
            .residual
            .iter()
            .zip(&balance.magnitude)
            .zip(weights.iter())
            .enumerate()
            .filter_map(|(k, ((&residual, &magnitude), &weight))| {
                let allowed = o.reltol * magnitude + o.abstol + ROUNDING_SLACK * weight;
                // Written so that a NaN residual fails too.
                if residual.abs() <= allowed {
                    None
                } else {
                    Some((k, residual.abs() / allowed))
                }
            })
            .collect();
        failing.sort_by(|a, b| b.1.total_cmp(&a.1));
        failing.into_iter().map(|(k, _)| k).collect()
    }
}
