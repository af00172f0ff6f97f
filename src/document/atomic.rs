//! Atomic writes of any bytes: project saves, autosaves, drawings and tables.
//!
//! The bytes go to a temporary file beside the target (same folder, so the
//! rename stays on one file system), are flushed to disk, and the temporary
//! file is renamed over the target. A crash, a full disk or a killed process
//! leaves the old file or the new one, never half of either. Temporary files
//! left by a killed writer (`.NAME.saving-PID`) are swept away by the next
//! successful write of the same target.

use std::io::Write;
use std::path::{Path, PathBuf};

/// Environment variable for the kill test only: when set to a path, the
/// writer creates that file once the temporary file is complete and then
/// waits (up to a minute) before renaming, so a test can kill it there.
pub const PAUSE_ENV: &str = "BIASLINE_TEST_PAUSE_BEFORE_RENAME";

const TEMP_MARK: &str = ".saving-";

fn parts(path: &Path) -> (PathBuf, String) {
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."))
        .to_path_buf();
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".into());
    (dir, name)
}

/// The temporary file one write of `path` goes through:
/// `.NAME.saving-PID-N`, N counting this process's writes, so two threads
/// writing the same file never share a temporary file.
pub fn temp_path(path: &Path) -> PathBuf {
    use std::sync::atomic::{AtomicU64, Ordering};
    static WRITES: AtomicU64 = AtomicU64::new(0);
    let (dir, name) = parts(path);
    let n = WRITES.fetch_add(1, Ordering::Relaxed);
    dir.join(format!(".{name}{TEMP_MARK}{}-{n}", std::process::id()))
}

/// Write `bytes` to `path` atomically (see the module notes).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    if path.is_dir() {
        return Err(std::io::Error::other("that is a folder, not a file"));
    }
    let tmp = temp_path(path);
    let result = (|| {
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        drop(f);
        pause_for_test();
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    } else {
        sweep_stale(path);
    }
    result
}

/// Remove temporary files of `path` left by writers that were killed.
fn sweep_stale(path: &Path) {
    let (dir, name) = parts(path);
    let prefix = format!(".{name}{TEMP_MARK}");
    // Whether a writer still runs is read from /proc; without it, keep all.
    if !Path::new("/proc/self").exists() {
        return;
    }
    let Ok(entries) = std::fs::read_dir(&dir) else {
        return;
    };
    for e in entries.flatten() {
        let file = e.file_name();
        let file = file.to_string_lossy();
        let Some(rest) = file.strip_prefix(&prefix) else {
            continue;
        };
        // `PID-N` (older files: `PID`).
        let pid = rest.split('-').next().unwrap_or(rest);
        // Another live writer's file is left alone (its PID still runs).
        let alive = pid
            .parse::<u32>()
            .is_ok_and(|p| p == std::process::id() || Path::new(&format!("/proc/{p}")).exists());
        if pid.chars().all(|c| c.is_ascii_digit()) && !alive {
            let _ = std::fs::remove_file(e.path());
        }
    }
}

fn pause_for_test() {
    if let Some(marker) = std::env::var_os(PAUSE_ENV) {
        let _ = std::fs::write(marker, b"ready");
        std::thread::sleep(std::time::Duration::from_secs(60));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_write_replaces_the_file_and_leaves_no_temporary_file() {
        // invariant: after a write the target holds exactly the new bytes and
        // the folder holds nothing else (stale temporaries are swept).
        let dir = std::env::temp_dir().join(format!("biasline-atomic-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        let target = dir.join("out.png");
        std::fs::write(&target, b"old").unwrap();
        // A temporary file of a writer that no longer runs (PID beyond pid_max).
        let stale = dir.join(".out.png.saving-4294967295");
        std::fs::write(&stale, b"half").unwrap();
        write_atomic(&target, b"new bytes").unwrap();
        assert_eq!(std::fs::read(&target).unwrap(), b"new bytes");
        let left: Vec<_> = std::fs::read_dir(&dir).unwrap().flatten().collect();
        assert_eq!(left.len(), 1, "{left:?}");
        assert!(write_atomic(&dir, b"x").is_err());
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn threads_writing_one_file_at_once_all_succeed() {
        // invariant: each write has its own temporary file, so concurrent
        // writers of one path never rename each other's file away; the
        // target ends as one of the complete contents.
        let dir = std::env::temp_dir().join(format!("biasline-atomic-mt-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        let target = dir.join("page.html");
        let handles: Vec<_> = (0..8)
            .map(|k| {
                let t = target.clone();
                std::thread::spawn(move || {
                    (0..20)
                        .map(|_| write_atomic(&t, format!("writer {k}").as_bytes()))
                        .collect::<Result<Vec<_>, _>>()
                })
            })
            .collect();
        for h in handles {
            h.join().unwrap().unwrap();
        }
        let body = std::fs::read_to_string(&target).unwrap();
        assert!(body.starts_with("writer "), "{body}");
        let left: Vec<_> = std::fs::read_dir(&dir).unwrap().flatten().collect();
        assert_eq!(left.len(), 1, "{left:?}");
        let _ = std::fs::remove_dir_all(&dir);
    }
}
