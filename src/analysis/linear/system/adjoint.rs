//! The adjoint of the small-signal system: one transposed solve gives the
//! transfer from every excitation to one output (the noise analysis).

use super::super::{Drive, Node, SingularSystem, C64};
use super::System;
use crate::analysis::mna::{Folded, LinearSystem, PatternCollector, Transposed};

/// An adjoint solution `Aᵀ·x = e` with `eᵀ·v = v(p) − v(q)`: the transfer
/// from any excitation to that output.
pub struct Adjoint {
    /// Reduced unknowns.
    x: Vec<C64>,
    /// By node after cuts (0 at ground and at folded nodes).
    by_node: Vec<C64>,
    /// Entries of the folded columns (reduced row, full column, value).
    moved: Vec<(usize, usize, C64)>,
    output: (Node, Node),
}

impl Adjoint {
    /// Output voltage per ampere pushed into `b` and out of `a` through an
    /// element from `a` to `b`, i.e. of a current generator from `a` to `b`
    /// read as (x(a) − x(b)).
    pub fn transfer(&self, a: Node, b: Node) -> C64 {
        let at = |n: Node| self.by_node.get(n).copied().unwrap_or_default();
        at(a) - at(b)
    }
}

impl System<'_> {
    /// The adjoint at `frequency`: one transposed solve gives the transfer
    /// from every excitation to the output `v(p) − v(q)`.
    pub fn adjoint(&self, frequency: f64, output: (Node, Node)) -> Result<Adjoint, SingularSystem> {
        let mut all = self.adjoint_many(frequency, &[output])?;
        Ok(all.remove(0))
    }

    /// [`Self::adjoint`] for several outputs with one factorization.
    pub fn adjoint_many(
        &self,
        frequency: f64,
        outputs: &[(Node, Node)],
    ) -> Result<Vec<Adjoint>, SingularSystem> {
        let w = self.omega(frequency);
        let mut slot = self.adjoint_solver.borrow_mut();
        let solver = slot.get_or_insert_with(|| {
            let size = self.size();
            let mut pattern = PatternCollector::default();
            if size > self.dense_limit {
                self.stamps.replay(
                    0.0,
                    &mut Folded {
                        inner: &mut Transposed {
                            inner: &mut pattern,
                        },
                        reduction: &self.reduction,
                        moved: &mut Vec::new(),
                    },
                );
            }
            LinearSystem::with_limit(size, &pattern, self.dense_limit)
        });
        solver.clear();
        let mut moved = Vec::new();
        self.stamps.replay(
            w,
            &mut Folded {
                inner: &mut Transposed {
                    inner: &mut *solver,
                },
                reduction: &self.reduction,
                moved: &mut moved,
            },
        );
        solver.factor().map_err(|_| SingularSystem)?;
        let mut all = Vec::with_capacity(outputs.len());
        for &output in outputs {
            let mut e = vec![C64::default(); self.size()];
            if let Some(r) = self.node_row(output.0) {
                e[r] += C64::new(1.0, 0.0);
            }
            if let Some(r) = self.node_row(output.1) {
                e[r] -= C64::new(1.0, 0.0);
            }
            let x = solver.solve_again(&e).map_err(|_| SingularSystem)?;
            let by_node = (0..=self.nodes)
                .map(|n| self.node_row(n).map_or(C64::default(), |r| x[r]))
                .collect();
            all.push(Adjoint {
                x,
                by_node,
                moved: moved.clone(),
                output,
            });
        }
        Ok(all)
    }

    /// The output of an adjoint for a set of drives: `xᵀ·b` plus the
    /// output's own known voltages (an output on a folded node).
    pub fn adjoint_response(&self, adj: &Adjoint, drives: &[Drive]) -> C64 {
        let (b, known) = self.rhs(drives, &adj.moved);
        let mut y = adj
            .x
            .iter()
            .zip(&b)
            .fold(C64::default(), |acc, (x, b)| acc + x * b);
        let at = |n: Node| match self.known_of.get(n).copied().flatten() {
            Some(j) if n != 0 => known[j],
            _ => C64::default(),
        };
        y += at(adj.output.0) - at(adj.output.1);
        y
    }
}
