//! Long runs on the command line: a progress line on stderr (only when
//! stderr is a terminal, so logs and pipes stay clean) and Ctrl-C. The
//! first Ctrl-C asks the run to stop at its next step — it ends with a
//! message and exit 2, writing nothing; a second Ctrl-C ends the program at
//! once (exit 130).

use biasline::progress::Progress;
use std::io::IsTerminal;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, OnceLock};
use std::time::Duration;

/// Set by Ctrl-C (SIGINT), for the whole process; registered once.
fn interrupted() -> Option<&'static Arc<AtomicBool>> {
    static FLAG: OnceLock<Option<Arc<AtomicBool>>> = OnceLock::new();
    FLAG.get_or_init(|| {
        use signal_hook::consts::SIGINT;
        let flag = Arc::new(AtomicBool::new(false));
        // Order matters: the exit is armed before the flag can be set.
        signal_hook::flag::register_conditional_shutdown(SIGINT, 130, flag.clone()).ok()?;
        signal_hook::flag::register(SIGINT, flag.clone()).ok()?;
        Some(flag)
    })
    .as_ref()
}

/// Watches a run until dropped.
pub(super) struct Watch {
    done: Arc<AtomicBool>,
    thread: Option<std::thread::JoinHandle<()>>,
}

/// Start watching `progress`: on a terminal, redraw "stage done/total"
/// every 0.2 s after the first 0.5 s. With `catch_ctrl_c` the first Ctrl-C
/// sets the run's stop flag (the run must check it); without, Ctrl-C ends
/// the program as usual (safe where every write is atomic).
pub(super) fn watch(progress: &Progress, catch_ctrl_c: bool) -> Watch {
    let done = Arc::new(AtomicBool::new(false));
    let ctrl_c = if catch_ctrl_c {
        interrupted().cloned()
    } else {
        None
    };
    let show = std::io::stderr().is_terminal();
    let (p, d) = (progress.clone(), done.clone());
    let thread = std::thread::spawn(move || {
        let start = std::time::Instant::now();
        let mut drawn = false;
        while !d.load(Ordering::Relaxed) {
            if ctrl_c.as_ref().is_some_and(|f| f.load(Ordering::Relaxed)) {
                p.stop();
            }
            if show && start.elapsed() > Duration::from_millis(500) {
                let (stage, n, total) = p.snapshot();
                if !stage.is_empty() {
                    let of = if total > 0 {
                        format!(" {n}/{total}")
                    } else {
                        String::new()
                    };
                    let stop = if p.is_stopped() { " — stopping" } else { "" };
                    eprint!("\r\x1b[2K{stage}{of}{stop}");
                    drawn = true;
                }
            }
            std::thread::sleep(Duration::from_millis(if show { 200 } else { 50 }));
        }
        if drawn {
            eprint!("\r\x1b[2K");
        }
    });
    Watch {
        done,
        thread: Some(thread),
    }
}

impl Drop for Watch {
    fn drop(&mut self) {
        self.done.store(true, Ordering::Relaxed);
        if let Some(t) = self.thread.take() {
            let _ = t.join();
        }
    }
}
