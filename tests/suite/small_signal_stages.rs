//! Stage recognition from the topology alone, on files without overrides.

use crate::ss_common;
use biasline::analysis::stages::{recognise, Chain, Configuration, Emitter};
use biasline::document::StageOverride;
use biasline::netlist;
use ss_common::load;

fn chain(path: &str) -> Chain {
    let doc = load(path);
    assert!(
        doc.stages.is_empty(),
        "{path} must carry no stage overrides"
    );
    recognise(&doc, &netlist::connect(&doc))
}

#[test]
fn common_base_fixture() {
    // common practice (no source): base bypassed to ground, signal into the emitter, out of the collector
    let c = chain("tests/fixtures/ss_common_base.json");
    assert_eq!(c.stages.len(), 1);
    let s = &c.stages[0];
    assert_eq!(s.configuration, Configuration::CommonBase);
    assert_eq!(
        (s.input_net.as_str(), s.output_net.as_str()),
        ("emitter", "collector")
    );
    assert_eq!(s.input_cut_parts, vec!["C1"]);
    assert_eq!(s.output_cut_parts, vec!["C2"]);
    assert_eq!(s.ac.emitter.as_ref().unwrap().label, "RE");
    assert!(s.ac.base.is_none());
}

#[test]
fn follower_fixture() {
    // common practice (no source): collector on the supply, output from the emitter
    let c = chain("tests/fixtures/ss_follower.json");
    let s = &c.stages[0];
    assert_eq!(s.configuration, Configuration::CommonCollector);
    assert_eq!(s.output_net, "emitter");
    assert_eq!(s.ac.output.as_ref().unwrap().label, "RE");
    assert_eq!(s.ac.base.as_ref().unwrap().label, "R1 ‖ R2");
}

#[test]
fn degenerated_and_partly_bypassed_fixtures() {
    // common practice (no source): an emitter resistor with no capacitor degenerates the stage;
    // one split by a bypassed part is partly bypassed, its unbypassed part the series resistor
    let c = chain("tests/fixtures/ss_degenerated_ce.json");
    assert_eq!(
        c.stages[0].configuration,
        Configuration::CommonEmitter(Emitter::Degenerated)
    );
    assert_eq!(c.stages[0].ac.emitter.as_ref().unwrap().label, "RE");
    let c = chain("tests/fixtures/ss_partly_bypassed_ce.json");
    assert_eq!(
        c.stages[0].configuration,
        Configuration::CommonEmitter(Emitter::PartlyBypassed)
    );
    let e = c.stages[0].ac.emitter.as_ref().unwrap();
    assert_eq!(e.label, "RE1");
    assert_eq!(e.resistance, 220.0);
}

#[test]
fn demos_in_signal_order() {
    // common practice (no source): the preamp is a CE stage into a DC-coupled emitter follower
    let c = chain("projects/common-emitter.json");
    assert_eq!(
        c.stages[0].configuration,
        Configuration::CommonEmitter(Emitter::Bypassed)
    );
    let c = chain("projects/two-stage-preamp.json");
    let names: Vec<&str> = c.stages.iter().map(|s| s.transistor.as_str()).collect();
    assert_eq!(names, ["Q1", "Q2"]);
    assert_eq!(c.stages[1].configuration, Configuration::CommonCollector);
    assert_eq!(c.source.as_ref().unwrap().series, vec!["RS"]);
    assert_eq!(c.load.as_ref().unwrap().designator, "RL");
    // The AC equivalent names where each lump came from.
    let s = &c.stages[0];
    assert_eq!(s.ac.base.as_ref().unwrap().parts, vec!["R1", "R2"]);
    assert_eq!(s.ac.loaded_by.as_deref(), Some("Q2"));
}

#[test]
fn no_source_or_load_says_why() {
    // common practice (no source): figures needing a source or load are unavailable, with the reason
    let c = chain("projects/current-mirror.json");
    assert!(c.stages.is_empty());
    assert!(c.notes.iter().any(|n| n.contains("signal source")));
    assert!(c.notes.iter().any(|n| n.contains("load")));
}

#[test]
fn overrides_win() {
    // common practice (no source): a designer's explicit reading of a stage beats recognition
    let mut doc = load("tests/fixtures/ss_follower.json");
    doc.stages.push(StageOverride {
        transistor: "Q1".into(),
        configuration: "common_emitter".into(),
        input: None,
        output: Some("emitter".into()),
    });
    let c = recognise(&doc, &netlist::connect(&doc));
    assert!(c.stages[0].overridden);
    assert!(matches!(
        c.stages[0].configuration,
        Configuration::CommonEmitter(_)
    ));
    assert_eq!(c.stages[0].output_net, "emitter");
}

use crate::common;

fn netlabel_doc(parts: &[common::P<'_>]) -> biasline::document::Document {
    let mut doc = common::document(parts);
    doc.signal.source = Some("VS".into());
    doc.signal.load = Some("RL".into());
    doc
}

#[test]
fn cascode_is_named_and_still_gets_figures() {
    // common practice (no source): a CE stage whose collector feeds the emitter of a
    // grounded-base transistor is a cascode
    use biasline::document::PartKind::*;
    use biasline::presets::keys::*;
    use common::{p, with_preset};
    let doc = netlabel_doc(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, 12.0)]),
        p("VS", SignalSource, &["s", "0"], &[(AMPLITUDE, 0.01)]),
        p(
            "RS",
            Resistor,
            &["s", "in"],
            &[(RESISTANCE, 600.0), ("source_resistance_mark", 1.0)],
        ),
        p("C1", Capacitor, &["in", "b1"], &[(CAPACITANCE, 10e-6)]),
        p("R1", Resistor, &["vcc", "b2"], &[(RESISTANCE, 22e3)]),
        p("R2", Resistor, &["b2", "b1"], &[(RESISTANCE, 15e3)]),
        p("R3", Resistor, &["b1", "0"], &[(RESISTANCE, 10e3)]),
        p("CB", Capacitor, &["b2", "0"], &[(CAPACITANCE, 10e-6)]),
        with_preset(p("Q1", Npn, &["mid", "b1", "e1"], &[]), "small-signal-npn"),
        p("RE", Resistor, &["e1", "0"], &[(RESISTANCE, 1500.0)]),
        p("CE", Capacitor, &["e1", "0"], &[(CAPACITANCE, 100e-6)]),
        with_preset(p("Q2", Npn, &["c2", "b2", "mid"], &[]), "small-signal-npn"),
        p("RC", Resistor, &["vcc", "c2"], &[(RESISTANCE, 3300.0)]),
        p("C2", Capacitor, &["c2", "out"], &[(CAPACITANCE, 10e-6)]),
        p("RL", Resistor, &["out", "0"], &[(RESISTANCE, 10e3)]),
    ]);
    let c = recognise(&doc, &netlist::connect(&doc));
    let names: Vec<&str> = c.stages.iter().map(|s| s.transistor.as_str()).collect();
    assert_eq!(names, ["Q1", "Q2"]);
    assert_eq!(c.stages[1].configuration, Configuration::CommonBase);
    assert!(c.stages[0].notes.iter().any(|n| n.contains("cascode")));
    let a = ss_common::analyse(&doc);
    assert!(a.midband.stages[1].input_impedance.exact.unwrap() > 0.0);
    assert!(a.midband.chain.source_gain.unwrap() < -10.0);
}

#[test]
fn differential_pair_is_named() {
    // common practice (no source): two transistors with emitters joined off AC ground form a differential pair
    use biasline::document::PartKind::*;
    use biasline::presets::keys::*;
    use common::{p, with_preset};
    let doc = netlabel_doc(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, 12.0)]),
        p("VEE", Rail, &["vee"], &[(VOLTAGE, -12.0)]),
        p("VS", SignalSource, &["s", "0"], &[(AMPLITUDE, 0.001)]),
        p(
            "RS",
            Resistor,
            &["s", "b1"],
            &[(RESISTANCE, 1000.0), ("source_resistance_mark", 1.0)],
        ),
        p("RB1", Resistor, &["b1", "0"], &[(RESISTANCE, 47e3)]),
        with_preset(
            p("Q1", Npn, &["vcc", "b1", "tail"], &[]),
            "small-signal-npn",
        ),
        with_preset(p("Q2", Npn, &["c2", "0", "tail"], &[]), "small-signal-npn"),
        p("RT", Resistor, &["tail", "vee"], &[(RESISTANCE, 11e3)]),
        p("RC", Resistor, &["vcc", "c2"], &[(RESISTANCE, 10e3)]),
        p("C2", Capacitor, &["c2", "out"], &[(CAPACITANCE, 10e-6)]),
        p("RL", Resistor, &["out", "0"], &[(RESISTANCE, 100e3)]),
    ]);
    let c = recognise(&doc, &netlist::connect(&doc));
    assert_eq!(c.stages.len(), 2);
    assert!(c
        .stages
        .iter()
        .all(|s| s.notes.iter().any(|n| n.contains("differential pair"))));
    let a = ss_common::analyse(&doc);
    // source: Sedra & Smith, Microelectronic Circuits, differential pair — single-ended gain ≈ gm·RC'/2
    let gm = a.small_signal.transistors[1].models.hybrid_pi.gm;
    let rc = ss_common::par(10e3, 100e3);
    let av = a.midband.chain.voltage_gain.unwrap();
    assert!(
        ss_common::rel(av, gm * rc / 2.0) < 0.1,
        "{av} vs {}",
        gm * rc / 2.0
    );
}
