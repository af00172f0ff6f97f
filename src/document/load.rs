//! Reading and writing project files: clear messages, atomic saves.

use super::{Document, Part, FORMAT_TAG, FORMAT_VERSION};
use std::fmt;
use std::path::{Path, PathBuf};

/// Files larger than this are refused before parsing.
pub const MAX_FILE_BYTES: u64 = 50 * 1024 * 1024;

/// Everything that can go wrong reading or writing a project.
#[derive(Debug, Clone, PartialEq)]
pub enum LoadError {
    Io {
        path: PathBuf,
        message: String,
    },
    TooLarge {
        bytes: u64,
    },
    Syntax {
        line: usize,
        column: usize,
        message: String,
    },
    NotAProject {
        found: String,
    },
    NewerVersion {
        found: u64,
    },
    /// An item of the file is wrong: `item` names it (`part 3 (R2)`, `wire 5`).
    Item {
        item: String,
        message: String,
    },
}

impl fmt::Display for LoadError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            LoadError::Io { path, message } => write!(f, "{}: {}", path.display(), message),
            LoadError::TooLarge { bytes } => write!(
                f,
                "the file is {bytes} bytes; project files above {MAX_FILE_BYTES} bytes are refused"
            ),
            LoadError::Syntax { line, column, message } => {
                write!(f, "line {line}, column {column}: {message}")
            }
            LoadError::NotAProject { found } => write!(
                f,
                "this is not a Biasline project: \"format\" is {found}, expected \"{FORMAT_TAG}\""
            ),
            LoadError::NewerVersion { found } => write!(
                f,
                "the file is format version {found}; this build reads up to version {FORMAT_VERSION}: \
                 open it with a newer Biasline"
            ),
            LoadError::Item { item, message } => write!(f, "{item}: {message}"),
        }
    }
}

impl std::error::Error for LoadError {}

/// Read a project from disk.
pub fn load_file(path: &Path) -> Result<Document, LoadError> {
    let io = |e: std::io::Error| LoadError::Io {
        path: path.to_path_buf(),
        message: e.to_string(),
    };
    let meta = std::fs::metadata(path).map_err(io)?;
    if meta.len() > MAX_FILE_BYTES {
        return Err(LoadError::TooLarge { bytes: meta.len() });
    }
    let bytes = std::fs::read(path).map_err(io)?;
    let text = String::from_utf8(bytes).map_err(|e| LoadError::Syntax {
        line: 1 + e.as_bytes()[..e.utf8_error().valid_up_to()]
            .iter()
            .filter(|b| **b == b'\n')
            .count(),
        column: 1,
        message: "the file is not UTF-8 text".into(),
    })?;
    load_str(&text)
}

/// Parse a project from text, naming the line, column or item at fault.
pub fn load_str(text: &str) -> Result<Document, LoadError> {
    if text.len() as u64 > MAX_FILE_BYTES {
        return Err(LoadError::TooLarge {
            bytes: text.len() as u64,
        });
    }
    // Some editors start UTF-8 files with a byte-order mark; it carries no meaning.
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    // Fast path: a well-formed file reads straight into the types. Anything
    // wrong takes the slow path below, which finds the item at fault.
    if let Ok(doc) = serde_json::from_str::<Document>(text) {
        if doc.format != FORMAT_TAG {
            return Err(LoadError::NotAProject {
                found: serde_json::Value::String(doc.format).to_string(),
            });
        }
        if doc.version as u64 > FORMAT_VERSION as u64 {
            return Err(LoadError::NewerVersion {
                found: doc.version as u64,
            });
        }
        if doc.version == 0 {
            return Err(version_error());
        }
        validate(&doc)?;
        return Ok(doc);
    }
    load_slow(text)
}

/// The careful path: through a JSON value, checking the tag and version
/// first and then each item, so a message can name what is wrong.
fn load_slow(text: &str) -> Result<Document, LoadError> {
    let value: serde_json::Value = serde_json::from_str(text).map_err(|e| LoadError::Syntax {
        line: e.line(),
        column: e.column(),
        message: syntax_message(&e),
    })?;
    let obj = value.as_object().ok_or_else(|| LoadError::Syntax {
        line: 1,
        column: 1,
        message: "expected a JSON object at the top of the file".into(),
    })?;
    match obj.get("format") {
        Some(serde_json::Value::String(s)) if s == FORMAT_TAG => {}
        Some(other) => {
            return Err(LoadError::NotAProject {
                found: other.to_string(),
            })
        }
        None => {
            return Err(LoadError::NotAProject {
                found: "missing".into(),
            })
        }
    }
    match obj.get("version").and_then(|v| v.as_u64()) {
        Some(v) if v <= FORMAT_VERSION as u64 && v >= 1 => {}
        Some(v) if v > FORMAT_VERSION as u64 => return Err(LoadError::NewerVersion { found: v }),
        _ => return Err(version_error()),
    }
    // Check item lists one by one so a message can name the item.
    check_items::<Part>(obj, "parts", "part", |v| {
        v.get("designator")
            .and_then(|d| d.as_str())
            .map(str::to_string)
    })?;
    check_items::<super::Wire>(obj, "wires", "wire", |_| None)?;
    check_items::<super::NetLabel>(obj, "labels", "label", |v| {
        v.get("name").and_then(|d| d.as_str()).map(str::to_string)
    })?;
    let doc: Document = serde_json::from_value(value).map_err(|e| LoadError::Item {
        item: "project".into(),
        message: e.to_string(),
    })?;
    validate(&doc)?;
    Ok(doc)
}

fn version_error() -> LoadError {
    LoadError::Item {
        item: "version".into(),
        message: "expected a whole number from 1".into(),
    }
}

fn syntax_message(e: &serde_json::Error) -> String {
    let text = e.to_string();
    // serde_json appends " at line L column C"; we print those ourselves.
    match text.rfind(" at line ") {
        Some(i) => text[..i].to_string(),
        None => text,
    }
}

fn check_items<T: serde::de::DeserializeOwned>(
    obj: &serde_json::Map<String, serde_json::Value>,
    key: &str,
    noun: &str,
    name_of: impl Fn(&serde_json::Value) -> Option<String>,
) -> Result<(), LoadError> {
    let Some(list) = obj.get(key) else {
        return Ok(());
    };
    let Some(items) = list.as_array() else {
        return Err(LoadError::Item {
            item: key.into(),
            message: "expected a list".into(),
        });
    };
    for (i, item) in items.iter().enumerate() {
        if let Err(e) = serde_json::from_value::<T>(item.clone()) {
            let item = match name_of(item) {
                Some(name) if !name.is_empty() => format!("{noun} {} ({name})", i + 1),
                _ => format!("{noun} {}", i + 1),
            };
            return Err(LoadError::Item {
                item,
                message: e.to_string(),
            });
        }
    }
    Ok(())
}

/// Checks that need the whole document: symbols exist, rotations are legal,
/// wires are orthogonal, numbers are finite.
fn validate(doc: &Document) -> Result<(), LoadError> {
    let symbols = crate::symbols::library();
    for (i, part) in doc.parts.iter().enumerate() {
        let item = || {
            if part.designator.is_empty() {
                format!("part {} ({})", i + 1, part.kind)
            } else {
                format!("part {} ({})", i + 1, part.designator)
            }
        };
        let Some(symbol) = symbols.get(part.symbol_name()) else {
            return Err(LoadError::Item {
                item: item(),
                message: format!(
                    "unknown symbol \"{}\"; the symbol set has: {}",
                    part.symbol_name(),
                    symbols.names().join(", ")
                ),
            });
        };
        for pin in part.kind.pin_names() {
            if symbol.pin(pin).is_none() {
                return Err(LoadError::Item {
                    item: item(),
                    message: format!(
                        "symbol \"{}\" has no pin \"{pin}\" that a {} needs",
                        symbol.name, part.kind
                    ),
                });
            }
        }
        if ![0, 90, 180, 270].contains(&part.rotation) {
            return Err(LoadError::Item {
                item: item(),
                message: format!("rotation {} is not one of 0, 90, 180, 270", part.rotation),
            });
        }
        for (key, value) in &part.parameters {
            if !value.is_finite() {
                return Err(LoadError::Item {
                    item: item(),
                    message: format!("parameter {key} is not a finite number"),
                });
            }
        }
        if let Some(preset) = &part.preset {
            if crate::presets::find(preset).is_none() {
                return Err(LoadError::Item {
                    item: item(),
                    message: format!(
                        "unknown preset \"{preset}\"; presets are: {}",
                        crate::presets::names().join(", ")
                    ),
                });
            }
        }
        for (pin, net) in &part.connect {
            if !part.kind.pin_names().contains(&pin.as_str()) {
                return Err(LoadError::Item {
                    item: item(),
                    message: format!(
                        "\"connect\" names pin \"{pin}\", which a {} does not have; its pins are: {}",
                        part.kind,
                        part.kind.pin_names().join(", ")
                    ),
                });
            }
            if net.trim().is_empty() {
                return Err(LoadError::Item {
                    item: item(),
                    message: format!("\"connect\" gives pin \"{pin}\" an empty net name"),
                });
            }
        }
        let self_joined = matches!(part.kind, super::PartKind::Ground | super::PartKind::Rail);
        if !part.is_placed() && part.connect.is_empty() && !self_joined {
            return Err(LoadError::Item {
                item: item(),
                message: "the part has no \"position\" and no \"connect\": give its pins' nets \
                          (\"connect\": {\"pin\": \"net\"}) or place it"
                    .into(),
            });
        }
        if part.designator.is_empty() && part.kind != super::PartKind::Ground {
            return Err(LoadError::Item {
                item: item(),
                message: "every part but a ground needs a designator".into(),
            });
        }
    }
    for (i, wire) in doc.wires.iter().enumerate() {
        if wire.points.len() < 2 {
            return Err(LoadError::Item {
                item: format!("wire {}", i + 1),
                message: "a wire needs at least two points".into(),
            });
        }
        for pair in wire.points.windows(2) {
            let [a, b] = [pair[0], pair[1]];
            if a[0] != b[0] && a[1] != b[1] {
                return Err(LoadError::Item {
                    item: format!("wire {}", i + 1),
                    message: format!(
                        "segment from {:?} to {:?} is diagonal; wires run along the grid",
                        a, b
                    ),
                });
            }
        }
    }
    for (i, label) in doc.labels.iter().enumerate() {
        if label.name.trim().is_empty() {
            return Err(LoadError::Item {
                item: format!("label {}", i + 1),
                message: "a net label needs a name".into(),
            });
        }
    }
    super::limits::check_settings(doc)
        .map_err(|(item, message)| LoadError::Item { item, message })?;
    super::geometry_limits::check_geometry(doc)
        .map_err(|(item, message)| LoadError::Item { item, message })?;
    Ok(())
}

/// The canonical text of a project: pretty-printed, stable key order, newline at end.
pub fn to_json(doc: &Document) -> String {
    let mut s = serde_json::to_string_pretty(doc).expect("a document always serialises");
    s.push('\n');
    s
}

/// Save atomically through [`super::write_atomic`]: a crash leaves the old
/// file or the new one, never half of either.
pub fn save_file(doc: &Document, path: &Path) -> Result<(), LoadError> {
    super::write_atomic(path, to_json(doc).as_bytes()).map_err(|e| LoadError::Io {
        path: path.to_path_buf(),
        message: e.to_string(),
    })
}

/// Save as [`save_file`] after reading the text back as a project: a
/// document the loader (and so `check`) would refuse is not written, and
/// the error names the item at fault. The command-line writers use this.
pub fn save_file_checked(doc: &Document, path: &Path) -> Result<(), LoadError> {
    let text = to_json(doc);
    load_str(&text)?;
    super::write_atomic(path, text.as_bytes()).map_err(|e| LoadError::Io {
        path: path.to_path_buf(),
        message: e.to_string(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_fast_path_agrees_with_the_careful_one() {
        // invariant: both ways of reading give the same document or the same error.
        let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        let mut texts = Vec::new();
        for demo in [
            "projects/common-emitter.json",
            "projects/two-stage-preamp.json",
        ] {
            let text = std::fs::read_to_string(root.join(demo)).unwrap();
            for with in ["0", "2", "45", "-3", "4294967296", "\"x\"", "null", "1.5"] {
                // Replace each number in turn.
                let mut start = 0;
                while let Some(i) = text[start..].find(|c: char| c.is_ascii_digit()) {
                    let a = start + i;
                    let b = a + text[a..].find(|c: char| !c.is_ascii_digit()).unwrap_or(0);
                    texts.push(format!("{}{}{}", &text[..a], with, &text[b..]));
                    start = b.max(a + 1);
                }
            }
            texts.push(text.replace("biasline-project", "other"));
            texts.push(text);
        }
        assert!(texts.len() > 1000);
        for t in &texts {
            let fast = load_str(t);
            let slow = load_slow(t);
            assert_eq!(fast, slow);
        }
    }
}
