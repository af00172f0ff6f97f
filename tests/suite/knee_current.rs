//! High injection in the bipolar model: the forward knee current of Gummel
//! and Poon (Bell System Technical Journal 49, 1970) in the DC solve, the
//! small-signal figures, the time step and the warnings; without the key,
//! the subset's equations to the last bit.

use crate::common;

use biasline::analysis::circuit;
use biasline::analysis::devices::bjt::{BjtModel, Polarity};
use biasline::analysis::devices::kelvin;
use biasline::analysis::transient::steady::{self, SteadyOptions};
use biasline::analysis::transient::{Drive, Engine, Wave};
use biasline::analysis::{ac, dc, small_signal};
use biasline::document::Document;
use biasline::document::PartKind::*;
use biasline::netlist;
use biasline::presets::keys::*;
use common::{p, solved, transistor, with_preset};
use std::collections::BTreeMap;

/// A bare NPN whose base and collector are both held by voltage sources
/// (VBE = `vbe`, VCE = `vce`, no base resistance): the junction voltages are
/// exactly the sources'.
fn held(vbe: f64, vce: f64, params: &[(&str, f64)]) -> Document {
    let mut all: Vec<(&str, f64)> = vec![(SATURATION_CURRENT, 1e-14), (FORWARD_BETA, 100.0)];
    all.extend_from_slice(params);
    common::document(&[
        p("VB", VoltageSource, &["b", "0"], &[(VOLTAGE, vbe)]),
        p("VC", VoltageSource, &["c", "0"], &[(VOLTAGE, vce)]),
        p("Q1", Npn, &["c", "b", "0"], &all),
    ])
}

/// (IC, IB) of Q1 in `held`.
fn currents(vbe: f64, vce: f64, params: &[(&str, f64)]) -> (f64, f64) {
    let (_, _, op) = solved(&held(vbe, vce, params));
    let t = transistor(&op, "Q1");
    (t.ic, t.ib)
}

/// qb of Gummel and Poon with VA = VB = ∞ and VBC = 0, computed here on its own.
fn closed_form_qb(vbe: f64, is: f64, knee: f64, vt: f64) -> f64 {
    let q2 = is / knee * ((vbe / vt).exp() - 1.0);
    0.5 * (1.0 + (1.0 + 4.0 * q2).sqrt())
}

#[test]
fn collector_current_follows_the_closed_form_qb() {
    // source: Gummel and Poon, Bell System Technical Journal 49 (1970) — with VBC = 0 and no
    // Early voltages, q1 = 1, qb = (1/2)(1 + √(1 + 4·q2)), q2 = (Is/Ik)(exp(VBE/VT) − 1), and
    // IC = Is·(exp(VBE/VT) − 1)/qb, IB = (Is/βF)(exp(VBE/VT) − 1), so hFE = βF/qb.
    let knee = 0.05;
    let vt = biasline::analysis::thermal_voltage(kelvin(27.0));
    for vbe in [0.55, 0.7, 0.8, 0.9] {
        let (ic, ib) = currents(vbe, vbe, &[(FORWARD_KNEE_CURRENT, knee)]);
        let qb = closed_form_qb(vbe, 1e-14, knee, vt);
        let expect = 1e-14 * ((vbe / vt).exp() - 1.0) / qb;
        assert!(
            (ic / expect - 1.0).abs() < 1e-9,
            "VBE {vbe}: IC {ic} vs {expect}"
        );
        assert!(((ic / ib) / (100.0 / qb) - 1.0).abs() < 1e-9);
    }
}

#[test]
fn far_below_the_knee_the_current_is_the_subsets() {
    // source: Gummel and Poon (1970) — qb = 1 + q2 − q2² + … ≈ 1 + IC/Ik for q2 ≪ 1: at
    // IC = Ik/1000 the knee lowers IC by about 0.1 % (and not by nothing).
    let knee: f64 = 1.0;
    let vt = biasline::analysis::thermal_voltage(kelvin(27.0));
    // VBE where the subset's IC is Ik/1000.
    let vbe = vt * (1e-3 * knee / 1e-14 + 1.0).ln();
    let (plain, _) = currents(vbe, 5.0, &[]);
    let (with_knee, _) = currents(vbe, 5.0, &[(FORWARD_KNEE_CURRENT, knee)]);
    let drop = 1.0 - with_knee / plain;
    eprintln!("IC {plain} A without the knee, {with_knee} A with it: {drop:e} lower");
    assert!((plain / (1e-3 * knee) - 1.0).abs() < 1e-6);
    assert!(drop > 0.0 && drop <= 1e-3, "IC lowered by {drop}");
    assert!(drop > 0.9e-3, "IC lowered by only {drop}");
}

#[test]
fn far_above_the_knee_the_current_grows_at_half_the_slope() {
    // source: Gummel and Poon (1970) — for q2 ≫ 1, qb ≈ √q2, so IC ≈ √(Is·Ik)·exp(VBE/(2·VT)):
    // 60 mV more VBE multiply IC by e^(60 mV/(2·VT)) (about 3.19, where the subset gives 10.2).
    let knee: f64 = 0.01;
    let vt = biasline::analysis::thermal_voltage(kelvin(27.0));
    // q2 = 1e4 at the lower VBE: IC ≈ 100·Ik.
    let vbe = vt * (1e4 * knee / 1e-14).ln();
    let (ic1, ib1) = currents(vbe, vbe, &[(FORWARD_KNEE_CURRENT, knee)]);
    let (ic2, ib2) = currents(vbe + 0.06, vbe + 0.06, &[(FORWARD_KNEE_CURRENT, knee)]);
    let ratio = ic2 / ic1;
    let expect = (0.06 / (2.0 * vt)).exp();
    eprintln!("IC {ic1} → {ic2} A: ×{ratio:.4}, half-slope law ×{expect:.4}");
    assert!(
        (ratio / expect - 1.0).abs() < 0.02,
        "ratio {ratio} vs {expect}"
    );
    let asymptote = (1e-14 * knee).sqrt() * (vbe / (2.0 * vt)).exp();
    assert!((ic1 / asymptote - 1.0).abs() < 0.02, "{ic1} vs {asymptote}");
    // source: Gummel and Poon (1970), as power-transistor data sheets show — above the knee hFE
    // falls roughly as βF·Ik/IC.
    for (ic, ib) in [(ic1, ib1), (ic2, ib2)] {
        let hfe = ic / ib;
        let rough = 100.0 * knee / ic;
        assert!((hfe / rough - 1.0).abs() < 0.02, "hFE {hfe} vs {rough}");
    }
}

#[test]
fn without_a_knee_the_subsets_equations_hold_to_the_last_bit() {
    // invariant: no knee key = the subset of the reference page, computed in the same order
    // as before the knee existed (every figure of a file without the key is unchanged).
    let params: BTreeMap<String, f64> = [
        (FORWARD_EARLY_VOLTAGE, 80.0),
        (REVERSE_EARLY_VOLTAGE, 15.0),
        (REVERSE_BETA, 2.0),
        (FORWARD_BETA, 180.0),
    ]
    .iter()
    .map(|(k, v)| (k.to_string(), *v))
    .collect();
    let m = BjtModel::from_parameters(&params, Polarity::Npn, kelvin(27.0));
    assert!(!m.has_knee());
    let is = m.saturation_current;
    let vt = m.thermal_voltage;
    for &(vbe, vbc) in &[
        (0.65, -4.3),
        (0.72, 0.1),
        (0.7, 0.68),
        (-0.5, 0.6),
        (0.3, -11.0),
    ] {
        let (ebe, ebc) = ((vbe / vt).exp(), (vbc / vt).exp());
        let (debe, debc) = (ebe / vt, ebc / vt);
        let q = 1.0 - vbc / 80.0 - vbe / 15.0;
        let ict = is * (ebe - ebc) * q;
        let dict_dvbe = is * debe * q + is * (ebe - ebc) * -(1.0 / 15.0);
        let dict_dvbc = -is * debc * q + is * (ebe - ebc) * -(1.0 / 80.0);
        let ibc = is / 2.0 * (ebc - 1.0);
        let e = m.evaluate(vbe, vbc);
        assert_eq!(e.ic.to_bits(), (ict - ibc).to_bits(), "{vbe} {vbc}");
        assert_eq!(e.dic_dvbe.to_bits(), dict_dvbe.to_bits());
        assert_eq!(
            e.dic_dvbc.to_bits(),
            (dict_dvbc - is / 2.0 * debc).to_bits()
        );
    }
}

/// A common-emitter power stage on 12 V, biased well above the knee of the
/// generic power NPN (IC ≈ 3 A against Ik = 1.5 A), coupled in and out to an
/// 8 Ω load: an invented test fixture. `r1` sets the base current.
fn power_stage(r1: f64) -> Document {
    power_stage_of(r1, false)
}

/// [`power_stage`], or its mirror image with the generic power PNP on −12 V.
fn power_stage_of(r1: f64, pnp: bool) -> Document {
    let (supply, kind, preset) = if pnp {
        (-12.0, Pnp, "power-pnp")
    } else {
        (12.0, Npn, "power-npn")
    };
    let mut doc = common::document(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, supply)]),
        p("R1", Resistor, &["vcc", "b"], &[(RESISTANCE, r1)]),
        p("RC", Resistor, &["vcc", "c"], &[(RESISTANCE, 2.0)]),
        p("RE", Resistor, &["e", "0"], &[(RESISTANCE, 0.3)]),
        with_preset(p("Q1", kind, &["c", "b", "e"], &[]), preset),
        p(
            "VS",
            SignalSource,
            &["s", "0"],
            &[(AMPLITUDE, 0.01), (FREQUENCY, 1e3)],
        ),
        p(
            "RS",
            Resistor,
            &["s", "si"],
            &[(RESISTANCE, 10.0), (SOURCE_RESISTANCE_MARK, 1.0)],
        ),
        p("C1", Capacitor, &["si", "b"], &[(CAPACITANCE, 100e-6)]),
        p("C2", Capacitor, &["c", "out"], &[(CAPACITANCE, 100e-6)]),
        p("RL", Resistor, &["out", "0"], &[(RESISTANCE, 8.0)]),
    ]);
    doc.signal.source = Some("VS".into());
    doc.signal.load = Some("RL".into());
    doc
}

const KNEE: f64 = 1.5;

#[test]
fn a_stage_above_the_knee_satisfies_kcl_and_tellegen() {
    // invariant: Kirchhoff's current law at every node and Tellegen's theorem, currents
    // recomputed from the device equations with the knee.
    let doc = power_stage(100.0);
    let (_, c, op) = solved(&doc);
    let t = transistor(&op, "Q1");
    eprintln!("IC {} A, hFE {}", t.ic, t.dc_current_gain);
    assert!(t.ic > 1.5 * KNEE, "IC {} is not well above the knee", t.ic);
    common::assert_kcl_and_tellegen(&c, &op, "power stage above the knee");
    let (_, c, op) = solved(&power_stage_of(100.0, true));
    assert!(transistor(&op, "Q1").ic < -1.2);
    common::assert_kcl_and_tellegen(&c, &op, "PNP power stage above the knee");
}

/// Q1's IC and IB and its intrinsic VBE at VBE = `vbe`, VCE = 5 V, with the power preset's
/// knee and no base resistance.
fn power_part_at(vbe: f64) -> (Document, f64, f64) {
    let mut doc = common::document(&[
        p("VB", VoltageSource, &["b", "0"], &[(VOLTAGE, vbe)]),
        p("VC", VoltageSource, &["c", "0"], &[(VOLTAGE, 5.0)]),
        with_preset(
            p("Q1", Npn, &["c", "b", "0"], &[(BASE_RESISTANCE, 0.0)]),
            "power-npn",
        ),
    ]);
    doc.signal.source = None;
    let (_, _, op) = solved(&doc);
    let t = transistor(&op, "Q1");
    (doc, t.ic, t.ib)
}

#[test]
fn gm_and_hfe_above_the_knee_equal_finite_differences_of_the_solve() {
    // invariant: the small-signal gm = ∂IC/∂VBE and hfe = ∂IC/∂IB at constant VCE (the
    // y-parameters come from the Newton Jacobian) equal central differences of two DC solves.
    let vbe = 0.78;
    let (doc, ic, ib) = power_part_at(vbe);
    assert!(ic > 2.0 * KNEE, "IC {ic} is not above the knee");
    let nl = netlist::connect(&doc);
    let c = circuit::build(&doc, &nl).unwrap();
    let op = dc::solve_circuit(&c).unwrap();
    let ss = small_signal::linearise(&c, &op);
    let models = &ss.transistors[0].models;
    let h = 1e-6;
    let (_, icp, ibp) = power_part_at(vbe + h);
    let (_, icn, ibn) = power_part_at(vbe - h);
    let gm_fd = (icp - icn) / (2.0 * h);
    let hfe_fd = (icp - icn) / (ibp - ibn);
    let gm = models.hybrid_pi.gm;
    let hfe = models.hfe().unwrap();
    eprintln!(
        "IC {ic} A: gm {gm} S (differences {gm_fd}), hfe {hfe} ({hfe_fd}), hFE {}; \
         without the knee gm would be IC/VT = {}",
        ic / ib,
        ic / biasline::analysis::thermal_voltage(kelvin(27.0))
    );
    assert!((gm / gm_fd - 1.0).abs() < 1e-5, "gm {gm} vs {gm_fd}");
    assert!((hfe / hfe_fd - 1.0).abs() < 1e-5, "hfe {hfe} vs {hfe_fd}");
    // source: Gummel and Poon (1970) — far above the knee IC ∝ exp(VBE/(2·VT)), so gm tends
    // to IC/(2·VT); here (IC about twice the knee) it lies between that and IC/VT.
    let vt = biasline::analysis::thermal_voltage(kelvin(27.0));
    assert!(gm < 0.65 * ic / vt && gm > 0.5 * ic / vt, "gm {gm}");
}

/// The signal drive of `doc` replaced by a sine of `amplitude` at `f`.
fn sine_drive(doc: &Document, c: &circuit::Circuit, amplitude: f64, f: f64) -> Drive {
    let mut drive = steady::drive_of(doc, c);
    let Some((k, Wave::Sine { offset, .. })) = drive.signal.clone() else {
        panic!("sine source");
    };
    drive.signal = Some((
        k,
        Wave::Sine {
            amplitude,
            offset,
            frequency: f,
            delay: 0.0,
        },
    ));
    drive
}

#[test]
fn steady_state_above_the_knee_starts_at_the_operating_point_and_matches_the_small_signal_gain() {
    // invariant: the time step's DC start is the operating point, and at a small amplitude the
    // same model (currents and diffusion charge τF·ICT over the knee's qb), linearised, gives
    // the same gain and phase, at 1, 10 and 20 kHz. (Until the step control counted a charge
    // resolved only to the Newton test as at rest once the step had spiralled far below the
    // first step after a corner, this ampere-level stage's run stopped at 10 kHz and above:
    // the third differences of its 100 µF charges were noise that grew as the step shrank.
    // The diffusion charge's slopes are checked against differences in `devices::charge`.)
    let doc = power_stage(100.0);
    let nl = netlist::connect(&doc);
    let c = circuit::build(&doc, &nl).unwrap();
    let op = dc::solve_circuit(&c).unwrap();
    assert!(transistor(&op, "Q1").ic > 1.5 * KNEE);
    let amplitude = 1e-5;
    let mut e = Engine::new(
        &c,
        sine_drive(&doc, &c, amplitude, 1e3),
        doc.transient.clone(),
    );
    let start = e.initial(false).unwrap();
    let mut x = op.node_voltages[1..].to_vec();
    x.extend_from_slice(&op.branch_currents);
    for (a, b) in start.x.iter().zip(&x) {
        assert!(
            (a - b).abs() <= 1e-12 * b.abs().max(1.0),
            "start {a} vs {b}"
        );
    }
    let a = small_signal::analyse(&doc, &nl, &c, &op);
    let probes = steady::probes(&c, &nl, &a.chain);
    for f in [1e3, 1e4, 2e4] {
        let mut settings = doc.analysis.clone();
        settings.frequency_start = f;
        settings.frequency_stop = 10.0 * f;
        settings.points_per_decade = 1;
        let r = ac::sweep(&a.small_signal, &a.chain, &a.midband, &settings);
        let g = r.gain.expect("gain");
        let at = r
            .frequencies
            .iter()
            .position(|x| (x / f - 1.0).abs() < 1e-9)
            .unwrap();
        let (mag, phase) = (10f64.powf(g.magnitude_db[at] / 20.0), g.phase_degrees[at]);
        let mut ts = doc.transient.clone();
        ts.relative_tolerance = 1e-4;
        ts.settle_tolerance = 1e-5;
        let run = steady::run_sine(
            &c,
            sine_drive(&doc, &c, amplitude, f),
            &ts,
            &probes,
            &SteadyOptions::default(),
            &mut |_| true,
        )
        .expect("steady state above the knee converges");
        let out = &run.output.spectrum;
        let gain = out.amplitude[0] / amplitude;
        // The source is a sine: −90° against the cosine reference.
        let mut dphi = out.phase_degrees[0] + 90.0 - phase;
        dphi = (dphi + 540.0).rem_euclid(360.0) - 180.0;
        eprintln!(
        "{f} Hz: gain {gain} vs {mag} ({:.2e}), phase {phase:.2}°, error {dphi:.4}°, {} periods",
        gain / mag - 1.0,
        run.periods
    );
        assert!(
            (gain / mag - 1.0).abs() < 1e-3,
            "{f} Hz: gain {gain} vs {mag}"
        );
        assert!(dphi.abs() < 0.5, "{f} Hz: phase differs by {dphi}°");
    }
}

#[test]
fn the_knee_warning_names_the_part_and_its_current_gain() {
    // source: Gummel and Poon (1970) — above Ik the current gain falls; the warning says so
    // with the figures of the operating point, and says nothing below the knee.
    let has_knee_warning = |doc: &Document| {
        let (_, _, op) = solved(doc);
        let t = transistor(&op, "Q1").clone();
        let w: Vec<String> = op
            .warnings
            .iter()
            .filter(|w| {
                w.subject == netlist::Subject::Part("Q1".into()) && w.message.contains("knee")
            })
            .map(|w| w.message.clone())
            .collect();
        (t, w)
    };
    let (t, w) = has_knee_warning(&power_stage(100.0));
    assert_eq!(w.len(), 1, "{w:?}");
    let hfe = format!("hFE {:.0}", t.dc_current_gain);
    eprintln!("{}", w[0]);
    assert!(
        w[0].starts_with("Q1 runs above its knee current (") && w[0].contains("> 1.5 A)"),
        "{}",
        w[0]
    );
    assert!(w[0].ends_with(&hfe), "{} lacks {hfe}", w[0]);
    // hFE is well under βF = 100 there.
    assert!(t.dc_current_gain < 60.0);
    // Below the knee (IC ≈ 0.5 A) no such warning.
    let (t, w) = has_knee_warning(&power_stage(1000.0));
    assert!(t.ic < KNEE && t.ic > 0.1, "IC {}", t.ic);
    assert!(w.is_empty(), "{w:?}");
    // The mirror image with the power PNP (knee 1.2 A): the same words, currents as
    // magnitudes.
    let (t, w) = has_knee_warning(&power_stage_of(100.0, true));
    assert!(t.ic < -1.2, "IC {}", t.ic);
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(
        w[0].contains(&format!(
            "> 1.2 A): its current gain has fallen to hFE {:.0}",
            t.dc_current_gain
        )),
        "{}",
        w[0]
    );
    eprintln!("{}", w[0]);
    let (t, w) = has_knee_warning(&power_stage_of(1000.0, true));
    assert!(t.ic > -1.2 && t.ic < -0.1, "IC {}", t.ic);
    assert!(w.is_empty(), "{w:?}");
}

#[test]
fn a_knee_current_of_zero_or_below_is_refused_by_name() {
    // invariant: a knee current must be above zero; the finding names the part and the key.
    for bad in [0.0, -1.0] {
        let doc = held(0.7, 5.0, &[(FORWARD_KNEE_CURRENT, bad)]);
        let nl = netlist::connect(&doc);
        let findings = netlist::check(&doc, &nl);
        let f = findings
            .iter()
            .find(|f| f.message.contains("forward_knee_current"))
            .unwrap_or_else(|| panic!("no finding for {bad}: {findings:?}"));
        assert_eq!(f.severity, netlist::Severity::Error);
        assert_eq!(f.subject, netlist::Subject::Part("Q1".into()));
        assert!(f.message.contains("above zero"));
    }
    let doc = held(0.7, 5.0, &[(REVERSE_KNEE_CURRENT, -0.5)]);
    let nl = netlist::connect(&doc);
    assert!(netlist::check(&doc, &nl).iter().any(|f| f
        .message
        .contains("reverse_knee_current must be above zero")));
}
