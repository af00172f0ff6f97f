//! Modified nodal analysis matrix assembly shared by the real (DC) and
//! complex (AC, noise) analyses (C.-W. Ho, A. E. Ruehli, P. A. Brennan,
//! "The modified nodal approach to network analysis", IEEE Trans. Circuits
//! and Systems 22, 1975).
//!
//! Unknowns: the node voltages (node k ≥ 1 at row k − 1; ground is not an
//! unknown), then one current per voltage-defined branch. Row k of the
//! system is Kirchhoff's current law at node k written as "sum of currents
//! leaving the node through elements = sum of currents injected into it".
//!
//! The pattern for any scalar `T` (f64 for DC, a complex number for AC):
//! 1. stamp once into a [`PatternCollector`] to learn which entries exist;
//! 2. make a [`LinearSystem`] from that pattern — dense LU (nalgebra) for
//!    small systems, sparse LU (faer) above [`DENSE_LIMIT`] unknowns, with
//!    the sparse symbolic analysis done once and reused for every
//!    refactorisation;
//! 3. per solve: [`LinearSystem::clear`], stamp with the helpers below,
//!    [`LinearSystem::solve`].
//!
//! A stamp must add its entries whatever their values (zero included), so
//! the pattern never changes between Newton iterations or frequencies.

pub mod fold;
mod selected;
mod solver;
pub use fold::{Folded, Reduced, Reduction};
pub use selected::SelectedInverse;
pub use solver::{LinearSystem, SolveFailure};

/// Above this many unknowns the sparse LU is used. Measured crossover
/// (benches/dc.rs, one assemble + factorise + solve of a DC system, two runs
/// on a shared machine): dense 0.53/0.73 µs vs sparse 0.75/1.28 µs at 6
/// unknowns, 1.42/1.89 µs vs 1.32/2.08 µs at 12, 2.58/3.31 µs vs
/// 1.96/2.89 µs at 18; so the crossover lies near 12.
pub const DENSE_LIMIT: usize = 12;

/// Where stamps go: a matrix entry or a right-hand-side entry, by row and
/// column of the system (not by node: use the helpers for nodes).
pub trait Stamp<T> {
    fn add(&mut self, row: usize, col: usize, value: T);
    fn add_rhs(&mut self, row: usize, value: T);
}

/// A borrowed stamp target is a stamp target, so `&mut dyn Stamp<f64>` can
/// be handed to the helpers below.
impl<T, S: Stamp<T> + ?Sized> Stamp<T> for &mut S {
    #[inline]
    fn add(&mut self, row: usize, col: usize, value: T) {
        (**self).add(row, col, value)
    }
    #[inline]
    fn add_rhs(&mut self, row: usize, value: T) {
        (**self).add_rhs(row, value)
    }
}

/// Stamps the transposed matrix (entry (r, c) goes to (c, r)); the
/// right-hand side is left to the caller. For adjoint solves: with
/// `Aᵀ·x = e` the output `eᵀ·A⁻¹·b` of any right-hand side `b` is `xᵀ·b`.
pub struct Transposed<'a, S> {
    pub inner: &'a mut S,
}

impl<T, S: Stamp<T>> Stamp<T> for Transposed<'_, S> {
    #[inline]
    fn add(&mut self, row: usize, col: usize, value: T) {
        self.inner.add(col, row, value)
    }
    #[inline]
    fn add_rhs(&mut self, _row: usize, _value: T) {}
}

/// The scalar an MNA system is built of.
pub trait Scalar:
    Copy
    + PartialEq
    + std::fmt::Debug
    + std::ops::Add<Output = Self>
    + std::ops::AddAssign
    + std::ops::Sub<Output = Self>
    + std::ops::Mul<Output = Self>
    + std::ops::Neg<Output = Self>
    + nalgebra::ComplexField<RealField = f64>
    + faer::traits::ComplexField
    + 'static
{
    /// Up to this many unknowns a system of this scalar is solved densely,
    /// above it by the sparse LU: the measured crossovers (real: see
    /// [`DENSE_LIMIT`]; complex: the small-signal sweep, sparse from 80).
    const DENSE_LIMIT: usize;
    fn mna_zero() -> Self;
    fn mna_real(v: f64) -> Self;
    fn is_finite_value(&self) -> bool;
    fn magnitude(&self) -> f64;
}

impl Scalar for f64 {
    const DENSE_LIMIT: usize = DENSE_LIMIT;
    fn mna_zero() -> Self {
        0.0
    }
    fn mna_real(v: f64) -> Self {
        v
    }
    fn is_finite_value(&self) -> bool {
        self.is_finite()
    }
    fn magnitude(&self) -> f64 {
        self.abs()
    }
}

impl Scalar for num_complex::Complex64 {
    const DENSE_LIMIT: usize = 79;
    fn mna_zero() -> Self {
        num_complex::Complex64::new(0.0, 0.0)
    }
    fn mna_real(v: f64) -> Self {
        num_complex::Complex64::new(v, 0.0)
    }
    fn is_finite_value(&self) -> bool {
        self.re.is_finite() && self.im.is_finite()
    }
    fn magnitude(&self) -> f64 {
        self.norm()
    }
}

/// Row of node `n` (None for ground).
#[inline]
pub fn row(n: usize) -> Option<usize> {
    n.checked_sub(1)
}

/// A conductance (or admittance) `g` between nodes `a` and `b`.
#[inline]
pub fn conductance<T: Scalar>(s: &mut impl Stamp<T>, a: usize, b: usize, g: T) {
    let (ra, rb) = (row(a), row(b));
    if let Some(i) = ra {
        s.add(i, i, g);
    }
    if let Some(j) = rb {
        s.add(j, j, g);
    }
    if let (Some(i), Some(j)) = (ra, rb) {
        s.add(i, j, -g);
        s.add(j, i, -g);
    }
}

/// A current `i` flowing through an element from node `a` to node `b`
/// (it leaves `a` and enters `b`).
#[inline]
pub fn current<T: Scalar>(s: &mut impl Stamp<T>, a: usize, b: usize, i: T) {
    if let Some(r) = row(a) {
        s.add_rhs(r, -i);
    }
    if let Some(r) = row(b) {
        s.add_rhs(r, i);
    }
}

/// A current from `a` to `b` of `g·(v(p) − v(q))` (a transconductance).
#[inline]
pub fn transconductance<T: Scalar>(
    s: &mut impl Stamp<T>,
    a: usize,
    b: usize,
    p: usize,
    q: usize,
    g: T,
) {
    for (out, sign) in [(row(a), g), (row(b), -g)] {
        if let Some(r) = out {
            if let Some(c) = row(p) {
                s.add(r, c, sign);
            }
            if let Some(c) = row(q) {
                s.add(r, c, -sign);
            }
        }
    }
}

/// A voltage-defined branch from `a` (positive) to `b` with its current
/// unknown at `branch_row` (the current flows into `a`, through the branch,
/// out of `b`): v(a) − v(b) − z·i = e. `z` is zero for an ideal source or a
/// DC inductor, j·ω·L for an inductor in AC.
#[inline]
pub fn voltage_branch<T: Scalar>(
    s: &mut impl Stamp<T>,
    a: usize,
    b: usize,
    branch_row: usize,
    e: T,
    z: T,
) {
    let one = T::mna_real(1.0);
    if let Some(r) = row(a) {
        s.add(r, branch_row, one);
        s.add(branch_row, r, one);
    }
    if let Some(r) = row(b) {
        s.add(r, branch_row, -one);
        s.add(branch_row, r, -one);
    }
    s.add(branch_row, branch_row, -z);
    s.add_rhs(branch_row, e);
}

/// Learns the pattern of a system by recording where stamps go (in
/// stamping order, duplicates kept: the sparse system sorts them once).
#[derive(Debug, Default)]
pub struct PatternCollector {
    pub entries: Vec<(usize, usize)>,
}

impl<T> Stamp<T> for PatternCollector {
    fn add(&mut self, row: usize, col: usize, _value: T) {
        self.entries.push((row, col));
    }
    fn add_rhs(&mut self, _row: usize, _value: T) {}
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Two resistors from a 10 V source: a divider (hand algebra).
    fn divider(limit: usize) -> Vec<f64> {
        let stamp = |s: &mut dyn FnMut(usize, usize, f64, bool)| {
            // node 1 = top, node 2 = middle, branch row 2.
            s(0, 0, 1e-3, false);
            s(0, 1, -1e-3, false);
            s(1, 0, -1e-3, false);
            s(1, 1, 1e-3 + 1.0 / 3000.0, false);
            s(0, 2, 1.0, false);
            s(2, 0, 1.0, false);
            s(2, 0, 10.0, true);
        };
        let mut pat = PatternCollector::default();
        stamp(&mut |r, c, v, rhs| {
            if !rhs {
                Stamp::<f64>::add(&mut pat, r, c, v)
            }
        });
        let mut sys = LinearSystem::<f64>::with_limit(3, &pat, limit);
        sys.clear();
        stamp(&mut |r, c, v, rhs| {
            if rhs {
                sys.add_rhs(r, v)
            } else {
                sys.add(r, c, v)
            }
        });
        sys.solve().expect("solvable")
    }

    #[test]
    fn dense_and_sparse_agree_with_hand_algebra() {
        // invariant: a 1 kΩ / 3 kΩ divider from 10 V gives 7.5 V and 2.5 mA.
        for limit in [0, 100] {
            let x = divider(limit);
            assert!((x[0] - 10.0).abs() < 1e-12);
            assert!((x[1] - 7.5).abs() < 1e-12, "{x:?}");
            assert!((x[2] + 2.5e-3).abs() < 1e-15, "{x:?}");
        }
    }

    #[test]
    fn singular_system_is_reported_not_solved() {
        // invariant: a node with nothing attached has no unique voltage.
        for limit in [0, 100] {
            let mut pat = PatternCollector::default();
            Stamp::<f64>::add(&mut pat, 0, 0, 1.0);
            let mut sys = LinearSystem::<f64>::with_limit(2, &pat, limit);
            sys.clear();
            sys.add(0, 0, 1.0);
            sys.add_rhs(1, 1.0);
            assert!(sys.solve().is_err());
        }
    }
}
