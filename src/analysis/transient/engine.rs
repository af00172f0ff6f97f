//! The time-step engine: Newton at every step on the DC stamps plus the
//! charge companions, trapezoidal rule with a backward-Euler step after
//! every corner, step length by the local truncation error.
//!
//! Tolerances (the project's `transient` settings override the first three):
//! - truncation error: a slot's current error estimate h²·|DD3(q)|/2
//!   (the trapezoidal rule's error −h³·q‴/12 per step, q‴ ≈ 6·DD3 from
//!   the third divided difference of the charge over the last four points,
//!   Nagel 1975 ch. 5) must stay below `relative_tolerance` × the largest
//!   current that slot has carried so far + `current_tolerance` (an
//!   inductor: its voltage, + `voltage_tolerance`);
//! - Newton: every update below [`NEWTON_RELTOL`]·|v| + `voltage_tolerance`
//!   (currents: + `current_tolerance`), no junction step limited, at most
//!   [`MAX_NEWTON`] iterations;
//! - a step that does not converge is halved; below [`MIN_STEP_FRACTION`]
//!   of the run's length the run stops naming the time, net and part.
//!
//! Nodes held by grounded sources are taken out of the system (as in DC,
//! `mna::Reduction`); their known value is the source's value at the step.

use super::companion::{self, ChargeEval, Rule, Slot, SlotKind};
use super::pace::Pace;
use super::sources::Drive;
use crate::analysis::circuit::{Circuit, ElementKind};
use crate::analysis::dc::stamps::{junction_of, stamp_all, step_junction, Conditions, Junction};
use crate::analysis::elements::{with_model, Model};
use crate::analysis::mna::{
    fold, LinearSystem, PatternCollector, Reduced, Reduction, SolveFailure,
};
use crate::document::TransientSettings;

/// Relative tolerance of a Newton update within a step.
pub const NEWTON_RELTOL: f64 = 1e-6;
/// Newton iterations allowed in one step before it is halved.
pub const MAX_NEWTON: usize = 60;
/// A step is never shorter than this fraction of the run's length.
pub const MIN_STEP_FRACTION: f64 = 1e-13;
/// The first step after a corner, as a fraction of the longest step.
pub const CORNER_STEP_FRACTION: f64 = 1e-3;
/// Most steps one run may take (a stop, never a hang).
pub const MAX_STEPS: usize = 5_000_000;
/// A charge whose changes over the last three steps stay within this many
/// units of rounding of its size is at rest (no truncation error counted).
pub const REST_ROUNDING: f64 = 16.0;
/// At steps under [`SPIRAL_FRACTION`] of the first step after a corner, a
/// charge moving under this fraction of its size over three steps is at rest
/// too (resolved only to the Newton test; 100 µF at amperes hit the floor).
pub const REST_SHORT_STEP: f64 = 1e-9;
/// See [`REST_SHORT_STEP`]: only a step control already spiralling toward
/// the floor (no demo or fixture's run comes near it).
pub const SPIRAL_FRACTION: f64 = 1e-3;

/// Why a run stopped early.
#[derive(Debug, Clone, PartialEq)]
pub struct TransientError {
    pub message: String,
}

impl std::fmt::Display for TransientError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.message)
    }
}

/// One accepted point of the solution.
#[derive(Debug, Clone, PartialEq)]
pub struct State {
    pub t: f64,
    /// Full MNA vector (node voltages, branch currents; grounded sources'
    /// currents are recovered on output, see `waveforms`).
    pub x: Vec<f64>,
    pub junctions: Vec<Junction>,
    /// Per slot: charge (terminal sense) and current a→b.
    pub q: Vec<f64>,
    pub i: Vec<f64>,
}

/// Counts of one run.
#[derive(Debug, Clone, Copy, Default, PartialEq, serde::Serialize)]
pub struct Counts {
    pub steps: usize,
    pub rejected: usize,
    pub newton_iterations: usize,
}

/// A node held by a grounded source (the core's folding record).
type Fixed = fold::GroundedSource;

/// The engine of one circuit and drive.
pub struct Engine<'a> {
    pub base: &'a Circuit,
    /// The circuit with source values at the current step.
    work: Circuit,
    pub drive: Drive,
    pub slots: Vec<Slot>,
    pub settings: TransientSettings,
    reduction: Reduction,
    fixed: Vec<Fixed>,
    system: LinearSystem<f64>,
    nonlinear: bool,
    /// Largest |current| each slot has carried (tolerance reference).
    peak: Vec<f64>,
    /// A longest step set by the caller (steady-state runs), s.
    step_limit: Option<f64>,
    /// Steps after which a run stops (shooting trials: fewer than [`MAX_STEPS`]).
    pub(super) step_budget: usize,
    pub counts: Counts,
}

impl<'a> Engine<'a> {
    pub fn new(base: &'a Circuit, drive: Drive, settings: TransientSettings) -> Self {
        let c = base;
        // The one folding rule of the circuit core (DC and small-signal use it too).
        let sources = c
            .elements
            .iter()
            .enumerate()
            .filter_map(|(k, e)| match e.kind {
                ElementKind::VoltageSource { .. } => Some((k, e.nodes[0], e.nodes[1])),
                _ => None,
            });
        let fixed: Vec<Fixed> = fold::grounded_sources(c.node_count, sources);
        let removed: Vec<usize> = fixed
            .iter()
            .flat_map(|f| {
                [
                    f.node - 1,
                    c.branch_row(c.branch_of[f.element].expect("source has a branch")),
                ]
            })
            .collect();
        let reduction = Reduction::new(c.size(), &removed);
        let slots = companion::slots(c);
        let mut pattern = PatternCollector::default();
        {
            let known = vec![0.0; c.size()];
            let mut r = Reduced {
                inner: &mut pattern,
                reduction: &reduction,
                known: &known,
            };
            let zero = vec![[0.0; 2]; c.elements.len()];
            stamp_all(c, &mut r, &zero, Conditions::PLAIN);
            let x = vec![0.0; c.size()];
            for s in &slots {
                let ev = companion::evaluate(c, s, [0.0; 2], &x);
                companion::stamp(&mut r, s, &ev, Rule::trapezoidal(1.0), 0.0, 0.0);
            }
        }
        // Each kind says whether its currents are nonlinear in its voltages
        // (a new kind cannot be taken for linear by being left out here).
        let nonlinear = c
            .elements
            .iter()
            .any(|e| with_model!(&e.kind, |m| m.nonlinear()));
        Engine {
            base,
            work: base.clone(),
            peak: vec![0.0; slots.len()],
            drive,
            slots,
            settings,
            system: LinearSystem::new(reduction.reduced_size(), &pattern),
            reduction,
            fixed,
            nonlinear,
            step_limit: None,
            step_budget: MAX_STEPS,
            counts: Counts::default(),
        }
    }

    /// Set every source of the working circuit to its value at `t`.
    fn set_sources(&mut self, t: f64) {
        let scale = self.drive.scale(t);
        let signal = self.drive.signal.as_ref().map(|(k, w)| (*k, w.value(t)));
        for (k, (w, b)) in self
            .work
            .elements
            .iter_mut()
            .zip(&self.base.elements)
            .enumerate()
        {
            match (&mut w.kind, &b.kind) {
                (
                    ElementKind::VoltageSource { dc, .. },
                    ElementKind::VoltageSource { dc: d0, .. },
                ) => {
                    *dc = match signal {
                        Some((s, v)) if s == k => v,
                        _ => d0 * scale,
                    }
                }
                (ElementKind::CurrentSource { dc }, ElementKind::CurrentSource { dc: d0 }) => {
                    *dc = d0 * scale
                }
                _ => {}
            }
        }
    }

    /// The value of source element `k` in the working circuit.
    fn source_value(&self, k: usize) -> f64 {
        match self.work.elements[k].kind {
            ElementKind::VoltageSource { dc, .. } => dc,
            _ => 0.0,
        }
    }

    /// The state at t = 0: the DC operating point with the sources at
    /// their t = 0 values, or every voltage and current zero at power-on.
    pub fn initial(&mut self, power_on: bool) -> Result<State, TransientError> {
        self.set_sources(0.0);
        let c = self.base;
        let x = if power_on {
            vec![0.0; c.size()]
        } else {
            let op =
                crate::analysis::dc::solve_circuit(&self.work).map_err(|e| TransientError {
                    message: format!("no operating point to start from: {e}"),
                })?;
            let mut x: Vec<f64> = op.node_voltages[1..].to_vec();
            x.extend_from_slice(&op.branch_currents);
            x
        };
        Ok(self.state_at(0.0, x))
    }

    /// A state from a given solution vector with every charge at rest.
    pub fn state_at(&self, t: f64, x: Vec<f64>) -> State {
        let c = self.base;
        let junctions: Vec<Junction> = c.elements.iter().map(|e| junction_of(e, &x)).collect();
        let q = self
            .slots
            .iter()
            .map(|s| companion::evaluate(c, s, junctions[s.element], &x).q)
            .collect();
        State {
            t,
            x,
            junctions,
            q,
            i: vec![0.0; self.slots.len()],
        }
    }

    /// Known values of the removed unknowns (full-size vector).
    fn known(&self) -> Vec<f64> {
        let mut known = vec![0.0; self.base.size()];
        for f in &self.fixed {
            known[f.node - 1] = f.sign * self.source_value(f.element);
        }
        known
    }

    /// One step from `from` to `from.t + h`, starting Newton at `guess`.
    pub(super) fn step(
        &mut self,
        from: &State,
        guess: &[f64],
        h: f64,
        rule: Rule,
    ) -> Result<State, (usize, Option<usize>)> {
        let t = from.t + h;
        self.set_sources(t);
        let known = self.known();
        let c = self.base;
        let mut x = guess.to_vec();
        for f in &self.fixed {
            x[f.node - 1] = known[f.node - 1];
        }
        let mut junctions: Vec<Junction> = c.elements.iter().map(|e| junction_of(e, &x)).collect();
        let mut worst = (0usize, None);
        for iteration in 0..MAX_NEWTON {
            self.counts.newton_iterations += 1;
            self.system.clear();
            {
                let mut r = Reduced {
                    inner: &mut self.system,
                    reduction: &self.reduction,
                    known: &known,
                };
                stamp_all(&self.work, &mut r, &junctions, Conditions::PLAIN);
                for (k, s) in self.slots.iter().enumerate() {
                    let ev = companion::evaluate(c, s, junctions[s.element], &x);
                    companion::stamp(&mut r, s, &ev, rule, from.q[k], from.i[k]);
                }
            }
            let reduced = match self.system.solve() {
                Ok(v) => v,
                Err(SolveFailure::Singular { unknown }) => {
                    let row = unknown.map(|u| self.reduction.to_full[u]).unwrap_or(0);
                    return Err((row, None));
                }
                Err(SolveFailure::NotFinite { unknown }) => {
                    return Err((self.reduction.to_full[unknown], None))
                }
            };
            let x_new = self.reduction.expand(&reduced, &known);
            let mut limited = false;
            let mut biggest = (0.0, None);
            for (k, e) in c.elements.iter().enumerate() {
                let old = junctions[k];
                let (j, step, hit) = step_junction(e, old, &x_new);
                junctions[k] = step;
                limited |= hit;
                let change = (j[0] - old[0]).abs().max((j[1] - old[1]).abs());
                if change > biggest.0 {
                    biggest = (change, Some(k));
                }
            }
            let mut ok = true;
            let mut worst_excess = 0.0;
            for (r, (old, new)) in x.iter().zip(&x_new).enumerate() {
                let abs = if r < c.node_count {
                    self.settings.voltage_tolerance
                } else {
                    self.settings.current_tolerance
                };
                let excess = (new - old).abs() / (NEWTON_RELTOL * new.abs().max(old.abs()) + abs);
                if excess.is_nan() || excess > 1.0 {
                    ok = false;
                }
                if excess.is_nan() || excess > worst_excess {
                    worst_excess = excess;
                    worst.0 = r;
                }
            }
            worst.1 = biggest.1;
            x = x_new;
            let linear_done = !self.nonlinear && iteration == 0;
            if (ok && !limited && iteration > 0) || linear_done {
                let junctions_now: Vec<Junction> =
                    c.elements.iter().map(|e| junction_of(e, &x)).collect();
                let mut q = Vec::with_capacity(self.slots.len());
                let mut i = Vec::with_capacity(self.slots.len());
                for (k, s) in self.slots.iter().enumerate() {
                    let ev: ChargeEval = companion::evaluate(c, s, junctions_now[s.element], &x);
                    // A current dq/dt (an inductor: its voltage dΦ/dt).
                    q.push(ev.q);
                    i.push(rule.derivative(ev.q, from.q[k], from.i[k]));
                }
                return Ok(State {
                    t,
                    x,
                    junctions: junctions_now,
                    q,
                    i,
                });
            }
        }
        Err(worst)
    }

    /// Integrate from `start` to `until`, landing exactly on every time in
    /// `landing` (sorted) and on every source corner. Calls `record` with
    /// every accepted state and whether it is a landing point; `keep_going`
    /// is asked before every step (false: cancelled).
    pub fn advance(
        &mut self,
        start: State,
        until: f64,
        landing: &[f64],
        record: &mut dyn FnMut(&State, bool),
        keep_going: &mut dyn FnMut(f64) -> bool,
    ) -> Result<State, TransientError> {
        let span = (until - start.t).max(f64::MIN_POSITIVE);
        let max_step = self.max_step(span);
        // The first step after a corner follows the period (or run) rule,
        // not a caller's tighter limit: far shorter first steps leave
        // Newton at the rounding floor of the large companion conductances.
        let corner_step = (self.rule_step(span) * CORNER_STEP_FRACTION).min(max_step);
        let floor = (span * MIN_STEP_FRACTION).max(1e-18);
        let corners = self.drive.corners(start.t - 1e-300, until);
        let mut corner_k = 0;
        let mut land_k = 0;
        // History for the truncation-error estimate: times and charges of
        // up to three accepted points before the new one.
        let mut hist: Vec<(f64, Vec<f64>)> = vec![(start.t, start.q.clone())];
        let mut prev_x: Option<(f64, Vec<f64>)> = None;
        let mut after_corner = true;
        // The step the error control asks for; a step may be shorter to land.
        let mut h_free = corner_step;
        let mut pace = Pace::new(self.counts.steps, start.t);
        let mut st = start;
        while st.t < until - floor {
            let budget = self.step_budget.min(MAX_STEPS);
            if let Some(why) = pace.stop(self.counts.steps, st.t, until, budget) {
                return Err(self.stop_message(&st, &why, None));
            }
            if !keep_going((st.t - (until - span)) / span) {
                return Err(TransientError {
                    message: format!("cancelled at t = {}", fmt_time(st.t)),
                });
            }
            while corner_k < corners.len() && corners[corner_k] <= st.t + floor {
                corner_k += 1;
            }
            while land_k < landing.len() && landing[land_k] <= st.t + floor {
                land_k += 1;
            }
            let next_corner = corners.get(corner_k).copied().unwrap_or(f64::INFINITY);
            let next_land = landing.get(land_k).copied().unwrap_or(f64::INFINITY);
            let stop_at = next_corner.min(next_land).min(until);
            h_free = h_free.min(max_step);
            let mut h = h_free;
            let remaining = stop_at - st.t;
            let hit = if h * 1.0001 >= remaining {
                h = remaining;
                true
            } else {
                if 2.0 * h > remaining {
                    h = 0.5 * remaining;
                }
                false
            };
            let rule = if after_corner {
                Rule::backward_euler(h)
            } else {
                Rule::trapezoidal(h)
            };
            let guess: Vec<f64> = match &prev_x {
                Some((tp, xp)) if !after_corner && st.t > *tp => {
                    let f = h / (st.t - tp);
                    st.x.iter().zip(xp).map(|(a, b)| a + f * (a - b)).collect()
                }
                _ => st.x.clone(),
            };
            let mut next = match self.step(&st, &guess, h, rule) {
                Ok(n) => n,
                Err((row, part)) => {
                    self.counts.rejected += 1;
                    h_free = h * 0.5;
                    if h_free < floor {
                        return Err(self.stop_message(
                            &st,
                            "a step did not converge even at the shortest step",
                            Some((row, part)),
                        ));
                    }
                    continue;
                }
            };
            if hit {
                next.t = stop_at;
            }
            // Truncation error (trapezoidal steps with enough history).
            let mut ratio = f64::INFINITY;
            if !after_corner && hist.len() >= 3 {
                let rest = if h_free < corner_step * SPIRAL_FRACTION {
                    REST_SHORT_STEP
                } else {
                    REST_ROUNDING * f64::EPSILON
                };
                ratio = self.error_ratio(&hist, &next, rest);
                if ratio < 1.0 && h > 2.0 * floor {
                    self.counts.rejected += 1;
                    h_free = h * (0.9 * ratio.sqrt()).clamp(0.2, 0.9);
                    continue;
                }
            }
            for (k, i) in next.i.iter().enumerate() {
                self.peak[k] = self.peak[k].max(i.abs());
            }
            self.counts.steps += 1;
            let at_corner = hit && (next_corner - next.t).abs() <= floor;
            let at_land = hit && (next_land - next.t).abs() <= floor;
            record(&next, at_land);
            prev_x = Some((st.t, std::mem::take(&mut st.x)));
            if at_corner {
                hist.clear();
                after_corner = true;
                h_free = h_free.min(corner_step);
            } else {
                after_corner = false;
                let grow = if ratio.is_finite() {
                    (0.9 * ratio.sqrt()).clamp(0.5, 2.0)
                } else {
                    2.0
                };
                // A step shortened only to land somewhere keeps the step
                // the error control asked for, unless it asks for less.
                if !hit {
                    h_free = h * grow;
                } else if grow < 1.0 {
                    h_free = h_free.min(h * grow);
                }
            }
            hist.push((next.t, next.q.clone()));
            if hist.len() > 3 {
                hist.remove(0);
            }
            st = next;
        }
        Ok(st)
    }

    /// Never step longer than `h` (on top of [`Engine::max_step`]'s rule).
    pub fn limit_step(&mut self, h: f64) {
        self.step_limit = (h > 0.0).then_some(h);
    }

    /// The longest step: a fiftieth of the signal's period or of the run,
    /// and no longer than a limit the caller set.
    fn max_step(&self, span: f64) -> f64 {
        let rule = self.rule_step(span);
        self.step_limit.map_or(rule, |l| rule.min(l))
    }

    /// A fiftieth of the signal's period or of the run.
    fn rule_step(&self, span: f64) -> f64 {
        let period = self.drive.signal.as_ref().and_then(|(_, w)| w.period());
        match period {
            Some(p) => (p / 50.0).min(span / 10.0),
            None => span / 50.0,
        }
    }

    /// tolerance / estimated error over every slot (≥ 1: accept).
    /// `rest`: the relative change below which a charge is at rest.
    fn error_ratio(&self, hist: &[(f64, Vec<f64>)], next: &State, rest: f64) -> f64 {
        let n = hist.len();
        let (t0, t1, t2, t3) = (next.t, hist[n - 1].0, hist[n - 2].0, hist[n - 3].0);
        let (q1, q2, q3) = (&hist[n - 1].1, &hist[n - 2].1, &hist[n - 3].1);
        let h = t0 - t1;
        let mut ratio = f64::INFINITY;
        for (k, s) in self.slots.iter().enumerate() {
            // A charge that has not moved beyond the rounding of its own
            // size (a large capacitor at rest) has no truncation error to
            // speak of: its divided differences are rounding noise, which
            // grows as the step shrinks and would drive the step to the floor.
            let size = [next.q[k], q1[k], q2[k], q3[k]]
                .iter()
                .fold(0.0f64, |m, q| m.max(q.abs()));
            let moved = (next.q[k] - q1[k])
                .abs()
                .max((q1[k] - q2[k]).abs())
                .max((q2[k] - q3[k]).abs());
            if moved <= rest * size {
                continue;
            }
            let d1a = (next.q[k] - q1[k]) / (t0 - t1);
            let d1b = (q1[k] - q2[k]) / (t1 - t2);
            let d1c = (q2[k] - q3[k]) / (t2 - t3);
            let d2a = (d1a - d1b) / (t0 - t2);
            let d2b = (d1b - d1c) / (t1 - t3);
            let d3 = (d2a - d2b) / (t0 - t3);
            let err = 0.5 * h * h * d3.abs();
            let abs = if matches!(s.kind, SlotKind::Flux(..)) {
                self.settings.voltage_tolerance
            } else {
                self.settings.current_tolerance
            };
            let reference = self.peak[k].max(next.i[k].abs());
            let tol = self.settings.relative_tolerance * reference + abs;
            if err > 0.0 {
                ratio = ratio.min(tol / err);
            }
        }
        ratio
    }

    /// A message naming the time, the net and the part where a run stopped
    /// (`at`: the full-system row that moved most, and the device whose
    /// junctions moved most, when known).
    pub fn stop_message(
        &self,
        st: &State,
        what: &str,
        at: Option<(usize, Option<usize>)>,
    ) -> TransientError {
        let c = self.base;
        let mut message = format!(
            "the transient run stopped at t = {}: {what}",
            fmt_time(st.t)
        );
        if let Some((row, part)) = at {
            message += &format!("; the solution moved most at {}", c.unknown_name(row));
            let part = part.or_else(|| {
                (row < c.node_count).then(|| {
                    c.elements
                        .iter()
                        .position(|e| e.nodes.contains(&(row + 1)))
                        .unwrap_or(0)
                })
            });
            if let Some(k) = part {
                message += &format!(", at part {}", c.elements[k].designator);
            }
            message += ". Check that part's values; a circuit that switches very fast may \
                        need a shorter run or a looser relative_tolerance";
        }
        TransientError { message }
    }
}

/// A time for messages, in engineering notation.
pub fn fmt_time(t: f64) -> String {
    crate::units::format(t, crate::units::Unit::Second)
}
