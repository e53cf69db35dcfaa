//! One dense linear solve (nalgebra's LU with partial pivoting) with a check for degenerate
//! unknowns, so a near-singular system is reported instead of yielding huge voltages.

use nalgebra::{DMatrix, DVector};

/// A pivot smaller than this fraction of its column's largest entry marks the column's
/// unknown as degenerate. Real conductance spreads (gmin 1e-12 S next to 1 Ω) stay far above.
const PIVOT_RATIO: f64 = 1e-14;

pub(crate) enum LinearFailure {
    /// Unknowns whose pivot vanished.
    Degenerate(Vec<usize>),
    /// The matrix or the solution holds NaN or infinity.
    NotFinite,
}

pub(crate) fn solve_linear(
    a: &DMatrix<f64>,
    b: &DVector<f64>,
) -> Result<DVector<f64>, LinearFailure> {
    if a.iter().chain(b.iter()).any(|v| !v.is_finite()) {
        return Err(LinearFailure::NotFinite);
    }
    let lu = a.clone().lu();
    let u = lu.u();
    let degenerate: Vec<usize> = (0..a.ncols())
        .filter(|&k| {
            let column_max = a.column(k).amax();
            let pivot = u.get((k, k)).copied().unwrap_or(0.0).abs();
            column_max == 0.0 || pivot <= PIVOT_RATIO * column_max
        })
        .collect();
    if !degenerate.is_empty() {
        return Err(LinearFailure::Degenerate(degenerate));
    }
    match lu.solve(b) {
        Some(x) if x.iter().all(|v| v.is_finite()) => Ok(x),
        Some(_) => Err(LinearFailure::NotFinite),
        None => Err(LinearFailure::Degenerate((0..a.ncols()).collect())),
    }
}
