//! Shared helpers for the small-signal tests: load a project, solve its
//! operating point, linearise and compute the midband figures.
#![allow(dead_code)]

use biasline::analysis::figures::StageFigures;
use biasline::analysis::small_signal::{self, Analysis};
use biasline::analysis::{circuit, dc};
use biasline::document::{self, Document};
use biasline::netlist;

/// Every demo project and small-signal fixture with a signal source and a load.
pub const SIGNAL_FILES: &[&str] = &[
    "projects/common-emitter.json",
    "projects/two-stage-preamp.json",
    "tests/fixtures/ss_common_base.json",
    "tests/fixtures/ss_follower.json",
    "tests/fixtures/ss_degenerated_ce.json",
    "tests/fixtures/ss_partly_bypassed_ce.json",
];

pub fn load(path: &str) -> Document {
    document::load_file(std::path::Path::new(path)).unwrap_or_else(|e| panic!("{path}: {e}"))
}

pub fn analyse(doc: &Document) -> Analysis {
    let nl = netlist::connect(doc);
    let c = circuit::build(doc, &nl).expect("circuit builds");
    let op = dc::solve(doc, &nl).unwrap_or_else(|e| panic!("solves: {e}"));
    small_signal::analyse(doc, &nl, &c, &op)
}

pub fn analyse_file(path: &str) -> Analysis {
    analyse(&load(path))
}

pub fn stage<'a>(a: &'a Analysis, q: &str) -> &'a StageFigures {
    a.midband
        .stages
        .iter()
        .find(|s| s.transistor == q)
        .unwrap_or_else(|| panic!("stage {q}"))
}

pub fn part_value(doc: &Document, d: &str, key: &str) -> f64 {
    doc.part_by_designator(d)
        .and_then(|p| p.parameter(key))
        .unwrap_or_else(|| panic!("{d}.{key}"))
}

pub fn set_value(doc: &mut Document, d: &str, key: &str, v: f64) {
    let p = doc
        .parts
        .iter_mut()
        .find(|p| p.designator == d)
        .unwrap_or_else(|| panic!("{d}"));
    p.parameters.insert(key.to_string(), v);
}

/// Two resistances in parallel.
// invariant: the parallel combination of two conductances adds them (1/R = 1/a + 1/b).
pub fn par(a: f64, b: f64) -> f64 {
    a * b / (a + b)
}

/// Relative difference of `a` from `b`; the tests compare it with their stated tolerances.
pub fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}
