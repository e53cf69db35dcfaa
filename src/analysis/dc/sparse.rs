//! The sparse linear solve for systems too large for the dense one to stay cheap.
//!
//! An MNA matrix has a handful of entries per row whatever its size, but the dense LU costs
//! the cube of the size: many identical parts wired in parallel on the same nets (a flattened
//! array, a board of channels sharing rails) made one sub-network of hundreds of unknowns and
//! each of its hundreds of thousands of solves cost milliseconds. Here the matrix is kept as
//! rows of (column, value) pairs and factored with a fill-reducing order:
//!
//! - **Order.** Columns are eliminated in a greedy minimum-degree order of the symmetric
//!   pattern of `A + Aᵀ` (each elimination joins the eliminated unknown's neighbours). The
//!   internal nodes of many small parts go first, at the cost of their own few entries; the
//!   shared nets, dense by nature, go last. The order depends on the pattern only, which a
//!   Newton run keeps from one iteration to the next, so it is computed once per pattern.
//! - **Pivots.** Within each column the pivot is the row with the fewest entries among those
//!   whose magnitude is at least a tenth of the column's largest (threshold partial pivoting):
//!   voltage-source rows have no diagonal, so pivoting cannot be symmetric.
//! - **Degeneracy.** As in the dense solve, rows and columns are first scaled to a largest
//!   entry of 1, and an unknown whose column has nothing left above the floor is reported as
//!   degenerate instead of yielding a huge value.

use super::linear::{LinearFailure, PIVOT_FLOOR};

/// A pivot must be at least this fraction of its column's largest candidate.
const PIVOT_THRESHOLD: f64 = 0.1;

/// One elimination step's record, for the forward substitution.
#[derive(Clone, Copy, Debug)]
struct Multiplier {
    row: u32,
    pivot_row: u32,
    value: f64,
}

/// Scratch space kept from one sparse solve to the next (a Newton run's whole life).
#[derive(Debug, Default)]
pub(crate) struct SparseSolver {
    /// `(row, col)` of each entry, in the order they were stamped.
    stamped: Vec<(u32, u32)>,
    /// Each entry's row and place in it.
    slots: Vec<(u32, u32)>,
    /// The sorted columns of each row.
    template: Vec<Vec<u32>>,
    /// Column elimination order of the pattern.
    order: Vec<usize>,
    rows: Vec<Vec<(u32, f64)>>,
    row_scale: Vec<f64>,
    col_scale: Vec<f64>,
    /// Rows holding an entry in each column (may name used-up rows; checked on use).
    col_rows: Vec<Vec<u32>>,
    /// Pivot row of each step, in elimination order.
    pivots: Vec<Option<u32>>,
    multipliers: Vec<Multiplier>,
    used: Vec<bool>,
}

impl SparseSolver {
    /// Solves `a·x = b`, the matrix given as summed `(row, col, value)` entries.
    pub(crate) fn solve(
        &mut self,
        n: usize,
        entries: &[(u32, u32, f64)],
        b: &[f64],
        x: &mut Vec<f64>,
    ) -> Result<(), LinearFailure> {
        if b.len() != n
            || entries
                .iter()
                .map(|e| &e.2)
                .chain(b)
                .any(|v| !v.is_finite())
        {
            return Err(LinearFailure::NotFinite);
        }
        self.load(n, entries);
        self.equilibrate(n);
        let empty: Vec<usize> = (0..n)
            .filter(|&k| self.row_scale.get(k) == Some(&0.0) || self.col_scale.get(k) == Some(&0.0))
            .collect();
        if !empty.is_empty() {
            return Err(LinearFailure::Degenerate(empty));
        }
        let degenerate = self.factor(n);
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

    /// Sums the entries into sorted rows. The entries of one network come in the same order
    /// at every Newton iteration, so where each one lands is remembered, and the rows are
    /// sorted (and the elimination order computed) only when that order changes.
    fn load(&mut self, n: usize, entries: &[(u32, u32, f64)]) {
        let same = self.template.len() == n
            && self.stamped.len() == entries.len()
            && self
                .stamped
                .iter()
                .zip(entries)
                .all(|(&(r, c), e)| r == e.0 && c == e.1);
        if !same {
            self.learn_pattern(n, entries);
        }
        self.rows.resize_with(n, Vec::new);
        self.rows.truncate(n);
        for (row, columns) in self.rows.iter_mut().zip(&self.template) {
            row.clear();
            row.extend(columns.iter().map(|&c| (c, 0.0)));
        }
        for (&(r, at), e) in self.slots.iter().zip(entries) {
            if let Some(entry) = self
                .rows
                .get_mut(r as usize)
                .and_then(|row| row.get_mut(at as usize))
            {
                entry.1 += e.2;
            }
        }
    }

    /// Records the order of the entries, each one's place in its sorted row, and the
    /// elimination order of the pattern.
    fn learn_pattern(&mut self, n: usize, entries: &[(u32, u32, f64)]) {
        self.stamped.clear();
        self.stamped.extend(entries.iter().map(|e| (e.0, e.1)));
        self.template.clear();
        self.template.resize_with(n, Vec::new);
        for &(r, c) in &self.stamped {
            if (r as usize) < n && (c as usize) < n {
                if let Some(columns) = self.template.get_mut(r as usize) {
                    columns.push(c);
                }
            }
        }
        for columns in &mut self.template {
            columns.sort_unstable();
            columns.dedup();
        }
        self.slots.clear();
        for &(r, c) in &self.stamped {
            let at = self
                .template
                .get(r as usize)
                .and_then(|columns| columns.binary_search(&c).ok())
                .and_then(|i| u32::try_from(i).ok())
                .unwrap_or(u32::MAX);
            self.slots.push((r, at));
        }
        let mut pattern = Vec::new();
        for (r, columns) in self.template.iter().enumerate() {
            pattern.extend(columns.iter().map(|&c| (r as u32, c)));
        }
        self.order = minimum_degree_order(n, &pattern);
    }

    /// Scales rows, then columns, to a largest entry of 1 (as the dense solve does).
    fn equilibrate(&mut self, n: usize) {
        self.row_scale.clear();
        for row in &mut self.rows {
            let scale = reciprocal(row.iter().fold(0.0, |m: f64, e| m.max(e.1.abs())));
            self.row_scale.push(scale);
            for e in row.iter_mut() {
                e.1 *= scale;
            }
        }
        self.col_scale.clear();
        self.col_scale.resize(n, 0.0);
        for row in &self.rows {
            for &(c, v) in row {
                if let Some(s) = self.col_scale.get_mut(c as usize) {
                    *s = s.max(v.abs());
                }
            }
        }
        for s in &mut self.col_scale {
            *s = reciprocal(*s);
        }
        for row in &mut self.rows {
            for e in row.iter_mut() {
                e.1 *= self.col_scale.get(e.0 as usize).copied().unwrap_or(0.0);
            }
        }
    }

    /// Right-looking elimination in the column order; returns the degenerate unknowns.
    fn factor(&mut self, n: usize) -> Vec<usize> {
        self.col_rows.resize_with(n, Vec::new);
        self.col_rows.truncate(n);
        for list in &mut self.col_rows {
            list.clear();
        }
        for (r, row) in self.rows.iter().enumerate() {
            for &(c, _) in row {
                if let Some(list) = self.col_rows.get_mut(c as usize) {
                    list.push(r as u32);
                }
            }
        }
        self.used.clear();
        self.used.resize(n, false);
        self.pivots.clear();
        self.multipliers.clear();
        let mut degenerate = Vec::new();
        let order = std::mem::take(&mut self.order);
        for &col in &order {
            let pivot = self.choose_pivot(col);
            self.pivots.push(pivot);
            let Some(pivot_row) = pivot else {
                degenerate.push(col);
                continue;
            };
            if let Some(flag) = self.used.get_mut(pivot_row as usize) {
                *flag = true;
            }
            self.eliminate(col, pivot_row);
        }
        self.order = order;
        degenerate.sort_unstable();
        degenerate
    }

    /// The sparsest acceptable row for column `col`, or `None` when nothing is above the floor.
    fn choose_pivot(&self, col: usize) -> Option<u32> {
        let candidates = self.col_rows.get(col)?;
        let value_in = |r: u32| -> f64 {
            self.rows
                .get(r as usize)
                .and_then(|row| {
                    row.binary_search_by_key(&(col as u32), |e| e.0)
                        .ok()
                        .map(|i| row[i].1)
                })
                .unwrap_or(0.0)
        };
        let live = || {
            candidates
                .iter()
                .copied()
                .filter(|&r| !self.used.get(r as usize).copied().unwrap_or(true))
        };
        let largest = live().fold(0.0, |m: f64, r| m.max(value_in(r).abs()));
        if largest <= PIVOT_FLOOR {
            return None;
        }
        // Ties go to the lowest row index, so the choice never depends on list order.
        live()
            .filter(|&r| value_in(r).abs() >= PIVOT_THRESHOLD * largest)
            .min_by_key(|&r| (self.rows.get(r as usize).map_or(usize::MAX, Vec::len), r))
    }

    /// Subtracts multiples of the pivot row from every other live row with an entry in `col`.
    fn eliminate(&mut self, col: usize, pivot_row: u32) {
        let pivot = std::mem::take(
            self.rows
                .get_mut(pivot_row as usize)
                .unwrap_or(&mut Vec::new()),
        );
        let diag = pivot
            .binary_search_by_key(&(col as u32), |e| e.0)
            .ok()
            .and_then(|i| pivot.get(i))
            .map_or(0.0, |e| e.1);
        let targets: Vec<u32> = self
            .col_rows
            .get(col)
            .map(|list| {
                list.iter()
                    .copied()
                    .filter(|&r| {
                        r != pivot_row && !self.used.get(r as usize).copied().unwrap_or(true)
                    })
                    .collect()
            })
            .unwrap_or_default();
        for r in targets {
            let Some(row) = self.rows.get_mut(r as usize) else {
                continue;
            };
            let Ok(at) = row.binary_search_by_key(&(col as u32), |e| e.0) else {
                continue;
            };
            let l = row.get(at).map_or(0.0, |e| e.1) / diag;
            self.multipliers.push(Multiplier {
                row: r,
                pivot_row,
                value: l,
            });
            // row −= l·pivot over the pivot's other columns; `col` itself becomes zero and is
            // dropped (the multiplier takes its place, as in the dense solve).
            row.remove(at);
            for &(c, u) in &pivot {
                if c as usize == col {
                    continue;
                }
                match row.binary_search_by_key(&c, |e| e.0) {
                    Ok(i) => {
                        if let Some(e) = row.get_mut(i) {
                            e.1 += -u * l;
                        }
                    }
                    Err(i) => {
                        row.insert(i, (c, -u * l));
                        if let Some(list) = self.col_rows.get_mut(c as usize) {
                            list.push(r);
                        }
                    }
                }
            }
        }
        if let Some(slot) = self.rows.get_mut(pivot_row as usize) {
            *slot = pivot;
        }
    }

    /// Forward substitution through the recorded multipliers, back substitution through the
    /// pivot rows, unscaled into `x`.
    fn substitute(&mut self, n: usize, b: &[f64], x: &mut Vec<f64>) {
        let mut y: Vec<f64> = b.iter().zip(&self.row_scale).map(|(v, r)| v * r).collect();
        for m in &self.multipliers {
            let from = y.get(m.pivot_row as usize).copied().unwrap_or(0.0);
            if let Some(v) = y.get_mut(m.row as usize) {
                *v += -m.value * from;
            }
        }
        let mut z = vec![0.0; n];
        for (&col, pivot) in self.order.iter().zip(&self.pivots).rev() {
            let Some(p) = pivot else { continue };
            let Some(row) = self.rows.get(*p as usize) else {
                continue;
            };
            let mut acc = y.get(*p as usize).copied().unwrap_or(0.0);
            let mut diag = 0.0;
            for &(c, u) in row {
                if c as usize == col {
                    diag = u;
                } else {
                    acc += -u * z.get(c as usize).copied().unwrap_or(0.0);
                }
            }
            if let Some(v) = z.get_mut(col) {
                *v = acc / diag;
            }
        }
        x.clear();
        x.extend(z.iter().zip(&self.col_scale).map(|(v, c)| v * c));
    }
}

/// Greedy minimum-degree elimination order of the symmetric pattern of `A + Aᵀ`; ties go to
/// the lowest index, so the order depends on the pattern alone.
fn minimum_degree_order(n: usize, pattern: &[(u32, u32)]) -> Vec<usize> {
    let mut adjacent: Vec<Vec<usize>> = vec![Vec::new(); n];
    for &(r, c) in pattern {
        let (r, c) = (r as usize, c as usize);
        if r != c && r < n && c < n {
            if let Some(list) = adjacent.get_mut(r) {
                list.push(c);
            }
            if let Some(list) = adjacent.get_mut(c) {
                list.push(r);
            }
        }
    }
    for list in &mut adjacent {
        list.sort_unstable();
        list.dedup();
    }
    let mut eliminated = vec![false; n];
    let mut order = Vec::with_capacity(n);
    let mut buckets: std::collections::BTreeSet<(usize, usize)> = (0..n)
        .map(|v| (adjacent.get(v).map_or(0, Vec::len), v))
        .collect();
    while let Some((_, v)) = buckets.pop_first() {
        if eliminated.get(v).copied().unwrap_or(true) {
            continue;
        }
        if let Some(flag) = eliminated.get_mut(v) {
            *flag = true;
        }
        order.push(v);
        let neighbours: Vec<usize> = adjacent
            .get(v)
            .map(|list| {
                list.iter()
                    .copied()
                    .filter(|&u| !eliminated.get(u).copied().unwrap_or(true))
                    .collect()
            })
            .unwrap_or_default();
        // The neighbours become a clique; each one's degree changes, so its place is moved.
        for &u in &neighbours {
            let Some(list) = adjacent.get(u) else {
                continue;
            };
            let old_degree = list.len();
            let mut joined: Vec<usize> = list
                .iter()
                .copied()
                .filter(|&w| w != v && !eliminated.get(w).copied().unwrap_or(true))
                .chain(neighbours.iter().copied().filter(|&w| w != u))
                .collect();
            joined.sort_unstable();
            joined.dedup();
            buckets.remove(&(old_degree, u));
            buckets.insert((joined.len(), u));
            if let Some(slot) = adjacent.get_mut(u) {
                *slot = joined;
            }
        }
    }
    order
}

/// `1/v` for a positive finite `v`; 0 marks an all-zero row or column.
fn reciprocal(v: f64) -> f64 {
    if v > 0.0 {
        1.0 / v
    } else {
        0.0
    }
}
