//! Reading and writing project files: every bad input names what is wrong
//! and where; good files survive a save and load unchanged.

use biasline::document::{self, load_file, load_str, save_file, to_json, LoadError};
use std::path::{Path, PathBuf};

fn demo(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("projects")
        .join(name)
}

/// A fresh empty folder under the system temp folder, removed on drop.
struct TempDir(PathBuf);

impl TempDir {
    fn new(tag: &str) -> Self {
        let p = std::env::temp_dir().join(format!(
            "biasline-loader-{tag}-{}-{:?}",
            std::process::id(),
            std::thread::current().id()
        ));
        let _ = std::fs::remove_dir_all(&p);
        std::fs::create_dir_all(&p).unwrap();
        TempDir(p)
    }
    fn entries(&self) -> Vec<String> {
        let mut v: Vec<String> = std::fs::read_dir(&self.0)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }
}

impl Drop for TempDir {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

fn err(text: &str) -> (LoadError, String) {
    let e = load_str(text).expect_err("this input must be refused");
    let m = e.to_string();
    (e, m)
}

/// A minimal valid project with the given parts list (JSON text).
fn with_parts(parts: &str) -> String {
    format!(r#"{{"format": "biasline-project", "version": 1, "title": "t", "parts": {parts}}}"#)
}

#[test]
fn broken_json_names_line_and_column() {
    // invariant: the position is where the parser stopped (a missing comma before line 4's key).
    let text = "{\n  \"format\": \"biasline-project\",\n  \"version\": 1\n  \"title\": \"x\"\n}\n";
    let (e, m) = err(text);
    assert_eq!(
        e,
        LoadError::Syntax {
            line: 4,
            column: 3,
            message: "expected `,` or `}`".into()
        }
    );
    assert_eq!(m, "line 4, column 3: expected `,` or `}`");
    // invariant: a file cut short names its last line.
    let (_, m) = err("{\n  \"format\": \"biasline-project\",\n  \"parts\": [\n");
    assert!(m.starts_with("line 4, column 0: EOF while parsing"), "{m}");
}

#[test]
fn an_unknown_kind_names_the_part() {
    // invariant: the message gives the part's index from 1 and its designator.
    let text = with_parts(
        r#"[{"id": "p1", "designator": "R1", "kind": "resistor", "position": [0, 0]},
            {"id": "p2", "designator": "Q9", "kind": "transistor", "position": [4, 0]}]"#,
    );
    let (e, m) = err(&text);
    assert!(matches!(e, LoadError::Item { .. }));
    assert!(
        m.starts_with("part 2 (Q9): unknown variant `transistor`, expected one of `resistor`"),
        "{m}"
    );
    assert!(m.contains("`npn`"), "the message lists the kinds: {m}");
}

#[test]
fn an_unknown_symbol_lists_the_set() {
    // invariant: the message names the part and the symbols that exist.
    let text = with_parts(
        r#"[{"id": "p1", "designator": "R7", "kind": "resistor", "symbol": "squiggle", "position": [0, 0]}]"#,
    );
    let (_, m) = err(&text);
    assert!(
        m.starts_with("part 1 (R7): unknown symbol \"squiggle\"; the symbol set has: resistor"),
        "{m}"
    );
}

#[test]
fn a_newer_version_says_to_upgrade() {
    // invariant: a file from a newer format is refused, not half-read.
    let (e, m) = err(r#"{"format": "biasline-project", "version": 7, "title": "t"}"#);
    assert_eq!(e, LoadError::NewerVersion { found: 7 });
    assert!(
        m.contains("format version 7; this build reads up to version 1"),
        "{m}"
    );
    assert!(m.contains("newer Biasline"), "{m}");
    let (_, m) = err(r#"{"format": "biasline-project", "version": "1", "title": "t"}"#);
    assert_eq!(m, "version: expected a whole number from 1");
}

#[test]
fn a_missing_field_is_named() {
    // invariant: serde's field name reaches the message, with the item.
    let text = with_parts(r#"[{"id": "p1", "designator": "R1"}]"#);
    let (_, m) = err(&text);
    assert_eq!(m, "part 1 (R1): missing field `kind`");
    // Without a position a part needs its nets by name.
    let text = with_parts(r#"[{"id": "p1", "designator": "R1", "kind": "resistor"}]"#);
    let (_, m) = err(&text);
    assert!(
        m.starts_with("part 1 (R1): the part has no \"position\" and no \"connect\""),
        "{m}"
    );
    let (_, m) = err(r#"{"format": "biasline-project", "version": 1}"#);
    assert!(m.contains("missing field `title`"), "{m}");
    let (_, m) = err(
        r#"{"format": "biasline-project", "version": 1, "title": "t", "wires": [{"dots": []}]}"#,
    );
    assert!(m.starts_with("wire 1: unknown field `dots`"), "{m}");
}

#[test]
fn other_json_is_not_a_project() {
    // invariant: the format tag decides, and the message shows what was found.
    let (e, m) = err(r#"{"format": "spreadsheet", "version": 1}"#);
    assert_eq!(
        e,
        LoadError::NotAProject {
            found: "\"spreadsheet\"".into()
        }
    );
    assert!(m.contains("not a Biasline project"), "{m}");
    let (_, m) = err(r#"{"title": "t"}"#);
    assert!(m.contains("\"format\" is missing"), "{m}");
    let (_, m) = err("[1, 2, 3]");
    assert_eq!(
        m,
        "line 1, column 1: expected a JSON object at the top of the file"
    );
}

#[test]
fn a_diagonal_wire_is_refused() {
    // invariant: wires run along the grid, so every segment is horizontal or vertical.
    let text = r#"{"format": "biasline-project", "version": 1, "title": "t",
        "wires": [{"points": [[0, 0], [0, 4]]}, {"points": [[0, 0], [2, 0], [5, 3]]}]}"#;
    let (_, m) = err(text);
    assert_eq!(
        m,
        "wire 2: segment from [2, 0] to [5, 3] is diagonal; wires run along the grid"
    );
    let (_, m) = err(
        r#"{"format": "biasline-project", "version": 1, "title": "t",
        "wires": [{"points": [[0, 0]]}]}"#,
    );
    assert_eq!(m, "wire 1: a wire needs at least two points");
}

#[test]
fn other_bad_values_are_named() {
    // invariant: each check names its item.
    let (_, m) = err(&with_parts(
        r#"[{"id": "p1", "designator": "R1", "kind": "resistor", "position": [0, 0], "rotation": 45}]"#,
    ));
    assert_eq!(m, "part 1 (R1): rotation 45 is not one of 0, 90, 180, 270");
    let (_, m) = err(&with_parts(
        r#"[{"id": "p1", "kind": "resistor", "position": [0, 0]}]"#,
    ));
    assert_eq!(
        m,
        "part 1 (resistor): every part but a ground needs a designator"
    );
    let (_, m) = err(&with_parts(
        r#"[{"id": "p1", "designator": "Q1", "kind": "npn", "position": [0, 0], "preset": "mystery"}]"#,
    ));
    assert!(
        m.starts_with("part 1 (Q1): unknown preset \"mystery\"; presets are: "),
        "{m}"
    );
    let (_, m) = err(&with_parts(
        r#"[{"id": "p1", "designator": "R1", "kind": "resistor", "position": [0, 0],
             "parameters": {"resistance": "4k7"}}]"#,
    ));
    assert!(
        m.starts_with("part 1 (R1): invalid type: string \"4k7\""),
        "{m}"
    );
    let (_, m) = err(
        r#"{"format": "biasline-project", "version": 1, "title": "t",
        "analysis": {"frequency_start": 10, "frequency_stop": 1}}"#,
    );
    assert!(
        m.starts_with("analysis: the sweep needs 0 < frequency_start < frequency_stop"),
        "{m}"
    );
    let (_, m) = err(
        r#"{"format": "biasline-project", "version": 1, "title": "t",
        "labels": [{"name": " ", "position": [0, 0]}]}"#,
    );
    assert_eq!(m, "label 1: a net label needs a name");
}

#[test]
fn a_file_over_50_mb_is_refused_before_reading() {
    // invariant: the size limit holds for files (by metadata) and for text.
    let dir = TempDir::new("large");
    let path = dir.0.join("huge.json");
    let f = std::fs::File::create(&path).unwrap();
    // A sparse file: large on paper, no disk used, never read.
    f.set_len(document::MAX_FILE_BYTES + 1).unwrap();
    drop(f);
    let e = load_file(&path).unwrap_err();
    assert_eq!(
        e,
        LoadError::TooLarge {
            bytes: document::MAX_FILE_BYTES + 1
        }
    );
    assert!(
        e.to_string().contains("above 52428800 bytes are refused"),
        "{e}"
    );
    let text = " ".repeat(document::MAX_FILE_BYTES as usize + 1);
    assert!(matches!(load_str(&text), Err(LoadError::TooLarge { .. })));
}

#[test]
fn unreadable_files_name_the_path() {
    // invariant: an I/O failure carries the path and the system's reason.
    let e = load_file(Path::new("/nonexistent/biasline/x.json")).unwrap_err();
    assert!(matches!(e, LoadError::Io { .. }));
    assert!(
        e.to_string().starts_with("/nonexistent/biasline/x.json: "),
        "{e}"
    );
    let dir = TempDir::new("utf8");
    let path = dir.0.join("bad.json");
    std::fs::write(&path, b"{\n\"title\": \"\xff\"}").unwrap();
    assert_eq!(
        load_file(&path).unwrap_err().to_string(),
        "line 2, column 1: the file is not UTF-8 text"
    );
}

#[test]
fn load_save_load_is_the_identity() {
    // invariant: saving writes what was loaded; a second save is byte-identical.
    let dir = TempDir::new("roundtrip");
    let mut docs: Vec<(String, document::Document)> =
        ["common-emitter.json", "two-stage-preamp.json"]
            .iter()
            .map(|n| (n.to_string(), load_file(&demo(n)).unwrap()))
            .collect();
    docs.push(("chain.json".into(), biasline::generate::transistor_chain(5)));
    docs.push(("grid.json".into(), biasline::generate::resistor_grid(100)));
    docs.push((
        "random.json".into(),
        biasline::generate::random_sheet(3, 40),
    ));
    for (name, doc) in docs {
        let path = dir.0.join(&name);
        save_file(&doc, &path).unwrap();
        let again = load_file(&path).unwrap();
        assert_eq!(again, doc, "{name}");
        let first = std::fs::read_to_string(&path).unwrap();
        assert_eq!(first, to_json(&doc));
        save_file(&again, &path).unwrap();
        assert_eq!(std::fs::read_to_string(&path).unwrap(), first, "{name}");
    }
}

#[test]
fn saving_leaves_no_temporary_file() {
    // invariant: an atomic save renames its temporary file over the target.
    let dir = TempDir::new("atomic");
    let doc = load_file(&demo("common-emitter.json")).unwrap();
    let path = dir.0.join("amp.json");
    std::fs::write(&path, "old contents").unwrap();
    save_file(&doc, &path).unwrap();
    assert_eq!(dir.entries(), ["amp.json"]);
    assert_eq!(load_file(&path).unwrap(), doc);
    // invariant: a failed save (missing folder) leaves nothing behind and names the path.
    let missing = dir.0.join("no-such-folder").join("amp.json");
    let e = save_file(&doc, &missing).unwrap_err();
    assert!(matches!(e, LoadError::Io { .. }));
    assert!(e.to_string().contains("no-such-folder"), "{e}");
    assert_eq!(dir.entries(), ["amp.json"]);
}
