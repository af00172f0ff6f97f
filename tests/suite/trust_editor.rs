//! Issue 18, item 17 (the editor as a designer met it): a part placed and
//! not yet wired keeps the rest of the results; leakage-level currents print
//! as ≈ 0 A; the findings list does not say "no findings" above a warning.
//! Each test failed before its fix.

use biasline::document::{self, Document, PartKind};
use biasline::gui::{annotate, edit};
use biasline::netlist;
use biasline::scene::{self, Primitive, SceneOptions};

fn demo(name: &str) -> Document {
    document::load_file(
        &std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("projects")
            .join(name),
    )
    .unwrap()
}

/// The demo with one fresh resistor placed far to the right, not wired.
fn with_loose_resistor(name: &str) -> Document {
    let mut doc = demo(name);
    let mut part = edit::default_part(PartKind::Resistor);
    part.id = edit::next_id(&doc);
    part.designator = edit::next_designator(&doc, PartKind::Resistor);
    part.position = [400, 400];
    doc.parts.push(part);
    doc
}

#[test]
fn an_unwired_part_keeps_the_connected_circuits_results() {
    // invariant: the connected circuit is the same circuit with or without
    // an unconnected part, so its figures are bit-identical; the loose part
    // is named (it was: every result blanked, "fix the errors in the
    // findings first").
    let doc = demo("two-stage-preamp.json");
    let nl = netlist::connect(&doc);
    let before = annotate::analyse(&doc, &nl, false).expect("the demo solves");
    let loose = with_loose_resistor("two-stage-preamp.json");
    let lnl = netlist::connect(&loose);
    assert!(
        netlist::check(&loose, &lnl)
            .iter()
            .any(|f| f.severity == netlist::Severity::Error),
        "the unwired resistor is a rules error"
    );
    let after = annotate::analyse(&loose, &lnl, false).expect("results kept");
    for (k, net) in lnl.nets.iter().enumerate() {
        if let Some(j) = nl.nets.iter().position(|n| n.name == net.name) {
            assert_eq!(
                after.net_voltages[k].to_bits(),
                before.net_voltages[j].to_bits(),
                "{}",
                net.name
            );
        }
    }
    assert_eq!(after.parts.len(), loose.parts.len());
    assert!(after.parts.last().unwrap().pin_currents.is_empty());
    let name = &loose.parts.last().unwrap().designator;
    assert!(
        after.aids[0].contains(name.as_str()) && after.aids[0].contains("not wired"),
        "{:?}",
        after.aids
    );
    assert_eq!(after.annotations.stages, before.annotations.stages);
}

#[test]
fn a_lone_part_on_an_empty_sheet_is_still_nothing_to_analyse() {
    // invariant: with nothing connected there is nothing to keep.
    let mut doc = Document::new("empty");
    let mut part = edit::default_part(PartKind::Resistor);
    part.id = "p1".into();
    part.designator = "R1".into();
    doc.parts.push(part);
    let nl = netlist::connect(&doc);
    assert!(annotate::analyse(&doc, &nl, false).is_err());
}

#[test]
fn leakage_level_currents_print_as_about_zero_on_the_drawing() {
    // invariant: a current at the solver's floor (1e-11 of the largest in the
    // circuit) is drawn as ≈ 0 A, never as a number like 1.13e-16 A.
    let doc = demo("common-emitter.json");
    let nl = netlist::connect(&doc);
    let mut ann = biasline::results::annotations_for(&doc);
    let (designator, pins) = ann
        .pin_currents
        .iter_mut()
        .find(|(d, _)| d.starts_with('R'))
        .expect("a resistor");
    let designator = designator.clone();
    for v in pins.values_mut() {
        *v = v.signum() * 1.13e-16;
    }
    let s = scene::build(&doc, &nl, &ann, &SceneOptions::default());
    let texts: Vec<String> = s
        .elements
        .iter()
        .filter_map(|e| match &e.primitive {
            Primitive::Text(t) => Some(t.text.clone()),
            _ => None,
        })
        .collect();
    assert!(
        !texts.iter().any(|t| t.contains("e-16")),
        "{designator}: {texts:?}"
    );
    assert!(texts.iter().any(|t| t.contains("≈ 0 A")), "{texts:?}");
}

#[cfg(feature = "gui")]
#[test]
fn the_findings_list_does_not_say_no_findings_above_a_warning() {
    // invariant: the first line of the findings list agrees with what
    // follows it (it read "no findings: the rules check is clean" directly
    // above the safety caution of the ±35 V demo).
    let doc = demo("high-voltage-driver.json");
    let app = biasline::gui::app::App::new(doc, None);
    assert!(app.derived.findings.is_empty(), "the rules check is clean");
    let warnings = app.ok_figures().map_or(0, |f| f.warnings.len());
    assert!(warnings > 0, "the demo has the safety caution");
    let line = biasline::gui::panels::clean_rules_line(&app);
    assert!(!line.starts_with("no findings"), "{line}");
    assert!(line.contains("warning"), "{line}");
    let clean = biasline::gui::app::App::new(demo("two-stage-preamp.json"), None);
    assert_eq!(
        biasline::gui::panels::clean_rules_line(&clean),
        "no findings: the rules check is clean"
    );
}
