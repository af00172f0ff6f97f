//! The periodic steady state by the shooting method (issue 18 item 14):
//! closed forms of linear circuits driven by a sine, and the two-stage
//! preamp demo against a 1,000-period run.

use crate::common;

use biasline::analysis::circuit;
use biasline::analysis::transient::steady::{self, Distortion, SteadyOptions};
use biasline::analysis::transient::{Drive, Wave};
use biasline::document::PartKind::*;
use biasline::document::{self, Document, TransientSettings};
use biasline::netlist;
use common::{build, document, node, p, signal};
use std::f64::consts::TAU;

/// A sine of 1 V peak at `f` into `doc` to steady state; input net `in`,
/// output net `out`.
fn sine_run(doc: &Document, f: f64, options: &SteadyOptions) -> Distortion {
    let c = build(doc);
    let probes = vec![
        (node(doc, &c, "in"), "in".to_string(), None),
        (node(doc, &c, "out"), "out".to_string(), None),
    ];
    let drive = Drive {
        signal: Some((
            signal(&c),
            Wave::Sine {
                amplitude: 1.0,
                offset: 0.0,
                frequency: f,
                delay: 0.0,
            },
        )),
        ramp: None,
    };
    steady::run_sine(
        &c,
        drive,
        &TransientSettings::default(),
        &probes,
        options,
        &mut |_| true,
    )
    .expect("steady state")
}

/// Gain and phase (degrees) of the output's fundamental against the input's.
fn gain_phase(d: &Distortion) -> (f64, f64) {
    let gain = d.output.spectrum.amplitude[0] / d.input.spectrum.amplitude[0];
    let mut phase = d.output.spectrum.phase_degrees[0] - d.input.spectrum.phase_degrees[0];
    while phase > 180.0 {
        phase -= 360.0;
    }
    while phase < -180.0 {
        phase += 360.0;
    }
    (gain, phase)
}

fn rc(r: f64, cap: f64) -> Document {
    document(&[
        p("VS", SignalSource, &["in", "0"], &[("amplitude", 1.0)]),
        p("R1", Resistor, &["in", "out"], &[("resistance", r)]),
        p("C1", Capacitor, &["out", "0"], &[("capacitance", cap)]),
    ])
}

#[test]
fn rc_low_pass_amplitude_and_phase_are_the_closed_form() {
    // source: first-order low-pass, |H| = 1/√(1+(ωRC)²), ∠H = −atan(ωRC)
    // (any circuits text, e.g. Hayt, Kemmerly, Durbin, Engineering Circuit
    // Analysis, ch. 10 and 16).
    let f = 1e3;
    for (r, cap, what) in [
        (1e3, 1.0 / (TAU * 1e3 * 1e3), "ωRC = 1"),
        // τ = RC = 100 periods: a sine started at t = 0 leaves a DC offset of
        // about A/(ωRC) on the capacitor that a period-to-period test sees
        // decaying for hundreds of periods.
        (10e3, 10e-6, "ωRC = 628"),
    ] {
        let d = sine_run(&rc(r, cap), f, &SteadyOptions::default());
        let wrc = TAU * f * r * cap;
        let (gain, phase) = gain_phase(&d);
        let exact_gain = 1.0 / (1.0 + wrc * wrc).sqrt();
        let exact_phase = -wrc.atan().to_degrees();
        let mean = d.output.spectrum.mean;
        eprintln!(
            "RC {what}: {} periods, gain error {:.2e}, phase error {:.2e}°, mean {mean:.2e} V",
            d.periods,
            gain / exact_gain - 1.0,
            phase - exact_phase
        );
        assert!(d.settled, "{what}: not settled");
        assert!(
            (gain / exact_gain - 1.0).abs() < 1e-4,
            "{what}: gain {gain} vs {exact_gain}"
        );
        assert!(
            (phase - exact_phase).to_radians().abs() < 1e-4,
            "{what}: phase {phase}° vs {exact_phase}°"
        );
        // invariant: a linear circuit driven by a zero-mean sine has a
        // zero-mean steady state.
        assert!(
            mean.abs() < 1e-4 * d.output.spectrum.amplitude[0],
            "{what}: mean {mean} V"
        );
        assert!(d.periods < 40, "{what}: {} periods", d.periods);
    }
}

#[test]
fn series_rlc_near_resonance_phase_within_a_hundredth_of_a_degree() {
    // source: series RLC, the current I = V/(R + j(ωL − 1/(ωC))), so the
    // voltage across R has phase −atan((ωL − 1/(ωC))/R) (Hayt, Kemmerly,
    // Durbin, ch. 16, resonance). L = 10 mH, C = 1 µF: f0 = 1.592 kHz,
    // Q = 10; driven at 1.5 kHz.
    let (l, cap, r) = (10e-3, 1e-6, 10.0);
    let doc = document(&[
        p("VS", SignalSource, &["in", "0"], &[("amplitude", 1.0)]),
        p("L1", Inductor, &["in", "a"], &[("inductance", l)]),
        p("C1", Capacitor, &["a", "out"], &[("capacitance", cap)]),
        p("R1", Resistor, &["out", "0"], &[("resistance", r)]),
    ]);
    for f in [1.5e3, 1.6e3] {
        let d = sine_run(&doc, f, &SteadyOptions::default());
        let w = TAU * f;
        let x = w * l - 1.0 / (w * cap);
        let exact_phase = -(x / r).atan().to_degrees();
        let exact_gain = r / (r * r + x * x).sqrt();
        let (gain, phase) = gain_phase(&d);
        let db = 20.0 * (gain / exact_gain).log10();
        eprintln!(
            "series RLC at {f} Hz: phase error {:.4}°, gain error {db:.4} dB, {} periods",
            phase - exact_phase,
            d.periods
        );
        assert!(d.settled);
        assert!(
            (phase - exact_phase).abs() < 0.01,
            "{f} Hz: phase {phase}° vs {exact_phase}°"
        );
        assert!(db.abs() < 0.1, "{f} Hz: gain off by {db} dB");
    }
}

#[test]
fn preamp_steady_state_agrees_with_a_thousand_periods() {
    // invariant: the periodic solution found by shooting is the one a long
    // run converges to (the demo is an invented scenario).
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/two-stage-preamp.json"
    );
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let nl = netlist::connect(&doc);
    let c = circuit::build(&doc, &nl).expect("circuit");
    let shot = steady::distortion(&doc, &nl, &c, &SteadyOptions::default(), &mut |_| true)
        .expect("steady state");
    let long = steady::distortion(
        &doc,
        &nl,
        &c,
        &SteadyOptions {
            periods: Some(1000),
            ..SteadyOptions::default()
        },
        &mut |_| true,
    )
    .expect("1,000 periods");
    let swing = 0.5 * long.output.peak_to_peak;
    for (a, b) in [(&shot.output, &long.output), (&shot.input, &long.input)]
        .into_iter()
        .chain(shot.stages.iter().zip(&long.stages))
    {
        eprintln!(
            "{}: DC shift {:.3e} V (shooting, {} periods) vs {:.3e} V (1,000 periods); THD {:.5} % vs {:.5} %",
            a.net,
            a.dc_shift,
            shot.periods,
            b.dc_shift,
            100.0 * a.spectrum.thd,
            100.0 * b.spectrum.thd
        );
        // The stated steady-state tolerance (settle_tolerance × swing).
        let tol = TransientSettings::default().settle_tolerance * swing;
        assert!(
            (a.dc_shift - b.dc_shift).abs() < tol,
            "{}: DC shift {} vs {}",
            a.net,
            a.dc_shift,
            b.dc_shift
        );
        assert!(
            (a.spectrum.thd / b.spectrum.thd - 1.0).abs() < 1e-3,
            "{}: THD {} vs {}",
            a.net,
            a.spectrum.thd,
            b.spectrum.thd
        );
    }
    // invariant: the load sits behind a coupling capacitor, whose mean
    // current over a period of the periodic solution is zero, so the load's
    // mean voltage is its operating-point value (0 V).
    assert!(
        shot.output.dc_shift.abs() < 1e-6 * swing,
        "load DC shift {} V",
        shot.output.dc_shift
    );
    assert!(shot.settled);
    assert!(shot.shooting_iterations > 0);
    assert!(shot.periods < 100, "{} periods", shot.periods);
}

#[test]
fn clip_reports_the_thd_of_the_level_found() {
    // invariant: the THD printed beside the clip level is measured at that
    // level, so it meets the limit searched for (the bracket's upper trial,
    // printed before, was 1.0031 % for a 1 % limit on this demo).
    use biasline::analysis::transient::clip;
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/two-stage-preamp.json"
    );
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let nl = netlist::connect(&doc);
    let c = circuit::build(&doc, &nl).expect("circuit");
    let limit = clip::DEFAULT_THD_LIMIT;
    let found = clip::search(&doc, &nl, &c, limit, &mut |_| true).expect("clip search");
    let thd = found.thd.expect("a level was found");
    eprintln!("clip: {:?} V, THD {:.5} %", found.amplitude, 100.0 * thd);
    assert!(
        (thd / limit - 1.0).abs() < 1e-3,
        "THD {thd} at the level found"
    );
    let at = found.at_clip.expect("waveform at the level");
    assert_eq!(Some(at.amplitude), found.amplitude);
}

#[test]
fn steady_state_csv_names_each_net_once() {
    // invariant: a CSV header names each column once; the photodiode demo's
    // output is also its stage's output (it printed vout_volts twice).
    let r = crate::cli_common::ran(&["transient", "projects/photodiode-buffer.json", "--csv"]);
    let header = r.out.lines().next().unwrap_or_default().to_string();
    let names: Vec<&str> = header.split(',').collect();
    let mut unique = names.clone();
    unique.sort_unstable();
    unique.dedup();
    assert_eq!(names.len(), unique.len(), "header {header}");
    assert!(names.contains(&"vout_volts") && names.contains(&"pd_volts"));
}

#[test]
fn net_without_for_is_refused_with_a_message() {
    // common practice (no source): an option that would be ignored is refused.
    let r = crate::cli_common::ran(&[
        "transient",
        "projects/two-stage-preamp.json",
        "--net",
        "vout",
    ]);
    assert_eq!(r.code, crate::cli_common::EXIT_CANNOT, "{r:?}");
    assert!(r.message.contains("--net") && r.message.contains("--for"));
    let r = crate::cli_common::ran(&[
        "transient",
        "projects/two-stage-preamp.json",
        "--for",
        "2ms",
        "--net",
        "vout",
        "--csv",
    ]);
    assert_eq!(r.code, crate::cli_common::EXIT_CLEAN, "{r:?}");
    assert!(r.out.starts_with("time_seconds,vout_volts"));
}
