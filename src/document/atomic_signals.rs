//! SIGINT and SIGTERM during an atomic write: the handler removes every
//! temporary file being written at that moment, then ends the program as
//! the signal would have (so Ctrl-C leaves no hidden `.NAME.saving-…` file).
//!
//! The handler may only do async-signal-safe work: it reads a fixed table
//! of C-string pointers (set and cleared by the writers with atomics) and
//! calls `unlink` on each, then `signal_hook::low_level::emulate_default_handler`.

#[cfg(unix)]
mod imp {
    use std::ffi::CString;
    use std::path::Path;
    use std::sync::atomic::{AtomicPtr, Ordering};
    use std::sync::Once;

    /// Writes in flight at once that the handler can clean up after (more
    /// still write correctly; their temporary files are swept by the next write).
    const SLOTS: usize = 64;
    static IN_FLIGHT: [AtomicPtr<libc::c_char>; SLOTS] =
        [const { AtomicPtr::new(std::ptr::null_mut()) }; SLOTS];

    fn install() {
        static ONCE: Once = Once::new();
        ONCE.call_once(|| {
            for sig in [signal_hook::consts::SIGINT, signal_hook::consts::SIGTERM] {
                // SAFETY: the action only loads atomics, calls unlink (async-
                // signal-safe) and emulate_default_handler (documented as
                // async-signal-safe); it allocates nothing and takes no lock.
                let _ = unsafe {
                    signal_hook::low_level::register(sig, move || {
                        for slot in &IN_FLIGHT {
                            let p = slot.swap(std::ptr::null_mut(), Ordering::SeqCst);
                            if !p.is_null() {
                                libc::unlink(p);
                            }
                        }
                        let _ = signal_hook::low_level::emulate_default_handler(sig);
                    })
                };
            }
        });
    }

    /// A temporary file registered for removal on a signal, until dropped.
    pub struct Guard(Option<usize>);

    pub fn guard(tmp: &Path) -> Guard {
        use std::os::unix::ffi::OsStrExt;
        install();
        let Ok(c) = CString::new(tmp.as_os_str().as_bytes()) else {
            return Guard(None);
        };
        let raw = c.into_raw();
        for (k, slot) in IN_FLIGHT.iter().enumerate() {
            if slot
                .compare_exchange(
                    std::ptr::null_mut(),
                    raw,
                    Ordering::SeqCst,
                    Ordering::SeqCst,
                )
                .is_ok()
            {
                return Guard(Some(k));
            }
        }
        // SAFETY: `raw` came from `into_raw` above and was stored nowhere.
        drop(unsafe { CString::from_raw(raw) });
        Guard(None)
    }

    impl Drop for Guard {
        fn drop(&mut self) {
            if let Some(k) = self.0 {
                let p = IN_FLIGHT[k].swap(std::ptr::null_mut(), Ordering::SeqCst);
                if !p.is_null() {
                    // SAFETY: only `guard` stores pointers, each from `into_raw`;
                    // the swap gives this owner sole access.
                    drop(unsafe { CString::from_raw(p) });
                }
            }
        }
    }
}

#[cfg(not(unix))]
mod imp {
    pub struct Guard;
    pub fn guard(_tmp: &std::path::Path) -> Guard {
        Guard
    }
}

pub use imp::guard;
