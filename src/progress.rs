//! Progress and stopping of long runs, as plain shared counters: the library
//! counts steps and looks at the stop flag between them; whoever started the
//! run (the command line, the editor) shows the count and sets the flag.
//! Nothing here draws or catches signals (see `cli::watch` for that).

use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::{Arc, Mutex};

/// Shared progress of one run. Cloning shares the same counters.
#[derive(Debug, Clone, Default)]
pub struct Progress {
    inner: Arc<Inner>,
}

#[derive(Debug, Default)]
struct Inner {
    stop: Arc<AtomicBool>,
    done: AtomicUsize,
    total: AtomicUsize,
    stage: Mutex<&'static str>,
}

/// The run was asked to stop before it finished.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Stopped;

impl std::fmt::Display for Stopped {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("stopped before the end (interrupted)")
    }
}

impl Progress {
    pub fn new() -> Progress {
        Progress::default()
    }

    /// The stop flag itself (a signal handler can set it directly).
    pub fn stop_flag(&self) -> Arc<AtomicBool> {
        self.inner.stop.clone()
    }

    /// Ask the run to stop at its next step.
    pub fn stop(&self) {
        self.inner.stop.store(true, Ordering::Relaxed);
    }

    pub fn is_stopped(&self) -> bool {
        self.inner.stop.load(Ordering::Relaxed)
    }

    /// Start a named stage of `total` steps.
    pub fn stage(&self, name: &'static str, total: usize) {
        if let Ok(mut s) = self.inner.stage.lock() {
            *s = name;
        }
        self.inner.done.store(0, Ordering::Relaxed);
        self.inner.total.store(total, Ordering::Relaxed);
    }

    /// One step done; `Err` when the run should stop.
    pub fn step(&self) -> Result<(), Stopped> {
        self.inner.done.fetch_add(1, Ordering::Relaxed);
        self.check()
    }

    /// `Err` when the run should stop.
    pub fn check(&self) -> Result<(), Stopped> {
        if self.is_stopped() {
            Err(Stopped)
        } else {
            Ok(())
        }
    }

    /// The stage name, steps done and steps in the stage.
    pub fn snapshot(&self) -> (&'static str, usize, usize) {
        let stage = self.inner.stage.lock().map(|s| *s).unwrap_or("");
        (
            stage,
            self.inner.done.load(Ordering::Relaxed),
            self.inner.total.load(Ordering::Relaxed),
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn clones_share_the_count_and_the_stop_flag() {
        // invariant: a clone is the same run.
        let p = Progress::new();
        let q = p.clone();
        q.stage("corners", 4);
        assert_eq!(q.step(), Ok(()));
        assert_eq!(p.snapshot(), ("corners", 1, 4));
        p.stop();
        assert_eq!(q.step(), Err(Stopped));
        assert!(q.stop_flag().load(Ordering::Relaxed));
    }
}
