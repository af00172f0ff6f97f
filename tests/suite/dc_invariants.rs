//! Laws every operating point must satisfy, on every demo project and
//! fixture: Kirchhoff's current law at every node, Tellegen's theorem, no
//! NaN or infinity, and agreement of the βF sensitivity with a second solve.

use crate::common;

use biasline::analysis::circuit;
use biasline::analysis::dc::{self, Region};
use biasline::document::{self, PartKind::*};
use biasline::netlist;
use biasline::presets::keys::*;
use common::*;

fn demo_files() -> Vec<std::path::PathBuf> {
    let mut v: Vec<_> = std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/projects"))
        .expect("projects folder")
        .map(|e| e.expect("entry").path())
        .filter(|p| p.extension().is_some_and(|x| x == "json"))
        .collect();
    v.sort();
    v
}

#[test]
fn every_demo_satisfies_kcl_and_tellegen() {
    let files = demo_files();
    assert!(files.len() >= 5, "demo projects missing: {files:?}");
    for f in files {
        let doc = document::load_file(&f).expect("demo loads");
        let (_, c, op) = solved(&doc);
        assert_kcl_and_tellegen(&c, &op, &f.display().to_string());
    }
}

fn fixtures() -> Vec<(&'static str, document::Document)> {
    vec![
        (
            "divider bias",
            document(&[
                p("VCC", Rail, &["vcc"], &[(VOLTAGE, 12.0)]),
                p("R1", Resistor, &["vcc", "b"], &[(RESISTANCE, 47e3)]),
                p("R2", Resistor, &["b", "0"], &[(RESISTANCE, 10e3)]),
                p("RC", Resistor, &["vcc", "c"], &[(RESISTANCE, 4.7e3)]),
                p("RE", Resistor, &["e", "0"], &[(RESISTANCE, 1e3)]),
                with_preset(p("Q1", Npn, &["c", "b", "e"], &[]), "small-signal-npn"),
            ]),
        ),
        (
            "diode and current source",
            document(&[
                p("I1", CurrentSource, &["a", "0"], &[(CURRENT, 1e-3)]),
                with_preset(p("D1", Diode, &["a", "k"], &[]), "general-purpose-diode"),
                p("R1", Resistor, &["k", "0"], &[(RESISTANCE, 100.0)]),
                p("L1", Inductor, &["k", "m"], &[(INDUCTANCE, 1e-3)]),
                p("R2", Resistor, &["m", "0"], &[(RESISTANCE, 220.0)]),
            ]),
        ),
        (
            "saturated switch",
            document(&[
                p("V1", VoltageSource, &["vcc", "0"], &[(VOLTAGE, 5.0)]),
                p("RB", Resistor, &["vcc", "b"], &[(RESISTANCE, 1e3)]),
                p("RC", Resistor, &["vcc", "c"], &[(RESISTANCE, 1e3)]),
                with_preset(p("Q1", Npn, &["c", "b", "0"], &[]), "small-signal-npn"),
            ]),
        ),
        ("latch", latch()),
    ]
}

/// Two transistors in positive feedback (a thyristor-like latch) with a
/// trigger divider: several transistors, strong coupling.
pub fn latch() -> document::Document {
    document(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, 12.0)]),
        p("RA", Resistor, &["vcc", "a"], &[(RESISTANCE, 1e3)]),
        with_preset(p("QP", Pnp, &["g", "n", "a"], &[]), "small-signal-pnp"),
        with_preset(p("QN", Npn, &["n", "g", "k"], &[]), "small-signal-npn"),
        p("RK", Resistor, &["k", "0"], &[(RESISTANCE, 100.0)]),
        p("RG", Resistor, &["g", "0"], &[(RESISTANCE, 10e3)]),
        p("RT", Resistor, &["vcc", "g"], &[(RESISTANCE, 100e3)]),
        p("RN", Resistor, &["vcc", "n"], &[(RESISTANCE, 47e3)]),
    ])
}

#[test]
fn every_fixture_satisfies_kcl_and_tellegen() {
    for (name, doc) in fixtures() {
        let (_, c, op) = solved(&doc);
        assert_kcl_and_tellegen(&c, &op, name);
    }
}

#[test]
fn latch_converges_or_says_why_and_never_hangs() {
    // invariant: a positive-feedback circuit ends with a finite answer or a message.
    let doc = latch();
    match solve(&doc) {
        Ok(op) => {
            let nl = netlist::connect(&doc);
            let c = circuit::build(&doc, &nl).expect("builds");
            assert_kcl_and_tellegen(&c, &op, "latch");
            assert!(op.iterations <= dc::newton::MAX_TOTAL_ITERATIONS);
            eprintln!(
                "latch: {} iterations, aids {:?}, QN {:?}",
                op.iterations,
                op.aids,
                transistor(&op, "QN").region
            );
        }
        Err(e) => {
            let m = e.to_string();
            assert!(m.contains("net") || m.contains("iterations"), "{m}");
        }
    }
}

#[test]
fn beta_sensitivity_agrees_with_a_second_solve() {
    // invariant: the linear-system sensitivity equals a finite difference of two solves.
    let build = |beta: f64| {
        document(&[
            p("VCC", Rail, &["vcc"], &[(VOLTAGE, 12.0)]),
            p("RB", Resistor, &["vcc", "b"], &[(RESISTANCE, 1.5e6)]),
            p("RC", Resistor, &["vcc", "c"], &[(RESISTANCE, 4.7e3)]),
            p("RE", Resistor, &["e", "0"], &[(RESISTANCE, 1e3)]),
            p(
                "Q1",
                Npn,
                &["c", "b", "e"],
                &[(FORWARD_BETA, beta), (FORWARD_EARLY_VOLTAGE, 100.0)],
            ),
        ])
    };
    let beta = 150.0;
    let h = 1e-4 * beta;
    let op = solve(&build(beta)).expect("solves");
    let up = solve(&build(beta + h)).expect("solves");
    let down = solve(&build(beta - h)).expect("solves");
    let t = transistor(&op, "Q1");
    let fd = (transistor(&up, "Q1").ic - transistor(&down, "Q1").ic) / (2.0 * h) * beta / t.ic;
    assert!(t.region == Region::ForwardActive);
    assert!(
        (t.beta_sensitivity - fd).abs() < 1e-4 * fd.abs(),
        "{} vs {fd}",
        t.beta_sensitivity
    );
    // Fixed bias through RB: IC follows βF closely (S well above 0.5), and the warning says so.
    assert!(t.beta_sensitivity > 0.5);
    assert!(op
        .warnings
        .iter()
        .any(|w| w.message.contains("depends strongly on βF")));
}

#[test]
fn dense_and_sparse_solvers_agree_on_every_demo() {
    // invariant: the two linear solvers give one operating point.
    for f in demo_files() {
        let doc = document::load_file(&f).expect("loads");
        let nl = netlist::connect(&doc);
        let c = circuit::build(&doc, &nl).expect("builds");
        let solve_with = |limit| {
            let mut e = dc::newton::Engine::with_limit(&c, limit);
            e.solve().expect("solves").0.x
        };
        let (a, b) = (solve_with(usize::MAX), solve_with(0));
        for (x, y) in a.iter().zip(&b) {
            assert!(
                (x - y).abs() <= 1e-9 * x.abs().max(1e-3),
                "{}: {x} vs {y}",
                f.display()
            );
        }
    }
}

#[test]
fn each_aid_alone_reaches_the_plain_newton_answer() {
    // invariant: gmin stepping and source stepping end at the same operating point as plain
    // Newton when the circuit has one operating point.
    let (_, doc) = fixtures().remove(0);
    let nl = netlist::connect(&doc);
    let c = circuit::build(&doc, &nl).expect("builds");
    let mut e = dc::newton::Engine::new(&c);
    let zero = e.zero_state();
    let plain = e
        .run(&zero, dc::stamps::Conditions::PLAIN)
        .expect("plain")
        .x;
    let g = e.gmin_stepping(&zero).expect("gmin stepping").x;
    let s = e.source_stepping(&zero).expect("source stepping").x;
    for ((a, b), c_) in plain.iter().zip(&g).zip(&s) {
        assert!((a - b).abs() <= 1e-9 * a.abs() + 1e-12, "{a} vs {b}");
        assert!((a - c_).abs() <= 1e-9 * a.abs() + 1e-12, "{a} vs {c_}");
    }
}

#[test]
fn generated_chain_and_grid_satisfy_kcl_and_tellegen() {
    for (name, doc) in [
        ("chain of 40", biasline::generate::transistor_chain(40)),
        ("resistor grid", biasline::generate::resistor_grid(200)),
    ] {
        let (_, c, op) = solved(&doc);
        assert_kcl_and_tellegen(&c, &op, name);
    }
    // The chain settles to one bias: every transistor forward active.
    let op = solve(&biasline::generate::transistor_chain(40)).expect("solves");
    assert!(op.transistors().all(|t| t.region == Region::ForwardActive));
}

#[test]
fn random_sheets_solve_or_say_why_never_nan() {
    // invariant: on any valid sheet the solver ends with a finite, law-abiding answer or a
    // message naming where it failed.
    let mut solved_count = 0;
    for seed in 0..60 {
        let doc = biasline::generate::random_sheet(seed, 10 + (seed as usize % 50));
        let nl = netlist::connect(&doc);
        match dc::solve(&doc, &nl) {
            Ok(op) => {
                let c = circuit::build(&doc, &nl).expect("builds");
                assert_kcl_and_tellegen(&c, &op, &format!("random sheet {seed}"));
                solved_count += 1;
            }
            Err(e) => {
                let m = e.to_string();
                assert!(
                    !m.is_empty() && (m.contains("net") || m.contains("iterations")),
                    "seed {seed}: {m}"
                );
            }
        }
    }
    assert!(
        solved_count >= 30,
        "only {solved_count} of 60 random sheets solved"
    );
}

#[test]
fn sheets_that_need_an_aid_report_it_in_plain_words() {
    // invariant: a solve that needed an aid still satisfies KCL and Tellegen, and the aid is
    // named in the designer's words. These generated sheets defeat plain Newton from zero
    // (found by scanning random_sheet seeds); at least one of them must exercise an aid.
    let words = [dc::newton::AID_GMIN, dc::newton::AID_SOURCE];
    let mut aided = 0;
    for seed in [39u64, 60, 89, 110, 177] {
        let doc = biasline::generate::random_sheet(seed, 10 + (seed as usize % 50));
        let (_, c, op) = solved(&doc);
        assert_kcl_and_tellegen(&c, &op, &format!("random sheet {seed}"));
        assert!(
            op.aids.iter().all(|a| words.contains(&a.as_str())),
            "{:?}",
            op.aids
        );
        aided += usize::from(!op.aids.is_empty());
    }
    assert!(aided >= 1);
}

#[test]
fn wide_ranges_of_resistance_converge_and_keep_kcl() {
    // invariant: KCL and Tellegen hold (to the rounding floor) even where 1 mΩ and 1 TΩ meet,
    // and with a 10 mΩ current-sense resistor under a power stage on a 48 V line.
    let cases = [
        document(&[
            p("V1", VoltageSource, &["in", "0"], &[(VOLTAGE, 100.0)]),
            p("R1", Resistor, &["in", "a"], &[(RESISTANCE, 1.0)]),
            p("R2", Resistor, &["a", "0"], &[(RESISTANCE, 1e9)]),
            p("R3", Resistor, &["a", "b"], &[(RESISTANCE, 1e9)]),
            p("R4", Resistor, &["b", "0"], &[(RESISTANCE, 0.01)]),
            p("R5", Resistor, &["b", "c"], &[(RESISTANCE, 1e12)]),
            p("R6", Resistor, &["c", "0"], &[(RESISTANCE, 1e-3)]),
        ]),
        document(&[
            p("VCC", Rail, &["vcc"], &[(VOLTAGE, 48.0)]),
            p("R1", Resistor, &["vcc", "b"], &[(RESISTANCE, 10e6)]),
            p("R2", Resistor, &["b", "0"], &[(RESISTANCE, 1e6)]),
            p("RC", Resistor, &["vcc", "c"], &[(RESISTANCE, 0.1)]),
            p("RE", Resistor, &["e", "0"], &[(RESISTANCE, 0.01)]),
            p(
                "Q1",
                Npn,
                &["c", "b", "e"],
                &[(SATURATION_CURRENT, 1e-11), (FORWARD_BETA, 30.0)],
            ),
            p("Q2", Npn, &["c", "e", "e2"], &[(SATURATION_CURRENT, 1e-15)]),
            p("R3", Resistor, &["e2", "0"], &[(RESISTANCE, 1e7)]),
        ]),
    ];
    for (i, doc) in cases.iter().enumerate() {
        let (_, c, op) = solved(doc);
        assert_kcl_and_tellegen(&c, &op, &format!("wide range {i}"));
    }
}

#[test]
fn every_device_has_one_report_in_element_order_with_its_parts_power() {
    // invariant: the operating point's one list of device reports holds exactly one
    // report per transistor (bipolar or field-effect) and diode, in element order; each
    // report's power is its part's Σ v·i and its part and designator are its own; the
    // per-kind views pick out the same reports in the same order.
    let mut files = demo_files();
    files.push(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("projects/connections/class-ab-output.json"),
    );
    let mut kinds_seen = [0usize; 3];
    for f in files {
        let doc = document::load_file(&f).expect("demo loads");
        let (_, c, op) = solved(&doc);
        let devices: Vec<usize> = c
            .elements
            .iter()
            .enumerate()
            .filter(|(_, e)| {
                matches!(
                    doc.parts[e.part].kind,
                    Npn | Pnp | Diode | NJfet | PJfet | NMosfet | PMosfet
                )
            })
            .map(|(k, _)| k)
            .collect();
        let reported: Vec<usize> = op.devices.iter().map(|d| d.report().element()).collect();
        assert_eq!(reported, devices, "{}", f.display());
        for d in &op.devices {
            let r = d.report();
            let part = &op.parts[r.part()];
            assert_eq!(r.designator(), part.designator, "{}", f.display());
            assert_eq!(r.power(), part.power, "{} {}", f.display(), r.designator());
            assert!(!r.state_words().is_empty());
        }
        let t = op.transistors().count();
        let fe = op.fets().count();
        let di = op.diodes().count();
        assert_eq!(t + fe + di, op.devices.len());
        kinds_seen[0] += t;
        kinds_seen[1] += fe;
        kinds_seen[2] += di;
        let firsts: Vec<usize> = op.transistors().map(|t| t.element).collect();
        let mut sorted = firsts.clone();
        sorted.sort();
        assert_eq!(firsts, sorted);
    }
    assert!(
        kinds_seen.iter().all(|&n| n > 0),
        "the demos cover every kind: {kinds_seen:?}"
    );
}
