//! A cascode's upper (common-base) device has no resistor from its emitter
//! to ground: the common-base estimate must take that shunt as open, so
//! Zin ≈ re and the current gain α·(RC ‖ RL)/RL, not 0 (source: Sedra and Smith, the
//! cascode amplifier; the common-base input resistance re ‖ RE with RE → ∞).

use crate::ss_common::{analyse, stage};

#[test]
fn the_cascode_common_base_estimate_is_re_not_zero() {
    // The cascode of the block tests: Q1 common emitter into Q2 common base.
    let doc = crate::blocks_compound::cascode();
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
