//! Noise against the laws and textbook results: Johnson–Nyquist thermal
//! noise of resistors, kT/C noise of an RC low-pass, the bipolar
//! transistor's equivalent input noise generators and noise figure.

use crate::common;

use biasline::analysis::noise::{self, BuildOptions, NoiseReport, NoiseSettings};
use biasline::analysis::{thermal_voltage, BOLTZMANN, ELEMENTARY_CHARGE, ZERO_CELSIUS};
use biasline::document::{Document, PartKind::*};
use biasline::netlist;
use biasline::presets::keys::*;
use common::*;

const KELVIN: f64 = 27.0 + ZERO_CELSIUS;

fn run(doc: &Document, opts: &BuildOptions, settings: &NoiseSettings) -> NoiseReport {
    let nl = netlist::connect(doc);
    let setup = noise::setup(doc, &nl, opts).unwrap_or_else(|e| panic!("noise setup: {e}"));
    noise::report(&setup, settings).unwrap_or_else(|e| panic!("noise: {e}"))
}

fn at_net(net: &str) -> BuildOptions {
    BuildOptions {
        output_net: Some(net.into()),
        ..BuildOptions::default()
    }
}

fn quick() -> NoiseSettings {
    NoiseSettings {
        frequencies: noise::spectrum::log_grid(1.0, 1e6, 5),
        current_hints: false,
        ..NoiseSettings::default()
    }
}

#[test]
fn lone_resistor_shows_johnson_noise() {
    let r = 4.7e3;
    // A 0 A current source (an open circuit, noiseless) only gives the net a second pin.
    let doc = document(&[
        p("R1", Resistor, &["out", "0"], &[(RESISTANCE, r)]),
        p("I0", CurrentSource, &["out", "0"], &[(CURRENT, 0.0)]),
    ]);
    let rep = run(&doc, &at_net("out"), &quick());
    // source: Johnson (1928), Nyquist (1928): open-circuit noise density √(4kTR).
    let expect = (4.0 * BOLTZMANN * KELVIN * r).sqrt();
    for d in &rep.output_density {
        assert!((d / expect - 1.0).abs() < 1e-9, "{d} vs {expect}");
    }
}

#[test]
fn divider_shows_the_johnson_noise_of_its_parallel_resistance() {
    let (r1, r2) = (47e3, 10e3);
    let doc = document(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, 12.0)]),
        p("R1", Resistor, &["vcc", "out"], &[(RESISTANCE, r1)]),
        p("R2", Resistor, &["out", "0"], &[(RESISTANCE, r2)]),
    ]);
    let rep = run(&doc, &at_net("out"), &quick());
    // invariant: Johnson–Nyquist — the rail is an AC ground, so the output sees R1 ‖ R2:
    // density √(4kT·R1‖R2), flat in frequency.
    let rp = r1 * r2 / (r1 + r2);
    let expect = (4.0 * BOLTZMANN * KELVIN * rp).sqrt();
    for d in &rep.output_density {
        assert!((d / expect - 1.0).abs() < 1e-9, "{d} vs {expect}");
    }
    // invariant: each resistor's share is its conductance's share (current noise 4kT/R into R1‖R2).
    let share = |d: &str| {
        rep.contributors
            .iter()
            .find(|c| c.designator == d)
            .unwrap()
            .share
    };
    assert!((share("R1") - (1.0 / r1) / (1.0 / r1 + 1.0 / r2)).abs() < 1e-6);
    assert!((share("R2") - (1.0 / r2) / (1.0 / r1 + 1.0 / r2)).abs() < 1e-6);
}

#[test]
fn rc_low_pass_integrates_to_kt_over_c() {
    for (r, c) in [(1e3, 1e-9), (100e3, 1e-9), (10e3, 47e-12)] {
        let doc = document(&[
            p("R1", Resistor, &["out", "0"], &[(RESISTANCE, r)]),
            p("C1", Capacitor, &["out", "0"], &[(CAPACITANCE, c)]),
        ]);
        let fc = 1.0 / (2.0 * std::f64::consts::PI * r * c);
        let settings = NoiseSettings {
            band: (fc * 1e-5, fc * 1e5),
            ..quick()
        };
        let rep = run(&doc, &at_net("out"), &settings);
        // source: Gray, Hurst, Lewis, Meyer, "Analysis and Design of Analog Integrated Circuits",
        // noise chapter (noise bandwidth of a single pole; total noise of R across C is kT/C,
        // independent of R). The band omits a 6e-6 fraction at each end.
        let expect = BOLTZMANN * KELVIN / c;
        let got = rep.band_output_rms.powi(2);
        assert!(
            (got / expect - 1.0).abs() < 1e-3,
            "R {r}: {got} vs kT/C {expect}"
        );
    }
}

/// A common-emitter stage with its base current fed by an ideal (noiseless)
/// current source, emitter grounded, output at the collector.
fn common_emitter(rs: f64, rb: f64) -> (Document, f64) {
    let ib = 5e-6;
    let mut doc = document(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, 12.0)]),
        p("VS", SignalSource, &["s", "0"], &[(AMPLITUDE, 1e-3)]),
        p(
            "RS",
            Resistor,
            &["s", "in"],
            &[(RESISTANCE, rs), ("source_resistance_mark", 1.0)],
        ),
        p("C1", Capacitor, &["in", "b"], &[(CAPACITANCE, 1e-3)]),
        p("IB", CurrentSource, &["b", "0"], &[(CURRENT, ib)]),
        p(
            "Q1",
            Npn,
            &["c", "b", "0"],
            &[
                (FORWARD_BETA, 200.0),
                (BASE_RESISTANCE, rb),
                (FORWARD_EARLY_VOLTAGE, 100.0),
            ],
        ),
        p("RC", Resistor, &["vcc", "c"], &[(RESISTANCE, 5.6e3)]),
    ]);
    doc.signal.source = Some("VS".into());
    (doc, ib)
}

#[test]
fn common_emitter_input_generators_match_the_textbook_model() {
    let rb = 200.0;
    let (doc, ib) = common_emitter(1e3, rb);
    let rep = run(&doc, &at_net("c"), &quick());
    let q = &rep; // spot figures at 1 kHz
    let input = q
        .chain_input_noise
        .as_ref()
        .expect("has a source resistance");
    let (_, _, op) = solved(&doc);
    let t = transistor(&op, "Q1");
    let gm = t.ic / thermal_voltage(KELVIN);
    // source: Gray, Hurst, Lewis, Meyer, "Analysis and Design of Analog Integrated Circuits",
    // noise chapter, equivalent input noise generators of the bipolar transistor:
    // en² = 4kT(rb + 1/(2gm)), in² = 2q·IB (low frequency, collector-shot part of in neglected).
    // Tolerance 3 %: the base shot noise flowing in rb with the input shorted (in²·rb², here
    // ≈ 2 % of en²), RC's thermal noise and the collector shot noise seen through β
    // (1/β = 0.5 % of in²) are left out of the textbook forms.
    let en2 = 4.0 * BOLTZMANN * KELVIN * (rb + 1.0 / (2.0 * gm));
    let in2 = 2.0 * ELEMENTARY_CHARGE * ib;
    let got_en2 = input.voltage_density.powi(2);
    let got_in2 = input.current_density.powi(2);
    assert!((got_en2 / en2 - 1.0).abs() < 0.03, "en² {got_en2} vs {en2}");
    assert!((got_in2 / in2 - 1.0).abs() < 0.03, "in² {got_in2} vs {in2}");
    // The stage's own generators (input net held / opened) agree with the chain's here,
    // since the only part before the stage is the source resistance and C1.
    let st = &rep.stages[0];
    assert!((st.voltage_density / input.voltage_density - 1.0).abs() < 0.01);
}

#[test]
fn common_emitter_noise_figure_follows_from_en_and_in() {
    // source: Motchenbacher & Connelly, "Low-Noise Electronic System Design", ch. 2 (noise
    // factor from the en–in model): F = 1 + (en² + in²·Rs²)/(4kT·Rs). Tolerance 0.25 dB for the
    // correlation of en and in (rb carries the base shot noise) and the terms left out above.
    let rb = 200.0;
    for rs in [300.0, 3e3, 30e3] {
        let (doc, ib) = common_emitter(rs, rb);
        let rep = run(&doc, &at_net("c"), &quick());
        let (_, _, op) = solved(&doc);
        let gm = transistor(&op, "Q1").ic / thermal_voltage(KELVIN);
        let en2 = 4.0 * BOLTZMANN * KELVIN * (rb + 1.0 / (2.0 * gm));
        let in2 = 2.0 * ELEMENTARY_CHARGE * ib;
        let f = 1.0 + (en2 + in2 * rs * rs) / (4.0 * BOLTZMANN * KELVIN * rs);
        let nf = 10.0 * f.log10();
        let got = rep.spot_figure_db.expect("noise figure");
        assert!(
            (got - nf).abs() < 0.25,
            "Rs {rs}: NF {got:.3} dB vs {nf:.3} dB"
        );
    }
}

#[test]
fn classic_optimum_current_is_reported_for_the_input_transistor() {
    let (doc, _) = common_emitter(3e3, 200.0);
    let settings = NoiseSettings {
        current_hints: true,
        ..quick()
    };
    let rep = run(&doc, &at_net("c"), &settings);
    let h = &rep.current_hints[0];
    // source: Gray et al., noise chapter — minimising F = 1 + rb/Rs + 1/(2gm·Rs) +
    // gm(Rs + rb)²/(2β·Rs) over gm gives gm = √β/(Rs + rb), i.e. IC = VT·√β/(Rs + rb).
    // β here is hFE = IC/IB at the operating point (the Early effect lifts it above βF).
    let (_, _, op) = solved(&doc);
    let t = transistor(&op, "Q1");
    let vt = thermal_voltage(KELVIN);
    let classic = vt * (t.ic / t.ib).sqrt() / (3e3 + 200.0);
    assert!(
        (h.classic_current / classic - 1.0).abs() < 0.02,
        "{} vs {classic}",
        h.classic_current
    );
    // The scan holds the rest of the circuit, which here is only RC (noise small), so its
    // optimum lands near the classic one (within a factor 1.5) and never makes NF worse.
    assert!(h.better_figure_db <= h.present_figure_db + 1e-9);
    let ratio = h.better_current / classic;
    assert!(
        (1.0 / 1.5..1.5).contains(&ratio),
        "scan {} vs classic {classic}",
        h.better_current
    );
}

#[test]
fn flicker_corner_raises_the_base_current_noise_below_it() {
    // invariant: the definition of the corner frequency fc — the base current's density is
    // 2q·IB·(1 + fc/f), so in² at f = fc/10 is 11 times the white 2q·IB (within the 3 % of the
    // white-noise check above).
    let (mut doc, ib) = common_emitter(1e3, 200.0);
    let q = doc.parts.iter_mut().find(|p| p.designator == "Q1").unwrap();
    q.parameters.insert(FLICKER_CORNER_FREQUENCY.into(), 1e3);
    let nl = netlist::connect(&doc);
    let setup = noise::setup(&doc, &nl, &at_net("c")).unwrap();
    let tp = noise::figures::chain_two_port(&setup, &[100.0, 1e6])
        .unwrap()
        .unwrap();
    let white = 2.0 * ELEMENTARY_CHARGE * ib;
    assert!((tp.in_[0].powi(2) / (11.0 * white) - 1.0).abs() < 0.03);
    assert!((tp.in_[1].powi(2) / (1.001 * white) - 1.0).abs() < 0.03);
}

#[test]
fn forward_diode_shows_half_the_thermal_noise_of_its_incremental_resistance() {
    // source: Gray, Hurst, Lewis, Meyer, "Analysis and Design of Analog Integrated Circuits",
    // noise chapter (diode shot noise): 2q·ID·rd² = 2kT·rd with rd = n·VT/ID, n = 1 — half the
    // 4kT·rd of a resistor of that value. Fed by an ideal (noiseless) current source.
    for id in [10e-6, 1e-3] {
        let doc = document(&[
            p("I1", CurrentSource, &["a", "0"], &[(CURRENT, id)]),
            p("D1", Diode, &["a", "0"], &[]),
        ]);
        let rep = run(&doc, &at_net("a"), &quick());
        let rd = thermal_voltage(KELVIN) / id;
        let expect = (2.0 * BOLTZMANN * KELVIN * rd).sqrt();
        // 1e-6: the junction's slope is (ID + Is)/VT, Is = 1e-14 A.
        assert!((rep.output_density[0] / expect - 1.0).abs() < 1e-6);
    }
}

#[test]
fn pnp_common_emitter_has_the_same_input_generators() {
    // source: Gray et al., noise chapter, as above — the generators depend on |IC|, |IB| and rb
    // only, so a PNP stage (emitter grounded, collector to −12 V, base current drawn out by an
    // ideal source) gives en² = 4kT(rb + 1/(2gm)), in² = 2q·|IB| within the same 3 %.
    let (rb, ib) = (200.0, 5e-6);
    let mut doc = document(&[
        p("VEE", Rail, &["vee"], &[(VOLTAGE, -12.0)]),
        p("VS", SignalSource, &["s", "0"], &[(AMPLITUDE, 1e-3)]),
        p(
            "RS",
            Resistor,
            &["s", "in"],
            &[(RESISTANCE, 1e3), ("source_resistance_mark", 1.0)],
        ),
        p("C1", Capacitor, &["in", "b"], &[(CAPACITANCE, 1e-3)]),
        p("IB", CurrentSource, &["0", "b"], &[(CURRENT, ib)]),
        p(
            "Q1",
            Pnp,
            &["c", "b", "0"],
            &[
                (FORWARD_BETA, 200.0),
                (BASE_RESISTANCE, rb),
                (FORWARD_EARLY_VOLTAGE, 100.0),
            ],
        ),
        p("RC", Resistor, &["vee", "c"], &[(RESISTANCE, 5.6e3)]),
    ]);
    doc.signal.source = Some("VS".into());
    let rep = run(&doc, &at_net("c"), &quick());
    let input = rep
        .chain_input_noise
        .as_ref()
        .expect("has a source resistance");
    let (_, _, op) = solved(&doc);
    let gm = transistor(&op, "Q1").ic.abs() / thermal_voltage(KELVIN);
    let en2 = 4.0 * BOLTZMANN * KELVIN * (rb + 1.0 / (2.0 * gm));
    let in2 = 2.0 * ELEMENTARY_CHARGE * ib;
    assert!((input.voltage_density.powi(2) / en2 - 1.0).abs() < 0.03);
    assert!((input.current_density.powi(2) / in2 - 1.0).abs() < 0.03);
}
