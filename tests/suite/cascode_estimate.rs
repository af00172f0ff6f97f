//! A cascode's upper (common-base) device has no resistor from its emitter
//! to ground: the common-base estimate must take that shunt as open, so
//! Zin ≈ re and the current gain α·(RC ‖ RL)/RL, not 0 (source: Sedra and Smith, the
//! cascode amplifier; the common-base input resistance re ‖ RE with RE → ∞).

use crate::common::{document, p, with_preset};
use crate::ss_common::{analyse, stage};
use biasline::document::PartKind::*;
use biasline::presets::keys as k;

#[test]
fn the_cascode_common_base_estimate_is_re_not_zero() {
    let mut doc = document(&[
        p("VCC", Rail, &["vcc"], &[(k::VOLTAGE, 15.0)]),
        p("VS", SignalSource, &["src", "0"], &[(k::AMPLITUDE, 1e-3)]),
        p(
            "RS",
            Resistor,
            &["src", "a"],
            &[(k::RESISTANCE, 600.0), (k::SOURCE_RESISTANCE_MARK, 1.0)],
        ),
        p("C1", Capacitor, &["a", "b1"], &[(k::CAPACITANCE, 10e-6)]),
        p("R1", Resistor, &["vcc", "b1"], &[(k::RESISTANCE, 100e3)]),
        p("R2", Resistor, &["b1", "0"], &[(k::RESISTANCE, 15e3)]),
        with_preset(p("Q1", Npn, &["mid", "b1", "e1"], &[]), "small-signal-npn"),
        p("RE", Resistor, &["e1", "0"], &[(k::RESISTANCE, 1000.0)]),
        p("CE", Capacitor, &["e1", "0"], &[(k::CAPACITANCE, 100e-6)]),
        with_preset(p("Q2", Npn, &["out", "b2", "mid"], &[]), "small-signal-npn"),
        p("R3", Resistor, &["vcc", "b2"], &[(k::RESISTANCE, 47e3)]),
        p("R4", Resistor, &["b2", "0"], &[(k::RESISTANCE, 33e3)]),
        p("CB", Capacitor, &["b2", "0"], &[(k::CAPACITANCE, 10e-6)]),
        p("RC", Resistor, &["vcc", "out"], &[(k::RESISTANCE, 4700.0)]),
        p(
            "C2",
            Capacitor,
            &["out", "load"],
            &[(k::CAPACITANCE, 10e-6)],
        ),
        p("RL", Resistor, &["load", "0"], &[(k::RESISTANCE, 10e3)]),
    ]);
    doc.signal.source = Some("VS".into());
    doc.signal.load = Some("RL".into());
    let a = analyse(&doc);
    let s = stage(&a, "Q2");
    assert_eq!(
        s.configuration,
        biasline::analysis::stages::Configuration::CommonBase,
        "{}",
        s.configuration_words
    );
    // source: Sedra and Smith, Microelectronic Circuits, the cascode amplifier: the
    // common-base device's input resistance is re (no emitter resistor to ground).
    let exact = s.input_impedance.exact.unwrap();
    let est = s.input_impedance.re_model.unwrap();
    // re = VT/IE of Q2, about 26 Ω at 1 mA: the estimate is re itself.
    assert!(est > 1.0, "Zin estimate {est} Ω");
    assert!(
        (est / exact - 1.0).abs() < 0.1,
        "estimate {est} vs exact {exact}"
    );
    // Ai into the load: α·(RC ‖ RL)/RL of the input current (the rest goes into RC).
    let ai = s.current_gain.re_model.unwrap();
    let ai_exact = s.current_gain.exact.unwrap();
    assert!(
        ai > 0.0 && (ai / ai_exact - 1.0).abs() < 0.1,
        "Ai {ai} vs {ai_exact}"
    );
}
