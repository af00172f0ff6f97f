//! The two-transistor current mirror read as one block: its current ratio,
//! output resistance and compliance.

use crate::common::{document, p, solved, transistor, with_preset};
use crate::ss_common::analyse;
use biasline::analysis::blocks::{Block, BlockKind};
use biasline::document::PartKind::*;
use biasline::presets::keys as k;

fn mirror(q: &[(&'static str, f64)], preset: bool) -> biasline::document::Document {
    let q1 = p("Q1", Npn, &["ref", "ref", "0"], q);
    let q2 = p("Q2", Npn, &["out", "ref", "0"], q);
    let (q1, q2) = if preset {
        (
            with_preset(q1, "small-signal-npn"),
            with_preset(q2, "small-signal-npn"),
        )
    } else {
        (q1, q2)
    };
    document(&[
        p("VCC", Rail, &["vcc"], &[(k::VOLTAGE, 12.0)]),
        p(
            "RREF",
            Resistor,
            &["vcc", "ref"],
            &[(k::RESISTANCE, 11.3e3)],
        ),
        q1,
        q2,
        p("RL", Resistor, &["vcc", "out"], &[(k::RESISTANCE, 4.7e3)]),
    ])
}

fn block(a: &biasline::analysis::small_signal::Analysis) -> &Block {
    let b: Vec<&Block> = a
        .blocks
        .iter()
        .filter(|b| b.kind == BlockKind::CurrentMirror)
        .collect();
    assert_eq!(b.len(), 1, "{:?}", a.blocks);
    assert_eq!(b[0].transistors, ["Q1", "Q2"]);
    b[0]
}

#[test]
fn the_plain_mirror_ratio_is_one_over_one_plus_two_over_beta() {
    // No Early effect, so the two collector currents are equal and the
    // reference also feeds both bases.
    let doc = mirror(
        &[(k::SATURATION_CURRENT, 1e-14), (k::FORWARD_BETA, 50.0)],
        false,
    );
    let a = analyse(&doc);
    let b = block(&a);
    let r = b.figure("current_ratio").unwrap();
    // source: Sedra and Smith, Microelectronic Circuits, the basic BJT current
    // mirror: IO/IREF = 1/(1 + 2/β).
    let textbook = 1.0 / (1.0 + 2.0 / 50.0);
    assert!(
        (r.exact.unwrap() / textbook - 1.0).abs() < 1e-6,
        "ratio {:?} vs {textbook}",
        r.exact
    );
    assert!(r.difference_percent.unwrap().abs() < 1e-4);
}

#[test]
fn the_mirror_with_early_effect_and_its_output_resistance() {
    let doc = mirror(&[], true);
    let (_, _, op) = solved(&doc);
    let a = analyse(&doc);
    let b = block(&a);
    let (t1, t2) = (transistor(&op, "Q1"), transistor(&op, "Q2"));
    // invariant: same VBE, so IC2/IC1 = (1 + VCB2/VA)/(1 + VCB1/VA) with VCB1 = 0
    // (the Gummel–Poon subset of REFERENCES.md with VB = ∞).
    let va = 100.0;
    let ratio = b.figure("current_ratio").unwrap().exact.unwrap();
    let want = (1.0 + t2.vcb / va) / (1.0 + t1.vcb / va);
    let iref = t1.ic + t1.ib + t2.ib;
    assert!(
        (t2.ic / t1.ic / want - 1.0).abs() < 1e-6 && (ratio / (t2.ic / iref) - 1.0).abs() < 1e-12,
        "ratio {ratio}, IC2/IC1 {}, want {want}",
        t2.ic / t1.ic
    );
    // source: Gray, Hurst, Lewis and Meyer, Analysis and Design of Analog
    // Integrated Circuits, ch. 4: the simple mirror's output resistance is ro2
    // = (VA + VCB2)/IC2 (REFERENCES.md "Small-signal quantities").
    let rout = b.figure("output_resistance").unwrap();
    let ro2 = (va + t2.vcb) / t2.ic;
    assert!(
        (rout.exact.unwrap() / ro2 - 1.0).abs() < 0.01,
        "Rout {:?} vs ro2 {ro2}",
        rout.exact
    );
    assert!(rout.difference_percent.unwrap().abs() < 1.0);
    // invariant: the compliance is the output voltage less the saturation margin.
    let c = b.figure("compliance_voltage").unwrap().exact.unwrap();
    let vout = crate::common::net_v(&doc, &op, "out");
    assert!((vout - c - t2.saturation_margin).abs() < 1e-9);
    assert!(c > 0.0 && c < 1.0, "compliance {c} V");
}

#[test]
fn a_diode_connected_transistor_alone_is_not_a_mirror() {
    // Q2's base is on its own net: no mirror.
    let doc = document(&[
        p("VCC", Rail, &["vcc"], &[(k::VOLTAGE, 12.0)]),
        p(
            "RREF",
            Resistor,
            &["vcc", "ref"],
            &[(k::RESISTANCE, 11.3e3)],
        ),
        with_preset(p("Q1", Npn, &["ref", "ref", "0"], &[]), "small-signal-npn"),
        with_preset(p("Q2", Npn, &["out", "b2", "0"], &[]), "small-signal-npn"),
        p("RB", Resistor, &["ref", "b2"], &[(k::RESISTANCE, 10e3)]),
        p("RL", Resistor, &["vcc", "out"], &[(k::RESISTANCE, 4.7e3)]),
    ]);
    let a = analyse(&doc);
    assert!(a.blocks.is_empty(), "{:?}", a.blocks);
}

#[test]
fn the_mirror_demo_draws_one_block_card_and_no_stage_card_for_it() {
    use biasline::scene::{self, Primitive, SceneOptions};
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/projects/current-mirror.json");
    let doc = biasline::document::load_file(std::path::Path::new(path)).unwrap();
    let nl = biasline::netlist::connect(&doc);
    let ann = biasline::results::annotations_for(&doc);
    assert_eq!(ann.blocks.len(), 1);
    let s = scene::build(&doc, &nl, &ann, &SceneOptions::default());
    let texts: Vec<&str> = s
        .elements
        .iter()
        .filter_map(|e| match &e.primitive {
            Primitive::Text(t) => Some(t.text.as_str()),
            _ => None,
        })
        .collect();
    assert_eq!(
        texts
            .iter()
            .filter(|t| t.starts_with("Block Q1, Q2 · current mirror"))
            .count(),
        1,
        "{texts:?}"
    );
    for label in ["Io/Iref", "Rout", "Vcompl"] {
        assert!(texts.contains(&label), "{label} on the card");
    }
    // invariant: the card is placed apart from every other annotation.
    crate::scene_common::assert_annotations_apart("current-mirror", &s);
}
