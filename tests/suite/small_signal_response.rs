//! Frequency response: sweep grid, corners against RC formulas, short-circuit
//! time constants and the Miller estimate.

use crate::common;
use crate::ss_common;

use biasline::analysis::ac::{self, FrequencyResponse};
use biasline::analysis::small_signal::Analysis;
use biasline::document::Document;
use biasline::presets::keys::*;
use ss_common::*;
use std::f64::consts::PI;

fn respond(doc: &Document) -> (Analysis, FrequencyResponse) {
    let a = analyse(doc);
    let r = ac::sweep(&a.small_signal, &a.chain, &a.midband, &doc.analysis);
    (a, r)
}

fn rc_document(high_pass: bool, r: f64, c: f64) -> Document {
    use biasline::document::PartKind::*;
    use common::p;
    let rp = [(RESISTANCE, r)];
    let cp = [(CAPACITANCE, c)];
    let parts = if high_pass {
        vec![
            p("VS", SignalSource, &["s", "0"], &[(AMPLITUDE, 1.0)]),
            p("C1", Capacitor, &["s", "o"], &cp),
            p("R1", Resistor, &["o", "0"], &rp),
        ]
    } else {
        vec![
            p("VS", SignalSource, &["s", "0"], &[(AMPLITUDE, 1.0)]),
            p("R1", Resistor, &["s", "o"], &rp),
            p("C1", Capacitor, &["o", "0"], &cp),
        ]
    };
    let mut doc = common::document(&parts);
    doc.signal.source = Some("VS".into());
    doc.signal.load = Some(if high_pass { "R1" } else { "C1" }.into());
    doc
}

#[test]
fn default_sweep_is_161_points() {
    // common practice (no source): 1 Hz to 100 MHz at 20 points per decade, both ends included
    let (_, r) = respond(&load("projects/common-emitter.json"));
    assert_eq!(r.frequencies.len(), 161);
    assert_eq!(r.gain.as_ref().unwrap().magnitude_db.len(), 161);
    assert_eq!(r.stages.len(), 1);
    assert!(!r.supply_rejection.is_empty());
}

#[test]
fn rc_high_pass_corner_from_the_sweep() {
    // source: Sedra and Smith, "Microelectronic Circuits", single-time-constant networks —
    // single RC corner 1/(2πRC); the sweep's
    // interpolation (20 points per decade, linear in dB against log f) is good to 0.5 %
    let (r, c) = (10e3, 1.5e-7);
    let (_, resp) = respond(&rc_document(true, r, c));
    let fc = 1.0 / (2.0 * PI * r * c);
    let lo = resp.lower_corner.expect("lower corner");
    assert!(rel(lo, fc) < 0.005, "{lo} vs {fc}");
    assert!(resp.upper_corner.is_none());
    // invariant: a single capacitor's short-circuit time constant is the exact pole
    assert!(rel(resp.short_circuit_estimate.unwrap(), fc) < 1e-9);
    assert_eq!(resp.low_corner_set_by.as_deref(), Some("C1"));
}

#[test]
fn rc_low_pass_corner_from_the_sweep() {
    // source: Sedra and Smith, "Microelectronic Circuits", single-time-constant networks —
    // single RC corner 1/(2πRC)
    let (r, c) = (1e3, 1e-9);
    let (_, resp) = respond(&rc_document(false, r, c));
    let fc = 1.0 / (2.0 * PI * r * c);
    let g = resp.gain.unwrap();
    let (_, hi) = ac::corners(&resp.frequencies, &g.magnitude_db, 0.0);
    let hi = hi.expect("upper corner");
    assert!(rel(hi, fc) < 0.005, "{hi} vs {fc}");
    let k = resp.frequencies.iter().position(|&f| f >= 1e3).unwrap();
    assert!(g.magnitude_db[k].abs() < 1e-3);
}

#[test]
fn coupling_capacitor_corner_is_its_short_circuit_time_constant() {
    // source: Sedra & Smith, Microelectronic Circuits, frequency response (short-circuit time
    // constants): with the other coupling capacitor made very large, the low corner is
    // 1/(2π·R·C2) with R the resistance C2 sees; within 2 % of the swept −3 dB point
    let mut doc = load("tests/fixtures/ss_follower.json");
    set_value(&mut doc, "C1", CAPACITANCE, 1.0);
    let (_, r) = respond(&doc);
    assert_eq!(r.low_corner_set_by.as_deref(), Some("C2"));
    let tc = r
        .time_constants
        .iter()
        .find(|t| t.designator == "C2")
        .unwrap();
    let lo = r.lower_corner.unwrap();
    assert!(rel(lo, tc.corner) < 0.02, "{lo} vs {}", tc.corner);
    // invariant: C2 sees the follower's Zout in series with RL
    let zout = stage(&analyse(&doc), "Q1").output_impedance.exact.unwrap();
    assert!(rel(tc.resistance, zout + part_value(&doc, "RL", RESISTANCE)) < 1e-9);
}

#[test]
fn bypass_capacitor_sets_the_ce_low_corner() {
    // source: Sedra & Smith, Microelectronic Circuits, frequency response of the CE amplifier —
    // the emitter bypass capacitor sees about re + (Rs ‖ RB + rb)/(β+1) and usually sets the low corner;
    // the short-circuit estimate is within 15 % of the swept corner when it dominates
    let (_, r) = respond(&load("projects/common-emitter.json"));
    assert_eq!(r.low_corner_set_by.as_deref(), Some("CE"));
    let lo = r.lower_corner.unwrap();
    assert!(rel(r.short_circuit_estimate.unwrap(), lo) < 0.15, "{lo}");
}

#[test]
fn ce_upper_corner_against_the_miller_estimate() {
    // source: Sedra & Smith, Microelectronic Circuits, frequency response (Miller's theorem):
    // Cin = Cπ + Cμ(1 + gm·R'L); the estimate ignores the output pole and rb's share, so it is
    // compared at 25 %
    for path in [
        "projects/common-emitter.json",
        "projects/two-stage-preamp.json",
    ] {
        let (a, r) = respond(&load(path));
        let m = stage(&a, "Q1").miller.clone().unwrap();
        let hi = r.upper_corner.unwrap();
        assert!(
            rel(m.upper_corner, hi) < 0.25,
            "{path}: Miller {} vs swept {hi}",
            m.upper_corner
        );
        let p = a.small_signal.transistors[0].models.hybrid_pi;
        // invariant: the reported Cin is the formula's value
        assert!(rel(m.input_capacitance, p.c_pi + p.c_mu * (1.0 + p.gm * m.load)) < 1e-12);
    }
}

#[test]
fn swept_gain_meets_midband_in_the_passband() {
    // invariant: where every coupling reactance is small and device capacitances are negligible,
    // the swept gain equals the midband gain (here within 0.05 dB at the sweep's best point)
    for path in SIGNAL_FILES {
        let (_, r) = respond(&load(path));
        let g = r.gain.as_ref().unwrap();
        let best = g.magnitude_db.iter().cloned().fold(f64::MIN, f64::max);
        let mid = r.midband_gain_db.unwrap();
        assert!((best - mid).abs() < 0.05, "{path}: {best} vs {mid}");
        assert!(r.lower_corner.unwrap() < r.upper_corner.unwrap());
    }
}

#[test]
fn swept_impedances_match_a_direct_cut_solve() {
    // invariant: two methods agree — Zin(f) and Zout(f) from the connected sweep's solutions
    // equal a test current into the cut circuit at the same frequency
    use biasline::analysis::linear::{Cut, Mode, System, Test};
    for path in SIGNAL_FILES {
        let doc = load(path);
        let (a, r) = respond(&doc);
        let ss = &a.small_signal;
        let src = a.chain.source.as_ref().unwrap();
        let load = a.chain.load.as_ref().unwrap();
        for k in [0usize, 60, 120, 160] {
            let f = r.frequencies[k];
            let n = ss.net_node[src.input];
            let sys = System::new(
                &ss.circuit,
                Mode::Frequency,
                &[Cut {
                    part: src.feed,
                    node: n,
                }],
                Some(Test::Current(n)),
            );
            let z = sys.solve(f, &[]).unwrap().v(n).norm();
            let zin = r.input_impedance.as_ref().unwrap().magnitude_ohms[k];
            assert!(rel(zin, z) < 1e-9, "{path} Zin at {f} Hz: {zin} vs {z}");
            let n = ss.net_node[load.net];
            let sys = System::new(
                &ss.circuit,
                Mode::Frequency,
                &[Cut {
                    part: load.part,
                    node: n,
                }],
                Some(Test::Current(n)),
            );
            let z = sys.solve(f, &[]).unwrap().v(n).norm();
            let zout = r.output_impedance.as_ref().unwrap().magnitude_ohms[k];
            assert!(rel(zout, z) < 1e-9, "{path} Zout at {f} Hz: {zout} vs {z}");
        }
    }
}

#[test]
fn absurd_sweep_settings_are_refused_with_a_reason() {
    // common practice (no source): errors are values — a typo in the settings must not exhaust memory
    let mut doc = load("projects/common-emitter.json");
    doc.analysis.points_per_decade = u32::MAX;
    let (_, r) = respond(&doc);
    assert!(r.frequencies.is_empty());
    assert!(r.notes[0].contains("points_per_decade"));
    doc.analysis.points_per_decade = 20;
    doc.analysis.frequency_start = 0.0;
    let (_, r) = respond(&doc);
    assert!(r.frequencies.is_empty() && !r.notes.is_empty());
}
