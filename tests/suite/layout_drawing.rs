//! Drawing invariants of the layout on the demos, generated chains and
//! random sheets, each stripped to connections and laid out: no two parts
//! overlap, no wire runs through a part or over a pin it does not end on,
//! the nets are the ones given, and the scene places every annotation clear
//! of parts, wires and other annotations. Prints crossings and wire length
//! beside the hand-drawn demos' (`-- --nocapture`).

use crate::layout_round_trip::{demos, pin_nets};
use crate::scene_geometry;
use biasline::document::Document;
use biasline::generate::{amplifier_chain, random_sheet, transistor_chain};
use biasline::layout;
use biasline::netlist;
use biasline::scene::{self, SceneOptions};

fn laid_out(doc: &Document) -> Document {
    layout::lay_out(&layout::to_connections(doc))
}

fn assert_tidy(name: &str, original: &Document, laid: &Document, annotate: bool) {
    // invariant: no overlap, no wire through a part or over a foreign pin.
    let faults = layout::drawing_faults(laid);
    assert!(faults.is_empty(), "{name}: {faults:#?}");
    // invariant: the layout neither joins nor splits a net.
    assert_eq!(pin_nets(laid), pin_nets(original), "{name}");
    let nl = netlist::connect(laid);
    netlist::check_connections(laid, &nl).unwrap();
    if annotate {
        // invariant: annotations clear of parts, wires and each other.
        let ann = scene_geometry::annotations(laid, &nl);
        let s = scene::build(laid, &nl, &ann, &SceneOptions::default());
        scene_geometry::check(name, laid, &nl, &ann, &s);
    }
}

#[test]
fn laid_out_demos_are_tidy_and_measured_beside_the_hand_drawn() {
    for (name, original) in demos() {
        let laid = laid_out(&original);
        assert_tidy(&name, &original, &laid, true);
        println!(
            "{name:22} hand-drawn: {:2} crossings, {:4} units of wire; laid out: {:2} crossings, {:4} units, {} labels",
            layout::crossings(&original),
            layout::wire_length(&original),
            layout::crossings(&laid),
            layout::wire_length(&laid),
            laid.labels.len(),
        );
    }
}

#[test]
fn laid_out_generated_chains_are_tidy() {
    for n in [1, 3, 8] {
        let chain = transistor_chain(n);
        assert_tidy(
            &format!("transistor_chain({n})"),
            &chain,
            &laid_out(&chain),
            true,
        );
        let amp = amplifier_chain(n, Some(47e-6));
        assert_tidy(
            &format!("amplifier_chain({n})"),
            &amp,
            &laid_out(&amp),
            true,
        );
    }
}

#[test]
fn laid_out_random_sheets_are_tidy() {
    for seed in 0..24u64 {
        let parts = 10 + (seed as usize * 7) % 51;
        let doc = random_sheet(seed, parts);
        assert_tidy(
            &format!("random_sheet({seed}, {parts})"),
            &doc,
            &laid_out(&doc),
            true,
        );
    }
}

#[test]
fn tidying_a_laid_out_sheet_gives_the_same_sheet() {
    // invariant: the layout depends on the circuit only, not on where the
    // parts stood: tidying twice changes nothing.
    for (name, original) in demos() {
        let once = layout::tidy(&original);
        let twice = layout::tidy(&once);
        assert_eq!(once.parts, twice.parts, "{name}");
        assert_eq!(once.wires, twice.wires, "{name}");
    }
}

#[test]
fn a_long_tailed_pair_is_drawn_mirror_symmetric() {
    // common practice (no source): a differential pair is drawn as mirror
    // images about the tail, the tail part hanging between the emitters.
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/connections/long-tailed-pair.json"
    );
    let doc = layout::lay_out(&biasline::document::load_file(std::path::Path::new(path)).unwrap());
    assert!(layout::drawing_faults(&doc).is_empty());
    let at = |d: &str| doc.part_by_designator(d).unwrap();
    let (q1, q2) = (at("Q1"), at("Q2"));
    assert_eq!(q1.position[1], q2.position[1], "the pair on one row");
    assert!(!q1.mirror && q2.mirror, "the second transistor mirrored");
    assert_eq!(at("RC1").position[1], at("RC2").position[1]);
    // The tail resistor midway between the two emitter columns.
    let (e1, e2) = (q1.position[0] + 1, q2.position[0] - 1);
    assert_eq!(2 * at("RT").position[0], e1 + e2);
    assert_eq!(layout::crossings(&doc), 0);
}
