//! Files of the editor: the project itself (saved atomically through
//! [`document::save_file`]), the autosave side file written every 30 s while
//! there are unsaved changes, and the recent-files list. Plain Rust, no GUI
//! types.
//!
//! The side file of `amp.json` is `.amp.json.autosave` in the same folder;
//! an untitled sheet autosaves to `untitled.autosave.json` in the settings
//! folder. A clean save or a clean close removes the side file, so finding
//! one on start means the last session ended without saving: the editor
//! offers to recover it.

use crate::document::{self, Document};
use std::path::{Path, PathBuf};
use std::time::Duration;

/// How often unsaved work is written to the side file.
pub const AUTOSAVE_EVERY: Duration = Duration::from_secs(30);
/// How many recent files are remembered.
pub const RECENT_MAX: usize = 8;

/// The folder for the editor's own files: `$BIASLINE_CONFIG_DIR`, else
/// `$XDG_CONFIG_HOME/biasline`, else `~/.config/biasline`.
pub fn settings_dir() -> Option<PathBuf> {
    if let Some(d) = std::env::var_os("BIASLINE_CONFIG_DIR") {
        return Some(PathBuf::from(d));
    }
    if let Some(d) = std::env::var_os("XDG_CONFIG_HOME").filter(|d| !d.is_empty()) {
        return Some(PathBuf::from(d).join("biasline"));
    }
    std::env::var_os("HOME").map(|h| PathBuf::from(h).join(".config").join("biasline"))
}

/// The autosave side file for a project path (or for an untitled sheet).
pub fn autosave_path(project: Option<&Path>) -> Option<PathBuf> {
    match project {
        Some(p) => {
            let name = p.file_name()?.to_string_lossy().into_owned();
            let dir = p.parent().filter(|d| !d.as_os_str().is_empty());
            Some(
                dir.unwrap_or(Path::new("."))
                    .join(format!(".{name}.autosave")),
            )
        }
        None => settings_dir().map(|d| d.join("untitled.autosave.json")),
    }
}

/// Write the side file (atomically, like a save).
pub fn autosave(doc: &Document, project: Option<&Path>) -> Result<PathBuf, String> {
    let path = autosave_path(project).ok_or("no folder to autosave into (HOME is not set)")?;
    if let Some(dir) = path.parent() {
        std::fs::create_dir_all(dir).map_err(|e| format!("{}: {e}", dir.display()))?;
    }
    document::save_file(doc, &path).map_err(|e| e.to_string())?;
    Ok(path)
}

/// Remove the side file after a clean save or close.
pub fn discard_autosave(project: Option<&Path>) {
    if let Some(p) = autosave_path(project) {
        let _ = std::fs::remove_file(p);
    }
}

/// Work left behind by a session that ended without saving.
#[derive(Debug, Clone, PartialEq)]
pub struct Recovery {
    pub side_file: PathBuf,
    pub document: Document,
}

/// Look for a side file newer than the project (or any, for a project that
/// was never saved) whose content differs from the project.
pub fn find_recovery(project: Option<&Path>, current: &Document) -> Option<Recovery> {
    let side = autosave_path(project)?;
    let side_time = std::fs::metadata(&side).and_then(|m| m.modified()).ok()?;
    if let Some(p) = project {
        if let Ok(t) = std::fs::metadata(p).and_then(|m| m.modified()) {
            if t > side_time {
                return None;
            }
        }
    }
    let document = document::load_file(&side).ok()?;
    (document != *current).then_some(Recovery {
        side_file: side,
        document,
    })
}

/// Save a project atomically; a clean save removes the side file.
/// Read a project for the editor: connections checked, and any part the
/// file leaves unplaced laid out (the editor always shows a drawn sheet).
pub fn load_for_editing(path: &Path) -> Result<Document, String> {
    let doc = document::load_file(path).map_err(|e| e.to_string())?;
    if doc
        .parts
        .iter()
        .any(|p| !p.connect.is_empty() || !p.is_placed())
    {
        crate::netlist::check_connections(&doc, &crate::netlist::connect(&doc))
            .map_err(|e| e.to_string())?;
    }
    Ok(crate::layout::lay_out(&doc))
}

pub fn save(doc: &Document, path: &Path) -> Result<(), String> {
    document::save_file(doc, path).map_err(|e| e.to_string())?;
    discard_autosave(Some(path));
    Ok(())
}

fn recent_file() -> Option<PathBuf> {
    settings_dir().map(|d| d.join("recent.txt"))
}

/// The recent-files list, newest first (files that vanished are skipped).
pub fn recent() -> Vec<PathBuf> {
    let Some(f) = recent_file() else {
        return Vec::new();
    };
    std::fs::read_to_string(f)
        .unwrap_or_default()
        .lines()
        .filter(|l| !l.trim().is_empty())
        .map(PathBuf::from)
        .filter(|p| p.exists())
        .take(RECENT_MAX)
        .collect()
}

/// Put `path` at the top of a recent list (no duplicates, at most [`RECENT_MAX`]).
pub fn push_recent(list: &mut Vec<PathBuf>, path: &Path) {
    let abs = std::fs::canonicalize(path).unwrap_or_else(|_| path.to_path_buf());
    list.retain(|p| p != &abs);
    list.insert(0, abs);
    list.truncate(RECENT_MAX);
}

/// Store the recent list; failures are not worth interrupting the user for.
pub fn store_recent(list: &[PathBuf]) {
    if let Some(f) = recent_file() {
        if let Some(d) = f.parent() {
            let _ = std::fs::create_dir_all(d);
        }
        let text: String = list.iter().map(|p| format!("{}\n", p.display())).collect();
        let _ = std::fs::write(f, text);
    }
}

/// The name shown in the window title.
pub fn display_name(path: Option<&Path>) -> String {
    path.and_then(|p| p.file_name())
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "untitled".into())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn temp_dir(tag: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("biasline-files-{tag}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(&d).unwrap();
        d
    }

    #[test]
    fn autosave_is_offered_back_until_a_clean_save() {
        // invariant: unsaved work written to the side file is found again; a clean save retires it.
        let dir = temp_dir("recover");
        let project = dir.join("amp.json");
        let saved = Document::new("saved");
        save(&saved, &project).unwrap();
        assert_eq!(find_recovery(Some(&project), &saved), None);
        std::thread::sleep(std::time::Duration::from_millis(20));
        let mut edited = saved.clone();
        edited.title = "edited".into();
        let side = autosave(&edited, Some(&project)).unwrap();
        assert_eq!(side, dir.join(".amp.json.autosave"));
        let found = find_recovery(Some(&project), &saved).expect("recovery offered");
        assert_eq!(found.document, edited);
        save(&edited, &project).unwrap();
        assert!(!side.exists());
        assert_eq!(find_recovery(Some(&project), &edited), None);
        let _ = std::fs::remove_dir_all(dir);
    }

    #[test]
    fn recent_list_has_no_duplicates_and_is_bounded() {
        // invariant: the recent list keeps each file once, newest first, at most RECENT_MAX.
        let mut list = Vec::new();
        for i in 0..12 {
            push_recent(&mut list, Path::new(&format!("/nonexistent/p{i}.json")));
        }
        push_recent(&mut list, Path::new("/nonexistent/p5.json"));
        assert_eq!(list.len(), RECENT_MAX);
        assert_eq!(list[0], PathBuf::from("/nonexistent/p5.json"));
        assert_eq!(list.iter().filter(|p| p.ends_with("p5.json")).count(), 1);
    }
}
