//! The `noise` command and the `noise` object of `analyze --json`, run as
//! the built binary on the demo projects.

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

#[test]
fn noise_text_names_the_figures_and_the_top_three() {
    // common practice (no source): the report a designer reads — NF at the real source
    // resistance, input-referred noise, three largest contributors, the better current.
    let out = run(&["noise", "projects/two-stage-preamp.json"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    for needle in [
        "noise figure",
        "at the real source resistance RS = 10 kΩ",
        "input-referred",
        "top contributors",
        "  3. ",
        "better collector current",
        "RMS = peak/√2",
    ] {
        assert!(s.contains(needle), "missing {needle:?} in\n{s}");
    }
}

#[test]
fn noise_csv_has_one_row_per_sweep_frequency() {
    // invariant: 1 Hz–100 MHz at 20 per decade is 161 rows; every row has the header's width.
    let out = run(&["noise", "--csv", "projects/two-stage-preamp.json"]);
    assert_eq!(out.status.code(), Some(0));
    let s = text(&out.stdout);
    let lines: Vec<&str> = s.lines().collect();
    assert_eq!(lines.len(), 162);
    let width = lines[0].split(',').count();
    assert!(lines[0].starts_with("frequency_hz,output_density_v_per_root_hz,input_density"));
    assert!(lines[0].contains("RS thermal (source resistance)"));
    for l in &lines[1..] {
        assert_eq!(l.split(',').count(), width);
        // invariant: the output density is the power sum of the contributor columns.
        let v: Vec<f64> = l.split(',').map(|x| x.parse().unwrap()).collect();
        let p: f64 = v[3..].iter().map(|d| d * d).sum();
        assert!((p.sqrt() / v[1] - 1.0).abs() < 1e-5);
    }
}

#[test]
fn noise_band_is_parsed_and_bad_bands_are_refused() {
    let wide = run(&[
        "noise",
        "--band",
        "20..20k",
        "projects/two-stage-preamp.json",
    ]);
    let narrow = run(&[
        "noise",
        "--band",
        "1k..2k",
        "projects/two-stage-preamp.json",
    ]);
    assert_eq!(narrow.status.code(), Some(0));
    assert!(text(&narrow.stdout).contains("band 1 kHz–2 kHz"));
    assert_ne!(text(&wide.stdout), text(&narrow.stdout));
    let spot = run(&["noise", "--at", "100", "projects/two-stage-preamp.json"]);
    assert!(text(&spot.stdout).contains("at 100 Hz:"));
    let bad_spot = run(&["noise", "--at", "-5", "projects/two-stage-preamp.json"]);
    assert_eq!(bad_spot.status.code(), Some(2));
    let bad = run(&[
        "noise",
        "--band",
        "20k..20",
        "projects/two-stage-preamp.json",
    ]);
    assert_eq!(bad.status.code(), Some(2));
    assert!(text(&bad.stderr).contains("--band"));
}

#[test]
fn marked_source_resistor_must_be_a_resistor() {
    let out = run(&[
        "noise",
        "--source-resistor",
        "Q1",
        "projects/two-stage-preamp.json",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("Q1 is not a resistor"));
}

#[test]
fn photodiode_buffer_is_clean_and_its_photocurrent_is_a_contributor() {
    let check = run(&["check", "projects/photodiode-buffer.json"]);
    assert_eq!(check.status.code(), Some(0), "{}", text(&check.stdout));
    let out = run(&[
        "noise",
        "--band",
        "1..1k",
        "projects/photodiode-buffer.json",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    assert!(s.contains("IPH photocurrent shot"), "{s}");
    assert!(s.contains("RSH = 10 MΩ"), "{s}");
}

#[test]
fn analyze_json_carries_the_noise_figures() {
    let out = run(&["analyze", "--json", "projects/two-stage-preamp.json"]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    let n = &v["noise"];
    assert_eq!(n["available"], true);
    assert_eq!(n["source_resistance"], "RS");
    let nf = n["band_noise_figure_db"].as_f64().unwrap();
    let f = n["band_noise_factor"].as_f64().unwrap();
    // invariant: NF = 10·log10 F.
    assert!((nf - 10.0 * f.log10()).abs() < 1e-9);
    assert_eq!(n["top_contributors"].as_array().unwrap().len(), 3);
    for key in [
        "band_output_rms",
        "band_input_rms",
        "spot_noise_figure_db",
        "signal_to_noise_db",
        "chain_input_noise",
        "stages",
        "better_collector_current",
        "kelvin",
    ] {
        assert!(!n[key].is_null(), "noise.{key} missing");
    }
}

#[test]
fn the_better_current_says_what_it_ignores() {
    // common practice (no source): a bias current chosen for noise alone must
    // still deliver the stage's load and base currents; the hint says it does
    // not weigh them (issue 18, item 15: it suggested 102 µA for a feedback
    // pair's second transistor without a word).
    let r = crate::cli_common::ran(&["noise", "projects/two-stage-preamp.json"]);
    assert!(r.code <= 1, "{}", r.message);
    assert!(r.out.contains("better collector current"), "{}", r.out);
    assert!(
        r.out
            .contains("ignores the current each stage must deliver"),
        "{}",
        r.out
    );
}
