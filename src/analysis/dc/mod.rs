//! The DC engine: modified nodal analysis with Newton–Raphson for nonlinear devices.
//!
//! Callers build a small [`Network`] of primitive elements — resistors, independent and
//! controlled sources, diodes, square-law MOSFETs, Ebers–Moll BJTs, current-limited resistors
//! and fixed switches — and ask [`solve`] for its [`OperatingPoint`]. The engine knows nothing
//! of netlists or the circuit graph.
//!
//! ```
//! use kickback::analysis::dc::{solve, Network, SolveOptions};
//!
//! let mut net = Network::new();
//! let (top, mid) = (net.add_node("vcc"), net.add_node("mid"));
//! let gnd = net.ground();
//! net.add_voltage_source(top, gnd, 12.0);
//! net.add_resistor(top, mid, 10e3);
//! net.add_resistor(mid, gnd, 20e3);
//! let op = solve(&net, &SolveOptions::default()).expect("a divider solves");
//! assert!((op.voltage(mid).unwrap_or(0.0) - 8.0).abs() < 1e-9);
//! ```
//!
//! How it solves: the structure is checked first (element values, nodes without a DC path,
//! loops of ideal voltage sources), then Newton–Raphson runs from a zero start with junction
//! limiting and gmin across every junction and channel. Convergence needs both a small
//! iterate step (`reltol`, `vntol`, `abstol`) and a small KCL residual with the devices
//! evaluated at the new point. When plain Newton fails, gmin stepping and then source
//! stepping are tried; all of it is bounded by an iteration budget, so a solve always ends.

mod balance;
mod cache;
mod linear;
mod mna;
mod models;
mod network;
mod newton;
mod options;
mod result;
mod sparse;
mod thevenin;
mod topology;

#[cfg(test)]
mod tests;

pub use cache::SolveCache;
pub use models::MosRegion;
pub use network::{
    BjtParams, BjtPolarity, DiodeParams, ElementId, MosParams, MosPolarity, Network, Node,
    SourceHull, LEAK_OHMS,
};
pub use newton::Fallback;
pub use options::{DcError, SolveOptions};
pub use result::{BjtRegion, OperatingPoint};
pub use thevenin::{thevenin, thevenin_cached, Thevenin};

use std::sync::Arc;

/// Most unknowns the engine solves. The sub-networks of a motor drive between its rails have
/// tens of unknowns and are factored dense; past 64 the matrix is kept and factored sparse, so
/// a solve costs about its number of entries, not the cube of its size. A network past this
/// bound (a generated ladder, a flattened array) is refused with [`DcError::TooLarge`] before
/// anything of its size is allocated: an analysis makes hundreds of solves per part, and one
/// sub-network this large already takes seconds.
pub const DENSE_LIMIT: usize = 1000;

use mna::Layout;
use newton::{Converged, Failure, Solver};

/// Finds the DC operating point of `network`.
///
/// # Errors
/// [`DcError::InvalidElement`] for unusable values, [`DcError::Singular`] for floating nodes,
/// voltage-source loops or a degenerate matrix, [`DcError::NoConvergence`] when Newton and its
/// fallbacks all fail within the iteration budget, [`DcError::NoFreeNode`] for a network
/// that is all ground, [`DcError::TooLarge`] past [`DENSE_LIMIT`] unknowns.
pub fn solve(network: &Network, options: &SolveOptions) -> Result<OperatingPoint, DcError> {
    solve_with_start(network, options, None, None)
}

/// As [`solve`], answering from `cache` when a network with exactly the same contents (every
/// value to the bit, names aside) was solved with the same options before, and remembering
/// the answer otherwise. The result is the one [`solve`] gives.
///
/// # Errors
/// As [`solve`].
pub fn solve_cached(
    network: &Network,
    options: &SolveOptions,
    cache: &SolveCache,
) -> Result<OperatingPoint, DcError> {
    solve_with_start(network, options, None, Some(cache))
}

/// As [`solve`], starting Newton from `start`, the operating point of the same network
/// (same nodes and elements, in the same order) with other element values. Sweeps of a
/// supply corner or a pot's wiper converge in a few iterations this way. A `start` from a
/// differently built network is ignored, and a start that fails falls back to [`solve`]'s
/// zero start, so the answer never depends on the starting point being good.
///
/// # Errors
/// As [`solve`].
pub fn solve_from(
    network: &Network,
    options: &SolveOptions,
    start: &OperatingPoint,
) -> Result<OperatingPoint, DcError> {
    solve_with_start(network, options, Some(&start.solution), None)
}

fn solve_with_start(
    network: &Network,
    options: &SolveOptions,
    start: Option<&[f64]>,
    cache: Option<&SolveCache>,
) -> Result<OperatingPoint, DcError> {
    let (layout, converged, iterations, fallback) = solve_raw(network, options, start, cache)?;
    Ok(OperatingPoint::build(
        network,
        &layout,
        &converged.x,
        options.thermal_voltage(),
        options.gmin,
        iterations,
        fallback,
    ))
}

/// The converged solution vector with the layout that gives it meaning.
/// With a `cache` (and no `start`), a network met before skips the structure checks as well
/// as Newton: the key covers everything both depend on, and only networks that passed the
/// checks are remembered.
pub(crate) fn solve_raw(
    network: &Network,
    options: &SolveOptions,
    start: Option<&[f64]>,
    cache: Option<&SolveCache>,
) -> Result<(Layout, Converged, usize, Fallback), DcError> {
    // Refused before anything of the network's size is built (a memo key included).
    let free_nodes = network.node_count().saturating_sub(1);
    if free_nodes > DENSE_LIMIT {
        return Err(DcError::TooLarge {
            unknowns: free_nodes,
            limit: DENSE_LIMIT,
        });
    }
    let memo = cache.filter(|_| start.is_none());
    let key = memo.map(|_| cache::key(network, options));
    let known = memo.zip(key.as_ref()).and_then(|(c, k)| c.get(k));
    let outcome = match known {
        Some(outcome) => outcome,
        None => {
            let outcome = Arc::new(fresh(network, options, start)?);
            if let (Some(c), Some(k)) = (memo, key) {
                c.put(k, Arc::clone(&outcome));
            }
            outcome
        }
    };
    let layout = Layout::new(network);
    match &*outcome {
        cache::Outcome::Solved {
            x,
            lin,
            fallback,
            iterations,
        } => {
            let converged = Converged {
                x: x.clone(),
                lin: lin.clone(),
            };
            Ok((layout, converged, *iterations, *fallback))
        }
        cache::Outcome::Failed {
            failure: Failure::Singular(unknowns),
            ..
        } => Err(topology::singular(names(network, &layout, unknowns))),
        cache::Outcome::Failed {
            failure: Failure::Diverged(unknowns),
            iterations,
        } => Err(DcError::NoConvergence {
            nodes: names_in_order(network, &layout, unknowns),
            iterations: *iterations,
        }),
    }
}

/// Checks the structure and runs Newton with its fallbacks.
fn fresh(
    network: &Network,
    options: &SolveOptions,
    start: Option<&[f64]>,
) -> Result<cache::Outcome, DcError> {
    topology::validate(network)?;
    topology::check_structure(network)?;
    let layout = Layout::new(network);
    if layout.size == 0 {
        return Err(DcError::NoFreeNode);
    }
    if layout.size > DENSE_LIMIT {
        return Err(DcError::TooLarge {
            unknowns: layout.size,
            limit: DENSE_LIMIT,
        });
    }
    let outcome = Solver::new(network, &layout, options).solve(start);
    Ok(match outcome.result {
        Ok((converged, fallback)) => cache::Outcome::Solved {
            x: converged.x,
            lin: converged.lin,
            fallback,
            iterations: outcome.iterations,
        },
        Err(failure) => cache::Outcome::Failed {
            failure,
            iterations: outcome.iterations,
        },
    })
}

/// Net names for a set of unknowns.
fn names(network: &Network, layout: &Layout, unknowns: &[usize]) -> Vec<String> {
    unknowns
        .iter()
        .flat_map(|&k| layout.label(network, k))
        .collect()
}

/// Net names for unknowns in the given order (first occurrence kept), at most ten. Node
/// voltages are named in preference to branch currents, which only point at their nodes.
fn names_in_order(network: &Network, layout: &Layout, unknowns: &[usize]) -> Vec<String> {
    let voltages: Vec<usize> = unknowns
        .iter()
        .copied()
        .filter(|&k| k < layout.voltage_unknowns)
        .collect();
    let chosen = if voltages.is_empty() {
        unknowns
    } else {
        &voltages
    };
    let mut out: Vec<String> = Vec::new();
    for name in chosen.iter().flat_map(|&k| layout.label(network, k)) {
        if !out.contains(&name) {
            out.push(name);
        }
        if out.len() == 10 {
            break;
        }
    }
    out
}
