//! Folding grounded sources: the one place that decides which nodes a
//! voltage source to ground holds, takes them (and the source's branch
//! current) out of the system, and moves their columns to the right-hand
//! side. DC ([`crate::analysis::dc::newton::Engine`]) and the small-signal
//! system ([`crate::analysis::linear::System`]) both fold this way.

use super::{Scalar, Stamp};

/// A node held by a voltage source with its other end on ground.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GroundedSource {
    /// The caller's handle of the source (its element index).
    pub element: usize,
    /// The node it holds (never 0).
    pub node: usize,
    /// +1 if the source's positive end is on the node, −1 if its negative end.
    pub sign: f64,
}

/// The grounded voltage sources among `sources` (each given as
/// `(element, positive node, negative node)`), one per node: a second
/// source on an already held node is not folded (it stays in the system,
/// where a loop of sources shows as a singular system).
pub fn grounded_sources(
    node_count: usize,
    sources: impl IntoIterator<Item = (usize, usize, usize)>,
) -> Vec<GroundedSource> {
    let mut taken = vec![false; node_count + 1];
    let mut out = Vec::new();
    for (element, a, b) in sources {
        let (node, sign) = match (a, b) {
            (n, 0) if n != 0 => (n, 1.0),
            (0, n) if n != 0 => (n, -1.0),
            _ => continue,
        };
        if node >= taken.len() || taken[node] {
            continue;
        }
        taken[node] = true;
        out.push(GroundedSource {
            element,
            node,
            sign,
        });
    }
    out
}

/// Unknowns taken out of the system because their value is known in
/// advance: a node held by a voltage source to ground (a rail, a grounded
/// source) and that source's branch current. Removing them keeps the
/// supply net, which touches every stage, out of the factorisation (its
/// dense row and column would otherwise fill the sparse LU), and makes the
/// system smaller. The removed branch current is recovered afterwards from
/// Kirchhoff's current law at the fixed node.
#[derive(Debug, Clone, PartialEq)]
pub struct Reduction {
    /// For every full-system row, its row in the reduced system (None: removed).
    pub to_reduced: Vec<Option<usize>>,
    /// For every reduced row, its full-system row.
    pub to_full: Vec<usize>,
}

impl Reduction {
    /// Remove the given full-system rows (and the same columns).
    pub fn new(full_size: usize, removed: &[usize]) -> Self {
        let mut to_reduced = vec![None; full_size];
        let mut gone = vec![false; full_size];
        for &r in removed {
            gone[r] = true;
        }
        let mut to_full = Vec::with_capacity(full_size);
        for r in 0..full_size {
            if !gone[r] {
                to_reduced[r] = Some(to_full.len());
                to_full.push(r);
            }
        }
        Reduction {
            to_reduced,
            to_full,
        }
    }
    pub fn identity(full_size: usize) -> Self {
        Self::new(full_size, &[])
    }
    pub fn reduced_size(&self) -> usize {
        self.to_full.len()
    }
    /// A full-size vector from a reduced one, `fill` at removed rows.
    pub fn expand<T: Scalar>(&self, reduced: &[T], fill: &[T]) -> Vec<T> {
        let mut out = fill.to_vec();
        for (i, &r) in self.to_full.iter().enumerate() {
            out[r] = reduced[i];
        }
        out
    }
    /// The reduced part of a full-size vector.
    pub fn restrict<T: Scalar>(&self, full: &[T]) -> Vec<T> {
        self.to_full.iter().map(|&r| full[r]).collect()
    }
}

/// Stamps through a [`Reduction`]: entries in a removed column move to the
/// right-hand side with the column's known value; removed rows are dropped.
pub struct Reduced<'a, T: Scalar, S: Stamp<T>> {
    pub inner: &'a mut S,
    pub reduction: &'a Reduction,
    /// Full-size vector; read only at removed columns.
    pub known: &'a [T],
}

impl<T: Scalar, S: Stamp<T>> Stamp<T> for Reduced<'_, T, S> {
    #[inline]
    fn add(&mut self, row: usize, col: usize, value: T) {
        let map = &self.reduction.to_reduced;
        match (map[row], map[col]) {
            (Some(i), Some(j)) => self.inner.add(i, j, value),
            (Some(i), None) => self.inner.add_rhs(i, -(value * self.known[col])),
            _ => {}
        }
    }
    #[inline]
    fn add_rhs(&mut self, row: usize, value: T) {
        if let Some(i) = self.reduction.to_reduced[row] {
            self.inner.add_rhs(i, value);
        }
    }
}

/// Stamps through a [`Reduction`] when the removed unknowns' values are not
/// known yet (they change per right-hand side, as the drives of a
/// small-signal solve do): entries in a removed column are recorded in
/// `moved` as (reduced row, full column, value), removed rows are dropped.
/// The right-hand side for given values is then `b[row] −= value·known[col]`.
pub struct Folded<'a, T: Scalar, S: Stamp<T>> {
    pub inner: &'a mut S,
    pub reduction: &'a Reduction,
    pub moved: &'a mut Vec<(usize, usize, T)>,
}

impl<T: Scalar, S: Stamp<T>> Stamp<T> for Folded<'_, T, S> {
    #[inline]
    fn add(&mut self, row: usize, col: usize, value: T) {
        let map = &self.reduction.to_reduced;
        match (map[row], map[col]) {
            (Some(i), Some(j)) => self.inner.add(i, j, value),
            (Some(i), None) => self.moved.push((i, col, value)),
            _ => {}
        }
    }
    #[inline]
    fn add_rhs(&mut self, row: usize, value: T) {
        if let Some(i) = self.reduction.to_reduced[row] {
            self.inner.add_rhs(i, value);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_grounded_source_per_node_either_polarity() {
        // invariant: a source to ground fixes its node; a second one on the same node cannot
        // (a loop of sources), and a floating source fixes nothing.
        let g = grounded_sources(4, [(0, 1, 0), (1, 0, 2), (2, 1, 0), (3, 3, 4)]);
        assert_eq!(g.len(), 2);
        assert_eq!((g[0].element, g[0].node, g[0].sign), (0, 1, 1.0));
        assert_eq!((g[1].element, g[1].node, g[1].sign), (1, 2, -1.0));
    }
}
