use super::*;
use crate::netlist;

fn doc() -> Document {
    Document::new("t")
}
fn one(i: Item) -> BTreeSet<Item> {
    [i].into_iter().collect()
}

#[test]
fn designators_are_unique_and_fill_gaps() {
    // common practice (no source): reference designators R1, R2, … are unique on a sheet.
    let mut d = doc();
    let a = place(&mut d, PartKind::Resistor, [0, 0], 0, false);
    let b = place(&mut d, PartKind::Resistor, [4, 0], 0, false);
    let q = place(&mut d, PartKind::Npn, [8, 0], 0, false);
    assert_eq!(d.parts[a].designator, "R1");
    assert_eq!(d.parts[b].designator, "R2");
    assert_eq!(d.parts[q].designator, "Q1");
    assert_ne!(d.parts[a].id, d.parts[b].id);
    delete(&mut d, &one(Item::Part(a)));
    let c = place(&mut d, PartKind::Resistor, [0, 0], 0, false);
    assert_eq!(d.parts[c].designator, "R1");
    let g = place(&mut d, PartKind::Ground, [0, 9], 0, false);
    assert_eq!(d.parts[g].designator, "");
    assert_eq!(next_designator(&d, PartKind::Rail), "VCC");
}

#[test]
fn moving_a_part_keeps_its_wires_attached() {
    // invariant: connectivity is unchanged by a move — every pin keeps its net.
    let mut d = doc();
    let r = place(&mut d, PartKind::Resistor, [0, 0], 0, false);
    let g = place(&mut d, PartKind::Ground, [6, 6], 0, false);
    let pins = pin_positions(&d.parts[r]);
    add_wire(&mut d, &route(pins[1], [6, 6], true)).unwrap();
    let before = netlist::connect(&d);
    assert_eq!(before.part_nets[r][1], before.part_nets[g][0]);
    move_items(&mut d, &one(Item::Part(r)), -3, 5);
    let after = netlist::connect(&d);
    assert_eq!(after.part_nets[r][1], after.part_nets[g][0]);
    let pin_b = pin_positions(&d.parts[r])[1];
    assert!(d.wires[0].points.contains(&pin_b));
    for w in d.wires[0].points.windows(2) {
        assert!(w[0][0] == w[1][0] || w[0][1] == w[1][1], "diagonal {w:?}");
    }
}

#[test]
fn turning_and_mirroring_keep_wires_on_pins() {
    // invariant: after a rotation or mirror, wire ends still sit on the same pins.
    let mut d = doc();
    let q = place(&mut d, PartKind::Npn, [10, 10], 0, false);
    let r = place(&mut d, PartKind::Resistor, [2, 4], 0, false);
    let base = pin_positions(&d.parts[q])[1];
    let rb = pin_positions(&d.parts[r])[1];
    add_wire(&mut d, &route(rb, base, false)).unwrap();
    for mirror in [false, true, false, false] {
        turn(&mut d, q, mirror);
        let nl = netlist::connect(&d);
        assert_eq!(nl.part_nets[q][1], nl.part_nets[r][1]);
    }
    assert_eq!(d.parts[q].rotation, 270);
    assert!(d.parts[q].mirror);
}

#[test]
fn copy_paste_gives_fresh_designators() {
    // common practice (no source): a pasted part never shares a designator with an existing one.
    let mut d = doc();
    let r = place(&mut d, PartKind::Resistor, [5, 5], 0, false);
    set_parameter(&mut d, r, "resistance", "4k7").unwrap();
    let clip = copy(&d, &one(Item::Part(r)));
    assert_eq!(clip.parts[0].position, [0, 0]);
    let pasted = paste(&mut d, &clip, [10, 5]);
    assert_eq!(pasted.len(), 1);
    assert_eq!(d.parts[1].designator, "R2");
    assert_eq!(d.parts[1].position, [10, 5]);
    assert_eq!(d.parts[1].parameter("resistance"), Some(4700.0));
}

#[test]
fn bad_values_leave_the_document_unchanged() {
    // invariant: a refused edit changes nothing.
    let mut d = doc();
    let r = place(&mut d, PartKind::Resistor, [0, 0], 0, false);
    let before = d.clone();
    let e = set_parameter(&mut d, r, "resistance", "4x7").unwrap_err();
    assert!(e.contains("R1"), "{e}");
    assert!(set_parameter(&mut d, r, "resistance", "-5").is_err());
    assert!(set_designator(&mut d, r, "").is_err());
    assert_eq!(d, before);
    let q = place(&mut d, PartKind::Npn, [9, 0], 0, false);
    let e = set_designator(&mut d, q, "R1").unwrap_err();
    assert!(e.contains("already"), "{e}");
}

#[test]
fn routes_are_orthogonal_with_one_bend() {
    // invariant: a drawn wire has only horizontal and vertical segments.
    assert_eq!(route([0, 0], [4, 3], true), vec![[0, 0], [4, 0], [4, 3]]);
    assert_eq!(route([0, 0], [4, 3], false), vec![[0, 0], [0, 3], [4, 3]]);
    assert_eq!(route([0, 0], [4, 0], false), vec![[0, 0], [4, 0]]);
    assert!(route([1, 1], [1, 1], true).is_empty());
    assert_eq!(
        orthogonalise(&[[0, 0], [2, 0], [5, 0], [5, 2]]),
        vec![[0, 0], [5, 0], [5, 2]]
    );
}

#[test]
fn renaming_follows_the_signal_marks() {
    // invariant: the signal path names the same part after a rename.
    let mut d = doc();
    let s = place(&mut d, PartKind::SignalSource, [0, 0], 0, false);
    toggle_signal_mark(&mut d, s, true).unwrap();
    set_designator(&mut d, s, "VIN").unwrap();
    assert_eq!(d.signal.source.as_deref(), Some("VIN"));
    let r = place(&mut d, PartKind::Resistor, [5, 0], 0, false);
    assert!(toggle_signal_mark(&mut d, r, true).is_err());
    toggle_signal_mark(&mut d, r, false).unwrap();
    assert_eq!(d.signal.load.as_deref(), Some("R1"));
    delete(&mut d, &one(Item::Part(r)));
    assert_eq!(d.signal.load, None);
}

#[test]
fn labels_need_a_plain_name() {
    // invariant: a label name that could not be typed back is refused.
    let mut d = doc();
    assert!(add_label(&mut d, "  ", [0, 0]).is_err());
    assert!(add_label(&mut d, "v out", [0, 0]).is_err());
    assert_eq!(add_label(&mut d, "vout", [0, 0]).unwrap(), 0);
}

#[test]
fn a_designed_stage_lands_whole_and_joins_nothing() {
    let mut t =
        crate::design::Targets::new(crate::design::Topology::CommonEmitter, 12.0, 10e3, 20.0);
    t.gain_db = Some(30.0);
    t.input_impedance = Some(20e3);
    t.collector_current = Some(500e-6);
    let d = crate::design::design(&t).expect("designs");
    let stage = &d.snapped.document;
    // invariant: on an empty sheet the stage is placed as designed.
    let mut empty = doc();
    let items = place_design(&mut empty, stage);
    assert_eq!(empty.parts, stage.parts);
    assert_eq!(
        items.len(),
        stage.parts.len() + stage.wires.len() + stage.labels.len()
    );
    assert_eq!(empty.signal, stage.signal);
    // invariant: beside an existing stage it adds exactly its own nets and
    // joins none (labels renamed), and the sheet keeps its own signal path.
    let demo = crate::document::load_file(std::path::Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/common-emitter.json"
    )))
    .unwrap();
    let mut sheet = demo.clone();
    place_design(&mut sheet, stage);
    let nets = |d: &Document| netlist::connect(d).nets.len();
    // Grounds join by design (one ground net); the pasted rail gets a fresh
    // designator and so a net of its own.
    let shared = 1;
    assert_eq!(nets(&sheet), nets(&demo) + nets(stage) - shared);
    assert_eq!(sheet.signal, demo.signal);
    assert!(netlist::check(&sheet, &netlist::connect(&sheet))
        .iter()
        .all(|f| f.severity != netlist::Severity::Error));
}
