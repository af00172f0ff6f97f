//! `biasline design --stage jfet-cs|jfet-sf`: the self-bias resistor against
//! the square law solved by hand, the drain current at the ends of the
//! datasheet spread, the written project, and refusals of bad targets.

use crate::cli_common::ran;
use serde_json::Value;
use std::path::PathBuf;

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("biasline-design-fet-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join(name);
    let _ = std::fs::remove_file(&p);
    p
}

fn json(args: &[&str]) -> (i32, Value) {
    let mut a = args.to_vec();
    a.push("--json");
    let r = ran(&a);
    assert!(r.code == 0 || r.code == 1, "{} {}", r.out, r.message);
    (r.code, serde_json::from_str(&r.out).expect("design JSON"))
}

const CS: [&str; 12] = [
    "design", "--stage", "jfet-cs", "--supply", "12", "--gain", "12dB", "--load", "10k", "--low",
    "20", "--id",
];

#[test]
fn self_bias_resistor_matches_the_square_law_solved_by_hand() {
    let mut a = CS.to_vec();
    a.push("1m");
    let (_, d) = json(&a);
    // The preset small-signal-n-jfet: IDSS 6 mA, VP −2 V, λ 0.01 /V.
    let dev = &d["device"];
    let (idss, vp, lambda) = (
        dev["idss"].as_f64().unwrap(),
        dev["pinch_off"].as_f64().unwrap(),
        dev["lambda"].as_f64().unwrap(),
    );
    assert_eq!((idss, vp, lambda), (6e-3, 2.0, 0.01));
    let rsb = d["continuous"]["RSB"].as_f64().unwrap();
    let rd = d["continuous"]["RD"].as_f64().unwrap();
    // source: Sedra & Smith, Microelectronic Circuits, the JFET self-bias
    // example: with VGS = −ID·RS, ID = IDSS·(1 − VGS/VP)² is a quadratic in
    // VGS; solved here for the designed RS, taking the root inside
    // −|VP| < VGS < 0. IDSS carries the model's (1 + λ·VDS) at the design's
    // VDS = VDD − ID·(RD + RS), with ID the target 1 mA.
    let k = idss * (1.0 + lambda * (12.0 - 1e-3 * (rd + rsb)));
    // −VGS/RS = k·(1 + VGS/|VP|)²  ⇒  (k/VP²)·VGS² + (2k/VP + 1/RS)·VGS + k = 0
    let (qa, qb, qc) = (k / (vp * vp), 2.0 * k / vp + 1.0 / rsb, k);
    let disc = (qb * qb - 4.0 * qa * qc).sqrt();
    let roots = [(-qb + disc) / (2.0 * qa), (-qb - disc) / (2.0 * qa)];
    let vgs = roots
        .into_iter()
        .find(|&v| v < 0.0 && v > -vp)
        .expect("a root in the channel's range");
    let id = -vgs / rsb;
    assert!(
        (id / 1e-3 - 1.0).abs() < 1e-6,
        "hand ID {id} A for RS {rsb} Ω"
    );
    // The engine on the preferred values: within the E24 rounding of RSB
    // (each step ±5 % at most; ID moves less than RS, as √ under self-bias).
    let snapped = d["values"]["RSB"].as_f64().unwrap();
    let achieved = d["measured"]["drain_current"].as_f64().unwrap();
    let step = (snapped / rsb - 1.0).abs();
    assert!(step < 0.05, "RSB {rsb} → {snapped}");
    assert!(
        (achieved / 1e-3 - 1.0).abs() <= step + 0.01,
        "ID {achieved} A against 1 mA after rounding RSB by {step}"
    );
}

#[test]
fn spread_ends_bracket_the_nominal_and_the_limit_check_agrees() {
    let mut a = CS.to_vec();
    a.push("1m");
    let (code, d) = json(&a);
    let nominal = d["measured"]["drain_current"].as_f64().unwrap();
    let ends = d["spread_ends"].as_array().unwrap();
    let lo = ends[0]["drain_current"].as_f64().unwrap();
    let hi = ends[1]["drain_current"].as_f64().unwrap();
    // invariant: IDSS and |VP| both at their minimum give the least current
    // under self-bias, both at their maximum the most; the nominal lies between.
    assert!(lo < nominal && nominal < hi, "{lo} {nominal} {hi}");
    assert_eq!(ends[0]["idss"].as_f64(), Some(3e-3));
    assert_eq!(ends[1]["pinch_off"].as_f64(), Some(2.7));
    assert_eq!(code, 0);
    // invariant: limits just inside the ends are missed (exit 1, named);
    // limits just outside them are met (exit 0).
    let tight_lo = format!("{}", lo * 1.05);
    let tight_hi = format!("{}", hi * 0.95);
    let mut b = a.clone();
    b.extend(["--id-min", &tight_lo, "--id-max", &tight_hi]);
    let (code, d2) = json(&b);
    assert_eq!(code, 1);
    let missed = d2["missed"].as_array().unwrap();
    assert_eq!(missed.len(), 2, "{missed:?}");
    assert!(missed[0].as_str().unwrap().contains("--id-min"));
    let loose_lo = format!("{}", lo * 0.95);
    let loose_hi = format!("{}", hi * 1.05);
    let mut c = a.clone();
    c.extend(["--id-min", &loose_lo, "--id-max", &loose_hi]);
    let (code, d3) = json(&c);
    assert_eq!(code, 0);
    assert!(d3["missed"].as_array().unwrap().is_empty());
}

fn written_project_matches(stage: &str, extra: &[&str], words: &str) {
    let out = scratch(&format!("{stage}.json"));
    let o = out.to_str().unwrap();
    let mut a = vec![
        "design", "--stage", stage, "--supply", "9", "--load", "10k", "--low", "20", "--zin", "2M",
        "-o", o,
    ];
    a.extend(extra);
    let (code, d) = json(&a);
    assert_eq!(code, 0, "{d}");
    // invariant: what design wrote passes the rules check
    let c = ran(&["check", o]);
    assert_eq!(c.code, 0, "{} {}", c.out, c.message);
    // invariant: the analysis of the written file recognises the stage and
    // gives the figures design printed.
    let r = ran(&["analyze", o, "--json"]);
    assert!(r.code == 0 || r.code == 1, "{}", r.message);
    let an: Value = serde_json::from_str(&r.out).unwrap();
    let ss = &an["small_signal"];
    let cw = ss["stages"][0]["configuration_words"].as_str().unwrap();
    assert!(cw.contains(words), "{cw}");
    let same = |a: f64, b: f64| (a - b).abs() <= 1e-9 * b.abs();
    let m = &d["measured"];
    assert!(same(
        ss["chain"]["voltage_gain"].as_f64().unwrap().abs(),
        m["gain"].as_f64().unwrap()
    ));
    assert!(same(
        ss["chain"]["input_impedance"].as_f64().unwrap(),
        m["input_impedance"].as_f64().unwrap()
    ));
    let f = &an["field_effect_transistors"][0];
    assert!(same(
        f["drain_current"].as_f64().unwrap(),
        m["drain_current"].as_f64().unwrap()
    ));
    // The gate resistor is the input impedance asked (2 MΩ is in E24).
    assert!(same(m["input_impedance"].as_f64().unwrap(), 2e6));
}

#[test]
fn written_common_source_project_loads_checks_and_analyses() {
    written_project_matches("jfet-cs", &["--gain", "10dB"], "common source");
}

#[test]
fn written_follower_project_loads_checks_and_analyses() {
    written_project_matches("jfet-sf", &[], "source follower");
}

#[test]
fn bad_targets_exit_2_with_a_clear_message() {
    for (supply, load, extra, says) in [
        ("12", "10k", &["--id", "7m"][..], "IDSS"),
        ("12", "10k", &["--id", "-1m"][..], "positive"),
        ("12", "-5k", &[][..], "positive"),
        ("-3", "10k", &[][..], "supply"),
        (
            "12",
            "10k",
            &["--id", "1m", "--gain", "40dB"][..],
            "raise --id",
        ),
        (
            "12",
            "10k",
            &["--preset", "small-signal-npn-x"][..],
            "no device preset",
        ),
        (
            "12",
            "10k",
            &["--preset", "small-signal-pnp"][..],
            "N-channel JFET",
        ),
    ] {
        let mut a = vec![
            "design", "--stage", "jfet-cs", "--supply", supply, "--load", load, "--low", "20",
        ];
        a.extend(extra);
        let r = ran(&a);
        assert_eq!(r.code, 2, "{extra:?}: {} {}", r.out, r.message);
        assert!(r.message.contains(says), "{extra:?}: {}", r.message);
    }
    let r = ran(&[
        "design", "--stage", "jfet-sf", "--supply", "9", "--load", "10k", "--low", "20", "--gain",
        "6dB",
    ]);
    assert_eq!(r.code, 2);
    assert!(r.message.contains("follower"), "{}", r.message);
    let r = ran(&[
        "design", "--stage", "ce", "--supply", "9", "--load", "10k", "--low", "20", "--id", "1m",
    ]);
    assert_eq!(r.code, 2);
    assert!(r.message.contains("JFET stages"), "{}", r.message);
}
