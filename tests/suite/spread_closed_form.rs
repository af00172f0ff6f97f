//! The spread machinery against closed-form results, with evaluators that
//! compute the quantity by formula (no circuit solve), so each check isolates
//! the corner search, the sampling and the statistics.

use biasline::document::{Document, Part, PartKind};
use biasline::spread::{self, Options, Outcome};
use std::collections::BTreeMap;

fn resistor(des: &str, ohms: f64, tol: f64) -> Part {
    let mut parameters = BTreeMap::new();
    parameters.insert("resistance".to_string(), ohms);
    parameters.insert("tolerance".to_string(), tol);
    Part {
        id: des.to_lowercase(),
        connect: Default::default(),
        designator: des.into(),
        kind: PartKind::Resistor,
        symbol: String::new(),
        position: [0, 0],
        rotation: 0,
        mirror: false,
        preset: None,
        parameters,
    }
}

fn divider(r1: f64, r2: f64, tol: f64) -> Document {
    let mut d = Document::new("divider");
    d.parts.push(resistor("R1", r1, tol));
    d.parts.push(resistor("R2", r2, tol));
    // No temperature axis: these checks are about the resistors alone.
    d.spread.ambient_min_celsius = 27.0;
    d.spread.ambient_max_celsius = 27.0;
    d
}

fn ratio(doc: &Document) -> Result<Outcome, String> {
    let r = |d: &str| doc.part_by_designator(d).unwrap().parameters["resistance"];
    let (r1, r2) = (r("R1"), r("R2"));
    Ok(Outcome {
        values: vec![("ratio".into(), r2 / (r1 + r2))],
        all_active: true,
        missing: Vec::new(),
    })
}

#[test]
fn divider_worst_case_matches_closed_form() {
    // invariant: extreme-value analysis of k = R2/(R1+R2): k is largest with R2
    // at its top limit and R1 at its bottom limit, smallest the other way round.
    let (r1, r2, t) = (56e3, 10e3, 0.05);
    let doc = divider(r1, r2, t);
    let opt = Options {
        runs: 0,
        ..Options::from_document(&doc)
    };
    let rep = spread::run(&doc, &ratio, &opt).unwrap();
    let w = rep.quantities[0].worst_case.clone().unwrap();
    let kmax = r2 * (1.0 + t) / (r1 * (1.0 - t) + r2 * (1.0 + t));
    let kmin = r2 * (1.0 - t) / (r1 * (1.0 + t) + r2 * (1.0 - t));
    assert!((w.max - kmax).abs() < 1e-12, "{} vs {kmax}", w.max);
    assert!((w.min - kmin).abs() < 1e-12, "{} vs {kmin}", w.min);
}

#[test]
fn divider_sensitivities_match_the_derivative() {
    // invariant: for k = R2/(R1+R2), ∂k/∂R2·R2/k = R1/(R1+R2) and ∂k/∂R1·R1/k = −R1/(R1+R2).
    let (r1, r2) = (56e3, 10e3);
    let doc = divider(r1, r2, 0.05);
    let opt = Options {
        runs: 0,
        worst_case: false,
        ..Options::from_document(&doc)
    };
    let rep = spread::run(&doc, &ratio, &opt).unwrap();
    let s = &rep.quantities[0].sensitivities;
    let get = |n: &str| {
        s.iter()
            .find(|x| x.variable == n)
            .unwrap()
            .normalised
            .unwrap()
    };
    let e = r1 / (r1 + r2);
    assert!((get("R2") - e).abs() < 1e-6);
    assert!((get("R1") + e).abs() < 1e-6);
}

#[test]
fn divider_sigma_matches_root_sum_square() {
    // source: statistical (root-sum-square) tolerance analysis — a uniform tolerance ±t has
    // σ = t/√3; σk/k = √Σ(Si·σi)², with Si the normalised sensitivities (common practice).
    let (r1, r2, t) = (10e3, 10e3, 0.05);
    let mut doc = divider(r1, r2, t);
    doc.spread.runs = 20_000;
    let opt = Options {
        worst_case: false,
        sensitivities: false,
        ..Options::from_document(&doc)
    };
    let rep = spread::run(&doc, &ratio, &opt).unwrap();
    let mc = rep.quantities[0].monte_carlo.clone().unwrap();
    let k = r2 / (r1 + r2);
    let s = r1 / (r1 + r2);
    let sigma = k * ((s * t / 3f64.sqrt()).powi(2) * 2.0).sqrt();
    // The sample σ of N runs has a relative standard error near 1/√(2N) ≈ 0.5 %;
    // allow 4 of those plus the first-order error of the RSS formula (~0.1 % here).
    let rel = (mc.standard_deviation - sigma).abs() / sigma;
    assert!(
        rel < 0.03,
        "σ {} vs RSS {sigma} ({rel})",
        mc.standard_deviation
    );
}

#[test]
fn monte_carlo_stays_inside_worst_case_and_repeats() {
    // invariant: no Monte Carlo draw can leave the worst-case bounds of a monotonic quantity;
    // the same seed gives the same numbers; 1 and 2 threads give identical numbers.
    let mut doc = divider(33e3, 4.7e3, 0.01);
    doc.spread.runs = 2_000;
    let mut opt = Options::from_document(&doc);
    opt.threads = 1;
    let a = spread::run(&doc, &ratio, &opt).unwrap();
    opt.threads = 2;
    let b = spread::run(&doc, &ratio, &opt).unwrap();
    let (wa, ma) = (
        a.quantities[0].worst_case.clone().unwrap(),
        a.quantities[0].monte_carlo.clone().unwrap(),
    );
    assert!(ma.min >= wa.min && ma.max <= wa.max);
    assert_eq!(ma, b.quantities[0].monte_carlo.clone().unwrap());
    let c = spread::run(&doc, &ratio, &opt).unwrap();
    assert_eq!(ma, c.quantities[0].monte_carlo.clone().unwrap());
    opt.seed += 1;
    let d = spread::run(&doc, &ratio, &opt).unwrap();
    assert_ne!(ma, d.quantities[0].monte_carlo.clone().unwrap());
}

#[test]
fn matched_pair_tracks_its_ratio() {
    // invariant: with R1 and R2 matched (mismatch 0), they move together and the ratio
    // R2/(R1+R2) of equal nominal values stays exactly 1/2 on every board.
    let mut doc = divider(10e3, 10e3, 0.05);
    doc.spread.matched.push(biasline::document::MatchedGroup {
        parts: vec!["R1".into(), "R2".into()],
        mismatch: 0.0,
    });
    doc.spread.runs = 500;
    let rep = spread::run(&doc, &ratio, &Options::from_document(&doc)).unwrap();
    let mc = rep.quantities[0].monte_carlo.clone().unwrap();
    assert!((mc.max - 0.5).abs() < 1e-12 && (mc.min - 0.5).abs() < 1e-12);
}

#[test]
fn yield_counts_boards_inside_limits() {
    // invariant: with a uniform ±5 % spread on R2 only (R1 exact) and R1 = R2, the ratio is
    // ≥ 1/2 exactly when R2 ≥ its nominal: one board in two.
    let mut doc = divider(10e3, 10e3, 0.05);
    doc.parts[0].parameters.insert("tolerance".into(), 0.0);
    doc.spread.runs = 4_000;
    doc.spread.limits.push(biasline::document::SpecLimit {
        quantity: "ratio".into(),
        min: Some(0.5),
        max: None,
    });
    let rep = spread::run(&doc, &ratio, &Options::from_document(&doc)).unwrap();
    let y = rep.yield_fraction.unwrap();
    // binomial standard error √(0.25/4000) ≈ 0.8 %; allow 4 of them.
    assert!((y - 0.5).abs() < 0.032, "{y}");
    // invariant: with one limit, the boards that miss it are the ones outside the yield,
    // and the part to tighten is the only part that spreads.
    assert!((rep.limits[0].miss_fraction - (1.0 - y)).abs() < 1e-12);
    assert_eq!(rep.limits[0].top_contributor.as_deref(), Some("R2"));
}

#[test]
fn unknown_limit_quantity_is_named() {
    // invariant: a limit on a quantity that does not exist is refused with its name.
    let mut doc = divider(10e3, 10e3, 0.05);
    doc.spread.limits.push(biasline::document::SpecLimit {
        quantity: "gain".into(),
        min: Some(1.0),
        max: None,
    });
    let err = spread::run(&doc, &ratio, &Options::from_document(&doc)).unwrap_err();
    assert!(err.contains("\"gain\"") && err.contains("ratio"), "{err}");
}
