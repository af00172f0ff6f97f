//! Transient analysis against closed forms: RC step, LC energy, half-wave
//! rectifier peak, a bare transistor's harmonics (modified Bessel
//! functions), a differential pair's harmonics (tanh law).

use crate::common;

use biasline::analysis::circuit::Circuit;
use biasline::analysis::circuit::ElementKind;
use biasline::analysis::transient::{self, companion, fourier, Drive, Engine, Wave};
use biasline::document::PartKind::*;
use biasline::document::{TransientSettings, Waveform};
use common::{build, document, node, p, signal};

#[test]
fn rc_step_follows_the_exponential() {
    // source: closed form of a first-order RC step, v = 1 − e^(−t/RC).
    let doc = document(&[
        p("VS", SignalSource, &["in", "0"], &[("amplitude", 0.0)]),
        p("R1", Resistor, &["in", "out"], &[("resistance", 1e3)]),
        p("C1", Capacitor, &["out", "0"], &[("capacitance", 1e-6)]),
    ]);
    let c = build(&doc);
    let out = node(&doc, &c, "out");
    let delay = 1e-4;
    let wave = Wave::Pulse {
        low: 0.0,
        high: 1.0,
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
    let (w, _) = transient::record(&mut e, start, 5e-3, &[], &mut |_| true).unwrap();
    let tau = 1e-3;
    let mut worst: f64 = 0.0;
    for (t, x) in w.times.iter().zip(&w.x) {
        let exact = if *t <= delay {
            0.0
        } else {
            1.0 - (-(t - delay) / tau).exp()
        };
        worst = worst.max((x[out - 1] - exact).abs());
    }
    eprintln!(
        "RC step: largest error {worst:e} over {} points",
        w.times.len()
    );
    assert!(worst < 1e-4, "largest error {worst:e} of the final value");
    assert!(w.times.len() > 20);
}

#[test]
fn lc_tank_keeps_its_energy_for_100_periods() {
    // source: the trapezoidal rule conserves the energy of an undamped LC
    // tank (it maps the quadratic invariant onto itself); E. Hairer, C. Lubich,
    // G. Wanner, "Geometric Numerical Integration", ch. IV (quadratic invariants).
    let doc = document(&[
        p("L1", Inductor, &["top", "0"], &[("inductance", 1e-3)]),
        p("C1", Capacitor, &["top", "0"], &[("capacitance", 1e-6)]),
    ]);
    let c = build(&doc);
    let top = node(&doc, &c, "top");
    let li = c.branch_row(c.branch_of[0].unwrap());
    let mut e = Engine::new(
        &c,
        Drive {
            signal: None,
            ramp: None,
        },
        TransientSettings::default(),
    );
    let mut x0 = vec![0.0; c.size()];
    x0[top - 1] = 1.0;
    let start = e.state_at(0.0, x0);
    let period = std::f64::consts::TAU * (1e-3f64 * 1e-6).sqrt();
    let (w, _) = transient::record(&mut e, start, 100.0 * period, &[], &mut |_| true).unwrap();
    let energy = |x: &Vec<f64>| 0.5 * 1e-6 * x[top - 1].powi(2) + 0.5 * 1e-3 * x[li].powi(2);
    let e0 = energy(&w.x[0]);
    let worst =
        w.x.iter()
            .map(|x| (energy(x) - e0).abs() / e0)
            .fold(0.0, f64::max);
    eprintln!(
        "LC tank: energy drift {worst:e} over {} steps",
        w.counts.steps
    );
    assert!(worst < 1e-3, "energy drifted by {worst:e}");
    // It did oscillate: the voltage went negative.
    assert!(w.x.iter().any(|x| x[top - 1] < -0.9));
}

#[test]
fn half_wave_rectifier_peak_follows_the_diode_law() {
    let doc = document(&[
        p(
            "VS",
            SignalSource,
            &["in", "0"],
            &[("amplitude", 5.0), ("frequency", 1e3)],
        ),
        p(
            "D1",
            Diode,
            &["in", "out"],
            &[
                ("saturation_current", 1e-14),
                ("emission_coefficient", 1.0),
                ("series_resistance", 0.0),
                ("junction_capacitance", 0.0),
                ("transit_time", 0.0),
            ],
        ),
        p("RL", Resistor, &["out", "0"], &[("resistance", 1e3)]),
    ]);
    let c = build(&doc);
    let out = node(&doc, &c, "out");
    let ElementKind::Diode(d) = &c.elements[1].kind else {
        panic!("D1 is a diode")
    };
    let (is, vt) = (d.saturation_current, d.thermal_voltage);
    let drive = Drive {
        signal: Some((
            signal(&c),
            Wave::Sine {
                amplitude: 5.0,
                offset: 0.0,
                frequency: 1e3,
                delay: 0.0,
            },
        )),
        ramp: None,
    };
    let mut e = Engine::new(&c, drive, TransientSettings::default());
    let start = e.initial(false).unwrap();
    let (w, _) = transient::record(&mut e, start, 1e-3, &[0.25e-3], &mut |_| true).unwrap();
    let k = w.landed[0];
    assert!((w.times[k] - 0.25e-3).abs() < 1e-15);
    let vp = w.x[k][out - 1];
    // source: Shockley diode law, 5 V = vp + VT·ln(vp/(R·Is) + 1), solved by bisection.
    let f = |v: f64| v + vt * (v / (1e3 * is) + 1.0).ln() - 5.0;
    let (mut lo, mut hi) = (1.0, 5.0);
    for _ in 0..200 {
        let m = 0.5 * (lo + hi);
        if f(m) > 0.0 {
            hi = m
        } else {
            lo = m
        }
    }
    eprintln!("rectifier: peak {vp} V, diode law {lo} V");
    assert!((vp - lo).abs() < 1e-6, "peak {vp} V, diode law {lo} V");
    // Reverse half: the output stays near zero.
    assert!(w.x.iter().all(|x| x[out - 1] > -1e-9));
}

/// Modified Bessel function of the first kind by its power series.
fn bessel_i(n: u32, x: f64) -> f64 {
    // source: Abramowitz and Stegun 9.6.10, I_n(x) = Σ (x/2)^(2k+n)/(k!(n+k)!).
    let mut term = (0.5 * x).powi(n as i32) / (1..=n).map(f64::from).product::<f64>();
    let mut sum = term;
    for k in 1..200 {
        term *= (0.25 * x * x) / (k as f64 * (n as f64 + k as f64));
        sum += term;
        if term < 1e-18 * sum {
            break;
        }
    }
    sum
}

/// Harmonic amplitudes of a pin current over one period of the signal.
fn current_harmonics(
    c: &Circuit,
    drive: Drive,
    element: usize,
    pin: usize,
    other: Option<(usize, usize)>,
) -> fourier::Spectrum {
    let period = 1e-3;
    let n = 64;
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
        .map(|&k| {
            let all = w.pin_currents(c, &slots, k);
            let a = all[element][pin];
            match other {
                Some((e2, p2)) => a - all[e2][p2],
                None => a,
            }
        })
        .collect();
    fourier::spectrum(&samples, 1)
}

#[test]
fn bare_transistor_harmonics_are_bessel_ratios() {
    let doc = document(&[
        p(
            "VS",
            SignalSource,
            &["b", "0"],
            &[("amplitude", 0.0), ("dc_offset", 0.6)],
        ),
        p("VC", Rail, &["c"], &[("voltage", 5.0)]),
        p(
            "Q1",
            Npn,
            &["c", "b", "0"],
            &[
                ("base_resistance", 0.0),
                ("emitter_junction_capacitance", 0.0),
                ("collector_junction_capacitance", 0.0),
                ("forward_transit_time", 0.0),
            ],
        ),
    ]);
    let c = build(&doc);
    let q = c
        .elements
        .iter()
        .position(|e| e.designator == "Q1")
        .unwrap();
    let ElementKind::Bjt { model, .. } = &c.elements[q].kind else {
        panic!()
    };
    assert!(model.forward_early_voltage.is_infinite());
    let vt = model.thermal_voltage;
    for x in [0.05, 0.1, 0.2, 0.5, 1.0, 2.0] {
        let drive = Drive {
            signal: Some((
                signal(&c),
                Wave::Sine {
                    amplitude: x * vt,
                    offset: 0.6,
                    frequency: 1e3,
                    delay: 0.0,
                },
            )),
            ramp: None,
        };
        let sp = current_harmonics(&c, drive, q, 0, None);
        let (a1, a2, a3) = (sp.amplitude[0], sp.amplitude[1], sp.amplitude[2]);
        // source: Gray, Hurst, Lewis, Meyer, Analysis and Design of Analog
        // Integrated Circuits, ch. 1/5: In = 2·IS·e^(VBE0/VT)·I_n(x).
        let hd2 = bessel_i(2, x) / bessel_i(1, x);
        let hd3 = bessel_i(3, x) / bessel_i(1, x);
        eprintln!(
            "x = {x}: HD2 error {:.2e}, HD3 error {:.2e}",
            (a2 / a1) / hd2 - 1.0,
            (a3 / a1) / hd3 - 1.0
        );
        assert!(
            ((a2 / a1) / hd2 - 1.0).abs() < 0.01,
            "x = {x}: HD2 {} vs {hd2}",
            a2 / a1
        );
        assert!(
            ((a3 / a1) / hd3 - 1.0).abs() < 0.01,
            "x = {x}: HD3 {} vs {hd3}",
            a3 / a1
        );
    }
}

#[test]
fn differential_pair_has_odd_harmonics_of_tanh() {
    let bjt = [
        ("base_resistance", 0.0),
        ("emitter_junction_capacitance", 0.0),
        ("collector_junction_capacitance", 0.0),
        ("forward_transit_time", 0.0),
    ];
    let doc = document(&[
        p("VS", SignalSource, &["b1", "0"], &[("amplitude", 0.0)]),
        p("VC", Rail, &["vcc"], &[("voltage", 5.0)]),
        p("VE", Rail, &["vee"], &[("voltage", -5.0)]),
        p("Q1", Npn, &["vcc", "b1", "tail"], &bjt),
        p("Q2", Npn, &["c2", "0", "tail"], &bjt),
        p("VC2", Rail, &["c2"], &[("voltage", 5.0)]),
        p("IEE", CurrentSource, &["vee", "tail"], &[("current", 1e-3)]),
    ]);
    let c = build(&doc);
    let q1 = c
        .elements
        .iter()
        .position(|e| e.designator == "Q1")
        .unwrap();
    let q2 = c
        .elements
        .iter()
        .position(|e| e.designator == "Q2")
        .unwrap();
    let ElementKind::Bjt { model, .. } = &c.elements[q1].kind else {
        panic!()
    };
    let vt = model.thermal_voltage;
    for a in [0.01, 0.03, 0.06] {
        let drive = Drive {
            signal: Some((
                signal(&c),
                Wave::Sine {
                    amplitude: a,
                    offset: 0.0,
                    frequency: 1e3,
                    delay: 0.0,
                },
            )),
            ramp: None,
        };
        let sp = current_harmonics(&c, drive, q1, 0, Some((q2, 0)));
        // source: Gray, Hurst, Lewis, Meyer, ch. 3/5: ΔIC = α·IEE·tanh(vd/(2VT)),
        // an odd function: even harmonics vanish.
        for h in [2, 4, 6] {
            assert!(
                sp.relative_db[h - 2] < -80.0,
                "a = {a}: H{h} {} dB",
                sp.relative_db[h - 2]
            );
        }
        // The tanh law's own harmonics, by a fine numerical Fourier integral.
        let m = 20000;
        let harmonic = |h: usize| {
            let mut im = 0.0;
            for j in 0..m {
                let th = std::f64::consts::TAU * j as f64 / m as f64;
                im += (a * th.sin() / (2.0 * vt)).tanh() * (h as f64 * th).sin();
            }
            2.0 * im / m as f64
        };
        let (t1, t3, t5) = (harmonic(1), harmonic(3), harmonic(5));
        let hd3 = sp.amplitude[2] / sp.amplitude[0];
        eprintln!(
            "pair a = {a}: H2 {:.0} dB, HD3 error {:.2e}, HD5 error {:.2e}",
            sp.relative_db[0],
            hd3 / (t3 / t1).abs() - 1.0,
            (sp.amplitude[4] / sp.amplitude[0]) / (t5 / t1).abs() - 1.0
        );
        assert!(
            (hd3 / (t3 / t1).abs() - 1.0).abs() < 0.01,
            "a = {a}: HD3 {hd3} vs {}",
            t3 / t1
        );
        if (t5 / t1).abs() > 1e-5 {
            let hd5 = sp.amplitude[4] / sp.amplitude[0];
            assert!(
                (hd5 / (t5 / t1).abs() - 1.0).abs() < 0.01,
                "a = {a}: HD5 {hd5}"
            );
        }
    }
}

#[test]
fn waveform_keys_read_from_a_project_file() {
    // invariant: a file's waveform reaches the engine as written.
    let mut doc = document(&[
        p(
            "VS",
            SignalSource,
            &["in", "0"],
            &[("amplitude", 0.1), ("frequency", 500.0)],
        ),
        p("R1", Resistor, &["in", "0"], &[("resistance", 1e3)]),
    ]);
    let c = build(&doc);
    let (_, w) = Drive::from_document(&doc, &c).unwrap();
    assert_eq!(
        w,
        Wave::Sine {
            amplitude: 0.1,
            offset: 0.0,
            frequency: 500.0,
            delay: 0.0
        }
    );
    doc.signal.waveform =
        Some(serde_json::from_str::<Waveform>(r#"{"shape":"sine","amplitude":"20 mV"}"#).unwrap());
    let (_, w) = Drive::from_document(&doc, &c).unwrap();
    assert!((w.value(0.5e-3) - 0.02).abs() < 1e-15);
}

#[test]
fn power_on_ramp_charges_an_rc_as_the_closed_form() {
    // source: closed form of an RC driven by a ramp V·t/T (t ≤ T):
    // v = (V/T)·(t − τ·(1 − e^(−t/τ))), then a step response from there.
    let doc = document(&[
        p("VCC", Rail, &["vcc"], &[("voltage", 5.0)]),
        p("R1", Resistor, &["vcc", "out"], &[("resistance", 1e3)]),
        p("C1", Capacitor, &["out", "0"], &[("capacitance", 1e-6)]),
    ]);
    let c = build(&doc);
    let out = node(&doc, &c, "out");
    let (ramp, tau, v) = (2e-3, 1e-3, 5.0);
    let settings = TransientSettings {
        relative_tolerance: 1e-5,
        ..TransientSettings::default()
    };
    let mut e = Engine::new(
        &c,
        Drive {
            signal: None,
            ramp: Some(ramp),
        },
        settings,
    );
    let start = e.initial(true).unwrap();
    let (w, _) = transient::record(&mut e, start, 6e-3, &[], &mut |_| true).unwrap();
    let at_ramp_end = v / ramp * (ramp - tau * (1.0 - (-ramp / tau).exp()));
    let mut worst: f64 = 0.0;
    for (t, x) in w.times.iter().zip(&w.x) {
        let exact = if *t <= ramp {
            v / ramp * (t - tau * (1.0 - (-t / tau).exp()))
        } else {
            v - (v - at_ramp_end) * (-(t - ramp) / tau).exp()
        };
        worst = worst.max((x[out - 1] - exact).abs() / v);
    }
    eprintln!("power-on ramp: largest error {worst:e} of the supply");
    assert!(worst < 1e-4, "largest error {worst:e} of the supply");
}

#[test]
fn a_run_that_stops_names_time_net_and_part() {
    // invariant: a stopped run says where — the time, the net, the part.
    let doc = document(&[
        p("VS", SignalSource, &["in", "0"], &[("amplitude", 1.0)]),
        p("D1", Diode, &["in", "out"], &[]),
        p("RL", Resistor, &["out", "0"], &[("resistance", 1e3)]),
    ]);
    let c = build(&doc);
    let out = node(&doc, &c, "out");
    let drive = Drive {
        signal: Drive::from_document(&doc, &c),
        ramp: None,
    };
    let mut e = Engine::new(&c, drive, TransientSettings::default());
    let start = e.initial(false).unwrap();
    let at = e.state_at(2.5e-4, start.x.clone());
    let m = e
        .stop_message(&at, "a step did not converge", Some((out - 1, None)))
        .to_string();
    assert!(m.contains("stopped at t = 250 µs"), "{m}");
    assert!(m.contains("net out"), "{m}");
    assert!(m.contains("part D1") || m.contains("part RL"), "{m}");
    // A run that cannot go on is cancelled cleanly, not hung.
    let err = transient::record(&mut e, start, 1e-3, &[], &mut |_| false).unwrap_err();
    assert!(err.to_string().contains("cancelled"));
}
