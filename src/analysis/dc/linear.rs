//! One dense linear solve (LU with partial pivoting) on an equilibrated matrix, with a check
//! for degenerate unknowns so a singular system is reported instead of yielding huge voltages.
//!
//! The matrix and every scratch buffer live in a [`LinearSolver`] that a Newton run keeps for
//! all its iterations: the systems here are small (tens of unknowns) and solved hundreds of
//! thousands of times per board, so allocation, not arithmetic, was the cost. The elimination
//! is the textbook one, in the same order of operations as nalgebra's `LU` (first largest
//! pivot, multipliers by the reciprocal of the pivot, unit lower triangle, column-oriented
//! substitution), so solutions are the same to the last bit as before it was hand-written.

use super::sparse::SparseSolver;

/// After scaling every row and column to a largest entry of 1, a pivot below this marks its
/// unknown as degenerate.
pub(crate) const PIVOT_FLOOR: f64 = 1e-13;

/// Systems with more unknowns than this are stored and factored sparse ([`super::sparse`]).
/// Below it the dense elimination is as fast and its results are the reference the tests hold
/// to the last bit.
pub(crate) const SPARSE_FROM: usize = 64;

#[derive(Debug)]
pub(crate) enum LinearFailure {
    /// Unknowns whose pivot vanished.
    Degenerate(Vec<usize>),
    /// The matrix or the solution holds NaN or infinity.
    NotFinite,
}

/// A square matrix: stored row by row up to [`SPARSE_FROM`] unknowns, as a list of
/// `(row, col, value)` entries (summed when factored) above it.
#[derive(Clone, Debug, Default)]
pub(crate) struct Matrix {
    n: usize,
    data: Vec<f64>,
    entries: Vec<(u32, u32, f64)>,
}

impl Matrix {
    /// Makes the matrix `n × n` and all zero, keeping its allocation.
    pub(crate) fn reset(&mut self, n: usize) {
        self.n = n;
        self.data.clear();
        self.entries.clear();
        if !Self::is_sparse(n) {
            self.data.resize(n.saturating_mul(n), 0.0);
        }
    }

    fn is_sparse(n: usize) -> bool {
        n > SPARSE_FROM
    }

    /// An `n × n` matrix from its entries row by row (missing ones zero).
    #[cfg(test)]
    pub(crate) fn from_rows(n: usize, rows: &[f64]) -> Self {
        let mut m = Self::default();
        m.reset(n);
        if Self::is_sparse(n) {
            for (i, &v) in rows.iter().enumerate().take(n * n) {
                m.add(i / n, i % n, v);
            }
        }
        for (entry, &v) in m.data.iter_mut().zip(rows) {
            *entry = v;
        }
        m
    }

    /// The summed entry at `(row, col)`.
    #[cfg(test)]
    pub(crate) fn entry(&self, row: usize, col: usize) -> f64 {
        if Self::is_sparse(self.n) {
            self.entries
                .iter()
                .filter(|e| e.0 as usize == row && e.1 as usize == col)
                .map(|e| e.2)
                .sum()
        } else {
            self.data.get(row * self.n + col).copied().unwrap_or(0.0)
        }
    }

    pub(crate) fn add(&mut self, row: usize, col: usize, value: f64) {
        if Self::is_sparse(self.n) {
            if row < self.n && col < self.n {
                if let (Ok(r), Ok(c)) = (u32::try_from(row), u32::try_from(col)) {
                    self.entries.push((r, c, value));
                }
            }
            return;
        }
        if row < self.n && col < self.n {
            if let Some(entry) = self.data.get_mut(row * self.n + col) {
                *entry += value;
            }
        }
    }

    fn row(&self, r: usize) -> &[f64] {
        self.data.get(r * self.n..(r + 1) * self.n).unwrap_or(&[])
    }
}

/// Scratch space for [`LinearSolver::solve`], reused from one solve to the next.
#[derive(Debug, Default)]
pub(crate) struct LinearSolver {
    lu: Vec<f64>,
    row_scale: Vec<f64>,
    col_scale: Vec<f64>,
    /// Row swapped with row `i` at elimination step `i`.
    swaps: Vec<usize>,
    rhs: Vec<f64>,
    /// Whether the scaled matrix is finite, which makes skipping zero multipliers exact.
    skip_zeros: bool,
    sparse: SparseSolver,
}

impl LinearSolver {
    /// Solves `a·x = b` into `x`.
    ///
    /// Rows and then columns are scaled so that each one's largest entry is 1: MNA matrices
    /// mix siemens, unit source stamps and the huge conductances of hard-driven junctions, and
    /// without scaling a perfectly regular system (a source across a forward junction) would
    /// show a tiny pivot. Degeneracy is then judged on the scaled pivots.
    pub(crate) fn solve(
        &mut self,
        a: &Matrix,
        b: &[f64],
        x: &mut Vec<f64>,
    ) -> Result<(), LinearFailure> {
        let n = a.n;
        if Matrix::is_sparse(n) {
            return self.sparse.solve(n, &a.entries, b, x);
        }
        if b.len() != n || a.data.iter().chain(b).any(|v| !v.is_finite()) {
            return Err(LinearFailure::NotFinite);
        }
        if n == 0 {
            x.clear();
            return Ok(());
        }
        self.equilibrate(a);
        let empty: Vec<usize> = (0..n)
            .filter(|&k| self.row_scale.get(k) == Some(&0.0) || self.col_scale.get(k) == Some(&0.0))
            .collect();
        if !empty.is_empty() {
            return Err(LinearFailure::Degenerate(empty));
        }
        self.factor(n);
        let degenerate: Vec<usize> = (0..n)
            .filter(|&k| {
                self.lu
                    .get(k * n + k)
                    .is_none_or(|p| p.abs() <= PIVOT_FLOOR)
            })
            .collect();
        if !degenerate.is_empty() {
            return Err(LinearFailure::Degenerate(degenerate));
        }
        self.substitute(n, b, x);
        if x.iter().all(|v| v.is_finite()) {
            Ok(())
        } else {
            Err(LinearFailure::NotFinite)
        }
    }

    /// Copies `a` into the work matrix scaled to unit row maxima, then unit column maxima.
    fn equilibrate(&mut self, a: &Matrix) {
        let n = a.n;
        self.lu.clear();
        self.lu.extend_from_slice(&a.data);
        self.row_scale.clear();
        for r in 0..n {
            let scale = reciprocal(a.row(r).iter().fold(0.0, |m: f64, v| m.max(v.abs())));
            self.row_scale.push(scale);
            for v in self.lu.iter_mut().skip(r * n).take(n) {
                *v *= scale;
            }
        }
        self.col_scale.clear();
        for c in 0..n {
            let largest = self
                .lu
                .iter()
                .skip(c)
                .step_by(n)
                .fold(0.0, |m: f64, v| m.max(v.abs()));
            self.col_scale.push(reciprocal(largest));
        }
        for row in self.lu.chunks_mut(n) {
            for (v, &c) in row.iter_mut().zip(&self.col_scale) {
                *v *= c;
            }
        }
        // A scale of 1/(subnormal) can overflow; then 0·∞ must stay the NaN it was.
        self.skip_zeros = self.lu.iter().all(|v| v.is_finite());
    }

    /// In-place LU with partial pivoting: the first row holding the column's largest
    /// magnitude becomes the pivot; a column with nothing left to pivot on is skipped and
    /// shows up as a zero pivot.
    fn factor(&mut self, n: usize) {
        self.swaps.clear();
        let skip_zeros = self.skip_zeros;
        let lu = &mut self.lu;
        for i in 0..n {
            let mut piv = i;
            let mut largest = lu.get(i * n + i).map_or(0.0, |v| v.abs());
            for r in i + 1..n {
                let v = lu.get(r * n + i).map_or(0.0, |v| v.abs());
                if v > largest {
                    largest = v;
                    piv = r;
                }
            }
            self.swaps.push(piv);
            let diag = lu.get(piv * n + i).copied().unwrap_or(0.0);
            if diag == 0.0 {
                // Nothing left in this column; keep the row order.
                if let Some(last) = self.swaps.last_mut() {
                    *last = i;
                }
                continue;
            }
            if piv != i {
                for k in 0..n {
                    lu.swap(i * n + k, piv * n + k);
                }
            }
            let inv_diag = 1.0 / diag;
            let (top, below) = lu.split_at_mut((i + 1) * n);
            let pivot_row = top.get(i * n + i + 1..(i + 1) * n).unwrap_or(&[]);
            for row in below.chunks_mut(n) {
                let Some(l) = row.get_mut(i) else { continue };
                *l *= inv_diag;
                let l = *l;
                // MNA rows are mostly zeros. A zero multiplier would add a signed zero to
                // each entry, which leaves every entry as it is (no entry is ever −0 here:
                // stamped sums start at +0), so skipping it changes no bit.
                if l == 0.0 && skip_zeros {
                    continue;
                }
                let rest = row.get_mut(i + 1..).unwrap_or(&mut []);
                for (v, &u) in rest.iter_mut().zip(pivot_row) {
                    *v += -u * l;
                }
            }
        }
    }

    /// Forward and back substitution on `b` scaled by the row factors, unscaled into `x`.
    fn substitute(&mut self, n: usize, b: &[f64], x: &mut Vec<f64>) {
        let y = &mut self.rhs;
        y.clear();
        y.extend(b.iter().zip(&self.row_scale).map(|(v, r)| v * r));
        for (i, &piv) in self.swaps.iter().enumerate() {
            if piv != i && piv < n {
                y.swap(i, piv);
            }
        }
        let lu = &self.lu;
        let at = |r: usize, c: usize| lu.get(r * n + c).copied().unwrap_or(0.0);
        // Zero coefficients are skipped for the reason given in `factor`.
        for i in 0..n.saturating_sub(1) {
            let coeff = y.get(i).copied().unwrap_or(0.0);
            if coeff == 0.0 && self.skip_zeros {
                continue;
            }
            for j in i + 1..n {
                if let Some(v) = y.get_mut(j) {
                    *v += -coeff * at(j, i);
                }
            }
        }
        for i in (0..n).rev() {
            let Some(v) = y.get_mut(i) else { continue };
            *v /= at(i, i);
            let coeff = *v;
            if coeff == 0.0 && self.skip_zeros {
                continue;
            }
            for j in 0..i {
                if let Some(v) = y.get_mut(j) {
                    *v += -coeff * at(j, i);
                }
            }
        }
        x.clear();
        x.extend(y.iter().zip(&self.col_scale).map(|(v, c)| v * c));
    }
}

/// Solves `a·x = b` with scratch space of its own, for one-off solves.
pub(crate) fn solve_linear(a: &Matrix, b: &[f64]) -> Result<Vec<f64>, LinearFailure> {
    let mut x = Vec::new();
    LinearSolver::default().solve(a, b, &mut x)?;
    Ok(x)
}

/// `1/v` for a positive finite `v`; 0 marks an all-zero row or column.
fn reciprocal(v: f64) -> f64 {
    if v > 0.0 {
        1.0 / v
    } else {
        0.0
    }
}
