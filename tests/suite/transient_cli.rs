//! The `transient` command run as the built binary: the report on the
//! two-stage preamp demo, JSON and CSV, the clip search, bad input.

use std::path::Path;
use std::process::{Command, Output};

fn run(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_biasline"))
        .args(args)
        .current_dir(Path::new(env!("CARGO_MANIFEST_DIR")))
        .output()
        .expect("the binary runs")
}

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

const PREAMP: &str = "projects/two-stage-preamp.json";

#[test]
fn steady_state_report_names_thd_and_harmonics() {
    // common practice (no source): a distortion report gives THD, the
    // harmonics in dB below the fundamental and the DC shift, per stage.
    let out = run(&["transient", PREAMP]);
    let s = text(&out.stdout);
    assert!(
        matches!(out.status.code(), Some(0 | 1)),
        "{}",
        text(&out.stderr)
    );
    for needle in [
        "THD",
        "H2 ",
        "H10 ",
        "DC shift",
        "per stage:",
        "Q1 stage",
        "Q2 stage",
    ] {
        assert!(s.contains(needle), "missing {needle:?} in\n{s}");
    }
}

#[test]
fn json_and_csv_carry_the_waveform() {
    // invariant: the JSON's waveform and the CSV rows describe one period.
    let out = run(&["transient", PREAMP, "--json", "--periods", "5"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let t = v["waveform"]["time"].as_array().unwrap();
    assert_eq!(t.len(), v["waveform"]["output"].as_array().unwrap().len());
    assert!(
        v["distortion"]["output"]["spectrum"]["thd"]
            .as_f64()
            .unwrap()
            >= 0.0
    );
    let out = run(&[
        "transient",
        PREAMP,
        "--csv",
        "--for",
        "2ms",
        "--current",
        "Q1.collector",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    let mut lines = s.lines();
    let head = lines.next().unwrap();
    assert!(
        head.starts_with("time_seconds,") && head.ends_with("Q1.collector_amperes"),
        "{head}"
    );
    let last: Vec<f64> = s
        .lines()
        .last()
        .unwrap()
        .split(',')
        .map(|x| x.parse().unwrap())
        .collect();
    assert!((last[0] - 2e-3).abs() < 1e-12, "ends at 2 ms: {last:?}");
    assert!(last.iter().all(|v| v.is_finite()));
}

#[test]
fn bad_input_is_refused_with_exit_2_and_nothing_written() {
    // common practice (no source): unusable settings stop before any output.
    for args in [
        vec!["transient", PREAMP, "--for", "5"],
        vec!["transient", PREAMP, "--for", "-1ms"],
        vec!["transient", PREAMP, "--for", "1000000s"],
        vec!["transient", PREAMP, "--periods", "1000000000000"],
        vec!["transient", PREAMP, "--clip", "--thd", "150%"],
    ] {
        let out = run(&args);
        assert_eq!(
            out.status.code(),
            Some(2),
            "{args:?}: {}",
            text(&out.stdout)
        );
        assert!(
            out.stdout.is_empty(),
            "{args:?} wrote {}",
            text(&out.stdout)
        );
        assert!(!out.stderr.is_empty());
    }
    let dir = std::env::temp_dir().join(format!("biasline-transient-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let base = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join(PREAMP)).unwrap();
    for (name, waveform, needle) in [
        (
            "zero-period.json",
            r#"{"shape":"pulse","low":0,"high":0.01,"rise":0,"fall":0,"width":0,"period":0}"#,
            "period",
        ),
        (
            "negative-period.json",
            r#"{"shape":"pulse","low":0,"high":0.01,"rise":0,"fall":0,"width":0,"period":"-1 ms"}"#,
            "period",
        ),
        (
            "no-unit.json",
            r#"{"shape":"sine","frequency":"1000"}"#,
            "has no unit",
        ),
    ] {
        let mut v: serde_json::Value = serde_json::from_str(&base).unwrap();
        v["signal"]["waveform"] = serde_json::from_str(waveform).unwrap();
        let path = dir.join(name);
        std::fs::write(&path, serde_json::to_string_pretty(&v).unwrap()).unwrap();
        let out = run(&["transient", path.to_str().unwrap()]);
        assert_eq!(out.status.code(), Some(2), "{name}: {}", text(&out.stdout));
        assert!(out.stdout.is_empty());
        let e = text(&out.stderr);
        assert!(e.contains(needle), "{name}: {e}");
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn clip_search_names_the_limiting_transistor() {
    // common practice (no source): a clip report gives the level, what
    // limits first, and the load-line estimate beside it.
    let out = run(&["transient", PREAMP, "--clip"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    for needle in ["clips at", "first limit:", "load-line estimate"] {
        assert!(s.contains(needle), "missing {needle:?} in\n{s}");
    }
}

#[test]
fn export_draws_the_waveform_plot() {
    // invariant: the picture is a PNG (its signature) and an SVG naming THD.
    let dir = std::env::temp_dir().join(format!("biasline-wave-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let png = dir.join("wave.png");
    let out = run(&["export", PREAMP, "--waveform", "-o", png.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let bytes = std::fs::read(&png).unwrap();
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");
    let svg = dir.join("wave.svg");
    let out = run(&["export", PREAMP, "--waveform", "-o", svg.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = std::fs::read_to_string(&svg).unwrap();
    assert!(s.contains("THD"), "the harmonics panel names THD");
    let _ = std::fs::remove_dir_all(&dir);
}
