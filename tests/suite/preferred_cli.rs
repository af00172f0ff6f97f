//! `biasline preferred`: the neighbours of a value in an IEC 60063 series
//! and the best pair for a parallel value or a divider fraction, checked
//! against the series tables and by brute force.

use std::process::Command;

fn run(args: &[&str]) -> (i32, String, String) {
    let o = Command::new(env!("CARGO_BIN_EXE_biasline"))
        .arg("preferred")
        .args(args)
        .output()
        .unwrap();
    (
        o.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&o.stdout).into_owned(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

/// Ohms from the program's text (`30 kΩ` → 30000).
fn ohms(text: &str) -> f64 {
    biasline::units::parse(
        text.trim().trim_end_matches('Ω').trim(),
        biasline::units::Unit::Ohm,
    )
    .unwrap()
}

/// The E24 decade. source: IEC 60063:2015, table of the E24 series.
const E24: [f64; 24] = [
    1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6,
    6.2, 6.8, 7.5, 8.2, 9.1,
];

fn e24_between(low: f64, high: f64) -> Vec<f64> {
    let mut out = Vec::new();
    for e in -1..8 {
        for m in E24 {
            let v = m * 10f64.powi(e);
            if v >= low * (1.0 - 1e-9) && v <= high * (1.0 + 1e-9) {
                out.push(v);
            }
        }
    }
    out
}

#[test]
fn neighbours_of_a_value_are_the_series_members_either_side() {
    let (code, out, _) = run(&["4.9k"]);
    assert_eq!(code, 0);
    // source: IEC 60063 E24 — 4.7 and 5.1 bracket 4.9; 5.1 is nearer on the
    // logarithmic scale the series is built on (ln 5.1/4.9 < ln 4.9/4.7).
    assert!(out.contains("nearest 5.1 kΩ"), "{out}");
    assert!(out.contains("below 4.7 kΩ, above 5.1 kΩ"), "{out}");
    let (_, out, _) = run(&["4.7k"]);
    assert!(out.contains("4.7 kΩ is a preferred value"), "{out}");
}

#[test]
fn the_parallel_pair_is_the_best_of_all_e24_pairs() {
    let target = 3450.0;
    let (code, out, _) = run(&["3.45k", "--parallel"]);
    assert_eq!(code, 0, "{out}");
    // "E24: A and B give V in parallel (…)"
    let body = out.trim().strip_prefix("E24: ").unwrap();
    let (a, rest) = body.split_once(" and ").unwrap();
    let (b, _) = rest.split_once(" give ").unwrap();
    let (a, b) = (ohms(a), ohms(b));
    let got = (a * b / (a + b) / target).ln().abs();
    // invariant: no pair of E24 values within the searched range (the
    // target to 30 × the target) comes nearer than the one printed.
    let cands = e24_between(target * 0.3, target * 30.0);
    for &x in &cands {
        for &y in &cands {
            let e = (x * y / (x + y) / target).ln().abs();
            assert!(e >= got - 1e-12, "{x} ‖ {y} is nearer than {a} ‖ {b}");
        }
    }
}

#[test]
fn the_divider_pair_gives_the_fraction_it_prints() {
    let (code, out, _) = run(&["0.25", "--divider", "--around", "10k"]);
    assert_eq!(code, 0, "{out}");
    let body = out.trim().strip_prefix("E24: ").unwrap();
    let (a, rest) = body.split_once(" and ").unwrap();
    let (b, _) = rest.split_once(" give ").unwrap();
    let (a, b) = (ohms(a), ohms(b));
    // source: IEC 60063 E24 has 3.0 and 1.0 (×10ⁿ): a = 3·b gives exactly 1/4.
    assert!((b / (a + b) - 0.25).abs() < 1e-12, "{a} / {b}");
}

#[test]
fn bad_input_is_refused_with_the_reason() {
    // invariant: a clear message and exit 2 for input that cannot be used.
    let (code, _, err) = run(&["4.9k", "--series", "E7"]);
    assert_eq!(code, 2);
    assert!(
        err.contains("no preferred-value series named 'E7'"),
        "{err}"
    );
    let (code, _, err) = run(&["-1k"]);
    assert_eq!(code, 2, "{err}");
    let (code, _, err) = run(&["1.5", "--divider"]);
    assert_eq!(code, 2);
    assert!(err.contains("not a fraction between 0 and 1"), "{err}");
}
