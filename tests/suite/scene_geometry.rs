//! Scene geometry checks on every demo (stored layout stripped) and on
//! generated sheets of 10–60 parts: annotations never overlap each other or
//! a symbol body, never cross a wire, and every net and branch is annotated.

use crate::scene_common;
use biasline::document::{self, Document, PartKind};
use biasline::generate::random_sheet;
use biasline::netlist::{self, Netlist};
use biasline::scene::{
    self, Annotations, ItemRef, Layer, LayerSet, Placement, Primitive, Scene, SceneOptions,
};
use std::collections::BTreeMap;

fn demos() -> Vec<(String, Document)> {
    let mut out = Vec::new();
    for entry in std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/projects")).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "json") {
            let mut doc = document::load_file(&path).unwrap();
            doc.layout = Default::default();
            out.push((path.display().to_string(), doc));
        }
    }
    assert!(out.len() >= 2, "the demos are in projects/");
    out
}

/// Annotations from the DC analysis; where a generated sheet does not solve,
/// stand-in values (net index in volts, part index in mA) so the placement
/// is still exercised on every net and branch. The values are geometry input
/// only; nothing here checks them.
pub(crate) fn annotations(doc: &Document, nl: &Netlist) -> Annotations {
    let ann = biasline::results::annotations_for(doc);
    if !ann.net_voltages.is_empty() {
        return ann;
    }
    let mut ann = ann;
    for (i, net) in nl.nets.iter().enumerate() {
        ann.net_voltages
            .insert(net.name.clone(), 0.37 * i as f64 - 2.0);
    }
    for (i, part) in doc.parts.iter().enumerate() {
        if part.designator.is_empty() {
            continue;
        }
        let pins: BTreeMap<String, f64> = part
            .kind
            .pin_names()
            .iter()
            .enumerate()
            .map(|(k, p)| {
                (
                    p.to_string(),
                    (i as f64 + 1.0) * 1e-4 * if k == 0 { 1.0 } else { -1.0 },
                )
            })
            .collect();
        ann.pin_currents.insert(part.designator.clone(), pins);
    }
    ann
}

/// Branches by the netlist: two-terminal parts that pass DC (not
/// capacitors), each transistor terminal, each rail.
fn expected_branches(doc: &Document) -> usize {
    doc.parts
        .iter()
        .filter(|p| !p.designator.is_empty())
        .map(|p| match p.kind {
            PartKind::Ground | PartKind::Capacitor | PartKind::PolarisedCapacitor => 0,
            PartKind::Npn | PartKind::Pnp => 3,
            _ => 1,
        })
        .sum()
}

fn wire_segments(doc: &Document) -> Vec<([f64; 2], [f64; 2])> {
    doc.wires
        .iter()
        .flat_map(|w| {
            w.points.windows(2).map(|s| {
                (
                    [s[0][0] as f64, s[0][1] as f64],
                    [s[1][0] as f64, s[1][1] as f64],
                )
            })
        })
        .collect()
}

pub(crate) fn check(name: &str, doc: &Document, nl: &Netlist, ann: &Annotations, s: &Scene) {
    let placed: Vec<_> = s
        .annotations
        .iter()
        .filter(|a| a.placement != Placement::User)
        .collect();
    // invariant: no two annotation boxes overlap.
    scene_common::assert_annotations_apart(name, s);
    // invariant: no annotation on a symbol body, none across a wire.
    let wires = wire_segments(doc);
    for a in &placed {
        for (item, body) in &s.bodies {
            assert!(
                !a.rect.overlaps(body),
                "{name}: {} lies on the body of {item:?}",
                a.key
            );
        }
        for (p, q) in &wires {
            assert!(
                !a.rect.crosses_segment(*p, *q),
                "{name}: {} crosses the wire {p:?}–{q:?}",
                a.key
            );
        }
    }
    // invariant: one voltage tag per net (ground is the reference, drawn as its symbol).
    for (id, net) in nl.nets.iter().enumerate() {
        if Some(id) == nl.ground || !ann.net_voltages.contains_key(&net.name) {
            continue;
        }
        let n = s
            .annotations
            .iter()
            .filter(|a| a.layer == Layer::Voltages && a.item == ItemRef::Net(net.name.clone()))
            .count();
        assert_eq!(n, 1, "{name}: net {} has {n} voltage tags", net.name);
    }
    let tags = s
        .annotations
        .iter()
        .filter(|a| a.layer == Layer::Voltages)
        .count();
    let nets = nl
        .nets
        .iter()
        .enumerate()
        .filter(|(id, n)| Some(*id) != nl.ground && ann.net_voltages.contains_key(&n.name))
        .count();
    assert_eq!(tags, nets, "{name}: voltage tags against nets");
    // invariant: one current marker per branch, counted against the parts on the sheet.
    let markers = s
        .annotations
        .iter()
        .filter(|a| a.layer == Layer::Currents)
        .count();
    assert_eq!(
        markers,
        expected_branches(doc),
        "{name}: current markers against branches"
    );
    // invariant: a leader's far end is the point it describes; a tag beside its net touches it.
    for a in &s.annotations {
        if a.placement == Placement::Beside && a.layer == Layer::Voltages {
            assert!(
                a.rect.distance_to(a.anchor) < 0.6,
                "{name}: {} sits {:.2} from its wire",
                a.key,
                a.rect.distance_to(a.anchor)
            );
        }
    }
}

#[test]
fn demos_with_layout_stripped_are_annotated_without_overlaps() {
    for (name, doc) in demos() {
        let nl = netlist::connect(&doc);
        let ann = annotations(&doc, &nl);
        let s = scene::build(&doc, &nl, &ann, &SceneOptions::default());
        check(&name, &doc, &nl, &ann, &s);
    }
}

#[test]
fn generated_sheets_of_10_to_60_parts_are_annotated_without_overlaps() {
    for seed in 0..24u64 {
        let parts = 10 + (seed as usize * 7) % 51;
        let doc = random_sheet(seed, parts);
        let nl = netlist::connect(&doc);
        let ann = annotations(&doc, &nl);
        let s = scene::build(&doc, &nl, &ann, &SceneOptions::default());
        check(
            &format!("random_sheet({seed}, {parts})"),
            &doc,
            &nl,
            &ann,
            &s,
        );
    }
}

#[test]
fn a_long_generated_chain_is_annotated_without_overlaps() {
    // 300 DC-coupled stages (1,055 parts): the dense sheet the placement's
    // plans and repair passes are measured on (benches/scene.rs), checked
    // for the same invariants as the small sheets.
    let doc = biasline::generate::transistor_chain(300);
    let nl = netlist::connect(&doc);
    let ann = annotations(&doc, &nl);
    let s = scene::build(&doc, &nl, &ann, &SceneOptions::default());
    assert!(s.annotations.len() > 2 * doc.parts.len() / 3);
    check("transistor_chain(300)", &doc, &nl, &ann, &s);
}

#[test]
fn a_dragged_position_wins() {
    // invariant: a stored "<layer>/<item>" position (grid units, top-left) is used as given.
    let (_, mut doc) = demos()
        .into_iter()
        .find(|(n, _)| n.ends_with("common-emitter.json"))
        .unwrap();
    doc.layout
        .annotations
        .insert("voltages/vout".into(), [33.0, 4.0]);
    let nl = netlist::connect(&doc);
    let ann = annotations(&doc, &nl);
    let s = scene::build(&doc, &nl, &ann, &SceneOptions::default());
    let tag = s
        .annotations
        .iter()
        .find(|a| a.key == "voltages/vout")
        .unwrap();
    assert_eq!(tag.placement, Placement::User);
    assert_eq!(tag.rect.min, [33.0, 4.0]);
    // The others keep clear of it.
    for a in s.annotations.iter().filter(|a| a.key != tag.key) {
        assert!(
            !a.rect.overlaps(&tag.rect),
            "{} overlaps the dragged tag",
            a.key
        );
    }
    // Placing afresh ignores it.
    let fresh = scene::build(
        &doc,
        &nl,
        &ann,
        &SceneOptions {
            use_stored_layout: false,
            ..SceneOptions::default()
        },
    );
    let tag = fresh
        .annotations
        .iter()
        .find(|a| a.key == "voltages/vout")
        .unwrap();
    assert_ne!(tag.placement, Placement::User);
}

#[test]
fn hit_finds_annotations_parts_and_wires() {
    let (_, doc) = demos()
        .into_iter()
        .find(|(n, _)| n.ends_with("common-emitter.json"))
        .unwrap();
    let nl = netlist::connect(&doc);
    let ann = annotations(&doc, &nl);
    let s = scene::build(&doc, &nl, &ann, &SceneOptions::default());
    // invariant: the centre of an annotation's box hits that annotation.
    for a in &s.annotations {
        assert_eq!(s.hit(a.rect.center()), Some(a.item.clone()), "{}", a.key);
    }
    // invariant: a part's body centre hits the part, unless an annotation is on top.
    let q1 = doc.parts.iter().position(|p| p.designator == "Q1").unwrap();
    let (_, body) = s
        .bodies
        .iter()
        .find(|(i, _)| matches!(i, ItemRef::Part { index, .. } if *index == q1))
        .unwrap();
    assert!(matches!(s.hit(body.center()), Some(ItemRef::Part { index, .. }) if index == q1));
    // invariant: a point on a wire, away from parts, hits its net.
    let w = &doc.wires[0];
    let mid = [
        (w.points[0][0] + w.points[1][0]) as f64 / 2.0,
        (w.points[0][1] + w.points[1][1]) as f64 / 2.0,
    ];
    let only_schematic = LayerSet::NONE.with(Layer::Schematic);
    assert!(matches!(
        s.hit_in(mid, only_schematic),
        Some(ItemRef::Net(_))
    ));
    // invariant: far outside the drawing nothing is hit.
    assert_eq!(s.hit([-500.0, -500.0]), None);
}

#[test]
fn layers_filter_what_is_drawn() {
    let (_, doc) = demos()
        .into_iter()
        .find(|(n, _)| n.ends_with("two-stage-preamp.json"))
        .unwrap();
    let nl = netlist::connect(&doc);
    let ann = annotations(&doc, &nl);
    let only = LayerSet::parse("schematic").unwrap();
    let s = scene::build(
        &doc,
        &nl,
        &ann,
        &SceneOptions {
            layers: only,
            ..SceneOptions::default()
        },
    );
    // invariant: only the asked-for layers (and the title block) are in the scene.
    assert!(s
        .elements
        .iter()
        .all(|e| e.layer == Layer::Schematic || e.layer == Layer::Title));
    assert!(s.annotations.iter().all(|a| a.layer == Layer::Title));
    // common practice (no source): every part with a designator shows it on the drawing.
    for p in doc
        .parts
        .iter()
        .filter(|p| !p.designator.is_empty() && p.kind != PartKind::Ground)
    {
        let shown = s
            .texts()
            .any(|t| t.text == p.designator || t.text.starts_with(&format!("{} ", p.designator)));
        assert!(shown, "{} is not labelled", p.designator);
    }
    assert!(s
        .elements
        .iter()
        .any(|e| matches!(e.primitive, Primitive::Path(_))));
    assert!(LayerSet::parse("schematic,volts").is_err());
}

#[test]
fn the_same_input_gives_the_same_scene() {
    // invariant: building is deterministic (no hash-order or time dependence).
    let doc = random_sheet(7, 40);
    let nl = netlist::connect(&doc);
    let ann = annotations(&doc, &nl);
    let a = scene::build(&doc, &nl, &ann, &SceneOptions::default());
    let b = scene::build(&doc, &nl, &ann, &SceneOptions::default());
    assert_eq!(a, b);
}

/// A stage card with every kind of element and all three model forms. The
/// numbers are layout input only (nothing here checks their physics).
fn sample_card(transistor: &str, configuration: &str) -> scene::StageCard {
    use biasline::units::Unit;
    use scene::{
        EquivalentElement, EquivalentRole, ModelFigures, ModelKind, Quantity, StageFigure,
    };
    let q = Quantity::new;
    let el = |name: &str, value: f64, role| EquivalentElement {
        name: name.into(),
        value,
        unit: Unit::Ohm,
        from_parts: vec![name.into()],
        role,
    };
    let fig = |name: &str, unit, exact: f64, est: f64| StageFigure {
        name: name.into(),
        unit,
        exact,
        estimate: Some(est),
    };
    scene::StageCard {
        transistor: transistor.into(),
        configuration: configuration.into(),
        elements: vec![
            el("RS", 1e3, EquivalentRole::InputSeries),
            el("RB", 8.2e3, EquivalentRole::InputShunt),
            el("RE1", 220.0, EquivalentRole::Emitter),
            el("RC", 4.7e3, EquivalentRole::OutputShunt),
            el("RL", 10e3, EquivalentRole::Load),
        ],
        models: vec![
            ModelFigures {
                kind: ModelKind::T,
                values: vec![
                    q("re", 26.0, Unit::Ohm),
                    q("α", 0.99, Unit::None),
                    q("ro", 1e5, Unit::Ohm),
                ],
            },
            ModelFigures {
                kind: ModelKind::H,
                values: vec![
                    q("hie", 2.6e3, Unit::Ohm),
                    q("hfe", 100.0, Unit::None),
                    q("hoe", 1e-5, Unit::Siemens),
                    q("hre", 1e-4, Unit::None),
                ],
            },
            ModelFigures {
                kind: ModelKind::HybridPi,
                values: vec![
                    q("rπ", 2.6e3, Unit::Ohm),
                    q("gm", 0.0385, Unit::Siemens),
                    q("ro", 1e5, Unit::Ohm),
                ],
            },
        ],
        figures: vec![
            fig("Zin", Unit::Ohm, 2.0e3, 2.1e3),
            fig("Zout", Unit::Ohm, 4.5e3, 4.7e3),
            fig("Av", Unit::None, -15.0, -16.0),
            fig("Ai", Unit::None, 20.0, 21.0),
        ],
        warnings: vec![
            "a warning long enough to need wrapping onto a second line of the card".into(),
        ],
    }
}

#[test]
fn stage_cards_keep_their_drawing_inside_and_their_text_apart() {
    let (_, doc) = demos()
        .into_iter()
        .find(|(n, _)| n.ends_with("common-emitter.json"))
        .unwrap();
    let nl = netlist::connect(&doc);
    for configuration in [
        "common emitter, degenerated",
        "common collector (emitter follower)",
        "common base",
    ] {
        for model in [
            scene::ModelKind::T,
            scene::ModelKind::H,
            scene::ModelKind::HybridPi,
        ] {
            let mut ann = annotations(&doc, &nl);
            ann.stages = vec![sample_card("Q1", configuration)];
            let s = scene::build(
                &doc,
                &nl,
                &ann,
                &SceneOptions {
                    model,
                    ..SceneOptions::default()
                },
            );
            check(configuration, &doc, &nl, &ann, &s);
            let card = s
                .annotations
                .iter()
                .find(|a| a.layer == Layer::Stages)
                .expect("a card");
            let texts: Vec<_> = s
                .elements
                .iter()
                .filter(|e| e.layer == Layer::Stages)
                .filter_map(|e| match &e.primitive {
                    Primitive::Text(t) => Some(t.bounds()),
                    _ => None,
                })
                .collect();
            // invariant: everything on the card lies inside its frame.
            for t in &texts {
                assert!(
                    t.min[0] >= card.rect.min[0] - 1e-6
                        && t.max[0] <= card.rect.max[0] + 1e-6
                        && t.min[1] >= card.rect.min[1] - 1e-6
                        && t.max[1] <= card.rect.max[1] + 1e-6,
                    "{configuration} {model:?}: text {t:?} outside the card {:?}",
                    card.rect
                );
            }
            // invariant: no two texts on a card overlap (a little kerning slack).
            for (i, a) in texts.iter().enumerate() {
                for b in &texts[i + 1..] {
                    assert!(
                        a.inflate(-0.06).overlap_area(&b.inflate(-0.06)) == 0.0,
                        "{configuration} {model:?}: card texts overlap {a:?} {b:?}"
                    );
                }
            }
            // common practice (no source): every element's value is printed on the card.
            for e in &ann.stages[0].elements {
                let v = biasline::units::format(e.value, e.unit);
                assert!(
                    s.texts().any(|t| t.text.contains(&v)),
                    "{configuration}: {} {v}",
                    e.name
                );
            }
        }
    }
}
