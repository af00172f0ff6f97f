//! Transient analysis on the demo projects: the small-signal limit, charge
//! conservation, the clip level against the load-line estimate.

use crate::common;

use biasline::analysis::circuit;
use biasline::analysis::transient::steady::{self, SteadyOptions};
use biasline::analysis::transient::{self, clip, companion, Engine, Wave};
use biasline::analysis::{ac, dc, small_signal};
use biasline::document::PartKind::*;
use biasline::document::{self, Document};
use biasline::netlist;
use common::p;
use std::path::Path;

fn demo(name: &str) -> Document {
    document::load_file(
        &Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("projects")
            .join(name),
    )
    .expect("demo loads")
}

fn demos() -> Vec<(String, Document)> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("projects");
    let mut out: Vec<(String, Document)> = std::fs::read_dir(dir)
        .unwrap()
        .filter_map(|e| {
            let p = e.ok()?.path();
            (p.extension()? == "json").then(|| {
                (
                    p.file_name().unwrap().to_string_lossy().into_owned(),
                    document::load_file(&p).unwrap(),
                )
            })
        })
        .collect();
    out.sort_by(|a, b| a.0.cmp(&b.0));
    out
}

/// Small-signal gain (magnitude, phase in degrees) from the source to the
/// output at `f`.
fn small_signal_gain(doc: &Document, f: f64) -> Option<(f64, f64)> {
    let nl = netlist::connect(doc);
    let c = circuit::build(doc, &nl).ok()?;
    let op = dc::solve_circuit(&c).ok()?;
    let a = small_signal::analyse(doc, &nl, &c, &op);
    let mut settings = doc.analysis.clone();
    settings.frequency_start = f;
    settings.frequency_stop = 10.0 * f;
    settings.points_per_decade = 1;
    let r = ac::sweep(&a.small_signal, &a.chain, &a.midband, &settings);
    let g = r.gain?;
    let k = r
        .frequencies
        .iter()
        .position(|x| (x / f - 1.0).abs() < 1e-9)?;
    Some((10f64.powf(g.magnitude_db[k] / 20.0), g.phase_degrees[k]))
}

#[test]
fn small_amplitude_transient_gain_equals_the_small_signal_gain() {
    // invariant: the same model, linearised, gives the same gain and phase
    // at small amplitude.
    let mut checked = 0;
    for (name, doc) in demos() {
        let Some((mag, phase)) = small_signal_gain(&doc, 1e3) else {
            continue;
        };
        let nl = netlist::connect(&doc);
        let c = circuit::build(&doc, &nl).unwrap();
        let mut d = doc.clone();
        d.signal.waveform = None;
        let amplitude = 1e-5;
        let drive = steady::drive_of(&d, &c);
        let Some((k, Wave::Sine { offset, .. })) = drive.signal.clone() else {
            continue;
        };
        let mut drive = drive;
        drive.signal = Some((
            k,
            Wave::Sine {
                amplitude,
                offset,
                frequency: 1e3,
                delay: 0.0,
            },
        ));
        let chain = biasline::analysis::stages::recognise(&d, &nl);
        let probes = steady::probes(&c, &nl, &chain);
        let mut settings = d.transient.clone();
        settings.relative_tolerance = 1e-4;
        settings.settle_tolerance = 1e-5;
        let r = steady::run_sine(
            &c,
            drive,
            &settings,
            &probes,
            &SteadyOptions::default(),
            &mut |_| true,
        )
        .unwrap();
        let out = &r.output.spectrum;
        let gain = out.amplitude[0] / amplitude;
        // The source is a sine: −90° against the cosine reference.
        let mut dphi = out.phase_degrees[0] + 90.0 - phase;
        dphi = (dphi + 540.0).rem_euclid(360.0) - 180.0;
        eprintln!(
            "{name}: gain error {:.2e}, phase error {dphi:.4}°, {} periods",
            gain / mag - 1.0,
            r.periods
        );
        assert!(
            (gain / mag - 1.0).abs() < 1e-3,
            "{name}: transient gain {gain}, small-signal {mag}"
        );
        assert!(dphi.abs() < 0.5, "{name}: phase differs by {dphi}°");
        checked += 1;
    }
    assert!(checked >= 3, "only {checked} demos checked");
}

#[test]
fn a_coupling_capacitor_carries_no_net_charge_per_period() {
    // invariant: charge conservation — in steady state the current of a
    // capacitor integrates to zero over a period.
    let doc = demo("two-stage-preamp.json");
    let nl = netlist::connect(&doc);
    let c = circuit::build(&doc, &nl).unwrap();
    let mut drive = steady::drive_of(&doc, &c);
    let period = match &drive.signal {
        Some((_, w)) => w.period().unwrap(),
        None => panic!("the demo has a source"),
    };
    drive.ramp = None;
    let mut e = Engine::new(&c, drive, doc.transient.clone());
    let start = e.initial(false).unwrap();
    let settle = e
        .advance(start, 30.0 * period, &[], &mut |_, _| {}, &mut |_| true)
        .unwrap();
    let t0 = settle.t;
    let (w, _) = transient::record(&mut e, settle, t0 + period, &[], &mut |_| true).unwrap();
    let slots = companion::slots(&c);
    let mut checked = 0;
    for (k, s) in slots.iter().enumerate() {
        if !matches!(s.kind, companion::SlotKind::Capacitor(_)) {
            continue;
        }
        let (mut net, mut gross) = (0.0, 0.0);
        for j in 1..w.times.len() {
            let h = w.times[j] - w.times[j - 1];
            let (a, b) = (w.slot_currents[j - 1][k], w.slot_currents[j][k]);
            net += 0.5 * h * (a + b);
            gross += 0.5 * h * (a.abs() + b.abs());
        }
        if gross > 0.0 {
            eprintln!(
                "{}: net/gross charge {:.2e}",
                c.elements[s.element].designator,
                net / gross
            );
            assert!(
                net.abs() < 2e-3 * gross,
                "{}: net charge {net:e} C of {gross:e} C moved",
                c.elements[s.element].designator
            );
            checked += 1;
        }
    }
    assert!(checked >= 2);
}

/// A common-emitter stage with an unbypassed emitter resistor (gain about
/// −2.4), coupled in and out, on 12 V: an invented test fixture.
fn degenerated_ce(rc: f64, r1: f64) -> Document {
    let mut doc = common::document(&[
        p("VCC", Rail, &["vcc"], &[("voltage", 12.0)]),
        p("R1", Resistor, &["vcc", "b"], &[("resistance", r1)]),
        p("R2", Resistor, &["b", "0"], &[("resistance", 10e3)]),
        p("RC", Resistor, &["vcc", "c"], &[("resistance", rc)]),
        p("RE", Resistor, &["e", "0"], &[("resistance", 1e3)]),
        common::with_preset(p("Q1", Npn, &["c", "b", "e"], &[]), "small-signal-npn"),
        p(
            "VS",
            SignalSource,
            &["s", "0"],
            &[("amplitude", 0.1), ("frequency", 1e3)],
        ),
        p(
            "RS",
            Resistor,
            &["s", "si"],
            &[("resistance", 1e3), ("source_resistance_mark", 1.0)],
        ),
        p("C1", Capacitor, &["si", "b"], &[("capacitance", 10e-6)]),
        p("C2", Capacitor, &["c", "out"], &[("capacitance", 10e-6)]),
        p("RL", Resistor, &["out", "0"], &[("resistance", 10e3)]),
    ]);
    doc.signal.source = Some("VS".into());
    doc.signal.load = Some("RL".into());
    doc
}

#[test]
fn ce_stage_clips_near_the_load_line_estimate() {
    // common practice (no source): the load-line swing predicts the clip
    // level of a common-emitter stage within about 20 %, and the limit the
    // operating point's margins name (cut-off or saturation) is the one hit.
    for (rc, r1) in [(3.3e3, 47e3), (3.3e3, 27e3)] {
        let doc = degenerated_ce(rc, r1);
        let nl = netlist::connect(&doc);
        let c = circuit::build(&doc, &nl).unwrap();
        let r = clip::search(&doc, &nl, &c, clip::DEFAULT_THD_LIMIT, &mut |_| true).unwrap();
        let a = r.amplitude.expect("a clip level");
        let e = r.estimate.expect("a load-line estimate");
        eprintln!(
            "R1 {r1}: clip {a:.4} V, estimate {e:.4} V ({:?}), {:+.1} %, {}",
            r.estimate_limit,
            (a - e) / e * 100.0,
            r.limited_by
        );
        assert!(
            ((a - e) / e).abs() < 0.2,
            "clip at {a} V, estimate {e} V ({:?})",
            r.limited_by
        );
        let want = match r.estimate_limit.as_deref() {
            Some("saturation") => "saturation",
            _ => "cut-off",
        };
        assert!(
            r.limited_by.contains(want),
            "limited by {:?}, the margins predict {want}",
            r.limited_by
        );
    }
}
