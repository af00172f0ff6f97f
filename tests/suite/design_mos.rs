//! `biasline design --stage mos-cs`: the gate-divider bias against the square
//! law solved by hand, the drain current at the ends of the VGS(th) spread
//! and the limits check, the written project, and refusals of bad targets.

use crate::cli_common::ran;
use serde_json::Value;
use std::path::PathBuf;

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("biasline-design-mos-{}", std::process::id()));
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

const CS: [&str; 14] = [
    "design", "--stage", "mos-cs", "--supply", "12", "--gain", "20dB", "--load", "10k", "--low",
    "20", "--zin", "1M", "--id",
];

const SUPPLY: f64 = 12.0;

fn f(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

/// source: Sedra & Smith, Microelectronic Circuits, the MOSFET chapter
/// (biasing with a gate divider and a source resistor): with
/// VGS = VG − ID·RS the saturation law ID = (k/2)·(VGS − VT)² is a quadratic
/// in ID, (k/2)·RS²·ID² − (k·u·RS + 1)·ID + (k/2)·u² = 0 with u = VG − VT;
/// the root with VGS > VT (the smaller) is the bias point. k = β·(1 + λ·VDS)
/// carries the channel-length factor of the square law at the given VDS.
fn bias_by_hand(vg: f64, rs: f64, vt: f64, beta: f64, lambda: f64, vds: f64) -> f64 {
    let k = beta * (1.0 + lambda * vds);
    let u = vg - vt;
    let (qa, qb, qc) = (0.5 * k * rs * rs, -(k * u * rs + 1.0), 0.5 * k * u * u);
    let disc = (qb * qb - 4.0 * qa * qc).sqrt();
    // The smaller root, written to keep its digits (qb < 0).
    let id = 2.0 * qc / (-qb + disc);
    assert!(vg - id * rs > vt, "the root keeps the channel on");
    id
}

fn device(d: &Value) -> (f64, f64, f64) {
    let dev = &d["device"];
    (f(&dev["threshold"]), f(&dev["beta"]), f(&dev["lambda"]))
}

/// The gate voltage and the source and drain resistors of a value set.
fn divider(vals: &Value) -> (f64, f64, f64) {
    let (r1, r2) = (f(&vals["RG1"]), f(&vals["RG2"]));
    (SUPPLY * r2 / (r1 + r2), f(&vals["RSB"]), f(&vals["RD"]))
}

#[test]
fn gate_divider_bias_matches_the_square_law_solved_by_hand() {
    let mut a = CS.to_vec();
    a.push("1m");
    let (code, d) = json(&a);
    assert_eq!(code, 0, "{d}");
    let (vt, beta, lambda) = device(&d);
    // The preset small-signal-n-mosfet: threshold 2.1 V, β 50 mA/V², λ 0.02 /V.
    assert_eq!((vt, beta, lambda), (2.1, 0.05, 0.02));
    // The computed (unrounded) values give the target 1 mA exactly; VDS at
    // the target current, VDD − ID·(RD + RS).
    let (vg, rs, rd) = divider(&d["continuous"]);
    let id = bias_by_hand(vg, rs, vt, beta, lambda, SUPPLY - 1e-3 * (rd + rs));
    assert!((id / 1e-3 - 1.0).abs() < 1e-6, "hand ID {id} A");
    // The engine on the preferred values solves the same equation (its VDS
    // in k): the hand root of the rounded circuit, to 1e-6.
    let (vgp, rsp, _) = divider(&d["values"]);
    let m = &d["measured"];
    let engine = f(&m["drain_current"]);
    let hand = bias_by_hand(vgp, rsp, vt, beta, lambda, f(&m["drain_source_voltage"]));
    assert!(
        (engine / hand - 1.0).abs() < 1e-6,
        "engine {engine} A, hand {hand} A"
    );
    // The engine's ID lies within the rounding's own error of the target:
    // to first order dID/ID = 2·(dVG − ID·dRS)/(Vov + 2·VS) (differentiate the
    // bias equation; Vov = √(2·ID/k)), plus a little for λ through RD.
    let k = beta * (1.0 + lambda * (SUPPLY - 1e-3 * (rd + rs)));
    let vov = (2.0 * 1e-3 / k).sqrt();
    let predicted = 2.0 * ((vgp - vg) - 1e-3 * (rsp - rs)) / (vov + 2.0 * 1e-3 * rs);
    let off = engine / 1e-3 - 1.0;
    assert!(
        (off - predicted).abs() <= 0.25 * predicted.abs() + 2e-3,
        "ID {engine} A: {off:+.4} from the target, rounding predicts {predicted:+.4}"
    );
    assert!(off.abs() < 0.05, "{off}");
}

#[test]
fn threshold_ends_bracket_the_nominal_and_the_limit_check_agrees() {
    let mut a = CS.to_vec();
    a.push("1m");
    let (code, d) = json(&a);
    assert_eq!(code, 0);
    let (_, beta, lambda) = device(&d);
    let nominal = f(&d["measured"]["drain_current"]);
    let ends = d["spread_ends"].as_array().unwrap();
    let (lo, hi) = (f(&ends[0]["drain_current"]), f(&ends[1]["drain_current"]));
    // invariant: the larger threshold gives the least current, the smaller
    // the most; the nominal lies between.
    assert!(lo < nominal && nominal < hi, "{lo} {nominal} {hi}");
    // The preset gives no threshold limits: the spread analysis' ±0.5 V
    // (common practice, as src/spread uses).
    assert_eq!(f(&ends[0]["threshold"]), 2.6);
    assert!((f(&ends[1]["threshold"]) - 1.6).abs() < 1e-12);
    // invariant: each end is the bias equation's root at that threshold.
    let (vg, rs, _) = divider(&d["values"]);
    for e in ends {
        let hand = bias_by_hand(vg, rs, f(&e["threshold"]), beta, lambda, f(&e["vds"]));
        let got = f(&e["drain_current"]);
        assert!((got / hand - 1.0).abs() < 1e-6, "{e}: hand {hand}");
        assert!(f(&e["triode_margin"]) > 0.0, "{e}");
    }
    // With no limits given the design aims RSB to hold ID within ±20 %
    // (common practice (no source)): the rounded design stays within 25 %.
    assert!(lo > 0.75e-3 && hi < 1.25e-3, "{lo} {hi}");
    // invariant: limits the design can meet are met: the window of the
    // ends widened by 3 % each way, given as limits, exits 0 with both ends
    // inside (the design aims RSB at the limits given).
    let (llo, lhi) = (format!("{}", lo * 0.97), format!("{}", hi * 1.03));
    let mut c = a.clone();
    c.extend(["--id-min", &llo, "--id-max", &lhi]);
    let (code, d3) = json(&c);
    assert_eq!(code, 0, "{}", d3["missed"]);
    let e3 = d3["spread_ends"].as_array().unwrap();
    assert!(f(&e3[0]["drain_current"]) >= lo * 0.97);
    assert!(f(&e3[1]["drain_current"]) <= hi * 1.03);
    // invariant: limits no source resistor can meet within the supply (±2 %
    // against a 1 V threshold spread) exit 1 naming the limit and the fix.
    let mut n = a.clone();
    n.extend(["--id-min", "0.98m", "--id-max", "1.02m"]);
    let r = ran(&n);
    assert_eq!(r.code, 1, "{}", r.out);
    assert!(r.out.contains("MISSED: drain current"), "{}", r.out);
    assert!(r.out.contains("raise the supply"), "{}", r.out);
    // invariant: the check agrees with the ends reported: a limit is named
    // exactly when its end lies past it.
    let (_, dn) = json(&n);
    let en = dn["spread_ends"].as_array().unwrap();
    let said = dn["missed"].to_string();
    assert_eq!(
        said.contains("below --id-min"),
        f(&en[0]["drain_current"]) < 0.98e-3,
        "{said}"
    );
    assert_eq!(
        said.contains("above --id-max"),
        f(&en[1]["drain_current"]) > 1.02e-3,
        "{said}"
    );
    assert!(said.contains("--id-"), "{said}");
}

#[test]
fn written_project_checks_and_analyses_as_common_source() {
    let out = scratch("mos-cs.json");
    let o = out.to_str().unwrap();
    let (code, d) = json(&[
        "design", "--stage", "mos-cs", "--supply", "15", "--gain", "18dB", "--load", "22k",
        "--low", "30", "--zin", "470k", "--id", "2m", "-o", o,
    ]);
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
    assert!(cw.contains("common source"), "{cw}");
    let same = |a: f64, b: f64| (a - b).abs() <= 1e-9 * b.abs();
    let m = &d["measured"];
    assert!(same(f(&ss["chain"]["voltage_gain"]).abs(), f(&m["gain"])));
    assert!(same(
        f(&ss["chain"]["input_impedance"]),
        f(&m["input_impedance"])
    ));
    let fet = &an["field_effect_transistors"][0];
    assert_eq!(fet["kind"], "mosfet");
    assert!(same(f(&fet["drain_current"]), f(&m["drain_current"])));
    assert!(same(
        f(&fet["drain_source_voltage"]),
        f(&m["drain_source_voltage"])
    ));
    // invariant: the engine's low corner of the design is at or below the
    // --low asked (the capacitors grow until it is).
    assert!(f(&m["low_corner"]) <= 30.0, "{}", m["low_corner"]);
    // invariant: Zin is the divider's RG1 ∥ RG2 at midband (the gate draws
    // nothing), and the design kept it within 10 % of the 470 kΩ asked.
    let (r1, r2) = (f(&d["values"]["RG1"]), f(&d["values"]["RG2"]));
    let par = r1 * r2 / (r1 + r2);
    assert!((f(&m["input_impedance"]) / par - 1.0).abs() < 1e-3, "{par}");
    assert!((par / 470e3 - 1.0).abs() <= 0.1, "{par}");
}

#[test]
fn bad_targets_exit_2_with_a_clear_message() {
    for (supply, extra, says) in [
        ("12", &["--id", "-1m"][..], "positive"),
        ("12", &["--id", "1m", "--gain", "60dB"][..], "raise --id"),
        ("12", &["--id", "1"][..], "rated"),
        ("3", &["--id", "1m", "--gain", "30dB"][..], "supply"),
        ("2.5", &["--id", "1m"][..], "threshold"),
        ("12", &["--id-min", "2m", "--id-max", "1m"][..], "not below"),
        ("12", &["--id", "1m", "--id-max", "0.5m"][..], "outside"),
        (
            "12",
            &["--preset", "small-signal-n-jfet"][..],
            "N-channel MOSFET",
        ),
        ("12", &["--gain", "-3dB"][..], "above 0 dB"),
    ] {
        let mut a = vec![
            "design", "--stage", "mos-cs", "--supply", supply, "--load", "10k", "--low", "20",
        ];
        a.extend(extra);
        let r = ran(&a);
        assert_eq!(r.code, 2, "{extra:?}: {} {}", r.out, r.message);
        assert!(r.message.contains(says), "{extra:?}: {}", r.message);
    }
    let r = ran(&[
        "design", "--stage", "mos-xx", "--supply", "9", "--load", "10k", "--low", "20",
    ]);
    assert_eq!(r.code, 2);
    assert!(r.message.contains("mos-cs"), "{}", r.message);
}
