//! Whether a run can still end within its step budget. A run whose step has
//! collapsed (Newton converging only at femtosecond steps, as with a supply
//! of 1e15 V) would otherwise grind through millions of steps before the
//! budget stops it, minutes of a user's time for the same stop. Every
//! [`PACE_WINDOW`] accepted steps the pace of the window is extrapolated to
//! the end of the run; when that needs more than [`PACE_MARGIN`] times the
//! steps left in the budget, the run stops then, saying so.

/// Accepted steps between two looks at the pace.
pub const PACE_WINDOW: usize = 10_000;
/// How far past the budget the extrapolation must reach to stop: a run that
/// crawls through a fast edge and then lengthens its step again is spared.
pub const PACE_MARGIN: f64 = 10.0;

/// The start of the current window.
pub struct Pace {
    steps: usize,
    t: f64,
}

impl Pace {
    pub fn new(steps: usize, t: f64) -> Self {
        Pace { steps, t }
    }

    /// At `steps` accepted steps and time `t` of a run to `until` with
    /// `budget` steps in all: `Some(why)` when the budget is spent or the
    /// run cannot end within it at the last window's pace.
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
        *self = Pace::new(steps, t);
        let needed = (until - t) / step;
        let left = budget.saturating_sub(steps) as f64;
        if needed <= PACE_MARGIN * left {
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

    #[test]
    fn a_collapsed_step_stops_and_a_steady_one_runs_on() {
        // invariant: the extrapolation is (time left) / (pace of the window)
        // against the steps left, with the margin.
        let mut p = Pace::new(0, 0.0);
        assert_eq!(p.hopeless(PACE_WINDOW - 1, 1e-9, 1e-3, 5_000_000), None);
        // 10,000 steps of 5 fs each: 2e11 steps to go, far past 5e6.
        let stop = p.hopeless(PACE_WINDOW, 5e-11, 1e-3, 5_000_000);
        assert!(stop.is_some_and(|m| m.contains("step limit would be reached")));
        // 10,000 steps of 1 µs toward 1 s: 1e6 to go, within 10 × 5e6.
        let mut p = Pace::new(0, 0.0);
        assert_eq!(p.hopeless(PACE_WINDOW, 1e-2, 1.0, 5_000_000), None);
        // A pace that would need 11 times the steps left stops.
        let mut p = Pace::new(0, 0.0);
        let left = 1_000_000 - PACE_WINDOW;
        let until = 1e-2 + 11.0 * left as f64 * 1e-6 * PACE_MARGIN / 10.0;
        assert!(p.hopeless(PACE_WINDOW, 1e-2, until, 1_000_000).is_some());
    }
}
