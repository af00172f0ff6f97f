//! Phase margin as a spread quantity (issue 20): the worst case of the
//! feedback demo's margin against a brute-force enumeration of every corner,
//! and the quantity through `biasline spread`.

use crate::cli_common::{ran, root};
use biasline::analysis::{circuit, dc, small_signal};
use biasline::document::Document;
use biasline::spread::{self, evaluate::phase_margin_at, Options, Outcome};

/// The demo with tolerances left only on RF, RE2, CC and CL (β, VBE of
/// both transistors and the temperature range keep theirs): 9 axes, 512
/// corners — few enough to enumerate.
fn few_axes() -> Document {
    let text = std::fs::read_to_string(root().join("projects/line-driver.json")).unwrap();
    let mut doc = biasline::document::load_str(&text).unwrap();
    for p in &mut doc.parts {
        if p.parameters.contains_key("tolerance")
            && !["RF", "RE2", "CC", "CL"].contains(&p.designator.as_str())
        {
            p.parameters.insert("tolerance".into(), 0.0);
        }
    }
    doc
}

/// One board's phase margin at the file's break point.
fn margin(doc: &Document) -> Result<Outcome, String> {
    let nl = biasline::netlist::connect(doc);
    let op = dc::solve(doc, &nl).map_err(|e| e.to_string())?;
    let c = circuit::build_unchecked(doc, &nl).map_err(|e| e.to_string())?;
    let ss = small_signal::linearise(&c, &op);
    let pm = phase_margin_at(doc, &nl, &ss, "Q2.base").ok_or("no margin")?;
    Ok(Outcome {
        values: vec![("PM".into(), pm)],
        all_active: true,
        missing: Vec::new(),
    })
}

#[test]
fn the_worst_case_margin_is_the_worst_of_every_corner() {
    let doc = few_axes();
    let vars = spread::collect(&doc);
    let axes = spread::axes(&doc, &vars);
    assert_eq!(
        axes.len(),
        9,
        "{:?}",
        axes.iter().map(|a| &a.name).collect::<Vec<_>>()
    );
    let opt = Options {
        runs: 0,
        ..Options::from_document(&doc)
    };
    let rep = spread::run(&doc, &margin, &opt).unwrap();
    let w = rep.quantities[0].worst_case.clone().expect("a worst case");
    // invariant: the worst-case search picks one corner per direction, so
    // its minimum can be no lower than the lowest of all 2^9 corners, and
    // for a margin that moves monotonically with each part it is that corner.
    let mut lowest = f64::INFINITY;
    let mut highest = f64::NEG_INFINITY;
    for k in 0..(1u32 << axes.len()) {
        let u: Vec<f64> = (0..axes.len())
            .map(|i| if k >> i & 1 == 1 { 1.0 } else { -1.0 })
            .collect();
        let board = spread::variables::apply(&doc, &vars, &spread::values_at(&vars, &axes, &u));
        let pm = margin(&board).unwrap().values[0].1;
        lowest = lowest.min(pm);
        highest = highest.max(pm);
    }
    assert!(
        w.min >= lowest - 1e-9,
        "{} below the corners' {lowest}",
        w.min
    );
    assert!(
        w.max <= highest + 1e-9,
        "{} above the corners' {highest}",
        w.max
    );
    assert!(
        (w.min - lowest).abs() < 0.5 && (w.max - highest).abs() < 0.5,
        "worst case {:.2}…{:.2}°, corners {lowest:.2}…{highest:.2}°",
        w.min,
        w.max
    );
    // common practice (no source): the compensated demo keeps 60° or more
    // on the worst board.
    assert!(lowest > 60.0, "{lowest}");
}

#[test]
fn the_spread_command_reports_the_margin_of_the_break_point() {
    let r = ran(&[
        "spread",
        "projects/line-driver.json",
        "--runs",
        "40",
        "--json",
    ]);
    assert!(r.code == 0 || r.code == 1, "{}", r.message);
    let v: serde_json::Value = serde_json::from_str(&r.out).unwrap();
    let q = v["quantities"]
        .as_array()
        .unwrap()
        .iter()
        .find(|q| q["name"] == "PM(Q2.base)")
        .expect("a PM(Q2.base) quantity");
    // invariant: the nominal is the stability command's figure.
    let s = ran(&["stability", "projects/line-driver.json", "--json"]);
    let sv: serde_json::Value = serde_json::from_str(&s.out).unwrap();
    let pm = sv["break_point"]["phase_margin_degrees"].as_f64().unwrap();
    let nominal = q["nominal"].as_f64().unwrap();
    assert!((nominal - pm).abs() < 1e-9, "{nominal} vs {pm}");
    let w = &q["worst_case"];
    assert!(w["min"].as_f64().unwrap() <= nominal && nominal <= w["max"].as_f64().unwrap());
    let mc = &q["monte_carlo"];
    assert!(
        mc["min"].as_f64().unwrap() >= w["min"].as_f64().unwrap() - 1e-9,
        "{q}"
    );
}
