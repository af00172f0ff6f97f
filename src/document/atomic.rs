//! Atomic writes of any bytes: project saves, autosaves, drawings and tables.
//!
//! The bytes go to a temporary file beside the target (same folder, so the
//! rename stays on one file system), are flushed to disk, and the temporary
//! file is renamed over the target. A crash, a full disk or a killed process
//! leaves the old file or the new one, never half of either. Temporary files
//! left by a killed writer (`.NAME.saving-PID`) are swept away by the next
//! successful write of the same target, and removed at once on SIGINT or
//! SIGTERM (`atomic_signals`). The target's mode and owner are kept, a
//! symbolic link is written through, and a read-only target is refused.

use std::io::Write;
use std::path::{Path, PathBuf};

/// Environment variable for the kill test only: when set to a path, the
/// writer creates that file once the temporary file is complete and then
/// waits (up to a minute) before renaming, so a test can kill it there.
pub const PAUSE_ENV: &str = "BIASLINE_TEST_PAUSE_BEFORE_RENAME";

const TEMP_MARK: &str = ".saving-";

/// Longest part of the target's name kept in a temporary name, bytes: with
/// the mark, the process id and the count the temporary name stays within
/// the 255 bytes most file systems allow (a legal 249-byte name was refused).
const TEMP_STEM_BYTES: usize = 200;

fn parts(path: &Path) -> (PathBuf, String) {
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."))
        .to_path_buf();
    let mut name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".into());
    if name.len() > TEMP_STEM_BYTES {
        let mut cut = TEMP_STEM_BYTES;
        while !name.is_char_boundary(cut) {
            cut -= 1;
        }
        name.truncate(cut);
    }
    (dir, name)
}

/// The temporary file one write of `path` goes through:
/// `.NAME.saving-PID-N`, N counting this process's writes, so two threads
/// writing the same file never share a temporary file (NAME cut to
/// [`TEMP_STEM_BYTES`]).
pub fn temp_path(path: &Path) -> PathBuf {
    use std::sync::atomic::{AtomicU64, Ordering};
    static WRITES: AtomicU64 = AtomicU64::new(0);
    let (dir, name) = parts(path);
    let n = WRITES.fetch_add(1, Ordering::Relaxed);
    dir.join(format!(".{name}{TEMP_MARK}{}-{n}", std::process::id()))
}

/// The file a write of `path` lands in: a symbolic link is followed (to
/// its end, as an editor writes through a link instead of replacing it).
fn resolve_links(path: &Path) -> std::io::Result<PathBuf> {
    let mut p = path.to_path_buf();
    // The same bound on a chain of links as the kernel's (ELOOP).
    for _ in 0..40 {
        match std::fs::symlink_metadata(&p) {
            Ok(m) if m.file_type().is_symlink() => {
                let to = std::fs::read_link(&p)?;
                p = match p.parent() {
                    Some(dir) if to.is_relative() => dir.join(to),
                    _ => to,
                };
            }
            _ => return Ok(p),
        }
    }
    Err(std::io::Error::other(
        "too many symbolic links in a chain (a loop?)",
    ))
}

/// Refuse to replace a file the user protected: one without any write
/// permission bit (as editors refuse; make it writable first).
#[cfg(unix)]
fn check_replaceable(path: &Path, meta: &std::fs::Metadata) -> std::io::Result<()> {
    use std::os::unix::fs::MetadataExt;
    if meta.mode() & 0o222 == 0 {
        return Err(std::io::Error::new(
            std::io::ErrorKind::PermissionDenied,
            format!(
                "{} is read-only (mode {:o}): not replaced; make it writable \
                 (chmod u+w) or write to another name",
                path.display(),
                meta.mode() & 0o7777
            ),
        ));
    }
    Ok(())
}

#[cfg(not(unix))]
fn check_replaceable(path: &Path, meta: &std::fs::Metadata) -> std::io::Result<()> {
    if meta.permissions().readonly() {
        return Err(std::io::Error::new(
            std::io::ErrorKind::PermissionDenied,
            format!(
                "{} is read-only: not replaced; make it writable or write to another name",
                path.display()
            ),
        ));
    }
    Ok(())
}

/// Give the temporary file the old target's mode and owner, so a private
/// (600) file stays private and a file keeps its owner. An owner that
/// cannot be kept (another user's file, written without the right to
/// change owners) is refused rather than silently taken over.
#[cfg(unix)]
fn keep_mode_and_owner(
    file: &std::fs::File,
    target: &Path,
    meta: &std::fs::Metadata,
) -> std::io::Result<()> {
    use std::os::unix::fs::{MetadataExt, PermissionsExt};
    file.set_permissions(std::fs::Permissions::from_mode(meta.mode() & 0o7777))?;
    let mine = file.metadata()?;
    if (mine.uid(), mine.gid()) != (meta.uid(), meta.gid()) {
        let kept = std::os::unix::fs::fchown(file, Some(meta.uid()), Some(meta.gid()))
            .or_else(|_| std::os::unix::fs::fchown(file, None, Some(meta.gid())));
        let now = file.metadata()?;
        if kept.is_err() || now.uid() != meta.uid() {
            return Err(std::io::Error::new(
                std::io::ErrorKind::PermissionDenied,
                format!(
                    "{} belongs to another user (uid {}); replacing it would make it yours: \
                     not replaced",
                    target.display(),
                    meta.uid()
                ),
            ));
        }
    }
    Ok(())
}

#[cfg(not(unix))]
fn keep_mode_and_owner(
    file: &std::fs::File,
    _target: &Path,
    meta: &std::fs::Metadata,
) -> std::io::Result<()> {
    file.set_permissions(meta.permissions())
}

/// Create the temporary file: owner-only while it replaces an existing file
/// (its mode is copied next), else the usual mode under the umask.
fn create_private(tmp: &Path, replacing: bool) -> std::io::Result<std::fs::File> {
    let mut o = std::fs::OpenOptions::new();
    o.write(true).create(true).truncate(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        o.mode(if replacing { 0o600 } else { 0o666 });
    }
    #[cfg(not(unix))]
    let _ = replacing;
    o.open(tmp)
}

/// Write `bytes` to `path` atomically (see the module notes). A symbolic
/// link is written through; the old file's mode and owner are kept; a
/// read-only file is refused with a message.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    let path = &resolve_links(path)?;
    if path.is_dir() {
        return Err(std::io::Error::other("that is a folder, not a file"));
    }
    let old = std::fs::metadata(path).ok();
    if let Some(m) = &old {
        check_replaceable(path, m)?;
    }
    let tmp = temp_path(path);
    let result = (|| {
        // From here a SIGINT or SIGTERM removes the temporary file.
        let _guard = super::atomic_signals::guard(&tmp);
        let mut f = create_private(&tmp, old.is_some())?;
        if let Some(m) = &old {
            keep_mode_and_owner(&f, path, m)?;
        }
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
