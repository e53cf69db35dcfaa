//! One dense linear solve (nalgebra's LU with partial pivoting) on an equilibrated matrix,
//! with a check for degenerate unknowns so a singular system is reported instead of yielding
//! huge voltages.

use nalgebra::{DMatrix, DVector};

/// After scaling every row and column to a largest entry of 1, a pivot below this marks its
/// unknown as degenerate.
const PIVOT_FLOOR: f64 = 1e-13;

pub(crate) enum LinearFailure {
    /// Unknowns whose pivot vanished.
    Degenerate(Vec<usize>),
    /// The matrix or the solution holds NaN or infinity.
    NotFinite,
}

/// Solves `a·x = b`.
///
/// Rows and then columns are scaled so that each one's largest entry is 1: MNA matrices mix
/// siemens, unit source stamps and the huge conductances of hard-driven junctions, and
/// without scaling a perfectly regular system (a source across a forward junction) would
/// show a tiny pivot. Degeneracy is then judged on the scaled pivots.
pub(crate) fn solve_linear(
    a: &DMatrix<f64>,
    b: &DVector<f64>,
) -> Result<DVector<f64>, LinearFailure> {
    if a.iter().chain(b.iter()).any(|v| !v.is_finite()) {
        return Err(LinearFailure::NotFinite);
    }
    let n = a.nrows();
    let row_scale: Vec<f64> = a.row_iter().map(|row| reciprocal(row.amax())).collect();
    let mut scaled = a.clone();
    for (mut row, &r) in scaled.row_iter_mut().zip(&row_scale) {
        row *= r;
    }
    let col_scale: Vec<f64> = scaled
        .column_iter()
        .map(|col| reciprocal(col.amax()))
        .collect();
    for (mut col, &c) in scaled.column_iter_mut().zip(&col_scale) {
        col *= c;
    }
    let empty: Vec<usize> = (0..n)
        .filter(|&k| row_scale.get(k) == Some(&0.0) || col_scale.get(k) == Some(&0.0))
        .collect();
    if !empty.is_empty() {
        return Err(LinearFailure::Degenerate(empty));
    }
    let lu = scaled.lu();
    let u = lu.u();
    let degenerate: Vec<usize> = (0..n)
        .filter(|&k| u.get((k, k)).is_none_or(|p| p.abs() <= PIVOT_FLOOR))
        .collect();
    if !degenerate.is_empty() {
        return Err(LinearFailure::Degenerate(degenerate));
    }
    let rhs = DVector::from_iterator(n, b.iter().zip(&row_scale).map(|(v, r)| v * r));
    match lu.solve(&rhs) {
        Some(y) => {
            let x = DVector::from_iterator(n, y.iter().zip(&col_scale).map(|(v, c)| v * c));
            if x.iter().all(|v| v.is_finite()) {
                Ok(x)
            } else {
                Err(LinearFailure::NotFinite)
            }
        }
        None => Err(LinearFailure::Degenerate((0..n).collect())),
    }
}

/// `1/v` for a positive finite `v`; 0 marks an all-zero row or column.
fn reciprocal(v: f64) -> f64 {
    if v > 0.0 {
        1.0 / v
    } else {
        0.0
    }
}
