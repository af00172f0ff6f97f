//! Stage and chain figures: exact consistency, textbook formulas where the
//! approximation holds, and agreement with independent hand algebra.

use crate::ss_common;
use biasline::analysis::dc::Region;
use biasline::presets::keys::RESISTANCE;
use ss_common::*;

#[test]
fn thevenin_consistency_on_every_demo_and_fixture() {
    // invariant: Thévenin/Norton — v(i)/vs = Zin/(Zin + Rsource) and v(load) = voc·ZL/(ZL + Zout)
    for path in SIGNAL_FILES {
        let a = analyse_file(path);
        let c = &a.midband.chain;
        let (zin, rs) = (c.input_impedance.unwrap(), c.source_resistance.unwrap());
        let frac = c.input_fraction.unwrap();
        assert!(
            rel(frac, zin / (zin + rs)) < 1e-9,
            "{path}: {frac} vs {}",
            zin / (zin + rs)
        );
        let (zout, zl) = (c.output_impedance.unwrap(), c.load_impedance.unwrap());
        let voc = c.open_circuit_gain.unwrap();
        let vl = c.source_gain.unwrap();
        assert!(
            rel(vl, voc * zl / (zl + zout)) < 1e-9,
            "{path}: {vl} vs {}",
            voc * zl / (zl + zout)
        );
        // invariant: Ai = Av·Zin/Zload follows from the definitions (currents v/Z through the cuts)
        for s in &a.midband.stages {
            let (av, zi, ai) = (
                s.voltage_gain.exact.unwrap(),
                s.input_impedance.exact.unwrap(),
                s.current_gain.exact.unwrap(),
            );
            let zload = s.load_resistance.unwrap();
            assert!(
                rel(ai, av * zi / zload) < 1e-9,
                "{path} {}: Ai {ai} vs {}",
                s.transistor,
                av * zi / zload
            );
        }
        // invariant: the chain gain is the product of the stage gains (at midband each stage's
        // output node is the next one's input node, coupling capacitors being shorts)
        let prod: f64 = a
            .midband
            .stages
            .iter()
            .map(|s| s.voltage_gain.exact.unwrap())
            .product();
        let whole = c.voltage_gain.unwrap();
        assert!(rel(prod, whole) < 1e-9, "{path}: {prod} vs {whole}");
    }
}

#[test]
fn bypassed_ce_gain_is_minus_gm_rc_rl() {
    // source: Sedra & Smith, Microelectronic Circuits, BJT amplifiers, the common-emitter amplifier —
    // Av ≈ −gm·(RC ‖ RL), within 5 % when ro > 20·(RC ‖ RL)
    let doc = load("projects/common-emitter.json");
    let a = analyse(&doc);
    let s = stage(&a, "Q1");
    let rl = par(
        part_value(&doc, "RC", RESISTANCE),
        part_value(&doc, "RL", RESISTANCE),
    );
    let p = a.small_signal.transistors[0].models.hybrid_pi;
    assert!(p.ro() > 20.0 * rl, "precondition ro > 20·R'L");
    let av = s.voltage_gain.exact.unwrap();
    assert!(rel(av, -p.gm * rl) < 0.05, "{av} vs {}", -p.gm * rl);
}

#[test]
fn bypassed_ce_exact_matches_hand_algebra() {
    // invariant: independent hand algebra of the hybrid-π stage (emitter AC-grounded, gμ = 0):
    // Zin = RB ‖ (rb + rπ), Av = −gm·rπ/(rb + rπ)·(ro ‖ RC ‖ RL), Zout = ro ‖ RC
    let doc = load("projects/common-emitter.json");
    let a = analyse(&doc);
    let s = stage(&a, "Q1");
    let p = a.small_signal.transistors[0].models.hybrid_pi;
    let v = |d: &str| part_value(&doc, d, RESISTANCE);
    let rb_bias = par(v("R1"), v("R2"));
    let zin = par(rb_bias, p.rb + p.r_pi());
    let rl = par(p.ro(), par(v("RC"), v("RL")));
    let av = -p.gm * p.r_pi() / (p.rb + p.r_pi()) * rl;
    let zout = par(p.ro(), v("RC"));
    // (The bypass capacitor is a short at midband; the exact figures come from the full MNA.)
    assert!(rel(s.input_impedance.exact.unwrap(), zin) < 1e-6);
    assert!(rel(s.voltage_gain.exact.unwrap(), av) < 1e-6);
    assert!(rel(s.output_impedance.exact.unwrap(), zout) < 1e-6);
}

#[test]
fn degenerated_ce_against_textbook_and_hand_algebra() {
    // source: Sedra & Smith, Microelectronic Circuits, BJT amplifiers, CE amplifier with an emitter
    // resistance — Av ≈ −α·(RC ‖ RL)/(re + RE), Rin ≈ RB ‖ (β+1)(re + RE); within 2 % here (ro ≫ RC)
    let doc = load("tests/fixtures/ss_degenerated_ce.json");
    let a = analyse(&doc);
    let s = stage(&a, "Q1");
    let m = &a.small_signal.transistors[0].models;
    let (t, p) = (m.t.unwrap(), m.hybrid_pi);
    let v = |d: &str| part_value(&doc, d, RESISTANCE);
    let (rc, rl, re_, rb_bias) = (v("RC"), v("RL"), v("RE"), par(v("R1"), v("R2")));
    let book = -t.alpha * par(rc, rl) / (t.re + re_);
    assert!(rel(s.voltage_gain.exact.unwrap(), book) < 0.02);
    let beta = m.hfe().unwrap();
    assert!(
        rel(
            s.input_impedance.exact.unwrap(),
            par(rb_bias, (beta + 1.0) * (t.re + re_))
        ) < 0.02
    );
    // invariant: hand algebra with ro, by nodal analysis of two unknowns (emitter ve, collector vc)
    // for a 1 A test current into the internal base held by rπ; solved by Cramer's rule.
    //  emitter: (vb' − ve)·gπ + gm(vb' − ve) + (vc − ve)·go = ve/RE
    //  collector: gm(vb' − ve) + (vc − ve)·go + vc/(RC ‖ RL) = 0
    let (gpi, gm, go) = (p.g_pi, p.gm, p.go);
    let gl = 1.0 / par(rc, rl);
    let ge = 1.0 / re_;
    // Drive vb' = 1 V: unknowns ve, vc.
    // eq1: −(gπ + gm + go + ge)·ve + go·vc = −(gπ + gm)
    // eq2: −(gm + go)·ve + (go + gl)·vc = −gm
    let (a11, a12, b1) = (-(gpi + gm + go + ge), go, -(gpi + gm));
    let (a21, a22, b2) = (-(gm + go), go + gl, -gm);
    let det = a11 * a22 - a12 * a21;
    let ve = (b1 * a22 - a12 * b2) / det;
    let vc = (a11 * b2 - a21 * b1) / det;
    let ib = (1.0 - ve) * gpi; // base current into b' for vb' = 1 V
    let vb = 1.0 + ib * p.rb; // base pin voltage
    assert!(
        rel(s.voltage_gain.exact.unwrap(), vc / vb) < 1e-6,
        "{} vs {}",
        s.voltage_gain.exact.unwrap(),
        vc / vb
    );
    assert!(rel(s.input_impedance.exact.unwrap(), par(rb_bias, vb / ib)) < 1e-6);
}

#[test]
fn follower_gain_and_impedances() {
    // source: Horowitz & Hill, The Art of Electronics, ch. 2 (emitter follower); Sedra & Smith,
    // BJT amplifiers, the emitter follower — Av ≈ R'E/(re + R'E), within 2 %
    let doc = load("tests/fixtures/ss_follower.json");
    let a = analyse(&doc);
    let s = stage(&a, "Q1");
    let m = &a.small_signal.transistors[0].models;
    let (t, p) = (m.t.unwrap(), m.hybrid_pi);
    let v = |d: &str| part_value(&doc, d, RESISTANCE);
    let re_l = par(v("RE"), v("RL"));
    assert!(rel(s.voltage_gain.exact.unwrap(), re_l / (t.re + re_l)) < 0.02);
    // invariant: hand algebra of the hybrid-π follower, R'' = RE ‖ RL ‖ ro, β0 = gm·rπ:
    // Zin = RB ‖ (rb + rπ + (1 + β0)·R''), Av = (1 + β0)·R''/(rb + rπ + (1 + β0)·R'')
    let r2 = par(re_l, p.ro());
    let b0 = p.gm * p.r_pi();
    let zb = p.rb + p.r_pi() + (1.0 + b0) * r2;
    assert!(rel(s.voltage_gain.exact.unwrap(), (1.0 + b0) * r2 / zb) < 1e-6);
    assert!(
        rel(
            s.input_impedance.exact.unwrap(),
            par(par(v("R1"), v("R2")), zb)
        ) < 1e-6
    );
    // Zout = RE ‖ ro ‖ (rb + rπ + Rs')/(1 + β0), Rs' = RS ‖ RB
    let rs = par(v("RS"), par(v("R1"), v("R2")));
    let zout = par(par(v("RE"), p.ro()), (p.rb + p.r_pi() + rs) / (1.0 + b0));
    assert!(rel(s.output_impedance.exact.unwrap(), zout) < 1e-6);
}

#[test]
fn common_base_input_impedance() {
    // source: Sedra & Smith, Microelectronic Circuits, BJT amplifiers, the common-base amplifier —
    // Zin ≈ re ‖ RE within 5 %; Av ≈ α·(RC ‖ RL)/re within 5 %
    let doc = load("tests/fixtures/ss_common_base.json");
    let a = analyse(&doc);
    let s = stage(&a, "Q1");
    let t = a.small_signal.transistors[0].models.t.unwrap();
    let v = |d: &str| part_value(&doc, d, RESISTANCE);
    assert!(rel(s.input_impedance.exact.unwrap(), par(t.re, v("RE"))) < 0.05);
    assert!(
        rel(
            s.voltage_gain.exact.unwrap(),
            t.alpha * par(v("RC"), v("RL")) / t.re
        ) < 0.05
    );
    assert!(
        s.voltage_gain.exact.unwrap() > 0.0,
        "common base does not invert"
    );
}

#[test]
fn h_parameter_two_port_is_exact_for_plain_stages() {
    // invariant: the full h-parameter two-port (rb added to h11) is the same network as the MNA
    for (path, q) in [
        ("projects/common-emitter.json", "Q1"),
        ("projects/two-stage-preamp.json", "Q2"),
        ("tests/fixtures/ss_follower.json", "Q1"),
    ] {
        let a = analyse_file(path);
        let s = stage(&a, q);
        for f in [&s.input_impedance, &s.output_impedance, &s.voltage_gain] {
            assert!(
                f.h_difference_percent.unwrap().abs() < 1e-6,
                "{path} {q}: {f:?}"
            );
        }
    }
}

#[test]
fn saturated_stage_is_flagged_with_its_region() {
    // common practice (no source): small-signal amplifier figures need a forward-active transistor
    let mut doc = load("tests/fixtures/ss_degenerated_ce.json");
    set_value(&mut doc, "RC", RESISTANCE, 220e3);
    let a = analyse(&doc);
    assert_eq!(a.small_signal.transistors[0].region, Region::Saturation);
    let s = stage(&a, "Q1");
    assert!(!s.meaningful);
    assert!(s.caveats.iter().any(|c| c.contains("saturation")));
}

#[test]
fn missing_source_or_load_is_reported() {
    // common practice (no source): no signal source or no load → those figures unavailable with the reason
    let mut doc = load("tests/fixtures/ss_follower.json");
    doc.signal.load = None;
    let a = analyse(&doc);
    assert!(a.midband.chain.output_impedance.is_none());
    assert!(a
        .midband
        .chain
        .unavailable
        .iter()
        .any(|u| u.contains("load")));
    assert!(a.midband.chain.input_impedance.is_some());
    doc.signal.source = None;
    let a = analyse(&doc);
    assert!(a.midband.chain.source_gain.is_none());
    assert!(a
        .midband
        .chain
        .unavailable
        .iter()
        .any(|u| u.contains("signal source")));
}

#[test]
fn swing_limits_follow_the_load_lines() {
    // source: Sedra & Smith, Microelectronic Circuits, BJT amplifiers (DC and AC load lines) —
    // toward cut-off the collector rises by IC·R'ac, toward saturation it falls by VCE − VCE,sat
    let doc = load("projects/common-emitter.json");
    let a = analyse(&doc);
    let s = stage(&a, "Q1");
    let w = s.swing.as_ref().unwrap();
    let t = &a.small_signal.transistors[0];
    let rac = par(
        part_value(&doc, "RC", RESISTANCE),
        part_value(&doc, "RL", RESISTANCE),
    );
    assert!(rel(w.toward_cut_off, t.collector_current * rac) < 1e-9);
    assert!(rel(w.toward_saturation, t.saturation_margin) < 1e-9);
    assert_eq!(w.limit, w.toward_cut_off.min(w.toward_saturation));
    // invariant: the input amplitude that reaches the limit is limit/|Av|
    assert!(
        rel(
            w.input_amplitude.unwrap(),
            w.limit / s.voltage_gain.exact.unwrap().abs()
        ) < 1e-12
    );
}

use crate::common;

#[test]
fn pnp_common_emitter_reads_like_an_npn() {
    // source: Sedra & Smith, Microelectronic Circuits, BJT amplifiers — a PNP stage has the same
    // small-signal model as an NPN: bypassed CE gain ≈ −gm·(RC ‖ RL) within 5 % when ro > 20·(RC ‖ RL)
    use biasline::document::PartKind::*;
    use biasline::presets::keys::*;
    use common::{p, with_preset};
    let mut doc = common::document(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, 12.0)]),
        p("VS", SignalSource, &["s", "0"], &[(AMPLITUDE, 0.001)]),
        p(
            "RS",
            Resistor,
            &["s", "in"],
            &[(RESISTANCE, 1000.0), ("source_resistance_mark", 1.0)],
        ),
        p("C1", Capacitor, &["in", "b"], &[(CAPACITANCE, 10e-6)]),
        p("R1", Resistor, &["vcc", "b"], &[(RESISTANCE, 22e3)]),
        p("R2", Resistor, &["b", "0"], &[(RESISTANCE, 68e3)]),
        p("RE", Resistor, &["vcc", "e"], &[(RESISTANCE, 2200.0)]),
        p("CE", Capacitor, &["e", "vcc"], &[(CAPACITANCE, 100e-6)]),
        with_preset(p("Q1", Pnp, &["c", "b", "e"], &[]), "small-signal-pnp"),
        p("RC", Resistor, &["c", "0"], &[(RESISTANCE, 3300.0)]),
        p("C2", Capacitor, &["c", "out"], &[(CAPACITANCE, 10e-6)]),
        p("RL", Resistor, &["out", "0"], &[(RESISTANCE, 10e3)]),
    ]);
    doc.signal.source = Some("VS".into());
    doc.signal.load = Some("RL".into());
    let a = analyse(&doc);
    assert_eq!(a.small_signal.transistors[0].region, Region::ForwardActive);
    let s = stage(&a, "Q1");
    assert_eq!(
        s.configuration,
        biasline::analysis::stages::Configuration::CommonEmitter(
            biasline::analysis::stages::Emitter::Bypassed
        )
    );
    let p = a.small_signal.transistors[0].models.hybrid_pi;
    let rl = par(3300.0, 10e3);
    assert!(p.gm > 0.0 && p.ro() > 20.0 * rl);
    assert!(rel(s.voltage_gain.exact.unwrap(), -p.gm * rl) < 0.05);
}

#[test]
fn diode_small_signal_resistance() {
    // source: Sedra & Smith, Microelectronic Circuits, diodes — small-signal resistance rd = n·VT/ID
    // (plus the series resistance); measured as Zin of a diode fed by a large resistor
    use biasline::document::PartKind::*;
    use biasline::presets::keys::*;
    use common::p;
    let mut doc = common::document(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, 10.0)]),
        p("RB", Resistor, &["vcc", "a"], &[(RESISTANCE, 10e3)]),
        p(
            "D1",
            Diode,
            &["a", "0"],
            &[(EMISSION_COEFFICIENT, 1.5), (SERIES_RESISTANCE, 2.0)],
        ),
        p("VS", SignalSource, &["s", "0"], &[(AMPLITUDE, 0.001)]),
        p(
            "RS",
            Resistor,
            &["s", "in"],
            &[(RESISTANCE, 100.0), ("source_resistance_mark", 1.0)],
        ),
        p("C1", Capacitor, &["in", "a"], &[(CAPACITANCE, 10e-6)]),
    ]);
    doc.signal.source = Some("VS".into());
    let nl = biasline::netlist::connect(&doc);
    let c = biasline::analysis::circuit::build(&doc, &nl).unwrap();
    let op = biasline::analysis::dc::solve_circuit(&c).unwrap();
    let a = biasline::analysis::small_signal::analyse(&doc, &nl, &c, &op);
    let id = op.diodes().next().unwrap().current;
    let vt = biasline::analysis::thermal_voltage(c.kelvin);
    let rd = 1.5 * vt / id + 2.0;
    let z = a.midband.chain.input_impedance.unwrap();
    // Zin = RB ‖ (rd + rs); the Shockley "−1" term makes rd = nVT/(ID + Is), negligible here
    assert!(rel(z, par(10e3, rd)) < 1e-6, "{z} vs {}", par(10e3, rd));
}

#[test]
fn common_base_exact_matches_hand_algebra() {
    // invariant: independent hand algebra of the hybrid-π common-base stage (base pin on AC
    // ground, rb to the internal base, gμ = 0). 1 A into the emitter:
    //  B': (vb' − ve)·gπ + vb'/rb = 0  →  vb' = k·ve, k = gπ/(gπ + 1/rb)
    //  C:  vc·gL + (vc − ve)·go + gm·(vb' − ve) = 0
    //  E:  ve/RE + (ve − vb')·gπ + (ve − vc)·go − gm·(vb' − ve) = 1
    let doc = load("tests/fixtures/ss_common_base.json");
    let a = analyse(&doc);
    let s = stage(&a, "Q1");
    let p = a.small_signal.transistors[0].models.hybrid_pi;
    let v = |d: &str| part_value(&doc, d, RESISTANCE);
    let (gpi, gm, go, gb) = (p.g_pi, p.gm, p.go, 1.0 / p.rb);
    let gl = 1.0 / par(v("RC"), v("RL"));
    let k = gpi / (gpi + gb);
    let vc_per_ve = (go + gm * (1.0 - k)) / (gl + go);
    let ye = 1.0 / v("RE") + (1.0 - k) * (gpi + gm) + go * (1.0 - vc_per_ve);
    assert!(rel(s.input_impedance.exact.unwrap(), 1.0 / ye) < 1e-6);
    assert!(rel(s.voltage_gain.exact.unwrap(), vc_per_ve) < 1e-6);
}
