//! `biasline stability`: the circuit's own poles and loop gains through the
//! command, checked against hand formulas on the two-stage demo.

use crate::cli_common::{ran, EXIT_CANNOT, EXIT_CLEAN};

#[test]
fn the_preamp_is_stable_and_its_output_coupling_pole_is_where_the_hand_formula_puts_it() {
    let r = ran(&["stability", "projects/two-stage-preamp.json", "--json"]);
    assert_eq!(r.code, EXIT_CLEAN, "{}", r.message);
    let v: serde_json::Value = serde_json::from_str(&r.out).unwrap();
    let poles = v["poles"].as_array().unwrap();
    // invariant: a circuit with only passive feedback paths and a settled
    // operating point has every natural frequency in the left half-plane.
    assert!(poles
        .iter()
        .all(|p| p["real_per_s"].as_f64().unwrap() < 0.0));
    // source: single-time-constant high-pass, f = 1/(2π·R·C) (Sedra and
    // Smith, frequency response chapter): C3 = 10 µF into RL = 10 kΩ plus
    // the follower's Zout ≈ 63 Ω (its stage card) gives 1.58 Hz.
    let f = 1.0 / (2.0 * std::f64::consts::PI * (10e3 + 63.4) * 10e-6);
    let nearest = poles
        .iter()
        .map(|p| p["natural_hz"].as_f64().unwrap())
        .min_by(|a, b| (a / f - 1.0).abs().total_cmp(&(b / f - 1.0).abs()))
        .unwrap();
    assert!((nearest / f - 1.0).abs() < 0.01, "{nearest} Hz vs {f} Hz");
    assert_eq!(v["warnings"].as_array().unwrap().len(), 0);
}

#[test]
fn a_break_point_outside_any_loop_or_on_no_part_is_refused() {
    // common practice (no source): a loop gain needs a loop; the message
    // says why and the command exits 2.
    let r = ran(&[
        "stability",
        "projects/two-stage-preamp.json",
        "--break",
        "Q2.base",
    ]);
    assert_eq!(r.code, EXIT_CANNOT);
    assert!(r.message.contains("no feedback loop"), "{}", r.message);
    let r = ran(&[
        "stability",
        "projects/two-stage-preamp.json",
        "--break",
        "X9.a",
    ]);
    assert_eq!(r.code, EXIT_CANNOT);
    assert!(r.message.contains("no part X9"), "{}", r.message);
}
