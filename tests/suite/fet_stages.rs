//! Field-effect transistor stages: recognition, the exact midband figures
//! against the textbook formulas written out here with ro and loading, the
//! T-model error stated in closed form, the square-law gm identities at the
//! stage's own model, and the two FET demos.
//!
//! Formulas: Sedra and Smith, "Microelectronic Circuits", the MOSFET
//! amplifier chapter (T model, basic configurations); B. Razavi, "Design of
//! Analog CMOS Integrated Circuits", ch. 3 (common source with source
//! degeneration and ro, source follower, common gate with ro).

use crate::common::{document, p};
use crate::ss_common::{analyse, analyse_file, load, par, rel, stage};
use biasline::analysis::dc::FetRegion;
use biasline::analysis::devices::fet::keys as fk;
use biasline::analysis::small_signal::{Analysis, FetSmallSignal};
use biasline::analysis::stages::{Configuration, Emitter, Family};
use biasline::document::{Document, PartKind};
use biasline::presets::keys as k;

/// Gate junction and body diode leakage far below the test's tolerances.
const QUIET: [(&str, f64); 2] = [
    (fk::GATE_SATURATION_CURRENT, 1e-22),
    (fk::BODY_DIODE_SATURATION_CURRENT, 1e-22),
];

fn with_signal(mut doc: Document) -> Document {
    doc.signal.source = Some("VS".into());
    doc.signal.load = Some("RL".into());
    doc
}

fn fet<'a>(a: &'a Analysis, d: &str) -> &'a FetSmallSignal {
    a.small_signal
        .fets
        .iter()
        .find(|f| f.designator == d)
        .unwrap_or_else(|| panic!("FET {d}"))
}

const MOS: [(&str, f64); 7] = [
    (fk::GATE_SOURCE_CAPACITANCE, 10e-12),
    (fk::GATE_DRAIN_CAPACITANCE, 2e-12),
    (fk::THRESHOLD_VOLTAGE, 2.0),
    (fk::TRANSCONDUCTANCE_PARAMETER, 0.02),
    (fk::CHANNEL_LENGTH_MODULATION, 0.02),
    QUIET[0],
    QUIET[1],
];

const RS_SIG: [(&str, f64); 2] = [(k::RESISTANCE, 1e3), (k::SOURCE_RESISTANCE_MARK, 1.0)];
const CBIG: [(&str, f64); 1] = [(k::CAPACITANCE, 1e-3)];

/// Divider-biased N-MOSFET common source, RS unbypassed (degenerated).
fn cs_degenerated() -> Document {
    common_source(false)
}

/// The same stage, RS bypassed by CS when `bypass`.
fn common_source(bypass: bool) -> Document {
    let mut parts = vec![
        p("VDD", PartKind::Rail, &["vdd"], &[(k::VOLTAGE, 15.0)]),
        p(
            "VS",
            PartKind::SignalSource,
            &["sig", "0"],
            &[(k::AMPLITUDE, 1e-3)],
        ),
        p("RSIG", PartKind::Resistor, &["sig", "a"], &RS_SIG),
        p("C1", PartKind::Capacitor, &["a", "g"], &CBIG),
        p(
            "R1",
            PartKind::Resistor,
            &["vdd", "g"],
            &[(k::RESISTANCE, 1e6)],
        ),
        p(
            "R2",
            PartKind::Resistor,
            &["g", "0"],
            &[(k::RESISTANCE, 470e3)],
        ),
        p(
            "RD",
            PartKind::Resistor,
            &["vdd", "d"],
            &[(k::RESISTANCE, 1.5e3)],
        ),
        p("Q1", PartKind::NMosfet, &["d", "g", "s"], &MOS),
        p(
            "RS",
            PartKind::Resistor,
            &["s", "0"],
            &[(k::RESISTANCE, 470.0)],
        ),
        p("C2", PartKind::Capacitor, &["d", "out"], &CBIG),
        p(
            "RL",
            PartKind::Resistor,
            &["out", "0"],
            &[(k::RESISTANCE, 10e3)],
        ),
    ];
    if bypass {
        parts.push(p("CS", PartKind::Capacitor, &["s", "0"], &CBIG));
    }
    with_signal(document(&parts))
}

#[test]
fn mosfet_gm_is_two_id_over_the_overdrive() {
    // source: Shichman–Hodges square law, gm = ∂ID/∂VGS = 2·ID/(VGS − VTO) in
    // saturation (the (1 + λ·VDS) factor cancels in the ratio); Sedra and Smith, MOSFET chapter
    let a = analyse(&cs_degenerated());
    let q = fet(&a, "Q1");
    assert_eq!(q.region, FetRegion::Saturation);
    let gm = 2.0 * q.drain_current / (q.vgs - 2.0);
    assert!(rel(q.gm, gm) < 1e-9, "gm {} vs {gm}", q.gm);
    // source: the same law, ro = 1/gds = (1 + λ·VDS)/(λ·ID)
    let ro = (1.0 + 0.02 * q.vds) / (0.02 * q.drain_current);
    assert!(rel(q.ro(), ro) < 1e-9, "ro {} vs {ro}", q.ro());
}

#[test]
fn degenerated_common_source_against_the_formula_with_ro() {
    let a = analyse(&cs_degenerated());
    let s = stage(&a, "Q1");
    assert_eq!(s.family, Family::FieldEffect);
    assert_eq!(
        s.configuration,
        Configuration::CommonEmitter(Emitter::Degenerated)
    );
    assert_eq!(s.configuration_words, "common source, degenerated");
    assert!(s.meaningful);
    let q = fet(&a, "Q1");
    let (gm, ro) = (q.gm, q.ro());
    let (rd, rs, rl, rg) = (1.5e3, 470.0, 10e3, par(1e6, 470e3));
    let rlp = par(rd, rl);
    // source: Razavi ch. 3, degenerated CS with ro: Av = −gm·ro·R'L/(R'L + ro + (1 + gm·ro)·RS)
    let av = -gm * ro * rlp / (rlp + ro + (1.0 + gm * ro) * rs);
    // source: Razavi ch. 3, resistance into the drain ro + (1 + gm·ro)·RS, in parallel with RD
    let zout = par(rd, ro + (1.0 + gm * ro) * rs);
    let exact_av = s.voltage_gain.exact.unwrap();
    assert!(rel(exact_av, av) < 1e-6, "Av {exact_av} vs {av}");
    assert!(rel(s.output_impedance.exact.unwrap(), zout) < 1e-6);
    // source: the insulated gate draws no current: Zin = R1 ‖ R2
    assert!(rel(s.input_impedance.exact.unwrap(), rg) < 1e-6);
    // the hybrid-π estimate is this formula: equal to 1e-6
    assert!(rel(s.voltage_gain.h_model.unwrap(), exact_av) < 1e-6);
    assert!(rel(s.output_impedance.h_model.unwrap(), zout) < 1e-6);
    // source: Sedra and Smith, T model (ro neglected): Av = −gm·(RD‖RL)/(1 + gm·RS)
    let t = s.voltage_gain.re_model.unwrap();
    assert!(rel(t, -gm * rlp / (1.0 + gm * rs)) < 1e-12);
    // invariant: dividing the two forms, T/exact − 1 = (R'L + RS)/(ro·(1 + gm·RS)) exactly
    let stated = (rlp + rs) / (ro * (1.0 + gm * rs));
    let err = s.voltage_gain.re_difference_percent.unwrap() / 100.0;
    assert!((err - stated).abs() < 1e-6, "{err} vs {stated}");
    assert!(err > 0.005, "the T model's error here is visible: {err}");
    // Ai = Av·Zin/RL: the load current over the input current
    let ai = exact_av * rg / rl;
    assert!(rel(s.current_gain.exact.unwrap(), ai) < 1e-6);
}

#[test]
fn bypassed_common_source_has_gain_gm_times_ro_rd_rl() {
    // source: Sedra and Smith, CS amplifier: Av = −gm·(ro ‖ RD ‖ RL) with the source on AC ground
    let doc = common_source(true);
    let a = analyse(&doc);
    let s = stage(&a, "Q1");
    assert_eq!(
        s.configuration,
        Configuration::CommonEmitter(Emitter::Bypassed)
    );
    let q = fet(&a, "Q1");
    let av = -q.gm * par(q.ro(), par(1.5e3, 10e3));
    assert!(rel(s.voltage_gain.exact.unwrap(), av) < 1e-6);
    // source: Sedra and Smith, Miller: Cin = Cgs + Cgd·(1 + gm·R'L)
    let m = s.miller.as_ref().expect("Miller estimate");
    let rlp = par(q.ro(), par(1.5e3, 10e3));
    assert!(rel(m.input_capacitance, q.cgs + q.cgd * (1.0 + q.gm * rlp)) < 1e-12);
    // Swing: toward the triode edge the drain can fall by the triode margin,
    // toward cut-off by ID·R'ac (common practice, no source).
    let w = s.swing.as_ref().unwrap();
    assert!(rel(w.toward_saturation, q.triode_margin) < 1e-12);
    assert!(rel(w.toward_cut_off, q.drain_current * par(1.5e3, 10e3)) < 1e-12);
}

const JFET: [(&str, f64); 5] = [
    (fk::THRESHOLD_VOLTAGE, -2.0),
    (fk::ZERO_GATE_DRAIN_CURRENT, 8e-3),
    (fk::CHANNEL_LENGTH_MODULATION, 0.01),
    QUIET[0],
    QUIET[1],
];

/// N-JFET source follower, self-biased by RS, gate to ground through RG.
fn jfet_follower() -> Document {
    with_signal(document(&[
        p("VDD", PartKind::Rail, &["vdd"], &[(k::VOLTAGE, 12.0)]),
        p(
            "VS",
            PartKind::SignalSource,
            &["sig", "0"],
            &[(k::AMPLITUDE, 1e-3)],
        ),
        p(
            "RSIG",
            PartKind::Resistor,
            &["sig", "a"],
            &[(k::RESISTANCE, 100e3)],
        ),
        p("C1", PartKind::Capacitor, &["a", "g"], &CBIG),
        p(
            "RG",
            PartKind::Resistor,
            &["g", "0"],
            &[(k::RESISTANCE, 2.2e6)],
        ),
        p("Q1", PartKind::NJfet, &["vdd", "g", "s"], &JFET),
        p(
            "RS",
            PartKind::Resistor,
            &["s", "0"],
            &[(k::RESISTANCE, 1.5e3)],
        ),
        p("C2", PartKind::Capacitor, &["s", "out"], &CBIG),
        p(
            "RL",
            PartKind::Resistor,
            &["out", "0"],
            &[(k::RESISTANCE, 4.7e3)],
        ),
    ]))
}

#[test]
fn jfet_gm_is_gm0_times_the_root_of_id_over_idss() {
    // source: Shockley's square law, gm = gm0·√(ID/IDSS), gm0 = 2·IDSS/|VP|, both
    // taken at the operating VDS (IDSS·(1 + λ·VDS)); Sedra and Smith, JFET section
    let a = analyse(&jfet_follower());
    let q = fet(&a, "Q1");
    assert_eq!(q.region, FetRegion::Saturation);
    let idss = 8e-3 * (1.0 + 0.01 * q.vds);
    let gm0 = 2.0 * idss / 2.0;
    let gm = gm0 * (q.drain_current / idss).sqrt();
    assert!(rel(q.gm, gm) < 1e-9, "gm {} vs {gm}", q.gm);
    // invariant: the same square law gives gm = 2·ID/(VGS − VP)
    assert!(rel(q.gm, 2.0 * q.drain_current / q.overdrive()) < 1e-9);
}

#[test]
fn source_follower_against_the_formula_with_ro() {
    let a = analyse(&jfet_follower());
    let s = stage(&a, "Q1");
    assert_eq!(s.configuration, Configuration::CommonCollector);
    assert_eq!(s.configuration_words, "common drain (source follower)");
    let q = fet(&a, "Q1");
    let (gm, ro) = (q.gm, q.ro());
    let (rs, rl) = (1.5e3, 4.7e3);
    // source: Razavi ch. 3, source follower: Av = gm·R''/(1 + gm·R''), R'' = RS ‖ RL ‖ ro
    let r2 = par(par(rs, rl), ro);
    let av = gm * r2 / (1.0 + gm * r2);
    assert!(rel(s.voltage_gain.exact.unwrap(), av) < 1e-6);
    // source: Razavi ch. 3, Zout = 1/gm ‖ ro ‖ RS
    let zout = par(par(1.0 / gm, ro), rs);
    assert!(rel(s.output_impedance.exact.unwrap(), zout) < 1e-6);
    assert!(rel(s.input_impedance.exact.unwrap(), 2.2e6) < 1e-6);
    assert!(rel(s.voltage_gain.h_model.unwrap(), av) < 1e-6);
    assert!(rel(s.output_impedance.h_model.unwrap(), zout) < 1e-6);
    // source: Sedra and Smith, T model: Zout = 1/gm ‖ RS, Av = gm·RS'/(1 + gm·RS')
    let zt = par(1.0 / gm, rs);
    assert!(rel(s.output_impedance.re_model.unwrap(), zt) < 1e-12);
    // invariant: Zout(T)/Zout − 1 = (1/gm ‖ RS)/ro exactly (ro is the only difference)
    let err = s.output_impedance.re_difference_percent.unwrap() / 100.0;
    assert!((err - zt / ro).abs() < 1e-6, "{err} vs {}", zt / ro);
}

/// N-MOSFET common gate: gate held by a bypassed divider, the signal into the source.
fn mos_common_gate() -> Document {
    with_signal(document(&[
        p("VDD", PartKind::Rail, &["vdd"], &[(k::VOLTAGE, 15.0)]),
        p(
            "VS",
            PartKind::SignalSource,
            &["sig", "0"],
            &[(k::AMPLITUDE, 1e-3)],
        ),
        p(
            "RSIG",
            PartKind::Resistor,
            &["sig", "a"],
            &[(k::RESISTANCE, 50.0)],
        ),
        p("C1", PartKind::Capacitor, &["a", "s"], &CBIG),
        p(
            "R1",
            PartKind::Resistor,
            &["vdd", "g"],
            &[(k::RESISTANCE, 1e6)],
        ),
        p(
            "R2",
            PartKind::Resistor,
            &["g", "0"],
            &[(k::RESISTANCE, 470e3)],
        ),
        p("CG", PartKind::Capacitor, &["g", "0"], &CBIG),
        p(
            "RD",
            PartKind::Resistor,
            &["vdd", "d"],
            &[(k::RESISTANCE, 1.5e3)],
        ),
        p("Q1", PartKind::NMosfet, &["d", "g", "s"], &MOS),
        p(
            "RS",
            PartKind::Resistor,
            &["s", "0"],
            &[(k::RESISTANCE, 470.0)],
        ),
        p("C2", PartKind::Capacitor, &["d", "out"], &CBIG),
        p(
            "RL",
            PartKind::Resistor,
            &["out", "0"],
            &[(k::RESISTANCE, 10e3)],
        ),
    ]))
}

#[test]
fn common_gate_against_the_formula_with_ro() {
    let a = analyse(&mos_common_gate());
    let s = stage(&a, "Q1");
    assert_eq!(s.configuration, Configuration::CommonBase);
    assert_eq!(s.configuration_words, "common gate");
    assert!(s.meaningful);
    let q = fet(&a, "Q1");
    let (gm, ro) = (q.gm, q.ro());
    let (rd, rs, rl, rsig) = (1.5e3, 470.0, 10e3, 50.0);
    let rlp = par(rd, rl);
    // source: Razavi ch. 3, common gate with ro: Rin = (ro + R'L)/(1 + gm·ro), Av = (1 + gm·ro)·R'L/(ro + R'L)
    let zin = par(rs, (ro + rlp) / (1.0 + gm * ro));
    let av = (1.0 + gm * ro) * rlp / (ro + rlp);
    // source: Razavi ch. 3, Zout = RD ‖ (ro + (1 + gm·ro)·(Rsig ‖ RS))
    let zout = par(rd, ro + (1.0 + gm * ro) * par(rsig, rs));
    assert!(rel(s.input_impedance.exact.unwrap(), zin) < 1e-6);
    assert!(rel(s.voltage_gain.exact.unwrap(), av) < 1e-6);
    assert!(rel(s.output_impedance.exact.unwrap(), zout) < 1e-6);
    assert!(rel(s.input_impedance.h_model.unwrap(), zin) < 1e-6);
    assert!(rel(s.voltage_gain.h_model.unwrap(), av) < 1e-6);
    assert!(rel(s.output_impedance.h_model.unwrap(), zout) < 1e-6);
    // source: Sedra and Smith, T model: Zin = 1/gm ‖ RS, Av = gm·(RD ‖ RL)
    assert!(rel(s.input_impedance.re_model.unwrap(), par(1.0 / gm, rs)) < 1e-12);
    assert!(rel(s.voltage_gain.re_model.unwrap(), gm * rlp) < 1e-12);
    // invariant: Av(T)/Av − 1 = gm·(ro + R'L)/(1 + gm·ro) − 1 = (gm·R'L − 1)/(1 + gm·ro)
    let err = s.voltage_gain.re_difference_percent.unwrap() / 100.0;
    assert!((err - (gm * rlp - 1.0) / (1.0 + gm * ro)).abs() < 1e-6);
}

#[test]
fn stage_override_names_fet_configurations() {
    // common practice (no source): the user's reading of a stage wins, in FET words
    let mut doc = mos_common_gate();
    doc.stages.push(biasline::document::StageOverride {
        transistor: "Q1".into(),
        configuration: "common_gate".into(),
        input: None,
        output: None,
    });
    let a = analyse(&doc);
    let s = stage(&a, "Q1");
    assert!(s.overridden);
    assert_eq!(s.configuration_words, "common gate");
    doc.stages[0].configuration = "source_follower".into();
    let a = analyse(&doc);
    assert_eq!(
        stage(&a, "Q1").configuration,
        Configuration::CommonCollector
    );
    doc.stages[0].configuration = "common_source".into();
    let a = analyse(&doc);
    assert!(matches!(
        stage(&a, "Q1").configuration,
        Configuration::CommonEmitter(_)
    ));
}

#[test]
fn piezo_demo_is_a_jfet_follower_into_the_bipolar_chain() {
    // common practice (no source): a JFET follower buffers a megohm source for a bipolar gain stage
    let a = analyse_file("projects/piezo-jfet-preamp.json");
    let words: Vec<(&str, &str)> = a
        .midband
        .stages
        .iter()
        .map(|s| (s.transistor.as_str(), s.configuration_words.as_str()))
        .collect();
    assert_eq!(
        words,
        vec![
            ("Q1", "common drain (source follower)"),
            ("Q2", "common emitter, bypassed"),
            ("Q3", "common collector (emitter follower)"),
        ]
    );
    let doc = load("projects/piezo-jfet-preamp.json");
    let rg = crate::ss_common::part_value(&doc, "RG", k::RESISTANCE);
    let c = &a.midband.chain;
    // source: the gate draws no current: Zin is RG (10 MΩ)
    assert!(rel(c.input_impedance.unwrap(), rg) < 1e-6);
    assert!(rel(c.source_resistance.unwrap(), 1e6) < 1e-9);
    // The follower's gain into Q2's Zin, by the formula with ro (Razavi ch. 3).
    let q = fet(&a, "Q1");
    let s1 = stage(&a, "Q1");
    let rsf = crate::ss_common::part_value(&doc, "RSF", k::RESISTANCE);
    let r2 = par(par(rsf, s1.load_resistance.unwrap()), q.ro());
    assert!(
        rel(
            s1.voltage_gain.exact.unwrap(),
            q.gm * r2 / (1.0 + q.gm * r2)
        ) < 1e-6
    );
    // invariant: the chain's gain is the product of the stage gains
    let prod: f64 = a
        .midband
        .stages
        .iter()
        .map(|s| s.voltage_gain.exact.unwrap())
        .product();
    assert!(rel(c.voltage_gain.unwrap(), prod) < 1e-6);
}

#[test]
fn mosfet_demo_is_one_bypassed_common_source() {
    let a = analyse_file("projects/mosfet-gain-stage.json");
    assert_eq!(a.midband.stages.len(), 1);
    let s = stage(&a, "Q1");
    assert_eq!(s.configuration_words, "common source, bypassed");
    let doc = load("projects/mosfet-gain-stage.json");
    let v = |d: &str| crate::ss_common::part_value(&doc, d, k::RESISTANCE);
    let q = fet(&a, "Q1");
    // source: Sedra and Smith, CS amplifier: Av = −gm·(ro ‖ RD ‖ RL), Zin = R1 ‖ R2, Zout = RD ‖ ro
    let av = -q.gm * par(q.ro(), par(v("RD"), v("RL")));
    assert!(rel(s.voltage_gain.exact.unwrap(), av) < 1e-6);
    assert!(rel(s.input_impedance.exact.unwrap(), par(v("R1"), v("R2"))) < 1e-6);
    assert!(rel(s.output_impedance.exact.unwrap(), par(v("RD"), q.ro())) < 1e-6);
    let c = &a.midband.chain;
    assert!(rel(c.input_impedance.unwrap(), par(v("R1"), v("R2"))) < 1e-6);
    assert!(rel(c.output_impedance.unwrap(), par(v("RD"), q.ro())) < 1e-6);
}

#[test]
fn mosfet_common_source_into_a_bipolar_common_base_is_a_cascode() {
    // common practice (no source): a common-source FET driving a common-base bipolar
    // transistor's emitter is the mixed cascode; Sedra and Smith, the cascode amplifier
    let doc = with_signal(document(&[
        p("VDD", PartKind::Rail, &["vdd"], &[(k::VOLTAGE, 15.0)]),
        p(
            "VS",
            PartKind::SignalSource,
            &["sig", "0"],
            &[(k::AMPLITUDE, 1e-3)],
        ),
        p("RSIG", PartKind::Resistor, &["sig", "a"], &RS_SIG),
        p("C1", PartKind::Capacitor, &["a", "g"], &CBIG),
        p(
            "R1",
            PartKind::Resistor,
            &["vdd", "g"],
            &[(k::RESISTANCE, 1e6)],
        ),
        p(
            "R2",
            PartKind::Resistor,
            &["g", "0"],
            &[(k::RESISTANCE, 470e3)],
        ),
        p("Q1", PartKind::NMosfet, &["m", "g", "s"], &MOS),
        p(
            "RS",
            PartKind::Resistor,
            &["s", "0"],
            &[(k::RESISTANCE, 470.0)],
        ),
        p("CS", PartKind::Capacitor, &["s", "0"], &CBIG),
        p("Q2", PartKind::Npn, &["c", "b", "m"], &[]),
        p(
            "R3",
            PartKind::Resistor,
            &["vdd", "b"],
            &[(k::RESISTANCE, 47e3)],
        ),
        p(
            "R4",
            PartKind::Resistor,
            &["b", "0"],
            &[(k::RESISTANCE, 47e3)],
        ),
        p("CB", PartKind::Capacitor, &["b", "0"], &CBIG),
        p(
            "RC",
            PartKind::Resistor,
            &["vdd", "c"],
            &[(k::RESISTANCE, 1e3)],
        ),
        p("C2", PartKind::Capacitor, &["c", "out"], &CBIG),
        p(
            "RL",
            PartKind::Resistor,
            &["out", "0"],
            &[(k::RESISTANCE, 10e3)],
        ),
    ]));
    let a = analyse(&doc);
    let s1 = stage(&a, "Q1");
    let s2 = stage(&a, "Q2");
    assert_eq!(s1.configuration_words, "common source, bypassed");
    assert_eq!(s2.configuration_words, "common base");
    assert!(
        s1.meaningful && s2.meaningful,
        "{:?} {:?}",
        s1.caveats,
        s2.caveats
    );
    assert!(
        s1.notes
            .iter()
            .any(|n| n == "cascode: drives the emitter of Q2 (common base)"),
        "{:?}",
        s1.notes
    );
    assert!(
        s2.notes
            .iter()
            .any(|n| n == "cascode: fed from the drain of Q1"),
        "{:?}",
        s2.notes
    );
    // invariant: the chain's gain is the product of the stage gains
    let prod = s1.voltage_gain.exact.unwrap() * s2.voltage_gain.exact.unwrap();
    assert!(rel(a.midband.chain.voltage_gain.unwrap(), prod) < 1e-6);
    // source: Sedra and Smith, the cascode: Av ≈ −gm·α·(RC ‖ RL) when the FET's ro is
    // far above the common-base input resistance (here within 2 %: ro and rμ of both left out)
    let q = fet(&a, "Q1");
    let est = -q.gm * par(1e3, 10e3);
    assert!(rel(prod, est) < 0.02, "{prod} vs {est}");
}
