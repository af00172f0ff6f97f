//! A run off the UI thread for one revision of the document, shared by the
//! drawer's spread and waveform views: whether one is under way, which
//! revision it was asked for, and its result once it arrives (a result for
//! a revision no longer asked for is dropped).

use std::sync::Arc;

#[derive(Debug, Clone)]
pub struct BackgroundRun<T> {
    /// The last result that arrived.
    pub result: Option<Arc<Result<T, String>>>,
    /// A run is under way.
    pub running: bool,
    /// The document revision of the run under way.
    pub requested: Option<u64>,
}

impl<T> Default for BackgroundRun<T> {
    fn default() -> Self {
        BackgroundRun {
            result: None,
            running: false,
            requested: None,
        }
    }
}

impl<T> BackgroundRun<T> {
    /// Begin a run for `revision`; false (nothing changes) when one is
    /// already under way.
    pub fn begin(&mut self, revision: u64) -> bool {
        if self.running {
            return false;
        }
        self.running = true;
        self.requested = Some(revision);
        true
    }

    /// A run for `revision` finished: kept and returned, or None when no run
    /// is under way or the one under way was asked for another revision.
    pub fn finish(
        &mut self,
        revision: u64,
        r: Arc<Result<T, String>>,
    ) -> Option<&Result<T, String>> {
        if !self.running || self.requested != Some(revision) {
            return None;
        }
        self.running = false;
        let kept: &Arc<Result<T, String>> = self.result.insert(r);
        Some(&**kept)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_run_at_a_time_and_only_its_own_result_is_kept() {
        // invariant: a result is kept only for the run under way, and a
        // second start waits for the first to finish.
        let mut run = BackgroundRun::<u32>::default();
        assert!(run.finish(1, Arc::new(Ok(5))).is_none(), "nothing asked");
        assert!(run.begin(3));
        assert!(!run.begin(4), "one at a time");
        assert_eq!(run.requested, Some(3));
        assert!(run.finish(2, Arc::new(Ok(7))).is_none(), "another revision");
        assert!(run.running && run.result.is_none());
        assert_eq!(run.finish(3, Arc::new(Ok(9))), Some(&Ok(9)));
        assert!(!run.running);
        assert!(run.finish(3, Arc::new(Ok(11))).is_none(), "already done");
        assert_eq!(run.result.as_deref(), Some(&Ok(9)));
        assert!(run.begin(4));
    }
}
