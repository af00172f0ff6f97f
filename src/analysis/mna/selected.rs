//! Selected entries of the inverse of a factored sparse system, all at
//! once, in time proportional to the factors' fill: Takahashi's recurrence
//! (Takahashi, Fagan and Chin, 1973; Erisman and Tinney, "On computing
//! certain elements of the inverse of a sparse matrix", CACM 18, 1975).
//!
//! With the permuted system `B = L·D·Ũ` (L unit lower, Ũ unit upper), its
//! inverse `Z` satisfies `Z = D⁻¹L⁻¹ + (I − Ũ)·Z` and `Z = Ũ⁻¹D⁻¹ + Z·(I − L)`,
//! so, going from the last unknown to the first,
//! - `Z[i, j] = −Σₖ Ũ[i, k]·Z[k, j]` for `j > i`,
//! - `Z[j, i] = −Σₖ Z[j, k]·L[k, i]` for `j > i`,
//! - `Z[i, i] = 1/D[i] − Σₖ Ũ[i, k]·Z[k, i]`,
//!
//! with k over the factors' entries beyond i. Every `Z[k, j]` needed lies on
//! the pattern once that pattern is closed: the symmetric pattern of L + U
//! filled by symbolic elimination in the factors' own order (the higher
//! neighbours of each unknown then form a clique). The entries of `A⁻¹`
//! between unknowns the matrix itself joins are on it, which is all the
//! βF sensitivity of every transistor needs: one pass instead of one solve
//! per transistor (which made `check` grow as the square of the circuit).
//!
//! Generic over the scalar: real for the DC sensitivities, complex for the
//! small-signal figures of long chains (each stage reads a few entries among
//! its own unknowns). The operations and their order are those of the real
//! recurrence, so its real results are unchanged.

use super::solver::SolveFailure;
use super::Scalar;
use faer::sparse::SparseColMatRef;

/// The entries of `A⁻¹` on the closed pattern of its factors.
pub struct SelectedInverse<T: Scalar = f64> {
    /// For each permuted unknown i, `higher[start[i]..start[i + 1]]`: its
    /// higher neighbours in the closed pattern, ascending.
    start: Vec<usize>,
    higher: Vec<usize>,
    /// `Z[i, k]` and `Z[k, i]` beside each higher neighbour k of i.
    upper: Vec<T>,
    lower: Vec<T>,
    diagonal: Vec<T>,
    /// Original row r is permuted row `row_inv[r]`, original column c is
    /// permuted column `col_inv[c]`.
    row_inv: Vec<usize>,
    col_inv: Vec<usize>,
}

/// The closed symmetric pattern: for each unknown, its higher neighbours
/// (ascending) after symbolic elimination in order 0, 1, …, n − 1.
fn closed_pattern(
    n: usize,
    edges: impl Iterator<Item = (usize, usize)>,
) -> (Vec<usize>, Vec<usize>) {
    let mut adjacent: Vec<Vec<usize>> = vec![Vec::new(); n];
    for (a, b) in edges {
        if a != b {
            adjacent[a.min(b)].push(a.max(b));
        }
    }
    let mut start = Vec::with_capacity(n + 1);
    let mut higher = Vec::new();
    start.push(0);
    for i in 0..n {
        let mut s = std::mem::take(&mut adjacent[i]);
        s.sort_unstable();
        s.dedup();
        if let Some((&parent, rest)) = s.split_first() {
            // Eliminating i joins its higher neighbours: they pass to the
            // lowest of them (its parent in the elimination tree).
            adjacent[parent].extend_from_slice(rest);
        }
        higher.extend_from_slice(&s);
        start.push(higher.len());
    }
    (start, higher)
}

impl<T: Scalar> SelectedInverse<T> {
    /// From the factors `P·A·Q = L·U` (faer's simplicial layout: L unit lower
    /// with its diagonal first in each column, U upper with its diagonal
    /// last) and the inverse permutations (`row_inv[r]`: the permuted row of
    /// original row r; `col_inv[c]` likewise for columns).
    pub(super) fn new(
        l: SparseColMatRef<'_, usize, T>,
        u: SparseColMatRef<'_, usize, T>,
        row_inv: &[usize],
        col_inv: &[usize],
    ) -> Result<Self, SolveFailure> {
        let n = row_inv.len();
        let mut edges = Vec::new();
        for m in [l, u] {
            for j in 0..n {
                edges.extend(m.row_idx_of_col_raw(j).iter().map(|&i| (i, j)));
            }
        }
        let (start, higher) = closed_pattern(n, edges.into_iter());
        // U by rows (Ũ = D⁻¹·U is taken on the fly), and D.
        let zero = T::mna_zero();
        let mut diag_u = vec![zero; n];
        let mut u_rows: Vec<Vec<(usize, T)>> = vec![Vec::new(); n];
        for (k, d) in diag_u.iter_mut().enumerate() {
            let (rows, vals) = (u.row_idx_of_col_raw(k), u.val_of_col(k));
            for (&i, &v) in rows.iter().zip(vals) {
                if i == k {
                    *d = v;
                } else {
                    u_rows[i].push((k, v));
                }
            }
        }
        if let Some(i) = diag_u
            .iter()
            .position(|d| *d == zero || !d.is_finite_value())
        {
            return Err(SolveFailure::Singular { unknown: Some(i) });
        }
        let mut z = SelectedInverse {
            upper: vec![zero; higher.len()],
            lower: vec![zero; higher.len()],
            diagonal: vec![zero; n],
            start,
            higher,
            row_inv: row_inv.to_vec(),
            col_inv: col_inv.to_vec(),
        };
        for i in (0..n).rev() {
            let d = diag_u[i];
            let l_col: Vec<(usize, T)> = l
                .row_idx_of_col_raw(i)
                .iter()
                .zip(l.val_of_col(i))
                .filter(|(&k, _)| k != i)
                .map(|(&k, &v)| (k, v))
                .collect();
            for p in z.start[i]..z.start[i + 1] {
                let j = z.higher[p];
                let mut up = zero;
                for &(k, v) in &u_rows[i] {
                    up -= v / d * z.permuted(k, j)?;
                }
                let mut low = zero;
                for &(k, v) in &l_col {
                    low -= z.permuted(j, k)? * v;
                }
                z.upper[p] = up;
                z.lower[p] = low;
            }
            let mut diagonal = T::mna_real(1.0) / d;
            for &(k, v) in &u_rows[i] {
                diagonal -= v / d * z.permuted(k, i)?;
            }
            z.diagonal[i] = diagonal;
        }
        Ok(z)
    }

    /// `Z[a, b]` in permuted indices, when on the closed pattern.
    fn permuted(&self, a: usize, b: usize) -> Result<T, SolveFailure> {
        let find = |i: usize, k: usize| {
            let s = self.start[i];
            self.higher[s..self.start[i + 1]]
                .binary_search(&k)
                .ok()
                .map(|p| s + p)
        };
        let v = match a.cmp(&b) {
            std::cmp::Ordering::Equal => Some(self.diagonal[a]),
            std::cmp::Ordering::Less => find(a, b).map(|p| self.upper[p]),
            std::cmp::Ordering::Greater => find(b, a).map(|p| self.lower[p]),
        };
        // invariant: the recurrence only reads entries on the closed pattern.
        v.ok_or(SolveFailure::Singular { unknown: None })
    }

    /// The largest magnitude among the selected entries: the recurrence
    /// sums products of them, so an entry much smaller than this carries an
    /// error of about the rounding unit times this, not times itself.
    pub fn largest(&self) -> f64 {
        self.diagonal
            .iter()
            .chain(&self.upper)
            .chain(&self.lower)
            .map(|v| v.magnitude())
            .fold(0.0, f64::max)
    }

    /// `A⁻¹[row, col]` in the system's own indices, or `None` when that
    /// entry is off the closed pattern (then solve for it instead).
    pub fn get(&self, row: usize, col: usize) -> Option<T> {
        self.permuted(self.col_inv[row], self.row_inv[col]).ok()
    }
}

#[cfg(test)]
mod tests {
    use super::super::{LinearSystem, PatternCollector, Stamp};

    /// An unsymmetric sparse system whose pivots are not all on the
    /// diagonal: a chain of small blocks joined both ways, a few one-way
    /// long couplings, some weak diagonals (so rows swap), and a zero-diagonal
    /// branch row like a floating voltage source's.
    fn system(n: usize, seed: u64) -> (LinearSystem<f64>, Vec<(usize, usize)>) {
        let mut s = seed;
        let mut next = move || {
            s = s
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            ((s >> 11) as f64) / ((1u64 << 53) as f64) - 0.5
        };
        let mut entries = Vec::new();
        for i in 0..n {
            let strong = if i % 5 == 3 { 0.01 } else { 4.0 };
            if i % 17 != 9 {
                entries.push((i, i, strong + next()));
            }
            if i + 1 < n {
                entries.push((i, i + 1, 1.0 + next()));
                entries.push((i + 1, i, 1.0 + next()));
            }
            if i % 11 == 0 && i + 30 < n {
                entries.push((i + 30, i, next()));
            }
        }
        let mut pattern = PatternCollector::default();
        for &(r, c, _) in &entries {
            Stamp::<f64>::add(&mut pattern, r, c, 0.0);
        }
        let mut sys = LinearSystem::with_limit(n, &pattern, 0);
        for &(r, c, v) in &entries {
            sys.add(r, c, v);
        }
        sys.factor().expect("factors");
        let joined = entries.iter().map(|&(r, c, _)| (r, c)).collect();
        (sys, joined)
    }

    #[test]
    fn selected_entries_match_solved_columns() {
        // invariant: A·A⁻¹ = I; each column of A⁻¹ solved through the same
        // factors must hold the recurrence's entries: A⁻¹[c, r] wherever
        // A[r, c] is an entry, and the diagonal.
        for (n, seed) in [(40usize, 3u64), (400, 11)] {
            let (mut sys, joined) = system(n, seed);
            let z = sys
                .selected_inverse()
                .expect("sparse and factored")
                .expect("on the pattern");
            let mut columns = vec![0.0; n * n];
            for k in 0..n {
                columns[k * n + k] = 1.0;
            }
            sys.solve_many(&mut columns, n).expect("solves");
            let inverse = |r: usize, c: usize| columns[c * n + r];
            let scale = columns.iter().fold(0.0f64, |m, v| m.max(v.abs()));
            let mut checked = 0;
            for &(r, c) in &joined {
                for (a, b) in [(c, r), (r, r)] {
                    let Some(got) = z.get(a, b) else {
                        panic!("n {n}: ({a}, {b}) of ({r}, {c}) off the pattern")
                    };
                    let want = inverse(a, b);
                    assert!(
                        (got - want).abs() <= 1e-12 * scale,
                        "n {n}: A⁻¹[{a}, {b}] {got:e} vs solved {want:e}"
                    );
                    checked += 1;
                }
            }
            assert!(checked >= 2 * n);
        }
    }

    #[test]
    fn complex_selected_entries_match_solved_columns() {
        // invariant: A·A⁻¹ = I for a complex system too (the recurrence is
        // the same field algebra): the entries on the pattern equal the
        // columns solved through the same factors, to 1e-12 of the largest.
        use num_complex::Complex64 as C;
        for (n, seed) in [(40usize, 5u64), (300, 17)] {
            let (_, joined) = system(n, seed);
            let mut s = seed ^ 0x9e37;
            let mut next = move || {
                s = s
                    .wrapping_mul(6364136223846793005)
                    .wrapping_add(1442695040888963407);
                ((s >> 11) as f64) / ((1u64 << 53) as f64) - 0.5
            };
            let mut entries = Vec::new();
            for &(r, c) in &joined {
                let re = if r == c { 3.0 + next() } else { next() };
                entries.push((r, c, C::new(re, next())));
            }
            let mut pattern = PatternCollector::default();
            for &(r, c, _) in &entries {
                Stamp::<C>::add(&mut pattern, r, c, C::new(0.0, 0.0));
            }
            let mut sys = LinearSystem::<C>::with_limit(n, &pattern, 0);
            for &(r, c, v) in &entries {
                sys.add(r, c, v);
            }
            sys.factor().expect("factors");
            let z = sys
                .selected_inverse()
                .expect("sparse and factored")
                .expect("on the pattern");
            let mut columns = vec![C::new(0.0, 0.0); n * n];
            for k in 0..n {
                columns[k * n + k] = C::new(1.0, 0.0);
            }
            sys.solve_many(&mut columns, n).expect("solves");
            let scale = columns.iter().fold(0.0f64, |m, v| m.max(v.norm()));
            let mut checked = 0;
            for &(r, c) in &joined {
                for (a, b) in [(c, r), (r, c), (r, r)] {
                    let Some(got) = z.get(a, b) else { continue };
                    let want = columns[b * n + a];
                    assert!(
                        (got - want).norm() <= 1e-12 * scale,
                        "n {n}: A⁻¹[{a}, {b}] {got} vs solved {want}"
                    );
                    checked += 1;
                }
            }
            assert!(checked >= 2 * n, "{checked} entries checked");
        }
    }
}
