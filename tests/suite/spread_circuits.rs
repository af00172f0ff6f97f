//! Spread of real circuits through the DC and small-signal engine.

use biasline::analysis::{dc, thermal_voltage, ZERO_CELSIUS};
use biasline::document::{self, Document};
use biasline::netlist;
use biasline::spread::{self, evaluate::Board, Options};
use std::path::Path;

fn load(path: &str) -> Document {
    document::load_file(&Path::new(env!("CARGO_MANIFEST_DIR")).join(path)).unwrap()
}

fn sensitivity(rep: &spread::SpreadReport, quantity: &str, variable: &str) -> spread::Sensitivity {
    rep.quantities
        .iter()
        .find(|q| q.name == quantity)
        .unwrap_or_else(|| panic!("no quantity {quantity}"))
        .sensitivities
        .iter()
        .find(|s| s.variable == variable)
        .unwrap_or_else(|| panic!("no variable {variable} for {quantity}"))
        .clone()
}

fn sensitivities_only(doc: &Document) -> spread::SpreadReport {
    let opt = Options {
        runs: 0,
        worst_case: false,
        ..Options::from_document(doc)
    };
    spread::run(doc, &Board::new(doc), &opt).unwrap()
}

#[test]
fn fixed_bias_beta_sensitivity_matches_the_closed_form() {
    // source: fixed bias IC = βF·(VCC − VBE)/RB with VBE = VT·ln(IC/Is) (Sedra & Smith,
    // "Microelectronic Circuits", BJT DC bias section); differentiating,
    // ∂ln IC/∂ln βF = 1/(1 + VT/(VCC − VBE)).
    let doc = load("tests/fixtures/spread_fixed_bias.json");
    let nl = netlist::connect(&doc);
    let op = dc::solve(&doc, &nl).unwrap();
    let vbe = op.transistors().next().unwrap().vbe;
    let vt = thermal_voltage(27.0 + ZERO_CELSIUS);
    let closed = 1.0 / (1.0 + vt / (9.0 - vbe));
    let s = sensitivity(&sensitivities_only(&doc), "IC(Q1)", "βF(Q1)")
        .normalised
        .unwrap();
    assert!((s - closed).abs() < 1e-3, "S = {s}, closed form {closed}");
    // invariant: two independent methods — the operating point's own S figure agrees.
    assert!((op.transistors().next().unwrap().beta_sensitivity - s).abs() < 1e-3);
}

#[test]
fn divider_bias_with_emitter_resistor_is_far_stiffer_than_fixed_bias() {
    // common practice (no source): fixed bias has S near 1; a stiff divider with a large
    // emitter resistor brings it near 0.05. Here: fixed bias ≈ 0.997, the demo's divider
    // stage (R1‖R2 = 8.5 kΩ, RE = 1 kΩ, βF 200) ≈ 0.04.
    let fixed = load("tests/fixtures/spread_fixed_bias.json");
    let divider = load("projects/common-emitter.json");
    let sf = sensitivity(&sensitivities_only(&fixed), "IC(Q1)", "βF(Q1)")
        .normalised
        .unwrap();
    let sd = sensitivity(&sensitivities_only(&divider), "IC(Q1)", "βF(Q1)")
        .normalised
        .unwrap();
    assert!(sf > 0.95, "fixed bias S = {sf}");
    assert!(sd < 0.1, "divider bias S = {sd}");
    assert!(sf / sd > 10.0);
}

#[test]
fn vbe_temperature_coefficient_near_minus_2_mv_per_degree() {
    // common practice (no source): VBE falls about 2 mV per °C at constant current.
    // With the model's Is(T) law (η = 3, Eg = 1.11 V) the exact figure at 1 mA is
    // (VBE − Eg − 3·VT)/T ≈ −1.8 mV/K; accept −1.5 … −2.5 mV/°C.
    let doc = load("tests/fixtures/spread_vbe_tempco.json");
    let s = sensitivity(&sensitivities_only(&doc), "V(Q1.collector)", "ambient");
    let per_degree = s.derivative;
    assert!(
        (-2.5e-3..-1.5e-3).contains(&per_degree),
        "dVBE/dT = {per_degree} V/°C"
    );
}

#[test]
fn monte_carlo_extremes_lie_inside_worst_case_bounds() {
    // invariant: each run draws every part inside its limits, and the corner search
    // solves the extreme corners; for quantities monotonic in each part the runs
    // cannot leave those bounds.
    let mut doc = load("projects/two-stage-preamp.json");
    doc.spread.runs = 200;
    let rep = spread::run(&doc, &Board::new(&doc), &Options::from_document(&doc)).unwrap();
    assert_eq!(rep.failed_runs, 0);
    for q in &rep.quantities {
        let (Some(w), Some(m)) = (&q.worst_case, &q.monte_carlo) else {
            continue;
        };
        let slack = 1e-9 * w.max.abs().max(w.min.abs()).max(1e-12);
        assert!(
            m.min >= w.min - slack && m.max <= w.max + slack,
            "{}: runs {}…{} outside worst case {}…{}",
            q.name,
            m.min,
            m.max,
            w.min,
            w.max
        );
    }
}

#[test]
fn threads_and_seed_do_not_change_the_numbers() {
    // invariant: each run draws from its own stream of (seed, run), so 1 and 2 threads
    // give identical numbers, and the same seed gives the same report.
    let mut doc = load("projects/common-emitter.json");
    doc.spread.runs = 64;
    let mut opt = Options::from_document(&doc);
    opt.worst_case = false;
    opt.sensitivities = false;
    let board = Board::new(&doc);
    opt.threads = 1;
    let a = spread::run(&doc, &board, &opt).unwrap();
    opt.threads = 2;
    let b = spread::run(&doc, &board, &opt).unwrap();
    for (x, y) in a.quantities.iter().zip(&b.quantities) {
        assert_eq!(x.monte_carlo, y.monte_carlo, "{}", x.name);
    }
}
