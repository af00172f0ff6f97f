//! Layout round trip: every demo stripped to connections (no positions, no
//! wires, no labels) lays out to a sheet with exactly the same nets and
//! every analysis figure of the hand-drawn original; the connection file in
//! projects/connections/ gives the demo's figures; bad connections are
//! refused naming the part and pin (exit 2).

use crate::cli_common::ran;
use biasline::document::{self, Document, PartKind};
use biasline::layout;
use biasline::netlist;
use std::collections::BTreeMap;
use std::path::Path;

pub(crate) fn demos() -> Vec<(String, Document)> {
    let mut out = Vec::new();
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/projects");
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "json") {
            let name = path.file_stem().unwrap().to_string_lossy().to_string();
            out.push((name, document::load_file(&path).unwrap()));
        }
    }
    out.sort_by(|a, b| a.0.cmp(&b.0));
    assert!(out.len() >= 6, "the demos are in projects/");
    out
}

/// Each named pin (designator.pin) → the name of its net; grounds left out
/// (the layout draws its own ground symbols).
pub(crate) fn pin_nets(doc: &Document) -> BTreeMap<String, String> {
    let nl = netlist::connect(doc);
    let mut out = BTreeMap::new();
    for (i, p) in doc.parts.iter().enumerate() {
        if p.kind == PartKind::Ground {
            continue;
        }
        for (k, pin) in p.kind.pin_names().iter().enumerate() {
            out.insert(
                format!("{}.{pin}", p.designator),
                nl.nets[nl.part_nets[i][k]].name.clone(),
            );
        }
    }
    out
}

/// The analysis JSON without what only says where things are drawn.
fn figures(doc: &Document) -> serde_json::Value {
    fn strip(v: &mut serde_json::Value) {
        match v {
            serde_json::Value::Object(m) => {
                m.remove("position");
                m.remove("file");
                m.values_mut().for_each(strip);
            }
            serde_json::Value::Array(a) => a.iter_mut().for_each(strip),
            _ => {}
        }
    }
    let mut v = biasline::Session::new(doc).analyze_json(Path::new("demo.json"));
    strip(&mut v);
    v
}

#[test]
fn every_demo_stripped_to_connections_lays_out_to_the_same_nets_and_figures() {
    for (name, original) in demos() {
        // The stripped form goes through the file format and back.
        let text = document::to_json(&layout::to_connections(&original));
        let stripped = document::load_str(&text).unwrap();
        assert!(stripped.parts.iter().all(|p| !p.is_placed()), "{name}");
        assert!(
            stripped.wires.is_empty() && stripped.labels.is_empty(),
            "{name}"
        );
        netlist::check_connections(&stripped, &netlist::connect(&stripped)).unwrap();
        let laid = layout::lay_out(&stripped);
        assert!(!layout::needs_layout(&laid), "{name}");
        // invariant: the layout neither joins nor splits a net.
        assert_eq!(pin_nets(&laid), pin_nets(&original), "{name}");
        // invariant: the wires alone (names dropped) make the same nets.
        let mut wired_only = laid.clone();
        wired_only.parts.iter_mut().for_each(|p| p.connect.clear());
        let mut by_wire: Vec<Vec<String>> = group(&pin_nets(&wired_only));
        let mut by_name: Vec<Vec<String>> = group(&pin_nets(&original));
        by_wire.sort();
        by_name.sort();
        assert_eq!(
            by_wire, by_name,
            "{name}: the wires join what the names join"
        );
        // invariant: the same circuit gives the same figures, bit for bit.
        assert_eq!(figures(&laid), figures(&original), "{name}");
        // The stripped file itself (nets by name, never drawn) gives them too.
        assert_eq!(figures(&stripped), figures(&original), "{name}");
    }
}

fn group(m: &BTreeMap<String, String>) -> Vec<Vec<String>> {
    let mut g: BTreeMap<&String, Vec<String>> = BTreeMap::new();
    for (pin, net) in m {
        g.entry(net).or_default().push(pin.clone());
    }
    g.into_values().collect()
}

#[test]
fn the_connection_file_of_the_two_stage_demo_gives_its_figures() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let short =
        std::fs::read_to_string(root.join("projects/connections/two-stage-preamp.json")).unwrap();
    assert!(
        short.lines().count() <= 30,
        "a connection file a designer types"
    );
    let short = document::load_str(&short).unwrap();
    let drawn = document::load_file(&root.join("projects/two-stage-preamp.json")).unwrap();
    // invariant: the same circuit, typed or drawn, gives the same figures.
    assert_eq!(figures(&layout::lay_out(&short)), figures(&drawn));
    assert_eq!(pin_nets(&layout::lay_out(&short)), pin_nets(&drawn));
    // It opens, exports and reports from the command line.
    let out = std::env::temp_dir().join(format!("biasline-layout-{}", std::process::id()));
    std::fs::create_dir_all(&out).unwrap();
    let png = out.join("short.png");
    let r = ran(&[
        "export",
        "projects/connections/two-stage-preamp.json",
        "-o",
        png.to_str().unwrap(),
    ]);
    assert_eq!(r.code, 0, "{}", r.message);
    let html = out.join("short.html");
    let r = ran(&[
        "report",
        "projects/connections/two-stage-preamp.json",
        "-o",
        html.to_str().unwrap(),
    ]);
    assert_eq!(r.code, 0, "{}", r.message);
    let laid = out.join("laid.json");
    let r = ran(&[
        "layout",
        "projects/connections/two-stage-preamp.json",
        "-o",
        laid.to_str().unwrap(),
    ]);
    assert_eq!(r.code, 0, "{}", r.message);
    let again = document::load_file(&laid).unwrap();
    assert!(!layout::needs_layout(&again));
    assert_eq!(figures(&again), figures(&drawn));
    std::fs::remove_dir_all(&out).ok();
}

fn refused(text: &str, expect: &[&str]) {
    let dir = std::env::temp_dir().join(format!(
        "biasline-layout-bad-{}-{}",
        std::process::id(),
        expect[0].len()
    ));
    std::fs::create_dir_all(&dir).unwrap();
    let f = dir.join("bad.json");
    std::fs::write(&f, text).unwrap();
    let r = ran(&["analyze", f.to_str().unwrap()]);
    std::fs::remove_dir_all(&dir).ok();
    assert_eq!(r.code, 2, "{}", r.message);
    for e in expect {
        assert!(r.message.contains(e), "{e} not in: {}", r.message);
    }
}

const HEAD: &str = r#"{"format": "biasline-project", "version": 1, "title": "t", "parts": ["#;

#[test]
fn bad_connections_are_refused_naming_the_part_and_pin() {
    // invariant: user errors are typed messages naming part and pin, exit 2.
    refused(
        &format!(
            r#"{HEAD}
            {{"id": "p1", "designator": "R1", "kind": "resistor", "parameters": {{"resistance": 1000}}, "connect": {{"a": "x", "base": "y"}}}},
            {{"id": "p2", "designator": "R2", "kind": "resistor", "parameters": {{"resistance": 1000}}, "connect": {{"a": "x", "b": "ground"}}}}]}}"#
        ),
        &["R1", "\"base\"", "a, b"],
    );
    refused(
        &format!(
            r#"{HEAD}
            {{"id": "p1", "designator": "R1", "kind": "resistor", "parameters": {{"resistance": 1000}}, "connect": {{"a": "x", "b": "ground"}}}},
            {{"id": "p2", "designator": "R2", "kind": "resistor", "parameters": {{"resistance": 1000}}, "connect": {{"a": "x", "b": "lonely"}}}}]}}"#
        ),
        &["R2", "\"b\"", "only pin on net \"lonely\""],
    );
    // A placed, wired part whose wire joins it to a net its names keep apart.
    refused(
        &format!(
            r#"{HEAD}
            {{"id": "p1", "designator": "R1", "kind": "resistor", "position": [0, 0], "parameters": {{"resistance": 1000}}, "connect": {{"a": "x", "b": "ground"}}}},
            {{"id": "p2", "designator": "R2", "kind": "resistor", "position": [0, 8], "parameters": {{"resistance": 1000}}, "connect": {{"a": "y", "b": "ground"}}}},
            {{"id": "p3", "designator": "R3", "kind": "resistor", "parameters": {{"resistance": 1000}}, "connect": {{"a": "x", "b": "y"}}}}],
            "wires": [{{"points": [[0, -2], [4, -2], [4, 6], [0, 6]]}}]}}"#
        ),
        &["R1", "R1.a → \"x\"", "R2.a → \"y\""],
    );
    refused(
        &format!(
            r#"{HEAD}
            {{"id": "p1", "designator": "R1", "kind": "resistor", "parameters": {{"resistance": 1000}}}}]}}"#
        ),
        &["R1", "no \"position\" and no \"connect\""],
    );
}

#[test]
fn a_mixed_file_keeps_its_placed_parts_and_lays_out_the_rest() {
    // invariant: placed parts stay put; the unplaced join them by net name.
    let (_, original) = demos()
        .into_iter()
        .find(|(n, _)| n == "common-emitter")
        .unwrap();
    let stripped = layout::to_connections(&original);
    let mut mixed = original.clone();
    // The load typed as connections (its nets named "vout" and "ground"),
    // the rest as drawn.
    let i = mixed
        .parts
        .iter()
        .position(|p| p.designator == "RL")
        .unwrap();
    mixed.parts[i] = stripped.parts[i].clone();
    let laid = layout::lay_out(&mixed);
    for (a, b) in original.parts.iter().zip(&laid.parts) {
        if a.designator != "RL" && a.kind != PartKind::Ground {
            assert_eq!(a.position, b.position, "{}", a.designator);
        }
    }
    assert!(!layout::needs_layout(&laid));
    assert_eq!(pin_nets(&laid), pin_nets(&original));
    assert_eq!(figures(&laid), figures(&original));
}
