//! The project schema in docs/ lists every key the files use, and the
//! program writes no key it does not list.

use biasline::document::{self, Document, Part, PartKind, StageOverride};
use serde_json::Value;
use std::path::Path;

fn schema() -> Value {
    let text = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("docs/project.schema.json"),
    )
    .expect("docs/project.schema.json exists");
    serde_json::from_str(&text).expect("the schema is JSON")
}

fn resolve<'a>(node: &'a Value, root: &'a Value) -> &'a Value {
    match node.get("$ref").and_then(Value::as_str) {
        Some(r) => {
            let name = r.strip_prefix("#/$defs/").expect("local $defs reference");
            &root["$defs"][name]
        }
        None => node,
    }
}

/// A small checker for the parts of draft 2020-12 the schema uses: keys
/// (`properties`, `additionalProperties`, `propertyNames.enum`), `required`,
/// `items`, `enum`/`const` and basic `type`s. Returns every problem found.
fn check(value: &Value, node: &Value, root: &Value, at: &str, problems: &mut Vec<String>) {
    let node = resolve(node, root);
    if let Some(t) = node.get("type").and_then(Value::as_str) {
        let ok = match t {
            "object" => value.is_object(),
            "array" => value.is_array(),
            "string" => value.is_string(),
            "number" => value.is_number(),
            "integer" => value.is_i64() || value.is_u64(),
            "boolean" => value.is_boolean(),
            _ => true,
        };
        if !ok {
            problems.push(format!("{at}: expected {t}"));
            return;
        }
    }
    if let Some(options) = node.get("enum").and_then(Value::as_array) {
        if !options.contains(value) {
            problems.push(format!("{at}: {value} is not one of {options:?}"));
        }
    }
    if let Some(c) = node.get("const") {
        if c != value {
            problems.push(format!("{at}: expected {c}"));
        }
    }
    if let Some(obj) = value.as_object() {
        let props = node.get("properties").and_then(Value::as_object);
        for req in node
            .get("required")
            .and_then(Value::as_array)
            .into_iter()
            .flatten()
        {
            let key = req.as_str().unwrap();
            if !obj.contains_key(key) {
                problems.push(format!("{at}: missing required key {key}"));
            }
        }
        let names = node
            .get("propertyNames")
            .and_then(|p| p.get("enum"))
            .and_then(Value::as_array);
        for (key, v) in obj {
            let here = format!("{at}.{key}");
            if let Some(names) = names {
                if !names.iter().any(|n| n == key) {
                    problems.push(format!("{here}: key not listed in the schema"));
                }
            }
            match props.and_then(|p| p.get(key)) {
                Some(sub) => check(v, sub, root, &here, problems),
                None => match node.get("additionalProperties") {
                    Some(Value::Bool(false)) => {
                        problems.push(format!("{here}: key not listed in the schema"))
                    }
                    Some(sub) if sub.is_object() => check(v, sub, root, &here, problems),
                    _ => {}
                },
            }
        }
    }
    if let (Some(items), Some(list)) = (node.get("items"), value.as_array()) {
        for (i, v) in list.iter().enumerate() {
            check(v, items, root, &format!("{at}[{i}]"), problems);
        }
    }
}

fn problems_of(value: &Value) -> Vec<String> {
    let root = schema();
    let mut problems = Vec::new();
    check(value, &root, &root, "$", &mut problems);
    problems
}

#[test]
fn every_demo_project_uses_only_schema_keys() {
    // invariant: the published schema describes the shipped files.
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("projects");
    let mut seen = 0;
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "json") {
            let value: Value =
                serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
            assert_eq!(
                problems_of(&value),
                Vec::<String>::new(),
                "{}",
                path.display()
            );
            seen += 1;
        }
    }
    assert!(seen >= 2, "the demo projects are there");
    // The connection files (parts by name, no positions) too.
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("projects/connections");
    let mut short = 0;
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        let value: Value = serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
        assert_eq!(
            problems_of(&value),
            Vec::<String>::new(),
            "{}",
            path.display()
        );
        short += 1;
    }
    assert!(short >= 1, "the connection file is there");
}

#[test]
fn every_key_the_program_writes_is_in_the_schema() {
    // invariant: a document with every optional field filled serialises to schema keys only.
    let mut doc = biasline::generate::transistor_chain(3);
    doc.stages.push(StageOverride {
        transistor: "Q1".into(),
        configuration: "common_emitter".into(),
        input: Some("Q1.base".into()),
        output: Some("Q1.collector".into()),
    });
    doc.signal.source = Some("R1".into());
    doc.signal.load = Some("R2".into());
    doc.signal.waveform = Some(biasline::document::Waveform::Pulse {
        low: 0.0,
        high: 1.0,
        delay: 1e-3,
        rise: 1e-6,
        fall: 1e-6,
        width: 1e-4,
        period: 1e-3,
    });
    doc.transient.start = biasline::document::TransientStart::PowerOn;
    doc.transient.max_periods = 50;
    doc.layout
        .annotations
        .insert("voltages/vout".into(), [1.0, 2.0]);
    doc.parts.push(Part {
        id: "x".into(),
        connect: [("anode".to_string(), "Q1.base".to_string())]
            .into_iter()
            .collect(),
        designator: "D1".into(),
        kind: PartKind::Diode,
        symbol: "diode".into(),
        position: [0, 40],
        rotation: 90,
        mirror: true,
        preset: Some("general-purpose-diode".into()),
        parameters: biasline::presets::defaults(PartKind::Npn)
            .iter()
            .chain(biasline::presets::defaults(PartKind::Diode))
            // The loader refuses non-finite numbers (JSON has none), so give finite ones.
            .map(|(k, v)| (k.to_string(), if v.is_finite() { *v } else { 100.0 }))
            .collect(),
    });
    let value: Value = serde_json::from_str(&document::to_json(&doc)).unwrap();
    assert_eq!(problems_of(&value), Vec::<String>::new());
    for key in [
        "notes", "parts", "wires", "labels", "signal", "analysis", "stages", "layout",
    ] {
        assert!(value.get(key).is_some(), "{key} written");
    }
}

#[test]
fn the_checker_catches_a_stray_key() {
    // invariant: the checker can fail — an unknown key, a wrong kind, a bad parameter name.
    let mut value: Value = serde_json::from_str(&document::to_json(&Document::new("t"))).unwrap();
    value["colour"] = Value::from("red");
    value["parts"] = serde_json::json!([
        {"id": "p1", "designator": "R1", "kind": "resistor", "position": [0, 0],
         "parameters": {"resistance": 1.0, "resistence": 2.0}},
        {"id": "p2", "kind": "transistor", "position": [0, 0], "rotation": 45}
    ]);
    let p = problems_of(&value);
    assert!(p.iter().any(|s| s.contains("$.colour")), "{p:?}");
    assert!(p.iter().any(|s| s.contains("resistence")), "{p:?}");
    assert!(p.iter().any(|s| s.contains("\"transistor\"")), "{p:?}");
    assert!(p.iter().any(|s| s.contains("rotation")), "{p:?}");
}

#[test]
fn schema_parameter_names_are_the_program_names() {
    // invariant: one name per idea — the schema lists every name of the keys module.
    let root = schema();
    let names: Vec<&str> = root["$defs"]["part"]["properties"]["parameters"]["propertyNames"]
        ["enum"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_str().unwrap())
        .collect();
    let source =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("src/presets.rs"))
            .unwrap();
    let mut in_source: Vec<String> = Vec::new();
    let mut rest = source.as_str();
    while let Some(i) = rest.find("pub const ") {
        rest = &rest[i..];
        let line_end = rest.find(';').unwrap();
        let decl = &rest[..line_end];
        if decl.contains("&str") {
            if let Some(q) = decl.find('"') {
                let name = &decl[q + 1..decl.rfind('"').unwrap()];
                in_source.push(name.to_string());
            }
        }
        rest = &rest[line_end..];
    }
    // Every name the program knows is listed (the schema may list a few more
    // that sibling branches add: the noise and spread parameters).
    let missing: Vec<&String> = in_source
        .iter()
        .filter(|n| !names.contains(&n.as_str()))
        .collect();
    assert!(in_source.len() >= 40, "the keys module was read");
    assert_eq!(missing, Vec::<&String>::new());
}
