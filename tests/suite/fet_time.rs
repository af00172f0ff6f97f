//! Field-effect transistors in the time domain: the square law's harmonics
//! in closed form, and the gate charge as a capacitor (closed forms named
//! at each check).

use crate::common::{build, document, p, signal};
use biasline::analysis::circuit::Circuit;
use biasline::analysis::devices::fet::keys as fk;
use biasline::analysis::transient::{self, companion, fourier, Drive, Engine, Wave};
use biasline::document::PartKind::*;
use biasline::document::TransientSettings;
use biasline::netlist;

fn element(c: &Circuit, d: &str) -> usize {
    c.elements.iter().position(|e| e.designator == d).unwrap()
}

/// Drain-current harmonics over one period of a 1 kHz sine on the gate.
fn drain_harmonics(c: &Circuit, q: usize, offset: f64, amplitude: f64) -> fourier::Spectrum {
    let (period, n) = (1e-3, 64);
    let drive = Drive {
        signal: Some((
            signal(c),
            Wave::Sine {
                amplitude,
                offset,
                frequency: 1e3,
                delay: 0.0,
            },
        )),
        ramp: None,
    };
    let mut e = Engine::new(c, drive, TransientSettings::default());
    let start = e.initial(false).unwrap();
    let landing: Vec<f64> = (1..=n).map(|j| period * j as f64 / n as f64).collect();
    let (w, _) = transient::record(&mut e, start, period, &landing, &mut |_| true).unwrap();
    let slots = companion::slots(c);
    let mut idx = vec![0];
    idx.extend(
        w.landed
            .iter()
            .copied()
            .filter(|&k| w.times[k] < period * 0.999),
    );
    assert_eq!(idx.len(), n);
    let samples: Vec<f64> = idx
        .iter()
        .map(|&k| w.pin_currents(c, &slots, k)[q][0])
        .collect();
    fourier::spectrum(&samples, 1)
}

#[test]
fn square_law_makes_a_second_harmonic_only() {
    // source: expanding ID = β/2·(Vov + a·cos ωt)² gives H1 = β·Vov·a and H2 = β·a²/4, so
    // H2/H1 = a/(4·Vov) and nothing above (Sedra and Smith, Microelectronic Circuits, the
    // MOSFET amplifier chapter). λ = 0 and no capacitances: the drain current is the law.
    for (kind, s) in [(NMosfet, 1.0), (PMosfet, -1.0), (NJfet, 1.0)] {
        let vto = match kind {
            NJfet => -2.0,
            _ => 2.0 * s,
        };
        let doc = document(&[
            p("VS", SignalSource, &["g", "0"], &[("amplitude", 0.0)]),
            p("VD", Rail, &["d"], &[("voltage", 6.0 * s)]),
            p(
                "Q1",
                kind,
                &["d", "g", "0"],
                &[
                    (fk::THRESHOLD_VOLTAGE, vto),
                    (fk::TRANSCONDUCTANCE_PARAMETER, 0.02),
                    (fk::CHANNEL_LENGTH_MODULATION, 0.0),
                    (fk::GATE_SATURATION_CURRENT, 1e-30),
                    (fk::BODY_DIODE_SATURATION_CURRENT, 1e-30),
                ],
            ),
        ]);
        let c = build(&doc);
        let q = element(&c, "Q1");
        // A gate 1 V past the threshold (channel sense), driven by ±0.2 V.
        let (vov, a) = (1.0, 0.2);
        let offset = match kind {
            NJfet => vto + vov,
            _ => vto + s * vov,
        };
        let sp = drain_harmonics(&c, q, offset, a);
        let (h1, h2) = (sp.amplitude[0], sp.amplitude[1]);
        let want = a / (4.0 * vov);
        assert!(
            ((h2 / h1) / want - 1.0).abs() < 1e-6,
            "{kind:?}: H2/H1 {} vs {want}",
            h2 / h1
        );
        for k in 2..10 {
            let dbc = 20.0 * (sp.amplitude[k] / h1).log10();
            assert!(dbc < -150.0, "{kind:?}: H{} at {dbc:.1} dBc", k + 1);
        }
    }
}

#[test]
fn a_mosfet_gate_charges_through_its_resistor_as_an_rc() {
    // source: a fixed Cgs with the channel cut off is a linear capacitor, so a step through
    // R charges the gate as 1 − e^(−t/RC) (closed form); Cgd to a held drain adds in parallel.
    for (kind, s) in [(NMosfet, 1.0), (PMosfet, -1.0)] {
        let (cgs, cgd, r) = (800e-12, 200e-12, 1e4);
        let doc = document(&[
            p("VS", SignalSource, &["in", "0"], &[("amplitude", 0.0)]),
            p("RG", Resistor, &["in", "g"], &[("resistance", r)]),
            p("VD", Rail, &["d"], &[("voltage", 0.0)]),
            p(
                "Q1",
                kind,
                &["d", "g", "0"],
                &[
                    (fk::THRESHOLD_VOLTAGE, 5.0 * s),
                    (fk::GATE_SOURCE_CAPACITANCE, cgs),
                    // Zero-bias Cgd with a grading of 0 is a fixed capacitance.
                    (fk::GATE_DRAIN_CAPACITANCE, cgd),
                    (fk::GATE_JUNCTION_GRADING, 0.0),
                    (fk::BODY_DIODE_SATURATION_CURRENT, 1e-30),
                ],
            ),
        ]);
        let c = build(&doc);
        let nl = netlist::connect(&doc);
        let g = c.net_node[nl.net_by_name("g").unwrap()];
        let delay = 1e-6;
        let wave = Wave::Pulse {
            low: 0.0,
            high: s,
            delay,
            rise: 0.0,
            fall: 0.0,
            width: 1.0,
            period: 2.0,
        };
        let settings = TransientSettings {
            relative_tolerance: 1e-5,
            ..TransientSettings::default()
        };
        let mut e = Engine::new(
            &c,
            Drive {
                signal: Some((signal(&c), wave)),
                ramp: None,
            },
            settings,
        );
        let start = e.initial(false).unwrap();
        let tau = r * (cgs + cgd);
        let (w, _) = transient::record(&mut e, start, 5.0 * tau, &[], &mut |_| true).unwrap();
        let mut worst: f64 = 0.0;
        for (t, x) in w.times.iter().zip(&w.x) {
            let exact = if *t <= delay {
                0.0
            } else {
                s * (1.0 - (-(t - delay) / tau).exp())
            };
            worst = worst.max((x[g - 1] - exact).abs());
        }
        assert!(
            worst < 1e-4,
            "{kind:?}: largest error {worst:e} of the 1 V step"
        );
    }
}

#[test]
fn the_jfet_demo_reaches_its_steady_state_at_a_small_level() {
    // invariant: the shooting method's Newton step is shortened while it makes the period
    // worse, so a start far from the periodic solution is refused quickly instead of run
    // to the engine's step limit (this run used to stop after 5 million steps).
    let r = crate::cli_common::ran(&[
        "transient",
        "projects/piezo-jfet-preamp.json",
        "--amplitude",
        "2m",
        "--json",
    ]);
    assert_eq!(r.code, 0, "{}", r.message);
    let v: serde_json::Value = serde_json::from_str(&r.out).unwrap();
    let d = &v["distortion"];
    assert_eq!(d["settled"], true, "{}", r.out);
    // The buffer's and the chain's gain are linear at 2 mV: the output is about 105 times
    // the source (the 10 mV run's gain), within the curvature's few per cent.
    let out = d["output"]["spectrum"]["amplitude"][0].as_f64().unwrap();
    assert!((out / 2e-3 / 105.0 - 1.0).abs() < 0.05, "{out}");
}

#[test]
fn the_clip_search_names_a_fets_edges() {
    // common practice (no source): a common-source stage driven hard reaches the triode edge
    // on the gate's positive half-cycle (its drain current rises faster than it falls, by
    // the square law's curvature) — the clip search must say so, naming the FET, and list
    // the FET's nearest approach to both edges.
    let r = crate::cli_common::ran(&[
        "transient",
        "projects/mosfet-gain-stage.json",
        "--clip",
        "--thd",
        "10%",
        "--json",
    ]);
    assert_eq!(r.code, 0, "{}", r.message);
    let v: serde_json::Value = serde_json::from_str(&r.out).unwrap();
    let by = v["limited_by"].as_str().unwrap();
    assert!(by.contains("Q1") && by.contains("triode"), "{by}");
    let regions: Vec<&str> = v["approaches"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|a| a["transistor"] == "Q1")
        .map(|a| a["region"].as_str().unwrap())
        .collect();
    assert!(
        regions.contains(&"cut-off") && regions.contains(&"the triode edge"),
        "{regions:?}"
    );
}
