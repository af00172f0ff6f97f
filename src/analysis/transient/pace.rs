//! Whether a run can still end within its step budget. A run whose step has
//! collapsed (Newton converging only at femtosecond steps, as with a supply
//! of 1e15 V) would otherwise grind through millions of steps before the
//! budget stops it, minutes of a user's time for the same stop. Every
//! [`PACE_WINDOW`] accepted steps the window's mean step is taken; when it
//! has not even doubled since the window before (the step is stuck, not
//! recovering after a corner) and, at that pace, the run would need more
//! than [`PACE_MARGIN`] times the steps left in the budget, the run stops
//! then, saying so.

/// Accepted steps in one window.
pub const PACE_WINDOW: usize = 10_000;
/// How far past the budget the extrapolation must reach to stop.
pub const PACE_MARGIN: f64 = 100.0;
/// A window's mean step at most this many times the one before is stuck
/// (a step recovering after a corner grows far faster: up to 2× a step).
pub const STUCK_GROWTH: f64 = 2.0;

/// The start of the current window and the mean step of the one before.
pub struct Pace {
    steps: usize,
    t: f64,
    before: Option<f64>,
}

impl Pace {
    pub fn new(steps: usize, t: f64) -> Self {
        Pace {
            steps,
            t,
            before: None,
        }
    }

    /// At `steps` accepted steps and time `t` of a run to `until` with
    /// `budget` steps in all: `Some(why)` when the budget is spent or the
    /// run cannot end within it at its stuck pace.
    pub fn stop(&mut self, steps: usize, t: f64, until: f64, budget: usize) -> Option<String> {
        if steps >= budget {
            return Some("the step limit was reached".into());
        }
        self.hopeless(steps, t, until, budget)
    }

    fn hopeless(&mut self, steps: usize, t: f64, until: f64, budget: usize) -> Option<String> {
        let done = steps.checked_sub(self.steps)?;
        if done < PACE_WINDOW {
            return None;
        }
        let step = (t - self.t) / done as f64;
        let stuck = self.before.is_some_and(|b| step <= STUCK_GROWTH * b);
        *self = Pace {
            steps,
            t,
            before: Some(step),
        };
        let needed = (until - t) / step;
        let left = budget.saturating_sub(steps) as f64;
        if !stuck || needed <= PACE_MARGIN * left {
            return None;
        }
        Some(if needed.is_finite() {
            format!(
                "the step limit would be reached: the last {PACE_WINDOW} steps averaged {}, \
                 about {} more to go ({} allowed)",
                super::engine::fmt_time(step),
                crate::units::fixed(needed, 0),
                crate::units::fixed(left, 0),
            )
        } else {
            format!("the run did not advance over the last {PACE_WINDOW} steps")
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const BUDGET: usize = 5_000_000;

    #[test]
    fn a_stuck_step_stops_and_a_recovering_one_runs_on() {
        // invariant: the extrapolation is (time left) / (the window's mean
        // step) against the margin times the steps left, and only a step
        // that has not doubled since the window before counts as stuck.
        let w = PACE_WINDOW;
        // 5 fs steps, two windows alike: 2e11 steps to go, far past 5e8.
        let mut p = Pace::new(0, 0.0);
        assert_eq!(p.stop(w - 1, 5e-11, 1e-3, BUDGET), None);
        assert_eq!(
            p.stop(w, 5e-11, 1e-3, BUDGET),
            None,
            "one window says nothing"
        );
        let stop = p.stop(2 * w, 1e-10, 1e-3, BUDGET);
        assert!(stop.is_some_and(|m| m.contains("step limit would be reached")));
        // The same start, but the step grows fivefold from one window to
        // the next (recovering after a corner): no stop.
        let mut p = Pace::new(0, 0.0);
        assert_eq!(p.stop(w, 2e-11, 1e-3, BUDGET), None);
        assert_eq!(p.stop(2 * w, 1.2e-10, 1e-3, BUDGET), None);
        // A steady pace that ends in time: 1 µs steps toward 1 s.
        let mut p = Pace::new(0, 0.0);
        assert_eq!(p.stop(w, 1e-2, 1.0, BUDGET), None);
        assert_eq!(p.stop(2 * w, 2e-2, 1.0, BUDGET), None);
        // A stuck pace needing just over the margin times the steps left stops.
        let mut p = Pace::new(0, 0.0);
        let left = (BUDGET - 2 * w) as f64;
        let until = 2e-2 + 1.01 * PACE_MARGIN * left * 1e-6;
        assert_eq!(p.stop(w, 1e-2, until, BUDGET), None);
        assert!(p.stop(2 * w, 2e-2, until, BUDGET).is_some());
        // The budget itself.
        let mut p = Pace::new(0, 0.0);
        assert!(p
            .stop(BUDGET, 1.0, 2.0, BUDGET)
            .is_some_and(|m| m.contains("was reached")));
    }
}
