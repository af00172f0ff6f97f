//! The command line's small-signal output: `analyze` text and JSON, `sweep`.

use crate::cli_common::{ran, EXIT_CANNOT};

/// Run a command that must succeed; (exit code, output).
fn output(args: &[&str]) -> (i32, String) {
    let r = ran(args);
    assert!(r.code == 0 || r.code == 1, "{args:?}: {}", r.message);
    (r.code, r.out)
}

#[test]
fn analyze_json_carries_models_stages_and_sweep() {
    // common practice (no source): every documented key is present (docs/analyze-json.md)
    let (_, text) = output(&["analyze", "projects/two-stage-preamp.json", "--json"]);
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    let ss = &v["small_signal"];
    assert!(
        ss["transistors"][0]["models"]["hybrid_pi"]["gm"]
            .as_f64()
            .unwrap()
            > 0.0
    );
    assert!(
        ss["transistors"][0]["models"]["h"]["common_base"]["h21"]
            .as_f64()
            .unwrap()
            < 0.0
    );
    assert_eq!(ss["stages"].as_array().unwrap().len(), 2);
    assert_eq!(ss["stages"][1]["configuration"]["kind"], "common_collector");
    assert!(ss["stages"][0]["voltage_gain"]["exact"].as_f64().unwrap() < 0.0);
    assert!(ss["chain"]["source_gain_db"].as_f64().is_some());
    assert_eq!(
        ss["chain_topology"]["stages"][0]["ac"]["base"]["label"],
        "R1 ‖ R2"
    );
    let r = &v["response"];
    assert_eq!(r["frequencies"].as_array().unwrap().len(), 161);
    assert_eq!(r["gain"]["magnitude_db"].as_array().unwrap().len(), 161);
    assert!(r["lower_corner"].as_f64().is_some() && r["upper_corner"].as_f64().is_some());
    assert_eq!(r["low_corner_set_by"], "CE");
}

#[test]
fn analyze_text_has_the_stage_table() {
    // common practice (no source): the table names configuration, exact and estimated figures
    let (code, text) = output(&["analyze", "projects/common-emitter.json"]);
    assert_eq!(code, 0);
    assert!(text.contains("common emitter, bypassed"));
    assert!(text.contains("re model") && text.contains("h-parameters"));
    assert!(
        text.contains("Zin") && text.contains("Zout") && text.contains("Av") && text.contains("Ai")
    );
    assert!(text.contains("−3 dB at"));
}

#[test]
fn sweep_csv_has_a_header_and_161_rows() {
    // common practice (no source): one row per frequency of the default sweep
    let (_, text) = output(&["sweep", "projects/common-emitter.json", "--csv"]);
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines[0], "frequency_hz,magnitude_db,phase_degrees");
    assert_eq!(lines.len(), 162);
    let last: Vec<f64> = lines[161].split(',').map(|x| x.parse().unwrap()).collect();
    assert!((last[0] - 1e8).abs() < 1.0);
}

#[test]
fn sweep_without_a_signal_source_says_why() {
    // common practice (no source): a sweep needs a signal source; the message says what to set
    let err = ran(&["sweep", "projects/current-mirror.json"]);
    assert_eq!(err.code, EXIT_CANNOT);
    assert!(err.message.contains("signal source"), "{}", err.message);
}
