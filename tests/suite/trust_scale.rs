//! Issue 18, crash, NaN and scale items: regression tests. Each runs the
//! library or the command in process on a generated chain or a demo.

use crate::cli_common::{ran, EXIT_CANNOT};
use biasline::analysis::{ac, circuit, dc, small_signal};
use biasline::document::{self, Document};
use biasline::generate::amplifier_chain;
use biasline::netlist;
use std::path::PathBuf;

/// Write `doc` to a fresh temporary file.
fn save(doc: &Document, name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("biasline-trust-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let path = dir.join(name);
    std::fs::write(&path, serde_json::to_string(doc).expect("serialises")).expect("writes");
    path
}

/// Run `biasline ARGS`: (exit code, output, failure message).
fn run(args: &[&str]) -> (i32, String, String) {
    let r = ran(args);
    (
        r.code,
        r.out,
        if r.code == EXIT_CANNOT {
            r.message
        } else {
            String::new()
        },
    )
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

// ---- item 8: NaN, ∞ and frequencies out of range ------------------------

#[test]
fn frequencies_outside_the_stated_range_are_refused_naming_the_key() {
    use biasline::document::limits::{MAX_FREQUENCY, MIN_FREQUENCY};
    // invariant: the range's own ends are accepted, anything past them refused
    for (f, ok) in [
        (MIN_FREQUENCY, true),
        (MAX_FREQUENCY, true),
        (1e30, false),
        (1e-30, false),
        (5e-324, false),
    ] {
        let mut doc = amplifier_chain(1, None);
        let vs = doc.parts.iter_mut().find(|p| p.designator == "VS").unwrap();
        vs.parameters.insert("frequency".into(), f);
        let path = save(&doc, &format!("freq-{f:e}.json"));
        let loaded = document::load_file(&path);
        assert_eq!(loaded.is_ok(), ok, "{f}: {:?}", loaded.err());
        if let Err(e) = loaded {
            let m = e.to_string();
            assert!(m.contains("VS") && m.contains("frequency"), "{m}");
        }
    }
    let mut doc = amplifier_chain(1, None);
    doc.analysis.frequency_stop = 1e17;
    let e = document::load_file(&save(&doc, "stop.json")).unwrap_err();
    assert!(e.to_string().contains("frequency_stop"), "{e}");
}

#[test]
fn a_noise_band_past_the_range_is_refused_not_a_panic() {
    // `--band 1e-300..1e300` sized a grid of usize::MAX points (capacity overflow).
    let path = save(&amplifier_chain(1, None), "band.json");
    let p = path.to_str().unwrap();
    let (code, _, msg) = run(&["noise", p, "--band", "1e-300..1e300"]);
    assert_eq!(code, EXIT_CANNOT);
    assert!(msg.contains("--band") && msg.contains("outside"), "{msg}");
    let (code, _, msg) = run(&["noise", p, "--at", "1e300"]);
    assert_eq!(code, EXIT_CANNOT, "{msg}");
    // invariant: the grid of a wide range is capped, never larger than a sweep may be
    let g = biasline::analysis::noise::spectrum::log_grid(1e-300, 1e300, 20);
    assert!(g.len() <= biasline::document::limits::MAX_SWEEP_POINTS + 1);
}

#[test]
fn noise_of_a_noiseless_source_resistance_prints_no_nan_or_infinity() {
    // A source whose path to the output is all but cut (a 1e-300 F coupling
    // capacitor) puts no noise of its resistance at the output: the noise
    // factor total/source part was ∞ ("noise figure inf dB").
    let mut doc = amplifier_chain(3, None);
    let c = doc
        .parts
        .iter_mut()
        .find(|p| p.designator == "CIN")
        .unwrap();
    c.parameters.insert("capacitance".into(), 1e-300);
    let path = save(&doc, "cut.json");
    let (_, out, msg) = run(&["noise", path.to_str().unwrap()]);
    // invariant: every printed figure is a number or a stated absence
    for bad in ["NaN", "inf"] {
        assert!(!out.contains(bad), "{bad} in:\n{out}\n{msg}");
    }
}

#[test]
fn a_signal_source_with_both_pins_on_ground_is_refused_by_transient() {
    // Harmonics were "NaN dB below" a zero fundamental.
    // The `source_emf` net (VS's positive pin and RS) becomes ground: a
    // ground symbol on each of its labels, the labels removed.
    let mut doc = amplifier_chain(1, None);
    let ground = doc
        .parts
        .iter()
        .find(|p| p.kind == biasline::document::PartKind::Ground)
        .unwrap()
        .clone();
    let spots: Vec<[i32; 2]> = doc
        .labels
        .iter()
        .filter(|l| l.name == "source_emf")
        .map(|l| l.position)
        .collect();
    assert_eq!(spots.len(), 2);
    doc.labels.retain(|l| l.name != "source_emf");
    for (k, at) in spots.into_iter().enumerate() {
        let mut g = ground.clone();
        g.id = format!("extra-ground-{k}");
        g.position = at;
        doc.parts.push(g);
    }
    let spectrum = biasline::analysis::transient::fourier::spectrum(&[0.0; 64], 1);
    // invariant: no fundamental, no relative levels (never NaN)
    assert!(spectrum.relative_db.iter().all(|d| d.is_finite()));
    let path = save(&doc, "shorted.json");
    let (code, out, msg) = run(&["transient", path.to_str().unwrap()]);
    assert!(!out.contains("NaN"), "{out}");
    assert_eq!(code, EXIT_CANNOT, "{out}{msg}");
    // (the rules check refuses a shorted source first; the transient's own
    // refusal, "drives nothing", covers a drive resolved without the check)
    assert!(msg.contains("VS"), "{msg}");
}

// ---- item 9: numbers ----------------------------------------------------

#[test]
fn a_30_stage_gain_prints_in_scientific_notation() {
    // "Avs 3074204519563879811818398192468496226453940638580736 (1030 dB)"
    let path = save(&amplifier_chain(30, Some(1e-3)), "chain30.json");
    let (code, out, msg) = run(&["analyze", path.to_str().unwrap()]);
    assert!(code <= 1, "{msg}");
    let line = out
        .lines()
        .find(|l| l.contains("Avs"))
        .expect("an Avs line");
    // invariant: three significant figures, so no run of more than 7 digits
    let longest = line
        .split(|c: char| !c.is_ascii_digit())
        .map(str::len)
        .max()
        .unwrap_or(0);
    assert!(longest <= 7, "{line}");
}

#[test]
fn a_wide_sweep_counts_its_points_without_overflow() {
    // 1e-300 to 1e300 Hz overflowed the ratio: "about inf points".
    let n = biasline::document::limits::sweep_points(1e-6, 1e11, 20);
    // invariant: 17 decades at 20 per decade
    assert!((n - 340.0).abs() < 1e-9, "{n}");
    let n = biasline::document::limits::sweep_points(1e-300, 1e300, 5);
    assert!((n - 3000.0).abs() < 1e-6, "{n}");
}

// ---- item 12: what a long title repeats ---------------------------------

#[test]
fn a_long_title_is_cut_where_it_repeats_and_kept_whole_once() {
    // A 50 MB title made a 369 MB page; here 200,000 characters.
    let mut doc = amplifier_chain(1, None);
    doc.title = "T".repeat(200_000);
    let path = save(&doc, "long-title.json");
    let page = path.with_extension("html");
    let (code, _, msg) = run(&[
        "report",
        path.to_str().unwrap(),
        "-o",
        page.to_str().unwrap(),
    ]);
    assert!(code <= 1, "{msg}");
    let html = std::fs::read_to_string(&page).expect("page written");
    // invariant: the heading keeps the whole title once; every other place
    // holds at most MAX_REPEATED_TITLE_CHARS of it
    let whole = html.matches(&doc.title).count();
    assert_eq!(whole, 1, "whole title {whole} times");
    let cut = biasline::document::limits::repeated_title(&doc.title);
    assert_eq!(cut.chars().count(), 201);
    assert!(html.len() < 2 * 200_000 + 3_000_000, "{} bytes", html.len());
}
