//! Newton–Raphson on the MNA equations, with junction-voltage limiting and
//! the two aids used when plain Newton fails.
//!
//! Convergence (both must hold, with no junction step limited in the last
//! iteration):
//! - update: every node voltage changed by at most
//!   [`VOLTAGE_RELTOL`]·|v| + [`VOLTAGE_ABSTOL`], every branch current by at
//!   most [`VOLTAGE_RELTOL`]·|i| + [`CURRENT_ABSTOL`];
//! - residual: at every node, Kirchhoff's current law recomputed from the
//!   exact device equations holds to [`KCL_RELTOL`] × (largest current at
//!   that node) + [`CURRENT_ABSTOL`]; every voltage-defined branch holds to
//!   [`KCL_RELTOL`] × (its largest voltage) + [`VOLTAGE_ABSTOL`]; both plus
//!   the rounding floor of `stamps::rounding_floor` (what f64 can resolve
//!   in that row at all — it matters only for a small resistance carrying a
//!   small current at a high voltage).
//!
//! Every loop has a cap, so a solve always ends: [`MAX_ITERATIONS`] per
//! Newton run, [`MAX_STEPS`] runs per aid, [`MAX_TOTAL_ITERATIONS`] overall.

use super::stamps::{
    residuals, rounding_floor, stamp_all, step_junction, terminal_currents, Conditions, Junction,
};
use crate::analysis::circuit::{Circuit, ElementKind, Node};
use crate::analysis::elements::{with_model, Model};
use crate::analysis::mna::{
    fold, LinearSystem, PatternCollector, Reduced, Reduction, SelectedInverse, SolveFailure,
};

/// Relative tolerance on an update (and on a branch voltage equation).
pub const VOLTAGE_RELTOL: f64 = 1e-9;
/// Absolute tolerance on a node voltage update, V.
pub const VOLTAGE_ABSTOL: f64 = 1e-9;
/// Absolute tolerance on a current (update and residual), A.
pub const CURRENT_ABSTOL: f64 = 1e-15;
/// Relative tolerance of Kirchhoff's current law at a node.
pub const KCL_RELTOL: f64 = 1e-10;
/// Newton iterations allowed in one run.
pub const MAX_ITERATIONS: usize = 150;
/// Runs allowed in one aid (gmin steps or source steps).
pub const MAX_STEPS: usize = 300;
/// Newton iterations allowed in one whole solve, aids included.
pub const MAX_TOTAL_ITERATIONS: usize = 20_000;

/// The plain words a designer reads for each aid.
pub const AID_GMIN: &str = "added small conductances to ground and removed them step by step";
pub const AID_SOURCE: &str = "ramped the supplies up from zero";

/// How one Newton run ended.
#[derive(Debug, Clone)]
pub enum RunError {
    Singular(Option<usize>),
    /// Did not converge; the row with the largest relative residual.
    NoConvergence {
        worst_row: usize,
    },
    /// The whole-solve iteration budget is spent.
    Budget,
}

/// A converged state.
#[derive(Debug, Clone)]
pub struct State {
    pub x: Vec<f64>,
    pub junctions: Vec<Junction>,
}

/// A node held by a voltage source to ground (found by
/// `mna::fold::grounded_sources`): its voltage is known and it is taken out
/// of the linear system (see `mna::Reduction`).
#[derive(Debug, Clone, Copy)]
struct Fixed {
    element: usize,
    node: Node,
    /// +1 if the source's positive pin is on the node, −1 if its negative pin.
    sign: f64,
    dc: f64,
    branch_row: usize,
}

/// The Newton engine for one circuit: its linear system (pattern fixed once,
/// nodes held by grounded sources taken out) and the iteration count.
pub struct Engine<'a> {
    pub circuit: &'a Circuit,
    pub system: LinearSystem<f64>,
    pub iterations: usize,
    pub reduction: Reduction,
    fixed: Vec<Fixed>,
    /// Elements with a pin on a fixed node (for recovering source currents).
    touching_fixed: Vec<usize>,
}

impl<'a> Engine<'a> {
    pub fn new(circuit: &'a Circuit) -> Self {
        Self::with_limit(circuit, crate::analysis::mna::DENSE_LIMIT)
    }

    /// As [`Self::new`] with a chosen dense/sparse crossover.
    pub fn with_limit(circuit: &'a Circuit, dense_limit: usize) -> Self {
        let c = circuit;
        let sources = c
            .elements
            .iter()
            .enumerate()
            .filter_map(|(k, e)| match e.kind {
                ElementKind::VoltageSource { .. } => Some((k, e.nodes[0], e.nodes[1])),
                _ => None,
            });
        let fixed: Vec<Fixed> = fold::grounded_sources(c.node_count, sources)
            .into_iter()
            .map(|g| {
                let ElementKind::VoltageSource { dc, .. } = c.elements[g.element].kind else {
                    unreachable!("only voltage sources are offered")
                };
                Fixed {
                    element: g.element,
                    node: g.node,
                    sign: g.sign,
                    dc,
                    branch_row: c.branch_row(c.branch_of[g.element].expect("source has a branch")),
                }
            })
            .collect();
        let mut taken = vec![false; c.node_count + 1];
        for f in &fixed {
            taken[f.node] = true;
        }
        let removed: Vec<usize> = fixed
            .iter()
            .flat_map(|f| [f.node - 1, f.branch_row])
            .collect();
        let reduction = Reduction::new(c.size(), &removed);
        let touching_fixed = c
            .elements
            .iter()
            .enumerate()
            .filter(|(_, e)| e.nodes.iter().any(|&n| taken[n]))
            .map(|(k, _)| k)
            .collect();
        let mut pattern = PatternCollector::default();
        let zero = vec![[0.0; 2]; c.elements.len()];
        let known = vec![0.0; c.size()];
        stamp_all(
            c,
            &mut Reduced {
                inner: &mut pattern,
                reduction: &reduction,
                known: &known,
            },
            &zero,
            Conditions::PLAIN,
        );
        Engine {
            circuit,
            system: LinearSystem::with_limit(reduction.reduced_size(), &pattern, dense_limit),
            iterations: 0,
            reduction,
            fixed,
            touching_fixed,
        }
    }

    /// Known values of the removed unknowns under `cond` (full-size vector).
    fn known(&self, cond: Conditions) -> Vec<f64> {
        let mut known = vec![0.0; self.circuit.size()];
        for f in &self.fixed {
            known[f.node - 1] = f.sign * cond.source_scale * f.dc;
        }
        known
    }

    /// Map a reduced-system row to its full-system row.
    pub fn full_row(&self, reduced: usize) -> usize {
        self.reduction
            .to_full
            .get(reduced)
            .copied()
            .unwrap_or(reduced)
    }

    /// The full solution from a reduced one: known node voltages filled in,
    /// and each fixing source's current from Kirchhoff's current law at its
    /// node (exact device currents of everything else on that node).
    fn expand(&self, reduced: &[f64], cond: Conditions) -> Vec<f64> {
        let c = self.circuit;
        let mut x = self.reduction.expand(reduced, &self.known(cond));
        if self.fixed.is_empty() {
            return x;
        }
        let mut acc = vec![0.0; c.node_count + 1];
        let is_fixing = |k: usize| self.fixed.iter().any(|f| f.element == k);
        for &k in &self.touching_fixed {
            if is_fixing(k) {
                continue;
            }
            for (n, i) in terminal_currents(c, k, &x, cond.source_scale).iter() {
                acc[n] += i;
            }
        }
        for f in &self.fixed {
            let gmin_current = cond.gmin * x[f.node - 1];
            // The source's current into the node's pin balances everything else there.
            x[f.branch_row] = -f.sign * (acc[f.node] + gmin_current);
        }
        x
    }

    /// The starting state: all voltages and currents zero, every
    /// transistor's base–emitter junction linearised at its critical voltage
    /// (a typical "on" point; the base–collector junction at zero). Starting
    /// the companion models there rather than at 0 V saves Newton steps: at
    /// 0 V a junction looks like an open circuit.
    pub fn zero_state(&self) -> State {
        let junctions = self
            .circuit
            .elements
            .iter()
            .map(|e| with_model!(&e.kind, |m| m.start()))
            .collect();
        State {
            x: vec![0.0; self.circuit.size()],
            junctions,
        }
    }

    /// Assemble at `junctions` and solve; returns the full solution.
    pub fn linear_solve(
        &mut self,
        junctions: &[Junction],
        cond: Conditions,
    ) -> Result<Vec<f64>, SolveFailure> {
        self.system.clear();
        let known = self.known(cond);
        stamp_all(
            self.circuit,
            &mut Reduced {
                inner: &mut self.system,
                reduction: &self.reduction,
                known: &known,
            },
            junctions,
            cond,
        );
        let map = |f: SolveFailure, e: &Self| match f {
            SolveFailure::Singular { unknown } => SolveFailure::Singular {
                unknown: unknown.map(|u| e.full_row(u)),
            },
            SolveFailure::NotFinite { unknown } => SolveFailure::NotFinite {
                unknown: e.full_row(unknown),
            },
        };
        match self.system.solve() {
            Ok(r) => Ok(self.expand(&r, cond)),
            Err(f) => Err(map(f, self)),
        }
    }

    /// Solve the last factorised system for many full-size right-hand sides
    /// at once (column after column); returns full-size solutions likewise.
    pub fn solve_many(&mut self, rhs: &[f64], ncols: usize) -> Result<Vec<f64>, SolveFailure> {
        let full = self.circuit.size();
        let n = self.reduction.reduced_size();
        let mut r = Vec::with_capacity(n * ncols);
        for col in rhs.chunks(full) {
            r.extend(self.reduction.to_full.iter().map(|&k| col[k]));
        }
        self.system.solve_many(&mut r, ncols)?;
        let mut out = vec![0.0; full * ncols];
        for (o, col) in out.chunks_mut(full).zip(r.chunks(n.max(1))) {
            for (i, &k) in self.reduction.to_full.iter().enumerate() {
                o[k] = col[i];
            }
        }
        Ok(out)
    }

    /// The entries of the inverse of the last factorised system on its
    /// factors' closed pattern (sparse systems only; see
    /// [`SelectedInverse`]), read with [`Self::inverse_entry`].
    pub fn selected_inverse(&self) -> Option<Result<SelectedInverse, SolveFailure>> {
        self.system.selected_inverse()
    }

    /// `A⁻¹[row, col]` in full-system rows: zero where either was removed
    /// (as a full solve leaves it), `None` off the closed pattern.
    pub fn inverse_entry(&self, z: &SelectedInverse, row: usize, col: usize) -> Option<f64> {
        let to = &self.reduction.to_reduced;
        match (to[row], to[col]) {
            (Some(r), Some(c)) => z.get(r, c),
            _ => Some(0.0),
        }
    }

    /// Solve the last factorised system for a full-size right-hand side
    /// (rows of removed unknowns ignored; their entries come back zero).
    pub fn solve_again(&mut self, rhs: &[f64]) -> Result<Vec<f64>, SolveFailure> {
        let r = self.system.solve_again(&self.reduction.restrict(rhs))?;
        Ok(self.reduction.expand(&r, &vec![0.0; rhs.len()]))
    }

    /// One Newton run from `start` under `cond`.
    pub fn run(&mut self, start: &State, cond: Conditions) -> Result<State, RunError> {
        let c = self.circuit;
        let mut x = start.x.clone();
        let mut junctions = start.junctions.clone();
        let mut worst_row = 0;
        for _ in 0..MAX_ITERATIONS {
            if self.iterations >= MAX_TOTAL_ITERATIONS {
                return Err(RunError::Budget);
            }
            self.iterations += 1;
            let x_new = match self.linear_solve(&junctions, cond) {
                Ok(v) => v,
                Err(SolveFailure::Singular { unknown }) => return Err(RunError::Singular(unknown)),
                Err(SolveFailure::NotFinite { unknown }) => {
                    return Err(RunError::NoConvergence { worst_row: unknown })
                }
            };
            // Limit the junction steps (critical-voltage method and the 1/qb guard).
            let mut limited = false;
            for (k, e) in c.elements.iter().enumerate() {
                let (_, step, hit) = step_junction(e, junctions[k], &x_new);
                junctions[k] = step;
                limited |= hit;
            }
            let update_ok = x.iter().zip(&x_new).enumerate().all(|(r, (old, new))| {
                let abs = if r < c.node_count {
                    VOLTAGE_ABSTOL
                } else {
                    CURRENT_ABSTOL
                };
                (new - old).abs() <= VOLTAGE_RELTOL * new.abs().max(old.abs()) + abs
            });
            x = x_new;
            if limited {
                continue;
            }
            let (res, scale) = residuals(c, &x, cond);
            let tolerance = |r: usize, floor: f64| {
                let abs = if r < c.node_count {
                    CURRENT_ABSTOL
                } else {
                    VOLTAGE_ABSTOL
                };
                KCL_RELTOL * scale[r] + abs + floor
            };
            let mut failing = Vec::new();
            let mut worst = -1.0;
            for r in 0..res.len() {
                if !res[r].is_finite() || res[r].abs() > tolerance(r, 0.0) {
                    failing.push(r);
                }
                let unit = if r < c.node_count {
                    CURRENT_ABSTOL
                } else {
                    VOLTAGE_ABSTOL
                };
                let rel = res[r].abs() / (scale[r] + unit);
                if rel.is_nan() || rel > worst {
                    worst = rel;
                    worst_row = r;
                }
            }
            if !update_ok {
                continue;
            }
            // Rows that fail only by rounding pass with the rounding floor
            // (computed only when needed: it costs a device evaluation).
            let ok = failing.is_empty() || {
                let floor = rounding_floor(c, &x, cond);
                failing
                    .iter()
                    .all(|&r| res[r].is_finite() && res[r].abs() <= tolerance(r, floor[r]))
            };
            if ok {
                return Ok(State { x, junctions });
            }
        }
        Err(RunError::NoConvergence { worst_row })
    }

    /// Plain Newton from zero, then gmin stepping, then source stepping.
    /// Returns the state and the aids used (plain words).
    ///
    /// Each aid is tried from both starting points (junctions at their
    /// critical voltage, then at 0 V): the second is the classic cold start
    /// and rescues the rare circuit the first one sends astray.
    pub fn solve(&mut self) -> Result<(State, Vec<String>), RunError> {
        let warm = self.zero_state();
        let first = match self.run(&warm, Conditions::PLAIN) {
            Ok(s) => return Ok((s, Vec::new())),
            Err(RunError::Budget) => return Err(RunError::Budget),
            Err(e) => e,
        };
        let cold = State {
            x: warm.x.clone(),
            junctions: vec![[0.0; 2]; self.circuit.elements.len()],
        };
        if let Ok(s) = self.run(&cold, Conditions::PLAIN) {
            return Ok((s, Vec::new()));
        }
        for start in [&warm, &cold] {
            if let Ok(s) = self.gmin_stepping(start) {
                return Ok((s, vec![AID_GMIN.to_string()]));
            }
        }
        for start in [&warm, &cold] {
            if let Ok(s) = self.source_stepping(start) {
                return Ok((s, vec![AID_SOURCE.to_string()]));
            }
        }
        Err(first)
    }

    /// Start with 1 mS from every node to ground and take it away a decade
    /// at a time (smaller steps after a failure), ending with none.
    pub fn gmin_stepping(&mut self, zero: &State) -> Result<State, RunError> {
        let mut g = 1e-3;
        let mut state = self.run(
            zero,
            Conditions {
                gmin: g,
                source_scale: 1.0,
            },
        )?;
        let mut factor = 10.0;
        for _ in 0..MAX_STEPS {
            let next = if g <= 1e-13 { 0.0 } else { g / factor };
            match self.run(
                &state,
                Conditions {
                    gmin: next,
                    source_scale: 1.0,
                },
            ) {
                Ok(s) => {
                    state = s;
                    if next == 0.0 {
                        return Ok(state);
                    }
                    g = next;
                    factor = (factor * 2.0).min(10.0);
                }
                Err(RunError::Budget) => return Err(RunError::Budget),
                Err(e) => {
                    factor = factor.sqrt();
                    if factor < 1.001 {
                        return Err(e);
                    }
                }
            }
        }
        Err(RunError::NoConvergence { worst_row: 0 })
    }

    /// Scale every source from 0 to 1, growing the step after a success and
    /// cutting it after a failure.
    pub fn source_stepping(&mut self, zero: &State) -> Result<State, RunError> {
        let mut alpha: f64 = 0.0;
        let mut step: f64 = 0.05;
        let mut state = zero.clone();
        for _ in 0..MAX_STEPS {
            let next = (alpha + step).min(1.0);
            match self.run(
                &state,
                Conditions {
                    gmin: 0.0,
                    source_scale: next,
                },
            ) {
                Ok(s) => {
                    state = s;
                    alpha = next;
                    if alpha >= 1.0 {
                        return Ok(state);
                    }
                    step = (step * 1.5).min(0.25);
                }
                Err(RunError::Budget) => return Err(RunError::Budget),
                Err(e) => {
                    step /= 4.0;
                    if step < 1e-7 {
                        return Err(e);
                    }
                }
            }
        }
        Err(RunError::NoConvergence { worst_row: 0 })
    }
}
