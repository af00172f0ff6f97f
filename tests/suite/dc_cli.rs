//! The `analyze` command: exit codes, report contents, JSON schema keys.

use crate::cli_common::{ran, Ran, EXIT_CANNOT, EXIT_CLEAN, EXIT_FINDINGS};
use std::path::PathBuf;

fn project(name: &str) -> PathBuf {
    PathBuf::from(concat!(env!("CARGO_MANIFEST_DIR"), "/projects")).join(name)
}

fn run(file: PathBuf, json: bool) -> (Ran, String) {
    let mut args: Vec<std::ffi::OsString> = vec!["analyze".into(), file.into()];
    if json {
        args.push("--json".into());
    }
    let r = ran(&args);
    let out = r.out.clone();
    (r, out)
}

#[test]
fn clean_demo_exits_zero_and_lists_nets_parts_and_transistors() {
    let (r, text) = run(project("two-stage-preamp.json"), false);
    assert_eq!(r.code, EXIT_CLEAN, "{text}");
    for needle in [
        "Q1.collector",
        "RC",
        "forward active",
        "hFE = IC/IB",
        "Newton iteration",
    ] {
        assert!(text.contains(needle), "missing {needle}:\n{text}");
    }
}

#[test]
fn demo_with_a_warning_exits_one() {
    let (r, text) = run(project("high-voltage-driver.json"), false);
    assert_eq!(r.code, EXIT_FINDINGS);
    assert!(text.contains("IEC 62368-1"));
}

#[test]
fn json_carries_every_documented_top_level_key() {
    let (r, text) = run(project("pnp-sensor-loop.json"), true);
    assert_eq!(r.code, EXIT_CLEAN);
    let v: serde_json::Value = serde_json::from_str(&text).expect("valid JSON");
    // invariant: the keys of docs/analyze-json.md are present.
    for key in [
        "schema",
        "file",
        "solved",
        "ambient_celsius",
        "nets",
        "parts",
        "transistors",
        "diodes",
        "warnings",
        "solver",
        "largest_voltage",
    ] {
        assert!(v.get(key).is_some(), "missing {key}");
    }
    let doc = include_str!("../../docs/analyze-json.md");
    let t = &v["transistors"][0];
    for (k, _) in t.as_object().expect("object") {
        assert!(
            doc.contains(&format!("`transistors[].{k}`")),
            "{k} undocumented"
        );
    }
    assert_eq!(t["polarity"], "pnp");
    assert_eq!(t["region"], "forward_active");
    // invariant: IC + IB + IE = 0 in the JSON too.
    let sum = t["collector_current"].as_f64().unwrap()
        + t["base_current"].as_f64().unwrap()
        + t["emitter_current"].as_f64().unwrap();
    assert!(sum.abs() < 1e-15);
}

#[test]
fn unsolvable_file_exits_two_with_the_reason() {
    let dir = std::env::temp_dir().join(format!("biasline-dc-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    // The common-emitter demo without its ground symbols: no reference.
    let text = std::fs::read_to_string(project("common-emitter.json")).expect("demo");
    let mut doc: serde_json::Value = serde_json::from_str(&text).expect("json");
    doc["parts"]
        .as_array_mut()
        .expect("parts")
        .retain(|p| p["kind"] != "ground");
    let path = dir.join("no-ground.json");
    std::fs::write(&path, doc.to_string()).expect("write");
    let (r, _) = run(path.clone(), false);
    let f = r;
    assert_eq!(f.code, EXIT_CANNOT);
    assert!(f.message.contains("ground"), "{}", f.message);
    let (r, text) = run(path, true);
    assert_eq!(r.code, EXIT_CANNOT);
    let v: serde_json::Value = serde_json::from_str(&text).expect("valid JSON");
    assert_eq!(v["solved"], false);
    assert_eq!(v["error"]["kind"], "rules");
    std::fs::remove_dir_all(&dir).ok();
}
