//! A JFET's bias over its datasheet spread: IDSS and the pinch-off voltage
//! from their minimum and maximum, worst case against the square law solved
//! at every corner in the test (source: Shockley's law with self-bias
//! VGS = −ID·RS, the reference page "Field-effect transistors"; the spread
//! of IDSS and VP is the whole difficulty of JFET bias — common practice).

use crate::common::{document, p};
use biasline::analysis::devices::fet::keys as fk;
use biasline::document::PartKind;
use biasline::presets::keys as k;
use biasline::spread::{self, evaluate::Board, Options};

/// Self-bias current: ID = IDSS·(1 − ID·RS/|VP|)², by bisection (λ = 0).
fn self_bias(idss: f64, vp: f64, rs: f64) -> f64 {
    let (mut lo, mut hi) = (0.0, -vp / rs);
    for _ in 0..200 {
        let id = 0.5 * (lo + hi);
        let x: f64 = 1.0 - id * rs / -vp;
        if id - idss * x * x < 0.0 {
            lo = id;
        } else {
            hi = id;
        }
    }
    lo
}

#[test]
fn jfet_bias_worst_case_is_the_square_law_at_the_datasheet_corners() {
    let rs = 1000.0;
    let doc = {
        let mut d = document(&[
            p("VDD", PartKind::Rail, &["vdd"], &[(k::VOLTAGE, 15.0)]),
            p(
                "RD",
                PartKind::Resistor,
                &["vdd", "d"],
                &[(k::RESISTANCE, 2200.0), (k::TOLERANCE, 0.0)],
            ),
            p(
                "Q1",
                PartKind::NJfet,
                &["d", "g", "s"],
                &[
                    (fk::THRESHOLD_VOLTAGE, -2.0),
                    (fk::ZERO_GATE_DRAIN_CURRENT, 6e-3),
                    (fk::ZERO_GATE_DRAIN_CURRENT_MIN, 2e-3),
                    (fk::ZERO_GATE_DRAIN_CURRENT_MAX, 10e-3),
                    (fk::THRESHOLD_VOLTAGE_MIN, -3.0),
                    (fk::THRESHOLD_VOLTAGE_MAX, -1.0),
                    (fk::GATE_SATURATION_CURRENT, 1e-22),
                    (fk::THRESHOLD_TEMPERATURE_COEFFICIENT, 0.0),
                    (fk::MOBILITY_TEMPERATURE_EXPONENT, 0.0),
                ],
            ),
            p(
                "RG",
                PartKind::Resistor,
                &["g", "0"],
                &[(k::RESISTANCE, 1e6), (k::TOLERANCE, 0.0)],
            ),
            p(
                "RS",
                PartKind::Resistor,
                &["s", "0"],
                &[(k::RESISTANCE, rs), (k::TOLERANCE, 0.0)],
            ),
        ]);
        // No temperature spread: the corners are the datasheet's alone.
        d.spread.ambient_min_celsius = 27.0;
        d.spread.ambient_max_celsius = 27.0;
        d
    };
    let mut board = Board::new(&doc);
    board.small_signal = false;
    let opt = Options {
        runs: 200,
        ..Options::from_document(&doc)
    };
    let rep = spread::run(&doc, &board, &opt).unwrap();
    let names: Vec<&str> = rep.variables.iter().map(|v| v.name.as_str()).collect();
    assert!(
        names.contains(&"IDSS(Q1)") && names.contains(&"VP(Q1)"),
        "{names:?}"
    );
    let q = rep
        .quantities
        .iter()
        .find(|q| q.name == "ID(Q1)")
        .expect("drain current");
    let w = q.worst_case.clone().unwrap();
    // source: Shockley's square law with self-bias VGS = −ID·RS, solved at the four
    // corners of the datasheet's IDSS and VP limits (the reference page, "Field-effect
    // transistors"); the worst case of a monotone quantity lies at a corner (invariant).
    let corners: Vec<f64> = [(2e-3, -3.0), (2e-3, -1.0), (10e-3, -3.0), (10e-3, -1.0)]
        .iter()
        .map(|&(i, v)| self_bias(i, v, rs))
        .collect();
    let lo = corners.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = corners.iter().copied().fold(0.0, f64::max);
    assert!((w.min / lo - 1.0).abs() < 1e-6, "min {} vs {lo}", w.min);
    assert!((w.max / hi - 1.0).abs() < 1e-6, "max {} vs {hi}", w.max);
    // common practice (no source): the spread a designer must live with, more than 2:1
    // here even with source feedback.
    assert!(hi / lo > 2.0, "{lo} … {hi}");
    // Every Monte Carlo board lies inside the worst case (invariant).
    let mc = q.monte_carlo.clone().unwrap();
    assert!(mc.min >= w.min * (1.0 - 1e-9) && mc.max <= w.max * (1.0 + 1e-9));
}
