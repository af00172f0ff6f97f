//! The built command line: reports and exit codes (0 clean, 1 findings,
//! 2 cannot proceed).

use crate::cli_common;
use cli_common::{root, run, text};
use std::path::PathBuf;

fn file(rel: &str) -> PathBuf {
    root().join(rel)
}

#[test]
fn check_is_clean_on_the_demos() {
    // invariant: the shipped demos pass their own rules check (exit 0).
    for demo in [
        "projects/common-emitter.json",
        "projects/two-stage-preamp.json",
    ] {
        let out = run(&["check", demo]);
        assert_eq!(out.status.code(), Some(0), "{demo}: {}", text(&out.stderr));
        let s = text(&out.stdout);
        assert!(s.contains("no findings"), "{s}");
        let out = run(&["check", "--json", demo]);
        assert_eq!(out.status.code(), Some(0));
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        assert_eq!(v, serde_json::json!([]));
    }
    let s = text(&run(&["check", "projects/common-emitter.json"]).stdout);
    assert_eq!(
        s.trim_end(),
        "projects/common-emitter.json: no findings (17 parts, 8 nets)"
    );
}

#[test]
fn check_reports_findings_with_exit_1() {
    // invariant: a finding sets exit code 1 and is printed with its subject and place.
    let out = run(&["check", "tests/fixtures/floating-capacitor-node.json"]);
    assert_eq!(out.status.code(), Some(1));
    let s = text(&out.stdout);
    assert!(
        s.starts_with("error: net C1.b at (0, 6): net C1.b has no DC path to ground"),
        "{s}"
    );
    assert!(s.trim_end().ends_with("1 error(s), 0 warning(s)"), "{s}");
    let out = run(&["check", "--json", "tests/fixtures/unconnected-pin.json"]);
    assert_eq!(out.status.code(), Some(1));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v[0]["severity"], "error");
    assert_eq!(v[0]["subject"], serde_json::json!({"part": "R1"}));
    assert_eq!(v[0]["position"], serde_json::json!([0, 6]));
}

#[test]
fn nets_lists_every_net() {
    // invariant: the text listing has one line per net, name first, pins after (no grounds).
    let out = run(&["nets", "tests/fixtures/t-junction.json"]);
    assert_eq!(out.status.code(), Some(0));
    let s = text(&out.stdout);
    let lines: Vec<&str> = s.lines().collect();
    assert_eq!(lines, ["VCC     VCC.rail R1.a R2.a", "ground  R1.b R2.b"]);
    let out = run(&["nets", "--json", "projects/common-emitter.json"]);
    assert_eq!(out.status.code(), Some(0));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let nets = v["nets"].as_array().unwrap();
    assert_eq!(nets.len(), 8);
    let vout = nets.iter().find(|n| n["name"] == "vout").unwrap();
    assert_eq!(vout["named_by"], "label");
    let pins: Vec<&str> = vout["pins"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| p["designator"].as_str().unwrap())
        .collect();
    assert_eq!(pins, ["C2", "RL"]);
    // invariant: nets on a sheet with findings still lists, and exits 1.
    let out = run(&["nets", "tests/fixtures/no-ground.json"]);
    assert_eq!(out.status.code(), Some(1));
    assert!(text(&out.stdout).contains("R1.b  R1.b R2.a"));
}

#[test]
fn unreadable_files_exit_2() {
    // invariant: a file that cannot be read or parsed stops the command with exit 2 and a message.
    let out = run(&["check", "no/such/file.json"]);
    assert_eq!(out.status.code(), Some(2));
    let e = text(&out.stderr);
    assert!(e.starts_with("biasline: no/such/file.json: "), "{e}");
    let out = run(&["nets", "Cargo.toml"]);
    assert_eq!(out.status.code(), Some(2));
    let e = text(&out.stderr);
    assert!(
        e.starts_with("biasline: Cargo.toml: line 1, column 2: "),
        "{e}"
    );
    let out = run(&["check", &file("docs/project.schema.json").to_string_lossy()]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("not a Biasline project"));
}

#[test]
fn usage_errors_exit_2() {
    // common practice (no source): a usage error exits 2 with a usage hint on stderr.
    for args in [
        &["check"][..],
        &["frobnicate", "x.json"],
        &["nets", "--colour", "x"],
    ] {
        let out = run(args);
        assert_eq!(out.status.code(), Some(2), "{args:?}");
        assert!(text(&out.stderr).contains("Usage"), "{args:?}");
        assert!(out.stdout.is_empty());
    }
}
