//! Solver settings and the errors a solve can end with.

use super::network::ElementId;

/// Boltzmann constant over the elementary charge, in volts per kelvin.
const K_OVER_Q: f64 = 1.380_649e-23 / 1.602_176_634e-19;

/// Tolerances, limits and the temperature of a solve.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SolveOptions {
    /// Relative tolerance on voltages and currents between Newton iterations.
    pub reltol: f64,
    /// Absolute voltage tolerance in volts.
    pub vntol: f64,
    /// Absolute current tolerance in amperes.
    pub abstol: f64,
    /// Conductance in siemens placed across every junction and channel so that an off device
    /// never leaves a node without a DC path.
    pub gmin: f64,
    /// Newton iterations allowed for one attempt (plain Newton, or one gmin / source step).
    pub max_iterations: usize,
    /// Newton iterations allowed over all attempts together; a solve never runs longer.
    pub max_total_iterations: usize,
    /// Junction temperature in °C, which sets the thermal voltage kT/q.
    pub temperature_celsius: f64,
}

impl Default for SolveOptions {
    fn default() -> Self {
        Self {
            reltol: 1e-6,
            vntol: 1e-6,
            abstol: 1e-12,
            gmin: 1e-12,
            max_iterations: 100,
            max_total_iterations: 4000,
            temperature_celsius: 27.0,
        }
    }
}

impl SolveOptions {
    /// Thermal voltage kT/q at [`SolveOptions::temperature_celsius`] (25.865 mV at 27 °C).
    pub fn thermal_voltage(&self) -> f64 {
        K_OVER_Q * (self.temperature_celsius + 273.15)
    }
}

/// Why a solve produced no operating point. Every variant names the nets involved so the
/// caller can point the user at them.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum DcError {
    /// The equations have no unique solution: nodes with no DC path to ground (only
    /// capacitors, current sources or gates attached), loops of ideal voltage sources, or a
    /// matrix whose rows for these nodes are degenerate.
    #[error("no unique DC solution: {}", nodes.join(", "))]
    Singular {
        /// Names of the floating or degenerate nodes, sorted.
        nodes: Vec<String>,
    },
    /// Newton–Raphson and its fallbacks (gmin stepping, source stepping) all failed.
    #[error("DC solution did not converge after {iterations} iterations at {}", nodes.join(", "))]
    NoConvergence {
        /// Nodes whose voltage was still moving, largest step first.
        nodes: Vec<String>,
        /// Newton iterations spent over all attempts.
        iterations: usize,
    },
    /// Every node of the network is ground: there is no unknown to solve for.
    #[error("the network has no free node to solve")]
    NoFreeNode,
    /// The network has more unknowns than the dense solver takes (see
    /// [`super::DENSE_LIMIT`]); it is refused before any matrix is allocated.
    #[error("the sub-network has {unknowns} unknowns, more than the {limit} the DC engine solves densely")]
    TooLarge {
        /// Unknowns the network would need (at least its free nodes).
        unknowns: usize,
        /// The engine's limit.
        limit: usize,
    },
    /// An analysis spent its budget of solves (see [`crate::analysis::budget`]); the
    /// remaining solves of that analysis were not run.
    #[error("the analysis reached its bound of {limit} DC solves")]
    WorkBound {
        /// Solves the analysis may request.
        limit: usize,
    },
    /// The operating point is outside what the network's sources allow, or rests on a value
    /// only assumed: the model is incomplete (an unbounded controlled source, an ideal
    /// inductor taken as a short across a rail, a transistor whose gain is not stated). Raised
    /// by the analyses after a solve, never by the engine; `cause` says what to add.
    #[error("{cause}")]
    Implausible {
        /// What makes the solve meaningless, naming the parts.
        cause: String,
    },
    /// An element has a value the models cannot use (negative or non-finite resistance,
    /// non-positive saturation current, a node from another network, ...).
    #[error("element {} is invalid: {reason}", element.index())]
    InvalidElement {
        /// The offending element.
        element: ElementId,
        /// What is wrong with it.
        reason: String,
    },
}
