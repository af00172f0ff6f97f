//! The periodic steady state by the shooting method (Aprille and Trick,
//! "Steady-state analysis of nonlinear circuits with periodic inputs",
//! Proc. IEEE 60, 1972): Newton on x(t0 + T) − x(t0) = 0.
//!
//! A period starts from a solution vector x(t0) with every charge (and
//! flux) taken from it ([`Engine::state_at`]); every run of
//! [`Engine::advance`] begins with a backward-Euler step, which reads only
//! those charges, so one period is a map P: x(t0) → x(t0 + T). Its fixed
//! point is the periodic solution, however slow the circuit's own time
//! constants (coupling capacitors) are; starting from consistent charges
//! keeps every Newton iterate a state the circuit can be in.
//!
//! Newton step: (M − I)·Δx = −(P(x) − x), M = ∂P/∂x the monodromy matrix.
//! M is taken column by column as the sensitivity of the period along the
//! step sequence of the last evaluation of P, replayed with the same step
//! times and rules (so the columns see no change of step choice), one
//! replay per unknown that some charge depends on. The residual itself always comes from a fresh
//! [`Engine::advance`], so the fixed point found is that of the run that
//! measures the period afterwards.

use super::companion::Rule;
use super::engine::{Engine, State, TransientError, MAX_STEPS, MIN_STEP_FRACTION};

/// Newton iterations of the shooting method at most.
pub const MAX_SHOOTING: usize = 8;
/// Converged when every unknown returns to within this fraction of its
/// size, plus [`SHOOT_FLOOR`] × the run's voltage (current) tolerance,
/// after one period.
pub const SHOOT_TOLERANCE: f64 = 1e-8;
pub const SHOOT_FLOOR: f64 = 1e-3;
/// Relative perturbation of an unknown for its monodromy column (plus ten
/// times the voltage or current tolerance).
pub const PERTURBATION: f64 = 1e-4;
/// A trial period may take this many times the steps of the first one.
pub const TRIAL_STEP_FACTOR: usize = 20;
/// Halvings of a Newton step that makes the period worse, at most.
pub const MAX_HALVINGS: usize = 4;

/// The result of a shooting run.
#[derive(Debug, Clone)]
pub struct Shot {
    /// A state at `t0` on the periodic solution (as found).
    pub state: State,
    /// Periods integrated (evaluations, replays).
    pub periods: usize,
    pub iterations: usize,
    pub converged: bool,
}

/// One period along given step times (backward Euler first and after a
/// corner, trapezoidal otherwise, as `advance` does).
fn replay(
    engine: &mut Engine<'_>,
    start: State,
    times: &[f64],
    corners: &[f64],
    floor: f64,
) -> Result<State, TransientError> {
    let mut st = start;
    let mut after_corner = true;
    for &t in times {
        let h = t - st.t;
        let rule = if after_corner {
            Rule::backward_euler(h)
        } else {
            Rule::trapezoidal(h)
        };
        let guess = st.x.clone();
        let mut next = engine
            .step(&st, &guess, h, rule)
            .map_err(|at| engine.stop_message(&st, "a shooting step did not converge", Some(at)))?;
        next.t = t;
        after_corner = corners.iter().any(|c| (c - t).abs() <= floor);
        st = next;
    }
    Ok(st)
}

/// Solve a·x = b (dense, partial pivoting); a column with no usable pivot
/// leaves its unknown at zero.
fn solve_dense(mut a: Vec<Vec<f64>>, mut b: Vec<f64>) -> Vec<f64> {
    let n = b.len();
    let scale = a
        .iter()
        .flatten()
        .fold(0.0f64, |m, v| m.max(v.abs()))
        .max(f64::MIN_POSITIVE);
    let mut usable = vec![true; n];
    for col in 0..n {
        let p = (col..n)
            .max_by(|&i, &j| a[i][col].abs().total_cmp(&a[j][col].abs()))
            .unwrap_or(col);
        if a[p][col].abs() <= 1e-14 * scale || !a[p][col].is_finite() {
            usable[col] = false;
            continue;
        }
        a.swap(col, p);
        b.swap(col, p);
        let (top, rest) = a.split_at_mut(col + 1);
        let pivot = &top[col];
        for (k, row) in rest.iter_mut().enumerate() {
            let f = row[col] / pivot[col];
            if f != 0.0 {
                for (v, p) in row[col..].iter_mut().zip(&pivot[col..]) {
                    *v -= f * p;
                }
                b[col + 1 + k] -= f * b[col];
            }
        }
    }
    let mut x = vec![0.0; n];
    for col in (0..n).rev() {
        if !usable[col] {
            continue;
        }
        let s: f64 = (col + 1..n).map(|k| a[col][k] * x[k]).sum();
        x[col] = (b[col] - s) / a[col][col];
    }
    x
}

/// Find the periodic solution of period `period` from `start` (at its
/// time t0), landing on `landing` as the measuring run will.
pub fn shoot(
    engine: &mut Engine<'_>,
    start: State,
    period: f64,
    landing: &[f64],
    keep_going: &mut dyn FnMut(f64) -> bool,
) -> Result<Shot, TransientError> {
    let t0 = start.t;
    let until = t0 + period;
    let floor = (period * MIN_STEP_FRACTION).max(1e-18);
    let corners = engine.drive.corners(t0 - 1e-300, until);
    let nodes = engine.base.node_count;
    let (v_tol, i_tol) = (
        engine.settings.voltage_tolerance,
        engine.settings.current_tolerance,
    );
    let n = start.x.len();
    let mut x0 = start.x;
    let mut periods = 0;
    let mut converged = false;
    let mut iterations = 0;
    // How far one period returns from its start, in units of the tolerance
    // (≤ 1: converged).
    let size = |end: &[f64], x: &[f64]| -> f64 {
        end.iter()
            .zip(x)
            .enumerate()
            .map(|(k, (a, b))| {
                let abs = if k < nodes { v_tol } else { i_tol };
                (a - b).abs() / (SHOOT_TOLERANCE * a.abs().max(b.abs()) + SHOOT_FLOOR * abs)
            })
            .fold(0.0, f64::max)
    };
    // The first period from the given start: its steps set the budget of
    // the trial periods (a Newton iterate far from the solution may need
    // far more; it is then refused, not run to the engine's limit).
    let before = engine.counts.steps;
    let mut times = Vec::new();
    let mut from = engine.state_at(t0, x0.clone());
    let mut end = engine.advance(
        from.clone(),
        until,
        landing,
        &mut |st, _| times.push(st.t),
        keep_going,
    )?;
    periods += 1;
    let budget = TRIAL_STEP_FACTOR * (engine.counts.steps - before).max(100);
    while iterations < MAX_SHOOTING {
        iterations += 1;
        let r: Vec<f64> = end.x.iter().zip(&x0).map(|(a, b)| a - b).collect();
        let now = size(&end.x, &x0);
        converged = now <= 1.0;
        if converged {
            break;
        }
        // The monodromy matrix along this step sequence.
        let from_q = from.q.clone();
        let base = replay(engine, from.clone(), &times, &corners, floor)?;
        let mut replays = 1;
        let mut m = vec![vec![0.0; n]; n];
        for k in 0..n {
            if !keep_going(0.0) {
                return Err(TransientError {
                    message: "cancelled while finding the steady state".into(),
                });
            }
            let abs = if k < nodes { v_tol } else { i_tol };
            let delta = PERTURBATION * x0[k].abs() + 10.0 * abs;
            let mut x = x0.clone();
            x[k] += delta;
            let moved_start = engine.state_at(t0, x);
            // An unknown no charge depends on does not move the period.
            if moved_start.q == from_q {
                continue;
            }
            replays += 1;
            let moved = replay(engine, moved_start, &times, &corners, floor)?;
            for (row, (a, b)) in m.iter_mut().zip(moved.x.iter().zip(&base.x)) {
                row[k] = (a - b) / delta;
            }
        }
        periods += replays;
        for (i, row) in m.iter_mut().enumerate() {
            row[i] -= 1.0;
        }
        let rhs: Vec<f64> = r.iter().map(|v| -v).collect();
        let dx = solve_dense(m, rhs);
        // Newton's step, shortened while the period from the new start
        // fails or returns farther than the current one (a line search).
        let mut accepted = false;
        let mut scale = 1.0;
        for _ in 0..=MAX_HALVINGS {
            let x: Vec<f64> = x0.iter().zip(&dx).map(|(a, d)| a + scale * d).collect();
            let trial_from = engine.state_at(t0, x.clone());
            let mut trial_times = Vec::new();
            engine.step_budget = engine.counts.steps + budget;
            let ran = engine.advance(
                trial_from.clone(),
                until,
                landing,
                &mut |st, _| trial_times.push(st.t),
                keep_going,
            );
            engine.step_budget = MAX_STEPS;
            periods += 1;
            if let Ok(e) = ran {
                if size(&e.x, &x) < now {
                    x0 = x;
                    from = trial_from;
                    end = e;
                    times = trial_times;
                    accepted = true;
                    break;
                }
            }
            scale *= 0.5;
        }
        if !accepted {
            // No shorter step helps: keep the best start found (the caller
            // goes on period by period from it).
            break;
        }
    }
    Ok(Shot {
        state: engine.state_at(t0, x0),
        periods,
        iterations,
        converged,
    })
}
