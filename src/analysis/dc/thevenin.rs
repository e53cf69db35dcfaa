//! The Thevenin equivalent a network presents at one node, for analyses that attach a load
//! (a timing capacitor, a gate) and need its source voltage and resistance.

use super::linear::{solve_linear, LinearFailure};
use super::mna::{assemble, device_voltages, StepSettings};
use super::network::{Network, Node};
use super::options::{DcError, SolveOptions};
use super::topology::singular;
use super::SolveCache;

/// A voltage source `v_open` behind a resistance `r_th`, as seen from a node to ground.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Thevenin {
    /// Open-circuit voltage of the node, in volts.
    pub v_open: f64,
    /// Resistance seen into the node with every independent source at rest, in ohms.
    pub r_th: f64,
}

impl Thevenin {
    /// Current the equivalent delivers into a load held at `v_load`.
    pub fn current_at(&self, v_load: f64) -> f64 {
        (self.v_open - v_load) / self.r_th
    }

    /// Node voltage when a resistor `r_load` ties the node to ground.
    pub fn loaded_voltage(&self, r_load: f64) -> f64 {
        self.v_open * r_load / (r_load + self.r_th)
    }
}

/// Thevenin equivalent of `network` at `node` against ground.
///
/// `v_open` is the node's voltage from a full DC solve. `r_th` is the node's driving-point
/// resistance: the solve's Jacobian (every device replaced by its tangent at that operating
/// point, independent sources not appearing) is solved once for a 1 A injection at the node,
/// and the node's voltage rise is `r_th`. For a linear network this is the exact Thevenin
/// resistance; with diodes or transistors it is the small-signal resistance at the open-circuit
/// point (a conducting steering diode contributes its dynamic resistance, a blocking one
/// practically nothing). Ground gives `(0 V, 0 Ω)`.
///
/// # Errors
/// As [`super::solve`]; a node with no DC path to ground is reported as
/// [`DcError::Singular`].
pub fn thevenin(
    network: &Network,
    node: Node,
    options: &SolveOptions,
) -> Result<Thevenin, DcError> {
    thevenin_with(network, node, options, None)
}

/// As [`thevenin`], with the operating point from `cache` when the same network was solved
/// before (see [`super::solve_cached`]).
///
/// # Errors
/// As [`thevenin`].
pub fn thevenin_cached(
    network: &Network,
    node: Node,
    options: &SolveOptions,
    cache: &SolveCache,
) -> Result<Thevenin, DcError> {
    thevenin_with(network, node, options, Some(cache))
}

fn thevenin_with(
    network: &Network,
    node: Node,
    options: &SolveOptions,
    cache: Option<&SolveCache>,
) -> Result<Thevenin, DcError> {
    if node.index() >= network.node_count() {
        return Err(singular(vec![network.node_name(node).to_string()]));
    }
    let (layout, converged, _, _) = super::solve_raw(network, options, None, cache)?;
    let Some(slot) = layout.node(node) else {
        return Ok(Thevenin {
            v_open: 0.0,
            r_th: 0.0,
        });
    };
    let v_open = layout.voltage(&converged.x, node);
    let at_solution = device_voltages(network, &layout, &converged.x);
    let step = StepSettings {
        source_scale: 1.0,
        shunt: 0.0,
        gmin: options.gmin,
        vt: options.thermal_voltage(),
    };
    let jacobian = assemble(network, &layout, &at_solution, step).a;
    let mut injection = vec![0.0; layout.size];
    if let Some(entry) = injection.get_mut(slot) {
        *entry = 1.0;
    }
    let blame = || singular(vec![network.node_name(node).to_string()]);
    let response = solve_linear(&jacobian, &injection).map_err(|failure| match failure {
        LinearFailure::Degenerate(_) | LinearFailure::NotFinite => blame(),
    })?;
    let r_th = response.get(slot).copied().unwrap_or(f64::NAN);
    if !r_th.is_finite() {
        return Err(blame());
    }
    Ok(Thevenin { v_open, r_th })
}
