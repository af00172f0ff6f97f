//! One adjoint factorization, many transfers, and the transfer of a
//! slightly changed system without factoring it again (for long chains,
//! where one factorization per stage grew as the square of the chain).
//!
//! With `A·v = b` and `X = A⁻¹`, the adjoint solution `x_o = A⁻ᵀ·e_o` holds
//! row `o` of `X`: `x_o[u] = X[o, u]`. A changed system `Ã = A + U·Wᵀ` of
//! low rank k has, by the Sherman–Morrison–Woodbury formula (Woodbury 1950;
//! Hager, "Updating the inverse of a matrix", SIAM Review 31, 1989),
//! `Ã⁻¹ = X − X·U·(I + Wᵀ·X·U)⁻¹·Wᵀ·X`, so the changed adjoint solution is
//! `x̃_o = x_o − Σᵢ zᵢ·(Wᵀ·X)ᵢ` with `(I + Wᵀ·X·U)ᵀ·z = x_o[U]`. Two kinds of
//! change, each of rank one, are enough here:
//! - [`Change::Open`]: a zero-volt link (a voltage source element) opened,
//!   i.e. its row replaced by "its current is zero": `u = e_r`,
//!   `w = e_r − A[r, :]ᵀ`, so `(Wᵀ·X)_r = X[r, :] − e_rᵀ` and the `−e_rᵀ`
//!   part vanishes on every right-hand side that does not drive the link;
//! - [`Change::Shunt`]: a conductance `g` from a node to ground added:
//!   `u = e_n`, `w = g·e_n`.
//!
//! The rows `X[r, :]` are themselves adjoint solutions, so a change of rank
//! k costs k + 1 solves through the one factorization.

use super::super::{Node, SingularSystem, C64};
use super::System;
use crate::analysis::mna::{Folded, LinearSystem, PatternCollector, Transposed};
use std::cell::RefCell;
use std::collections::HashMap;
use std::rc::Rc;

/// A row of the system: a node's current law or an element's branch.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Probe {
    Node(Node),
    /// The branch row of an element that has one (a voltage source).
    Branch(usize),
}

/// One rank-one change of the system (see the module notes).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Change {
    /// The zero-volt link `element` opened (its current forced to zero).
    Open(usize),
    /// A conductance (S) added from the node to ground.
    Shunt(Node, f64),
}

impl Change {
    /// The unknown the change acts on: the link's branch, the shunt's node.
    pub(super) fn probe(&self) -> Probe {
        match *self {
            Change::Open(e) => Probe::Branch(e),
            Change::Shunt(n, _) => Probe::Node(n),
        }
    }

    /// Its weight in Wᵀ: 1 for a link, the conductance for a shunt.
    pub(super) fn coef(&self) -> C64 {
        match *self {
            Change::Open(_) => C64::new(1.0, 0.0),
            Change::Shunt(_, g) => C64::new(g, 0.0),
        }
    }
}

/// The small Woodbury system of `changes` from the entries `x(a, b)` of the
/// inverse: z with Mᵀ·z = X[output, U], M = I + Wᵀ·X·U. None when an entry
/// is missing; `Some(None)` when M is singular.
pub(super) fn woodbury(
    changes: &[Change],
    output: Probe,
    x: impl Fn(Probe, Probe) -> Option<C64>,
) -> Option<Option<Vec<C64>>> {
    let k = changes.len();
    // Stored transposed: mt[j][i] = M[i][j].
    let mut mt = vec![C64::default(); k * k];
    for (i, ci) in changes.iter().enumerate() {
        for (j, cj) in changes.iter().enumerate() {
            let mut v = ci.coef() * x(ci.probe(), cj.probe())?;
            if i == j && matches!(ci, Change::Shunt(..)) {
                v += C64::new(1.0, 0.0);
            }
            mt[j * k + i] = v;
        }
    }
    let mut rhs = Vec::with_capacity(k);
    for c in changes {
        rhs.push(x(output, c.probe())?);
    }
    Some(solve_dense(&mut mt, rhs, k))
}

/// The transposed system factored at one frequency.
pub struct AdjointFactors<'s, 'a> {
    pub(super) sys: &'s System<'a>,
    /// Rows already solved (see [`AdjointFactors::prefetch`]).
    cache: RefCell<HashMap<Probe, Rc<Vec<C64>>>>,
}

impl<'a> System<'a> {
    /// Factor the transposed system at `frequency` (Hz; ignored at midband)
    /// for any number of [`AdjointFactors::row`] solves.
    pub fn adjoint_factors(
        &self,
        frequency: f64,
    ) -> Result<AdjointFactors<'_, 'a>, SingularSystem> {
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
        self.stamps.replay(
            w,
            &mut Folded {
                inner: &mut Transposed {
                    inner: &mut *solver,
                },
                reduction: &self.reduction,
                moved: &mut Vec::new(),
            },
        );
        solver.factor().map_err(|_| SingularSystem)?;
        Ok(AdjointFactors {
            sys: self,
            cache: RefCell::new(HashMap::new()),
        })
    }

    /// Reduced row of a probe (None: ground, a folded node, or no branch).
    pub(super) fn probe_row(&self, p: Probe) -> Option<usize> {
        match p {
            Probe::Node(n) => self.node_row(n),
            Probe::Branch(e) => self
                .branch
                .get(e)
                .copied()
                .flatten()
                .and_then(|k| self.reduction.to_reduced[self.nodes + k]),
        }
    }

    /// Each node's neighbours through elements that conduct (as the island
    /// search sees them: folded nodes are ground), with the element index.
    pub fn conducting_graph(&self) -> Vec<Vec<(Node, usize)>> {
        let mut adj = vec![Vec::new(); self.nodes + 1];
        for (i, &(a, b, _, _)) in self.ends.iter().enumerate() {
            let conducts = self.present(i)
                && !matches!(
                    self.circuit.elements[i].kind,
                    super::LinearKind::CurrentSource
                );
            if conducts {
                let (a, b) = (self.live(a), self.live(b));
                adj[a].push((b, i));
                adj[b].push((a, i));
            }
        }
        adj
    }
}

impl AdjointFactors<'_, '_> {
    /// Solve the rows of `probes` not yet held, all at once (one pass of
    /// the triangular solves over many right-hand sides), and keep them
    /// until [`Self::forget`].
    pub fn prefetch(&self, probes: &[Probe]) -> Result<(), SingularSystem> {
        let n = self.sys.size();
        let mut cache = self.cache.borrow_mut();
        let mut todo: Vec<(Probe, usize)> = Vec::new();
        for &p in probes {
            if cache.contains_key(&p) || todo.iter().any(|t| t.0 == p) {
                continue;
            }
            match self.sys.probe_row(p) {
                Some(r) => todo.push((p, r)),
                None => {
                    cache.insert(p, Rc::new(vec![C64::default(); n]));
                }
            }
        }
        if todo.is_empty() {
            return Ok(());
        }
        let mut rhs = vec![C64::default(); n * todo.len()];
        for (j, &(_, r)) in todo.iter().enumerate() {
            rhs[j * n + r] = C64::new(1.0, 0.0);
        }
        self.sys
            .adjoint_solver
            .borrow_mut()
            .as_mut()
            .expect("factored")
            .solve_many(&mut rhs, todo.len())
            .map_err(|_| SingularSystem)?;
        if rhs.iter().any(|v| !v.re.is_finite() || !v.im.is_finite()) {
            return Err(SingularSystem);
        }
        for (j, &(p, _)) in todo.iter().enumerate() {
            cache.insert(p, Rc::new(rhs[j * n..(j + 1) * n].to_vec()));
        }
        Ok(())
    }

    /// Drop the rows kept by [`Self::prefetch`] and [`Self::row`].
    pub fn forget(&self) {
        self.cache.borrow_mut().clear();
    }

    /// Row `p` of the inverse (`Aᵀ·x = e_p`), in reduced numbering: zero
    /// when the probe is not an unknown. Kept until [`Self::forget`].
    pub fn row(&self, p: Probe) -> Result<Rc<Vec<C64>>, SingularSystem> {
        if let Some(x) = self.cache.borrow().get(&p) {
            return Ok(Rc::clone(x));
        }
        self.prefetch(&[p])?;
        Ok(Rc::clone(&self.cache.borrow()[&p]))
    }

    /// The entry of an adjoint row at a probe (zero off the unknowns).
    pub fn at(&self, x: &[C64], p: Probe) -> C64 {
        self.sys.probe_row(p).map_or(C64::default(), |r| x[r])
    }

    /// The transfer of a current generator from `a` to `b` read from an
    /// adjoint row, `x(a) − x(b)` (as [`super::Adjoint::transfer`]).
    pub fn transfer(&self, x: &[C64], a: Node, b: Node) -> C64 {
        self.at(x, Probe::Node(a)) - self.at(x, Probe::Node(b))
    }

    /// Row `output` of the inverse of the system with `changes` made (see
    /// the module notes). Err when the changed system is singular to
    /// working precision (a pivot of the small system below 1e-13 of its
    /// largest entry): the caller solves the changed system itself.
    pub fn changed_row(
        &self,
        output: Probe,
        changes: &[Change],
    ) -> Result<Vec<C64>, SingularSystem> {
        let (x_o, terms) = self.update(output, changes)?;
        let mut out = x_o.as_ref().clone();
        for (f, xi) in &terms {
            for (o, v) in out.iter_mut().zip(xi.iter()) {
                *o -= f * v;
            }
        }
        if out.iter().any(|v| !v.re.is_finite() || !v.im.is_finite()) {
            return Err(SingularSystem);
        }
        Ok(out)
    }

    /// One entry of [`Self::changed_row`], at probe `read` (a node row, or
    /// a branch that is not opened).
    pub fn changed_entry(
        &self,
        output: Probe,
        changes: &[Change],
        read: Probe,
    ) -> Result<C64, SingularSystem> {
        let (x_o, terms) = self.update(output, changes)?;
        let mut v = self.at(&x_o, read);
        for (f, xi) in &terms {
            v -= f * self.at(xi, read);
        }
        if !(v.re.is_finite() && v.im.is_finite()) {
            return Err(SingularSystem);
        }
        Ok(v)
    }

    /// x_o and the terms (zᵢ·coefᵢ, X[rowᵢ, :]) to take from it.
    #[allow(clippy::type_complexity)]
    fn update(
        &self,
        output: Probe,
        changes: &[Change],
    ) -> Result<(Rc<Vec<C64>>, Vec<(C64, Rc<Vec<C64>>)>), SingularSystem> {
        let x_o = self.row(output)?;
        if changes.is_empty() {
            return Ok((x_o, Vec::new()));
        }
        let k = changes.len();
        let probe = Change::probe;
        // (Wᵀ·X)ᵢ = coefᵢ·X[rowᵢ, :] (less e_rᵀ for a link, zero on our right-hand sides).
        let mut rows = Vec::with_capacity(k);
        for c in changes {
            rows.push((c.coef(), self.row(probe(c))?));
        }
        // M = I + Wᵀ·X·U; Mᵀ·z = x_o[U]. Stored transposed: mt[j][i] = M[i][j].
        let mut mt = vec![C64::default(); k * k];
        for (i, (ci, xi)) in rows.iter().enumerate() {
            for (j, cj) in changes.iter().enumerate() {
                let mut v = ci * self.at(xi, probe(cj));
                if i == j && matches!(changes[i], Change::Shunt(..)) {
                    v += C64::new(1.0, 0.0);
                }
                mt[j * k + i] = v;
            }
        }
        let rhs: Vec<C64> = changes.iter().map(|c| self.at(&x_o, probe(c))).collect();
        let z = solve_dense(&mut mt, rhs, k).ok_or(SingularSystem)?;
        let terms = rows
            .into_iter()
            .zip(&z)
            .map(|((ci, xi), zi)| (zi * ci, xi))
            .collect();
        Ok((x_o, terms))
    }
}

/// Gaussian elimination with partial pivoting on a small dense system;
/// None when a pivot falls below 1e-13 of the largest entry.
pub(super) fn solve_dense(a: &mut [C64], mut b: Vec<C64>, m: usize) -> Option<Vec<C64>> {
    let scale = a.iter().map(|v| v.norm()).fold(0.0, f64::max);
    if !(scale > 0.0 && scale.is_finite()) {
        return None;
    }
    for col in 0..m {
        let p =
            (col..m).max_by(|&x, &y| a[x * m + col].norm().total_cmp(&a[y * m + col].norm()))?;
        if a[p * m + col].norm() <= 1e-13 * scale {
            return None;
        }
        if p != col {
            for c in 0..m {
                a.swap(col * m + c, p * m + c);
            }
            b.swap(col, p);
        }
        let d = a[col * m + col];
        for r in col + 1..m {
            let f = a[r * m + col] / d;
            for c in col..m {
                let v = a[col * m + c];
                a[r * m + c] -= f * v;
            }
            let v = b[col];
            b[r] -= f * v;
        }
    }
    for r in (0..m).rev() {
        let mut v = b[r];
        for c in r + 1..m {
            v -= a[r * m + c] * b[c];
        }
        b[r] = v / a[r * m + r];
    }
    Some(b)
}
