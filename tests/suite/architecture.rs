//! The architecture rules of DEVELOPERS.md ("Layers and what they may
//! use"), read from the source: every `crate::LAYER` path a file names is
//! checked against what its layer may use. A rule broken here is a rule
//! broken in the design, not a style nit.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// Every `.rs` file below `dir`, as paths relative to `src/`.
fn sources(dir: &Path, out: &mut Vec<PathBuf>) {
    for e in std::fs::read_dir(dir).unwrap() {
        let p = e.unwrap().path();
        if p.is_dir() {
            sources(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") {
            out.push(p);
        }
    }
}

/// (file relative to src/, its layer, the crate layers it names).
fn uses() -> Vec<(String, String, BTreeSet<String>)> {
    let src = root().join("src");
    let mut files = Vec::new();
    sources(&src, &mut files);
    files.sort();
    files
        .into_iter()
        .map(|p| {
            let rel = p
                .strip_prefix(&src)
                .unwrap()
                .to_string_lossy()
                .replace('\\', "/");
            let layer = rel
                .split('/')
                .next()
                .unwrap()
                .trim_end_matches(".rs")
                .to_string();
            let text = std::fs::read_to_string(&p).unwrap();
            let mut named = BTreeSet::new();
            for (k, _) in text.match_indices("crate::") {
                let before = &text[..k];
                // `biasline::` in the binary is the library; `crate::` only.
                if before.ends_with(|c: char| c.is_alphanumeric() || c == '_') {
                    continue;
                }
                let word: String = text[k + 7..]
                    .chars()
                    .take_while(|c| c.is_alphanumeric() || *c == '_')
                    .collect();
                if !word.is_empty() && word != layer {
                    named.insert(word);
                }
            }
            (rel, layer, named)
        })
        .collect()
}

/// Files of `layer` that name any of `forbidden`, with what they name.
fn breaking(layer: &str, forbidden: &[&str]) -> Vec<String> {
    uses()
        .into_iter()
        .filter(|(_, l, _)| l == layer)
        .filter_map(|(f, _, named)| {
            let bad: Vec<&String> = named
                .iter()
                .filter(|n| forbidden.contains(&n.as_str()))
                .collect();
            (!bad.is_empty()).then(|| format!("{f} names {bad:?}"))
        })
        .collect()
}

#[test]
fn only_the_binary_has_the_command_line() {
    // invariant: the command line belongs to the binary (src/main.rs and
    // src/cli*); the library declares no `cli` module and names none.
    let lib = std::fs::read_to_string(root().join("src/lib.rs")).unwrap();
    assert!(!lib.lines().any(
        |l| l.trim_start().starts_with("pub mod cli") || l.trim_start().starts_with("mod cli")
    ));
    let bad: Vec<String> = uses()
        .into_iter()
        .filter(|(f, _, _)| !(f == "main.rs" || f == "cli.rs" || f.starts_with("cli/")))
        .filter(|(_, _, named)| named.contains("cli"))
        .map(|(f, _, _)| f)
        .collect();
    assert!(
        bad.is_empty(),
        "library files naming the command line: {bad:?}"
    );
}

#[test]
fn the_scene_runs_no_analysis() {
    // invariant: the scene turns plain annotations into a display list; it
    // reads no analysis type and runs no analysis, spread, design or results.
    let bad = breaking(
        "scene",
        &[
            "analysis", "spread", "design", "results", "render", "report", "gui",
        ],
    );
    assert!(bad.is_empty(), "{bad:#?}");
}

#[test]
fn the_renderers_run_no_analysis() {
    // invariant: the renderers draw scenes and plot data; the analysis half
    // of an export is the results layer's.
    let bad = breaking(
        "render",
        &["analysis", "spread", "design", "results", "report", "gui"],
    );
    assert!(bad.is_empty(), "{bad:#?}");
}

#[test]
fn the_report_reads_results_only() {
    // invariant: the design report reads every number from the results layer
    // (the commands' JSON); it runs no analysis itself.
    let bad = breaking("report", &["analysis", "spread", "design", "gui"]);
    assert!(bad.is_empty(), "{bad:#?}");
}

#[test]
fn the_engine_knows_nothing_above_it() {
    // invariant: data flows one way — document → netlist → analysis →
    // results → scene → renderers; the lower layers name none above them.
    let above = [
        "results", "scene", "render", "report", "gui", "design", "spread",
    ];
    for layer in [
        "document", "netlist", "analysis", "units", "presets", "symbols",
    ] {
        let bad = breaking(layer, &above);
        assert!(bad.is_empty(), "{layer}: {bad:#?}");
    }
    for layer in ["spread", "design"] {
        let bad = breaking(layer, &["results", "scene", "render", "report", "gui"]);
        assert!(bad.is_empty(), "{layer}: {bad:#?}");
    }
    let bad = breaking("results", &["report", "gui"]);
    assert!(bad.is_empty(), "results: {bad:#?}");
}

#[test]
fn the_layout_sits_between_the_engine_and_its_users() {
    // invariant: the layout reads the document, the netlist and the stage
    // recognition and places parts; it names nothing above it, and nothing
    // below it names the layout.
    let bad = breaking(
        "layout",
        &[
            "results", "scene", "render", "report", "gui", "design", "spread",
        ],
    );
    assert!(bad.is_empty(), "layout: {bad:#?}");
    for layer in ["document", "netlist", "analysis", "symbols", "scene"] {
        let bad = breaking(layer, &["layout"]);
        assert!(bad.is_empty(), "{layer}: {bad:#?}");
    }
}

#[test]
fn only_the_results_layer_builds_the_commands_json() {
    // invariant: the JSON every command prints is built in one place
    // (src/results/); the project file's own JSON is the document's, and the
    // report's page gathers the results' objects under one root.
    let src = root().join("src");
    let mut files = Vec::new();
    sources(&src, &mut files);
    let bad: Vec<String> = files
        .iter()
        .filter_map(|p| {
            let rel = p
                .strip_prefix(&src)
                .unwrap()
                .to_string_lossy()
                .replace('\\', "/");
            let text = std::fs::read_to_string(p).unwrap();
            let builds = text.contains("json!(") || text.contains("serde_json::Map::new");
            let allowed = rel.starts_with("results/")
                || rel.starts_with("document/")
                || rel == "report/gather.rs";
            (builds && !allowed).then_some(rel)
        })
        .collect();
    assert!(
        bad.is_empty(),
        "JSON built outside the results layer: {bad:?}"
    );
}

#[test]
fn element_kinds_are_matched_only_in_their_homes() {
    // invariant: only `analysis/elements/` matches on the element kind (a
    // part becomes an element in its table, `elements/kinds.rs`). The files
    // listed below still do, each for a stated reason; the list may only
    // shrink — a new file that matches on the kind fails here.
    let known: &[&str] = &[
        // which elements report their pins as one (a rail)
        "analysis/dc/mod.rs",
        // which sources the Newton engine folds and ramps
        "analysis/dc/newton.rs",
        // source values over time and folded sources
        "analysis/transient/engine.rs",
        "analysis/transient/mod.rs",
        "analysis/transient/sources.rs",
    ];
    let src = root().join("src");
    let mut files = Vec::new();
    sources(&src, &mut files);
    let mut found = Vec::new();
    for p in &files {
        let rel = p
            .strip_prefix(&src)
            .unwrap()
            .to_string_lossy()
            .replace('\\', "/");
        if rel.starts_with("analysis/elements/") {
            continue;
        }
        if std::fs::read_to_string(p)
            .unwrap()
            .contains("ElementKind::")
        {
            found.push(rel);
        }
    }
    let new: Vec<&String> = found
        .iter()
        .filter(|f| !known.contains(&f.as_str()))
        .collect();
    assert!(new.is_empty(), "new files matching on ElementKind: {new:?}");
    let gone: Vec<&&str> = known
        .iter()
        .filter(|k| !found.iter().any(|f| f == *k))
        .collect();
    assert!(
        gone.is_empty(),
        "no longer matching (remove from the list): {gone:?}"
    );
}

#[test]
fn the_sheet_proposes_edits_and_never_changes_the_document() {
    // invariant (DEVELOPERS.md): the editor's sheet component reads the
    // document and returns actions; only the app applies and records edits.
    let mut files = Vec::new();
    sources(&root().join("src/gui/sheet"), &mut files);
    files.push(root().join("src/gui/sheet.rs"));
    let changes = [
        "&mut Document",
        "&mut self.doc",
        "edit::place(",
        "edit::add_wire(",
        "edit::add_label(",
        "edit::move_items(",
        "edit::delete(",
        "edit::paste(",
        "History",
    ];
    let mut bad = Vec::new();
    for f in files.iter().filter(|f| !f.ends_with("tests.rs")) {
        let text = std::fs::read_to_string(f).unwrap();
        for c in changes {
            if text.contains(c) {
                bad.push(format!("{} names {c}", f.display()));
            }
        }
    }
    assert!(files.len() >= 3, "the sheet's files: {files:?}");
    assert!(bad.is_empty(), "{bad:#?}");
}
