//! Noise checks that need no book: the adjoint result against one direct
//! solve per source, contributions summing to the total, a noiseless
//! amplifier's noise figure, and hand-solved small networks.

use crate::common;

use biasline::analysis::noise::spectrum::{self, direct, log_grid};
use biasline::analysis::noise::{
    self, figures, BuildOptions, Element, Network, NoiseSettings, NoiseSetup, NoiseSource,
    SignalSource, SourceResistance,
};
use biasline::analysis::{BOLTZMANN, ZERO_CELSIUS};
use biasline::document::{self, PartKind::*};
use biasline::netlist;
use biasline::presets::keys::*;
use common::*;

const KELVIN: f64 = 27.0 + ZERO_CELSIUS;

fn preamp() -> NoiseSetup {
    let doc = document::load_file(std::path::Path::new("projects/two-stage-preamp.json"))
        .expect("demo loads");
    let nl = netlist::connect(&doc);
    noise::setup(&doc, &nl, &BuildOptions::default()).expect("noise setup")
}

#[test]
fn adjoint_equals_one_direct_solve_per_source() {
    // invariant: two independent methods — eᵀA⁻¹b from the transposed system (one solve for all
    // sources) and from A·v = b for each source separately.
    let s = preamp();
    let freqs = log_grid(1.0, 1e8, 4);
    let adj = spectrum::spectrum(&s.network, &s.sources, s.output, &freqs).unwrap();
    for (k, &f) in freqs.iter().enumerate() {
        let d = direct(&s.network, &s.sources, s.output, f).unwrap();
        let scale = adj.total[k];
        for (a, b) in adj.contributions[k].iter().zip(&d) {
            assert!((a - b).abs() <= 1e-9 * scale, "at {f} Hz: {a} vs {b}");
        }
        // invariant: the sum of all contributions (direct) equals the adjoint total.
        let sum: f64 = d.iter().sum();
        assert!((sum / adj.total[k] - 1.0).abs() < 1e-9);
    }
}

#[test]
fn contributions_sum_to_the_total_over_the_band() {
    // invariant: uncorrelated powers add — the band powers of the contributors (each integrated
    // on its own) add up to the band power of the total, and the shares to one.
    let s = preamp();
    let rep = noise::report(&s, &NoiseSettings::default()).unwrap();
    let sum: f64 = rep
        .contributors
        .iter()
        .map(|c| c.band_output_rms.powi(2))
        .sum();
    assert!((sum / rep.band_output_rms.powi(2) - 1.0).abs() < 1e-3);
    let shares: f64 = rep.contributors.iter().map(|c| c.share).sum();
    assert!((shares - 1.0).abs() < 1e-3);
    // invariant: a part's share is the sum of its generators' shares (Q1: rb, collector, base).
    let q1: f64 = rep
        .contributors
        .iter()
        .filter(|c| c.designator == "Q1")
        .map(|c| c.share)
        .sum();
    let by_part = rep.by_part.iter().find(|p| p.designator == "Q1").unwrap();
    assert!((by_part.share - q1).abs() < 1e-12);
    assert!(rep.by_part.windows(2).all(|w| w[0].share >= w[1].share));
    // invariant: at every sweep frequency the contribution densities add in power to the total.
    for (k, row) in rep.contribution_density.iter().enumerate() {
        let p: f64 = row.iter().map(|d| d * d).sum();
        assert!((p.sqrt() / rep.output_density[k] - 1.0).abs() < 1e-9);
    }
    assert_eq!(rep.frequencies.len(), 161);
    // invariant: the spot figures (own solve at 1 kHz) equal the sweep's at its 1 kHz point.
    let k = 60;
    assert!((rep.frequencies[k] / 1e3 - 1.0).abs() < 1e-12);
    assert!((rep.spot_input_density / rep.input_density[k] - 1.0).abs() < 1e-9);
    assert!((rep.spot_output_density / rep.output_density[k] - 1.0).abs() < 1e-9);
}

#[test]
fn reactive_network_with_a_noisy_source_has_zero_noise_figure() {
    // invariant: the definition F = total / source part — with only the source resistance
    // noisy (an LC network between it and the load, which may even give voltage gain at
    // resonance), F = 1 (0 dB) at every frequency.
    let mut doc = document(&[
        p("VS", SignalSource, &["s", "0"], &[(AMPLITUDE, 1e-3)]),
        p(
            "RS",
            Resistor,
            &["s", "in"],
            &[(RESISTANCE, 600.0), ("source_resistance_mark", 1.0)],
        ),
        p("L1", Inductor, &["in", "out"], &[(INDUCTANCE, 10e-3)]),
        p("CL", Capacitor, &["out", "0"], &[(CAPACITANCE, 100e-9)]),
    ]);
    doc.signal.source = Some("VS".into());
    doc.signal.load = Some("CL".into());
    let nl = netlist::connect(&doc);
    let s = noise::setup(&doc, &nl, &BuildOptions::default()).unwrap();
    let rep = noise::report(&s, &NoiseSettings::default()).unwrap();
    assert_eq!(rep.source_resistance.as_deref(), Some("RS"));
    assert!(rep.band_figure_db.unwrap().abs() < 1e-9);
    let sweep = spectrum::spectrum(&s.network, &s.sources, s.output, &rep.frequencies).unwrap();
    for f in figures::noise_factor(&s, &sweep) {
        assert!((f - 1.0).abs() < 1e-9);
    }
    // invariant: the input-referred density is then the source's own √(4kT·Rs).
    let k = rep.frequencies.iter().position(|f| *f >= 1e3).unwrap();
    let rs = (4.0 * BOLTZMANN * KELVIN * 600.0).sqrt();
    assert!((rep.input_density[k] / rs - 1.0).abs() < 1e-9);
}

/// A noiseless transconductance amplifier by hand: vs → Rs → input (Rin to ground, noiseless),
/// gm·v(in) into a noiseless load. Only Rs makes noise, plus optionally an input current noise.
fn hand_amplifier(extra_input_current: f64) -> NoiseSetup {
    let (rs, rin, gm, rl) = (1e3, 10e3, 50e-3, 2e3);
    let mut n = Network::new(3);
    let vs = n.push(Element::VoltageSource {
        p: 1,
        n: 0,
        signal: true,
    });
    let rs_el = n.push(Element::Admittance {
        a: 1,
        b: 2,
        conductance: 1.0 / rs,
        capacitance: 0.0,
    });
    n.push(Element::Admittance {
        a: 2,
        b: 0,
        conductance: 1.0 / rin,
        capacitance: 0.0,
    });
    n.push(Element::Transconductance {
        p: 3,
        n: 0,
        control_p: 2,
        control_n: 0,
        gm,
    });
    n.push(Element::Admittance {
        a: 3,
        b: 0,
        conductance: 1.0 / rl,
        capacitance: 0.0,
    });
    let mut src = NoiseSource::thermal("RS", 1, 2, rs, KELVIN);
    src.is_source_resistance = true;
    let mut sources = vec![src];
    if extra_input_current > 0.0 {
        let mut i = NoiseSource::thermal("X", 2, 0, 1.0, KELVIN);
        i.white = extra_input_current;
        sources.push(i);
    }
    NoiseSetup {
        network: n,
        sources,
        output: (3, 0),
        output_name: "out".into(),
        kelvin: KELVIN,
        signal: Some(SignalSource {
            designator: "VS".into(),
            element: vs,
            amplitude: 1e-3,
            frequency: 1e3,
            nodes: (1, 0),
        }),
        source_resistance: Some(SourceResistance {
            designator: "RS".into(),
            elements: vec![rs_el],
            sources: vec![0],
            resistance: rs,
            amplifier_node: 2,
        }),
        transistors: Vec::new(),
        stages: Vec::new(),
    }
}

#[test]
fn noiseless_amplifier_by_hand() {
    let s = hand_amplifier(0.0);
    let rep = noise::report(&s, &NoiseSettings::default()).unwrap();
    // invariant: only the source is noisy → NF = 0 dB.
    assert!(rep.band_figure_db.unwrap().abs() < 1e-9);
    // invariant (hand algebra): gain = −gm·RL·Rin/(Rs + Rin) = −50m·2k·10/11 = −90.909…, and
    // Rs's noise voltage reaches the input through the same divider as the signal, so the
    // output density is |gain|·√(4kT·Rs).
    let gain = 50e-3 * 2e3 * 10e3 / 11e3;
    let expect = gain * (4.0 * BOLTZMANN * KELVIN * 1e3).sqrt();
    assert!((rep.output_density[40] / expect - 1.0).abs() < 1e-9);
    // SNR for 1 mV peak: 20·log10((1e-3/√2)·gain / (density·√bandwidth)).
    let bw: f64 = 20e3 - 20.0;
    let snr = 20.0 * ((1e-3 / 2f64.sqrt()) * gain / (expect * bw.sqrt())).log10();
    assert!((rep.signal_to_noise.unwrap().snr_db - snr).abs() < 1e-6);
}

#[test]
fn input_current_noise_is_recovered_from_the_open_input() {
    // invariant (hand algebra): with an input current noise i² at the amplifier node, the chain's
    // in (open-circuited source resistance) is exactly √i², and en (shorted) is zero-noise → 0.
    let i2 = (3e-12f64).powi(2);
    let s = hand_amplifier(i2);
    let tp = figures::chain_two_port(&s, &[1e3]).unwrap().unwrap();
    assert!((tp.in_[0] / i2.sqrt() - 1.0).abs() < 1e-9);
    assert!(tp.en[0] < 1e-15);
    // invariant (hand algebra): i² reaches the input as i²·(Rs‖Rin)², the source's 4kT·Rs as
    // 4kT·Rs·(Rin/(Rs + Rin))², so F = 1 + i²·Rs/(4kT).
    let rep = noise::report(&s, &NoiseSettings::default()).unwrap();
    let f = 1.0 + i2 * 1e3 / (4.0 * BOLTZMANN * KELVIN);
    assert!((rep.band_noise_factor.unwrap() / f - 1.0).abs() < 1e-9);
}

#[test]
fn noise_network_gain_equals_the_frequency_response() {
    // invariant: two independent linearisations — the noise network's source-to-load transfer
    // and the frequency-response sweep of the small-signal analysis agree at every frequency.
    use biasline::analysis::{ac, circuit, dc, small_signal};
    for file in [
        "projects/two-stage-preamp.json",
        "projects/common-emitter.json",
    ] {
        let doc = document::load_file(std::path::Path::new(file)).expect("demo loads");
        let nl = netlist::connect(&doc);
        let c = circuit::build(&doc, &nl).unwrap();
        let op = dc::solve_circuit(&c).unwrap();
        let a = small_signal::analyse(&doc, &nl, &c, &op);
        let r = ac::sweep(&a.small_signal, &a.chain, &a.midband, &doc.analysis);
        let Some(g) = r.gain else {
            panic!("{file}: no source-to-load gain");
        };
        let s = noise::setup_from(&doc, &c, &op, &a.chain, &BuildOptions::default()).unwrap();
        let mine = spectrum::spectrum(&s.network, &[], s.output, &r.frequencies).unwrap();
        for (k, f) in r.frequencies.iter().enumerate() {
            let db = 20.0 * mine.gain[k].norm().log10();
            assert!(
                (db - g.magnitude_db[k]).abs() < 1e-6,
                "{file} at {f} Hz: {db} dB vs {} dB",
                g.magnitude_db[k]
            );
        }
    }
}

#[test]
fn source_resistance_can_be_marked_in_the_file_or_named() {
    // invariant: the three ways of choosing the source resistance agree when they choose the
    // same resistor, and F = total/source part whichever is chosen (so F·share(source) = 1).
    let path = std::path::Path::new("projects/two-stage-preamp.json");
    let mut doc = document::load_file(path).unwrap();
    let nl = netlist::connect(&doc);
    let found = noise::setup(&doc, &nl, &BuildOptions::default()).unwrap();
    let named = noise::setup(
        &doc,
        &nl,
        &BuildOptions {
            source_resistor: Some("RS".into()),
            ..BuildOptions::default()
        },
    )
    .unwrap();
    let rs = doc.parts.iter_mut().find(|p| p.designator == "RS").unwrap();
    rs.parameters.insert(SOURCE_RESISTANCE_MARK.into(), 1.0);
    let marked = noise::setup(&doc, &nl, &BuildOptions::default()).unwrap();
    let settings = NoiseSettings {
        current_hints: false,
        ..NoiseSettings::default()
    };
    let f: Vec<f64> = [&found, &named, &marked]
        .iter()
        .map(|s| {
            noise::report(s, &settings)
                .unwrap()
                .band_noise_factor
                .unwrap()
        })
        .collect();
    assert!((f[0] - f[1]).abs() < 1e-12 && (f[0] - f[2]).abs() < 1e-12);
    // Marking R2 instead makes R2 the reference: F = 1/share(R2).
    let r2 = doc.parts.iter_mut().find(|p| p.designator == "RS").unwrap();
    r2.parameters.remove(SOURCE_RESISTANCE_MARK);
    let r2 = doc.parts.iter_mut().find(|p| p.designator == "R2").unwrap();
    r2.parameters.insert(SOURCE_RESISTANCE_MARK.into(), 1.0);
    let s = noise::setup(&doc, &nl, &BuildOptions::default()).unwrap();
    let rep = noise::report(&s, &settings).unwrap();
    assert_eq!(rep.source_resistance.as_deref(), Some("R2"));
    let share = rep
        .contributors
        .iter()
        .find(|c| c.designator == "R2")
        .unwrap()
        .share;
    assert!((rep.band_noise_factor.unwrap() * share - 1.0).abs() < 1e-3);
}

#[test]
fn source_straight_on_the_base_still_gives_a_report() {
    // common practice (no source): a DC-coupled source on the base fixes the stage's input net;
    // the report then says why the stage's en and in are missing instead of failing.
    let mut doc = document(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, 12.0)]),
        p(
            "VS",
            SignalSource,
            &["b", "0"],
            &[(AMPLITUDE, 1e-3), (DC_OFFSET, 0.65)],
        ),
        p("Q1", Npn, &["c", "b", "0"], &[(FORWARD_BETA, 200.0)]),
        p("RC", Resistor, &["vcc", "c"], &[(RESISTANCE, 10e3)]),
    ]);
    doc.signal.source = Some("VS".into());
    let nl = netlist::connect(&doc);
    let s = noise::setup(
        &doc,
        &nl,
        &BuildOptions {
            output_net: Some("c".into()),
            ..BuildOptions::default()
        },
    )
    .unwrap();
    let rep = noise::report(&s, &NoiseSettings::default()).unwrap();
    assert!(rep.source_resistance.is_none() && rep.band_figure_db.is_none());
    assert!(rep.band_output_rms > 0.0 && rep.band_output_rms.is_finite());
    assert!(rep.stages.is_empty(), "{:?}", rep.stages);
    assert!(rep
        .notes
        .iter()
        .any(|n| n.contains("en and in are not given")));
}
