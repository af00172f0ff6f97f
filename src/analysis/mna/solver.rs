//! The linear solvers behind [`super::LinearSystem`]: dense LU (nalgebra)
//! for small systems, sparse LU (faer) with the symbolic analysis reused.

use super::selected::SelectedInverse;
use super::{PatternCollector, Scalar, Stamp};
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::perm::PermRef;
use faer::sparse::linalg::lu::simplicial::{self, SimplicialLu};
use faer::sparse::linalg::lu::{factorize_symbolic_lu, LuSymbolicParams, SymbolicLu};
use faer::sparse::linalg::SupernodalThreshold;
use faer::sparse::{SparseColMatRef, SymbolicSparseColMatRef};
use faer::{Conj, MatMut, Par};

/// Which sparse LU variant faer uses. Circuits have a few dense rows and
/// columns (a supply net touching every stage); the supernodal variant
/// turns them into large dense blocks, so the simplicial one is used (see
/// the benchmark table in benches/dc.rs).
pub const SPARSE_VARIANT: SupernodalThreshold = SupernodalThreshold::FORCE_SIMPLICIAL;

/// Why a linear solve failed.
#[derive(Debug, Clone, PartialEq)]
pub enum SolveFailure {
    /// No unique solution; `unknown` is the row/column where elimination
    /// found no usable pivot, when known.
    Singular { unknown: Option<usize> },
    /// The solution has a NaN or infinity in it.
    NotFinite { unknown: usize },
}

/// A square linear system with a fixed pattern, dense or sparse.
pub enum LinearSystem<T: Scalar> {
    Dense(DenseSystem<T>),
    Sparse(Box<SparseSystem<T>>),
}

impl<T: Scalar> LinearSystem<T> {
    /// Dense for up to [`Scalar::DENSE_LIMIT`] unknowns, sparse above.
    pub fn new(size: usize, pattern: &PatternCollector) -> Self {
        Self::with_limit(size, pattern, T::DENSE_LIMIT)
    }

    /// Will a system of `size` unknowns be dense (so no pattern is needed)?
    pub fn is_dense_size(size: usize) -> bool {
        size <= T::DENSE_LIMIT
    }

    /// As [`Self::new`] with a chosen crossover (used by the benchmark).
    pub fn with_limit(size: usize, pattern: &PatternCollector, limit: usize) -> Self {
        if size <= limit {
            LinearSystem::Dense(DenseSystem::new(size))
        } else {
            LinearSystem::Sparse(Box::new(SparseSystem::new(size, pattern)))
        }
    }

    pub fn size(&self) -> usize {
        match self {
            LinearSystem::Dense(d) => d.size,
            LinearSystem::Sparse(s) => s.size,
        }
    }

    pub fn is_sparse(&self) -> bool {
        matches!(self, LinearSystem::Sparse(_))
    }

    /// Zero the matrix and the right-hand side (the pattern stays).
    pub fn clear(&mut self) {
        match self {
            LinearSystem::Dense(d) => d.clear(),
            LinearSystem::Sparse(s) => s.clear(),
        }
    }

    /// Factorise and solve; the factors are kept for [`Self::solve_again`].
    pub fn solve(&mut self) -> Result<Vec<T>, SolveFailure> {
        if self.size() == 0 {
            return Ok(Vec::new());
        }
        self.factor()?;
        let rhs = self.rhs().to_vec();
        self.solve_again(&rhs)
    }

    /// Factorise only (each pivot checked against the largest entry); then
    /// [`Self::solve_again`] for each right-hand side.
    pub fn factor(&mut self) -> Result<(), SolveFailure> {
        if self.size() == 0 {
            return Ok(());
        }
        match self {
            LinearSystem::Dense(d) => d.factor(),
            LinearSystem::Sparse(s) => s.factor(),
        }
    }

    /// Solve with the factors of the last [`Self::solve`] for another
    /// right-hand side.
    pub fn solve_again(&mut self, rhs: &[T]) -> Result<Vec<T>, SolveFailure> {
        if self.size() == 0 {
            return Ok(Vec::new());
        }
        match self {
            LinearSystem::Dense(d) => d.solve_again(rhs),
            LinearSystem::Sparse(s) => s.solve_again(rhs),
        }
    }

    /// Solve with the last factors for `ncols` right-hand sides at once,
    /// stored column after column in `rhs` (overwritten with the solutions).
    pub fn solve_many(&mut self, rhs: &mut [T], ncols: usize) -> Result<(), SolveFailure> {
        let n = self.size();
        if n == 0 || ncols == 0 {
            return Ok(());
        }
        match self {
            LinearSystem::Dense(d) => {
                let lu =
                    d.lu.as_ref()
                        .ok_or(SolveFailure::Singular { unknown: None })?;
                let mut b = nalgebra::DMatrix::from_column_slice(n, ncols, rhs);
                if !lu.solve_mut(&mut b) {
                    return Err(SolveFailure::Singular { unknown: None });
                }
                rhs.copy_from_slice(b.as_slice());
            }
            LinearSystem::Sparse(s) => s.solve_many(rhs, ncols)?,
        }
        check_finite(rhs)
    }

    /// The right-hand side as stamped.
    pub fn rhs(&self) -> &[T] {
        match self {
            LinearSystem::Dense(d) => &d.rhs,
            LinearSystem::Sparse(s) => &s.rhs,
        }
    }
}

impl<T: Scalar> Stamp<T> for LinearSystem<T> {
    #[inline]
    fn add(&mut self, row: usize, col: usize, value: T) {
        match self {
            LinearSystem::Dense(d) => d.add(row, col, value),
            LinearSystem::Sparse(s) => s.add(row, col, value),
        }
    }
    #[inline]
    fn add_rhs(&mut self, row: usize, value: T) {
        match self {
            LinearSystem::Dense(d) => d.rhs[row] += value,
            LinearSystem::Sparse(s) => s.rhs[row] += value,
        }
    }
}

/// The pivot below which elimination is taken to have broken down: a
/// pivot is only rounding when it is tiny both against the largest entry of
/// the whole matrix and against its own column (the column's entries in the
/// matrix and in U — every term that was cancelled to make it). Against the
/// whole matrix alone, a circuit whose admittances span many decades (a
/// large capacitor at a high frequency beside a high-resistance node, or a
/// high-gain chain) was called singular while perfectly solvable.
// invariant: in LU with partial pivoting |l| ≤ 1, so a pivot is a_jj minus
// at most n terms no larger than the column's U entries; cancellation to
// zero leaves at most n·ε times that scale (Golub and Van Loan, "Matrix
// Computations", rounding analysis of Gaussian elimination).
fn pivot_limit(matrix_scale: f64, column_scale: f64, size: usize) -> f64 {
    matrix_scale.min(column_scale) * 1e-15 * size as f64
}

fn check_finite<T: Scalar>(x: &[T]) -> Result<(), SolveFailure> {
    match x.iter().position(|v| !v.is_finite_value()) {
        Some(unknown) => Err(SolveFailure::NotFinite { unknown }),
        None => Ok(()),
    }
}

/// Dense system, nalgebra LU with partial pivoting.
pub struct DenseSystem<T: Scalar> {
    pub size: usize,
    matrix: nalgebra::DMatrix<T>,
    rhs: Vec<T>,
    lu: Option<nalgebra::LU<T, nalgebra::Dyn, nalgebra::Dyn>>,
}

impl<T: Scalar> DenseSystem<T> {
    pub fn new(size: usize) -> Self {
        DenseSystem {
            size,
            matrix: nalgebra::DMatrix::from_element(size, size, T::mna_zero()),
            rhs: vec![T::mna_zero(); size],
            lu: None,
        }
    }
    fn clear(&mut self) {
        self.matrix.fill(T::mna_zero());
        self.rhs.fill(T::mna_zero());
    }
    #[inline]
    fn add(&mut self, row: usize, col: usize, value: T) {
        self.matrix[(row, col)] += value;
    }
    fn factor(&mut self) -> Result<(), SolveFailure> {
        // Scale for the pivot test: the largest entry of the matrix.
        let scale = self
            .matrix
            .iter()
            .map(|v| Scalar::magnitude(v))
            .fold(0.0, f64::max);
        let lu = nalgebra::LU::new(self.matrix.clone());
        let n = self.size;
        let packed = lu.lu_internal();
        let tiny = |k: usize| {
            let d = Scalar::magnitude(&packed[(k, k)]);
            if d.is_nan() {
                return true;
            }
            if d > pivot_limit(scale, f64::INFINITY, n) {
                return false;
            }
            // The column's own scale: its entries in the matrix and in U
            // (column k of the matrix is column k of U after the row swaps).
            let column = (0..n)
                .map(|r| Scalar::magnitude(&self.matrix[(r, k)]))
                .chain((0..k).map(|r| Scalar::magnitude(&packed[(r, k)])))
                .fold(0.0, f64::max);
            d <= pivot_limit(scale, column, n)
        };
        if let Some(k) = (0..n).find(|&k| tiny(k)) {
            self.lu = None;
            return Err(SolveFailure::Singular { unknown: Some(k) });
        }
        self.lu = Some(lu);
        Ok(())
    }
    fn solve_again(&mut self, rhs: &[T]) -> Result<Vec<T>, SolveFailure> {
        let lu = self
            .lu
            .as_ref()
            .ok_or(SolveFailure::Singular { unknown: None })?;
        let mut b = nalgebra::DVector::from_column_slice(rhs);
        if !lu.solve_mut(&mut b) {
            return Err(SolveFailure::Singular { unknown: None });
        }
        let x: Vec<T> = b.iter().copied().collect();
        check_finite(&x)?;
        Ok(x)
    }
}

/// Sparse system in compressed columns, faer's simplicial sparse LU. The
/// symbolic analysis (the fill-reducing column order) is computed once from
/// the pattern and reused by every numeric factorisation; each pivot is
/// checked against the matrix's largest entry, so a singular system is
/// reported with the unknown where elimination broke down.
pub struct SparseSystem<T: Scalar> {
    pub size: usize,
    col_ptr: Vec<usize>,
    row_idx: Vec<usize>,
    values: Vec<T>,
    rhs: Vec<T>,
    symbolic: Option<SymbolicLu<usize>>,
    lu: SimplicialLu<usize, T>,
    row_perm: Vec<usize>,
    row_perm_inv: Vec<usize>,
    factored: bool,
    buffer: MemBuffer,
}

impl<T: Scalar> SparseSystem<T> {
    pub fn new(size: usize, pattern: &PatternCollector) -> Self {
        // Every diagonal entry exists, so gmin-style stamps always fit.
        // Bucket the (duplicated, unordered) entries by column, then sort
        // and deduplicate each short column: linear in the entry count.
        let mut start = vec![0usize; size + 1];
        for &(_, c) in &pattern.entries {
            start[c + 1] += 1;
        }
        for k in 0..size {
            start[k + 1] += start[k] + 1;
        }
        let mut fill = start.clone();
        let mut rows = vec![0usize; start[size]];
        for (r, c) in pattern
            .entries
            .iter()
            .copied()
            .chain((0..size).map(|k| (k, k)))
        {
            rows[fill[c]] = r;
            fill[c] += 1;
        }
        let mut col_ptr = vec![0usize; size + 1];
        let mut row_idx = Vec::with_capacity(rows.len());
        for c in 0..size {
            let col = &mut rows[start[c]..start[c + 1]];
            col.sort_unstable();
            let before = row_idx.len();
            for &r in col.iter() {
                if row_idx.len() == before || row_idx.last() != Some(&r) {
                    row_idx.push(r);
                }
            }
            col_ptr[c + 1] = row_idx.len();
        }
        let values = vec![T::mna_zero(); row_idx.len()];
        let symbolic = SymbolicSparseColMatRef::new_checked(size, size, &col_ptr, None, &row_idx);
        let params = LuSymbolicParams {
            supernodal_flop_ratio_threshold: SPARSE_VARIANT,
            ..Default::default()
        };
        let symbolic = factorize_symbolic_lu(symbolic, params).ok();
        let req = simplicial::factorize_simplicial_numeric_lu_scratch::<usize, T>(size, size).or(
            simplicial::solve_in_place_scratch::<usize, T>(size, 1, Par::Seq),
        );
        SparseSystem {
            size,
            col_ptr,
            row_idx,
            values,
            rhs: vec![T::mna_zero(); size],
            symbolic,
            lu: SimplicialLu::new(),
            row_perm: vec![0; size],
            row_perm_inv: vec![0; size],
            factored: false,
            buffer: MemBuffer::new(req),
        }
    }
    pub(super) fn clear(&mut self) {
        self.values.fill(T::mna_zero());
        self.rhs.fill(T::mna_zero());
    }
    #[inline]
    pub(super) fn add(&mut self, row: usize, col: usize, value: T) {
        let (a, b) = (self.col_ptr[col], self.col_ptr[col + 1]);
        let rows = &self.row_idx[a..b];
        let k = if rows.len() <= 8 {
            rows.iter().position(|&r| r == row)
        } else {
            rows.binary_search(&row).ok()
        };
        match k {
            Some(k) => self.values[a + k] += value,
            None => debug_assert!(false, "stamp outside the pattern at ({row}, {col})"),
        }
    }
    pub(super) fn factor(&mut self) -> Result<(), SolveFailure> {
        self.factored = false;
        let symbolic = self
            .symbolic
            .as_ref()
            .ok_or(SolveFailure::Singular { unknown: None })?;
        let sym = SymbolicSparseColMatRef::new_checked(
            self.size,
            self.size,
            &self.col_ptr,
            None,
            &self.row_idx,
        );
        let a = SparseColMatRef::new(sym, &self.values);
        let col_perm = symbolic.col_perm();
        let (col_fwd, _) = col_perm.arrays();
        match simplicial::factorize_simplicial_numeric_lu(
            &mut self.row_perm,
            &mut self.row_perm_inv,
            &mut self.lu,
            a,
            col_perm,
            MemStack::new(&mut self.buffer),
        ) {
            Ok(()) => {}
            Err(faer::sparse::linalg::LuError::SymbolicSingular { index }) => {
                return Err(SolveFailure::Singular {
                    unknown: col_fwd.get(index).copied(),
                })
            }
            Err(_) => return Err(SolveFailure::Singular { unknown: None }),
        }
        // Pivot test, as for the dense solver: the diagonal of U is the
        // last entry of each of its columns.
        let scale = self
            .values
            .iter()
            .map(|v| v.magnitude())
            .fold(0.0, f64::max);
        let u = self.lu.u_factor_unsorted();
        for (j, &unknown) in col_fwd.iter().enumerate() {
            let pivot = u.val_of_col(j).last().map_or(0.0, |v| v.magnitude());
            if pivot > pivot_limit(scale, f64::INFINITY, self.size) {
                continue;
            }
            let (a, b) = (self.col_ptr[unknown], self.col_ptr[unknown + 1]);
            let column = self.values[a..b]
                .iter()
                .chain(u.val_of_col(j).iter())
                .map(|v| v.magnitude())
                .fold(0.0, f64::max);
            if pivot.is_nan() || pivot <= pivot_limit(scale, column, self.size) {
                return Err(SolveFailure::Singular {
                    unknown: Some(unknown),
                });
            }
        }
        self.factored = true;
        Ok(())
    }
    fn solve_in_place(&mut self, rhs: &mut [T], ncols: usize) -> Result<(), SolveFailure> {
        if !self.factored {
            return Err(SolveFailure::Singular { unknown: None });
        }
        let symbolic = self
            .symbolic
            .as_ref()
            .ok_or(SolveFailure::Singular { unknown: None })?;
        let row_perm = PermRef::new_checked(&self.row_perm, &self.row_perm_inv, self.size);
        let rhs = MatMut::from_column_major_slice_mut(rhs, self.size, ncols);
        if ncols == 1 {
            self.lu.solve_in_place_with_conj(
                row_perm,
                symbolic.col_perm(),
                Conj::No,
                rhs,
                Par::Seq,
                MemStack::new(&mut self.buffer),
            );
        } else {
            let mut buffer = MemBuffer::new(simplicial::solve_in_place_scratch::<usize, T>(
                self.size,
                ncols,
                Par::Seq,
            ));
            self.lu.solve_in_place_with_conj(
                row_perm,
                symbolic.col_perm(),
                Conj::No,
                rhs,
                Par::Seq,
                MemStack::new(&mut buffer),
            );
        }
        Ok(())
    }
}

impl<T: Scalar> LinearSystem<T> {
    /// The entries of the inverse on the factors' closed pattern, from the
    /// last factorisation (sparse systems only: `None` when dense or not
    /// factored). See [`SelectedInverse`].
    pub fn selected_inverse(&self) -> Option<Result<SelectedInverse<T>, SolveFailure>> {
        match self {
            LinearSystem::Sparse(s) if s.factored => {
                let symbolic = s.symbolic.as_ref()?;
                let (_, col_inv) = symbolic.col_perm().arrays();
                Some(SelectedInverse::new(
                    s.lu.l_factor_unsorted(),
                    s.lu.u_factor_unsorted(),
                    &s.row_perm_inv,
                    col_inv,
                ))
            }
            _ => None,
        }
    }
}

impl<T: Scalar> LinearSystem<T> {
    /// The assembled matrix as (row, column, value) over its sparse
    /// pattern (None for a dense system).
    pub fn sparse_entries(&self) -> Option<Vec<(usize, usize, T)>> {
        let LinearSystem::Sparse(s) = self else {
            return None;
        };
        let mut out = Vec::with_capacity(s.values.len());
        for c in 0..s.size {
            for k in s.col_ptr[c]..s.col_ptr[c + 1] {
                out.push((s.row_idx[k], c, s.values[k]));
            }
        }
        Some(out)
    }
}

impl<T: Scalar> SparseSystem<T> {
    pub(super) fn solve_many(&mut self, rhs: &mut [T], ncols: usize) -> Result<(), SolveFailure> {
        self.solve_in_place(rhs, ncols)
    }
    pub(super) fn solve_again(&mut self, rhs: &[T]) -> Result<Vec<T>, SolveFailure> {
        let mut x = rhs.to_vec();
        self.solve_in_place(&mut x, 1)?;
        check_finite(&x)?;
        Ok(x)
    }
}
