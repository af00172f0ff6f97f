//! `biasline design` and `biasline snap` as built: the written project,
//! its analysis, the first guess, and refusals of bad input.

use crate::cli_common;
use cli_common::{run, text};
use std::path::PathBuf;

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("biasline-design-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join(name);
    let _ = std::fs::remove_file(&p);
    p
}

const TARGET: [&str; 12] = [
    "design", "--stage", "ce", "--supply", "12", "--gain", "30dB", "--zin", "20k", "--load", "10k",
    "--low",
];

#[test]
fn designed_stage_checks_analyses_and_draws() {
    let out_json = scratch("ce.json");
    let o = out_json.to_str().unwrap();
    let mut args = TARGET.to_vec();
    args.extend(["20", "-o", o]);
    let r = run(&args);
    assert_eq!(
        r.status.code(),
        Some(0),
        "{}{}",
        text(&r.stdout),
        text(&r.stderr)
    );
    let report = text(&r.stdout);
    assert!(
        report.contains("first guess") && report.contains("continuous"),
        "{report}"
    );
    // invariant: the written project passes its own rules check.
    let r = run(&["check", o]);
    assert_eq!(r.status.code(), Some(0), "{}", text(&r.stdout));
    // The designed CE stage under `analyze`: S within the default limit 0.2,
    // forward-active with at least 1 V to saturation and 0.1 V above cut-off
    // (common practice margins for a small-signal stage).
    let r = run(&["analyze", "--json", o]);
    assert_eq!(r.status.code(), Some(0), "{}", text(&r.stderr));
    let v: serde_json::Value = serde_json::from_slice(&r.stdout).unwrap();
    let q = &v["transistors"][0];
    assert_eq!(q["region"], "forward_active");
    assert!(q["beta_sensitivity"].as_f64().unwrap() <= 0.2);
    assert!(q["saturation_margin"].as_f64().unwrap() > 1.0);
    assert!(q["cutoff_margin"].as_f64().unwrap() > 0.1);
    // The stage is recognised as the configuration it was designed as.
    let stage = &v["small_signal"]["stages"][0];
    assert_eq!(
        stage["configuration"]["emitter"], "partly_bypassed",
        "{stage}"
    );
    // invariant: the drawing exports.
    let png = scratch("ce.png");
    let r = run(&["export", o, "-o", png.to_str().unwrap()]);
    assert_eq!(r.status.code(), Some(0), "{}", text(&r.stderr));
    assert!(std::fs::metadata(&png).unwrap().len() > 10_000);
    // The spread limits that make the targets a yield are in the file.
    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&out_json).unwrap()).unwrap();
    assert!(doc["spread"]["limits"].as_array().unwrap().len() >= 2);
}

#[test]
fn first_guess_follows_the_textbook_procedure() {
    let mut args = TARGET.to_vec();
    args.extend(["20", "--ic", "500u", "--json"]);
    let r = run(&args);
    assert_eq!(r.status.code(), Some(0), "{}", text(&r.stderr));
    let v: serde_json::Value = serde_json::from_slice(&r.stdout).unwrap();
    let g = &v["first_guess"]["values"];
    let val = |k: &str| g[k].as_f64().unwrap();
    // common practice (no source): VE ≈ VCC/10, so RE1 + RE2 = 1.2 V / 0.5 mA;
    // divider current 10 × IB through R2 with IB = IC/βF (preset βF 200) and
    // VB = VE + 0.65 V; 11 × IB through R1.
    let (ic, vcc, beta) = (500e-6, 12.0, 200.0);
    let ib = ic / beta;
    let vb = vcc / 10.0 + 0.65;
    assert!((val("RE1") + val("RE2") - 1.2 / ic).abs() < 1e-6);
    assert!((val("R2") - vb / (10.0 * ib)).abs() < 1e-6);
    assert!((val("R1") - (vcc - vb) / (11.0 * ib)).abs() < 1e-6);
    // common practice (no source): collector halfway between VCC and VE.
    assert!((val("RC") - (vcc - (vcc + 1.2) / 2.0) / ic).abs() < 1e-6);
    // The engine's divider differs, for the reason it states: it is sized for Zin.
    let c = &v["continuous"]["values"];
    assert!((c["R2"].as_f64().unwrap() / val("R2") - 1.0).abs() > 0.05);
    let reasons = v["reasons"].as_array().unwrap();
    assert!(reasons.iter().any(|r| r.as_str().unwrap().contains("Zin")));
    // invariant: the textbook guess misses the Zin target the engine meets.
    let zg = v["first_guess"]["measured"]["input_impedance"]
        .as_f64()
        .unwrap();
    let zc = v["continuous"]["measured"]["input_impedance"]
        .as_f64()
        .unwrap();
    assert!((zc / 20e3 - 1.0).abs() < 1e-6);
    assert!((zg / 20e3 - 1.0).abs() > 1e-3);
}

#[test]
fn bad_input_exits_2_and_writes_nothing() {
    // invariant: every refusal names what is wrong, exits 2 and leaves no file.
    let cases: [(&[&str], &str); 7] = [
        (&["--gain", "0dB"], "gain"),
        (&["--gain", "-6dB"], "gain"),
        (&["--zin", "10M"], "zin"),
        (&["--supply", "0.5"], "supply"),
        (&["--series", "E7"], "E7"),
        (&["--gain", "80dB"], "two stages"),
        (&["--load", "ten"], "load"),
    ];
    for (k, (over, word)) in cases.iter().enumerate() {
        let out = scratch(&format!("bad{k}.json"));
        let mut args: Vec<&str> = vec!["design", "--stage", "ce", "--low", "20"];
        let defaults = [
            ("--supply", "12"),
            ("--gain", "30dB"),
            ("--zin", "20k"),
            ("--load", "10k"),
        ];
        for (flag, v) in defaults {
            if !over.contains(&flag) {
                args.extend([flag, v]);
            }
        }
        args.extend(over.iter().copied());
        args.extend(["-o", out.to_str().unwrap()]);
        let r = run(&args);
        assert_eq!(r.status.code(), Some(2), "{args:?}: {}", text(&r.stdout));
        let err = text(&r.stderr);
        assert!(err.contains(word), "{args:?}: {err}");
        assert!(!out.exists(), "{args:?} wrote a file");
    }
}

#[test]
fn snap_rounds_and_reports_before_and_after() {
    let out = scratch("snapped.json");
    let o = out.to_str().unwrap();
    let r = run(&[
        "snap",
        "projects/common-emitter.json",
        "--series",
        "E6",
        "-o",
        o,
    ]);
    assert_eq!(r.status.code(), Some(0), "{}", text(&r.stderr));
    let s = text(&r.stdout);
    // source: IEC 60063:2015, Table 1 — 56 kΩ lies between the E6 values 47 and 68, nearer 47 by ratio.
    assert!(s.contains("R1") && s.contains("47 kΩ"), "{s}");
    assert!(
        s.contains("IC(Q1)") && s.contains("→") && s.contains("gain_dB"),
        "{s}"
    );
    let doc = biasline::document::load_file(&out).unwrap();
    let e6 = biasline::design::eseries::find("E6").unwrap();
    for p in &doc.parts {
        if p.kind == biasline::document::PartKind::Resistor
            && p.designator != "RS"
            && p.designator != "RL"
        {
            // invariant: after snapping every resistor is a member of the series.
            assert!(
                e6.contains(p.parameter("resistance").unwrap()),
                "{}",
                p.designator
            );
        }
    }
    let bad = scratch("never.json");
    let r = run(&[
        "snap",
        "projects/common-emitter.json",
        "--series",
        "E5",
        "-o",
        bad.to_str().unwrap(),
    ]);
    assert_eq!(r.status.code(), Some(2));
    assert!(text(&r.stderr).contains("E5"));
    assert!(!bad.exists());
}
