//! Issue 18, crash, NaN and scale items: regression tests. Each runs the
//! library or the command in process on a generated chain or a demo.

use biasline::analysis::{ac, circuit, dc, small_signal};
use biasline::cli::{self, Args};
use biasline::document::Document;
use biasline::generate::amplifier_chain;
use biasline::netlist;
use clap::Parser;
use std::path::PathBuf;

/// Write `doc` to a fresh temporary file.
fn save(doc: &Document, name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("biasline-trust-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let path = dir.join(name);
    std::fs::write(&path, serde_json::to_string(doc).expect("serialises")).expect("writes");
    path
}

/// Run `biasline ARGS` in process: (exit code or failure code, output, failure message).
fn run(args: &[&str]) -> (i32, String, String) {
    let args = Args::try_parse_from(std::iter::once("biasline").chain(args.iter().copied()))
        .expect("arguments parse");
    let mut out = Vec::new();
    let (code, msg) = match cli::run(args.command.as_ref().expect("a command"), &mut out) {
        Ok(c) => (c, String::new()),
        Err(f) => (f.code, f.message),
    };
    (code, String::from_utf8(out).expect("utf-8"), msg)
}

fn response(doc: &Document) -> ac::FrequencyResponse {
    let nl = netlist::connect(doc);
    let op = dc::solve(doc, &nl).expect("solves");
    let c = circuit::build_unchecked(doc, &nl).expect("builds");
    let a = small_signal::analyse(doc, &nl, &c, &op);
    ac::sweep(&a.small_signal, &a.chain, &a.midband, &doc.analysis)
}

// ---- item 5: a sweep that stopped early --------------------------------

#[test]
fn a_high_gain_chain_is_swept_at_every_frequency() {
    // Seven bypassed common-emitter stages (≈ 270 dB at midband): at 891 Hz
    // the largest admittance (ωC of a 1 mF bypass, 5.6 S) was 10^13 times a
    // perfectly good pivot, and the pivot test against the whole matrix
    // called the system singular; the sweep stopped at index 59 of 161.
    let doc = amplifier_chain(7, Some(1e-3));
    let r = response(&doc);
    let g = r.gain.as_ref().expect("a gain trace");
    assert_eq!(r.frequencies.len(), 161);
    // invariant: one magnitude and one phase per frequency
    assert_eq!(g.magnitude_db.len(), r.frequencies.len());
    assert_eq!(g.phase_degrees.len(), r.frequencies.len());
    assert!(
        r.notes.iter().all(|n| !n.contains("singular")),
        "{:?}",
        r.notes
    );
    // invariant: the swept gain reaches the midband gain (capacitor parts
    // shorted, device capacitances open) within 1 dB somewhere in the passband
    let mid = r.midband_gain_db.expect("midband gain");
    let peak = g.magnitude_db.iter().copied().fold(f64::MIN, f64::max);
    assert!((peak - mid).abs() < 1.0, "peak {peak} dB, midband {mid} dB");
}

#[test]
fn sweep_csv_of_a_high_gain_chain_has_a_row_per_frequency() {
    // The CSV indexed the magnitudes by the frequency count: index out of bounds.
    let path = save(&amplifier_chain(7, Some(1e-3)), "chain7.json");
    let (code, out, msg) = run(&["sweep", "--csv", path.to_str().unwrap()]);
    assert!(code <= 1, "exit {code}: {msg}");
    // invariant: header plus one row per swept frequency (161 at the defaults)
    assert_eq!(out.lines().count(), 1 + 161, "{out}");
    let (code, out, _) = run(&["sweep", path.to_str().unwrap()]);
    assert!(code <= 1);
    assert!(out.lines().last().unwrap().contains("100 MHz"), "{out}");
}
