use super::*;
use crate::analysis::linear::log_frequencies;
use crate::analysis::stability::margins::margins;
use std::f64::consts::PI;

/// A three-stage loop of ideal transconductance stages: node 1 (R1, the
/// loop's input) → −gm1 into node 2 (R2 ‖ C2) → −gm2 into node 3 (R3 ‖ C3)
/// → −gm3 into node 4 (R4) → Rs back to node 1. Parts: 0, 1, 2 the stages,
/// 3 R1, 4 R2, 5 C2, 6 R3, 7 C3, 8 R4, 9 Rs, 10 the input source, 11 Rin.
struct TwoPole {
    lc: LinearCircuit,
    gm1: usize,
    input: usize,
}

fn two_pole(rs: f64, c2: f64, c3: f64) -> TwoPole {
    let mut lc = LinearCircuit::new(5);
    let tc = |gm, cp| LinearKind::Transconductance { gm, cp, cn: 0 };
    let gm1 = lc.add(Some(0), 2, 0, tc(10e-3, 1));
    lc.add(Some(1), 3, 0, tc(5e-3, 2));
    lc.add(Some(2), 4, 0, tc(1e-3, 3));
    lc.add(Some(3), 1, 0, LinearKind::Conductance(1.0 / 1e3));
    lc.add(Some(4), 2, 0, LinearKind::Conductance(1.0 / 10e3));
    lc.add(Some(5), 2, 0, LinearKind::DeviceCapacitance(c2));
    lc.add(Some(6), 3, 0, LinearKind::Conductance(1.0 / 2e3));
    lc.add(Some(7), 3, 0, LinearKind::DeviceCapacitance(c3));
    lc.add(Some(8), 4, 0, LinearKind::Conductance(1.0 / 500.0));
    lc.add(Some(9), 4, 1, LinearKind::Conductance(1.0 / rs));
    let input = lc.add(Some(10), 5, 0, LinearKind::VoltageSource);
    lc.add(Some(11), 5, 1, LinearKind::Conductance(1.0 / 1e3));
    TwoPole { lc, gm1, input }
}

fn close(a: C64, b: C64, rel: f64) -> bool {
    (a - b).norm() <= rel * b.norm().max(1e-300)
}

#[test]
fn double_injection_at_an_ideal_controlled_source_is_the_direct_loop_gain() {
    // source: Tian, Visvanathan, Hantgan, Kundert (2001) — at a break point into an
    // ideal (infinite-impedance) control input the double injection reduces to the
    // directly computed loop gain: the product of the stage gains with all loading
    let t = two_pole(1e-3, 1e-9, 1e-10);
    let freqs = log_frequencies(1e3, 1e8, 5);
    let di = double_injection(&t.lc, BreakPoint { part: 0, node: 1 }, &freqs).unwrap();
    // Direct: stage gains with their loads (Rs tiny: node 4 and node 1 nearly joined).
    let direct = |f: f64| {
        let s = C64::new(0.0, 2.0 * PI * f);
        let z2 = 1.0 / (C64::new(1.0 / 10e3, 0.0) + s * 1e-9);
        let z3 = 1.0 / (C64::new(1.0 / 2e3, 0.0) + s * 1e-10);
        // node 4 and node 1 joined through Rs, loaded by R4, R1 and Rin.
        let g1 = 1.0 / 1e3 + 1.0 / 1e3;
        let g4 = 1.0 / 500.0;
        let gs = 1.0 / 1e-3;
        // v1 per unit current into node 4: two-node divider.
        let v1 = gs / (g4 * g1 + gs * (g4 + g1));
        // The loop: v1 → −gm1·z2 → −gm2·z3 → −gm3 into node 4 → v1; T = −product.
        -((-10e-3 * z2) * (-5e-3 * z3) * (-1e-3) * v1)
    };
    for (k, &f) in freqs.iter().enumerate() {
        assert!(
            close(di.t[k], direct(f), 1e-9),
            "{f} Hz: {} vs {}",
            di.t[k],
            direct(f)
        );
    }
}

#[test]
fn return_ratio_and_double_injection_agree_on_a_single_loop() {
    // invariant: two independent methods (Bode's return ratio of the loop's one
    // controlled source; the double injection at a resistive, bilateral break point)
    // give the same loop gain on a circuit with a single loop
    let t = two_pole(4.7e3, 1e-9, 1e-10);
    let freqs = log_frequencies(10.0, 1e8, 4);
    let rr = return_ratio(&t.lc, t.gm1, &freqs).unwrap();
    let di = double_injection(&t.lc, BreakPoint { part: 9, node: 4 }, &freqs).unwrap();
    assert!(close(di.t0, rr.t0, 1e-9), "{} vs {}", di.t0, rr.t0);
    for ((f, d), r) in freqs.iter().zip(&di.t).zip(&rr.t) {
        assert!(close(*d, *r, 1e-9), "{f}: {d} vs {r}");
    }
    // invariant: negative feedback — T0 is real and positive
    assert!(rr.t0.re > 1.0 && rr.t0.im.abs() < 1e-12 * rr.t0.re);
    // invariant: every stage is in the one loop: the three return ratios are equal
    let all = return_ratios(&t.lc, &freqs);
    assert_eq!(all.len(), 3);
    for (_, _, g) in &all {
        assert!(close(g.t0, rr.t0, 1e-9));
    }
}

#[test]
fn asymptotic_gain_split_reproduces_the_exact_gain() {
    // source: Rosenstark, "Feedback Amplifier Principles" (1986) — A = A∞·T/(1+T) + A0/(1+T)
    // is an identity; checked against the exact gain solved on the whole circuit
    let t = two_pole(4.7e3, 1e-9, 1e-10);
    let drive = [Drive::unit(t.input)];
    for (mode, f) in [
        (Mode::Midband, 0.0),
        (Mode::Frequency, 3.3e4),
        (Mode::Frequency, 2e6),
    ] {
        let sp = asymptotic_split(&t.lc, t.gm1, &drive, 3, mode, f).unwrap();
        let exact = System::new(&t.lc, mode, &[], None)
            .solve(f, &drive)
            .unwrap()
            .v(3);
        let formula =
            sp.ideal * sp.loop_gain / (1.0 + sp.loop_gain) + sp.direct / (1.0 + sp.loop_gain);
        assert!(close(formula, exact, 1e-9), "{formula} vs {exact}");
        assert!(close(sp.gain, exact, 1e-9));
    }
}

#[test]
fn two_pole_loop_crossover_and_phase_margin_match_the_closed_form() {
    // source: Bode (1945); Ogata, "Modern Control Engineering", second-order systems —
    // T = T0/((1+s/p1)(1+s/p2)): |T(jωc)| = 1 solves a quadratic in ωc²,
    // PM = 180° − atan(ωc/p1) − atan(ωc/p2); the phase never reaches −180°: no gain margin
    let (c2, c3) = (1e-9, 1e-10);
    let t = two_pole(4.7e3, c2, c3);
    let freqs = log_frequencies(10.0, 1e9, 20);
    let rr = return_ratio(&t.lc, t.gm1, &freqs).unwrap();
    let t0 = rr.t0.re;
    let (p1, p2) = (1.0 / (10e3 * c2), 1.0 / (2e3 * c3));
    // x = ωc²: x²/(p1²p2²) + x(1/p1² + 1/p2²) + 1 − T0² = 0
    let (a, b, c) = (
        1.0 / (p1 * p1 * p2 * p2),
        1.0 / (p1 * p1) + 1.0 / (p2 * p2),
        1.0 - t0 * t0,
    );
    let wc = ((-b + (b * b - 4.0 * a * c).sqrt()) / (2.0 * a)).sqrt();
    let pm = 180.0 - (wc / p1).atan().to_degrees() - (wc / p2).atan().to_degrees();
    let (lc, el) = (t.lc.clone(), t.gm1);
    let eval = move |f: f64| return_ratio(&lc, el, &[f]).unwrap().t[0];
    let m = margins(&freqs, &rr.t, &eval);
    let fc = m.crossover_hz.unwrap();
    assert!(
        (fc - wc / (2.0 * PI)).abs() < 1e-9 * fc,
        "{fc} vs {}",
        wc / (2.0 * PI)
    );
    assert!(
        (m.phase_margin_deg.unwrap() - pm).abs() < 1e-7,
        "{:?} vs {pm}",
        m
    );
    assert!(m.gain_margin_db.is_none());
}

#[test]
fn break_points_on_ground_or_outside_a_loop_are_refused() {
    // invariant: no loop passes through ground, nor through a branch that hangs off the loop
    let mut t = two_pole(4.7e3, 1e-9, 1e-10);
    let n = t.lc.add_node();
    t.lc.add(Some(12), 3, n, LinearKind::Conductance(1e-3));
    t.lc.add(Some(13), n, 0, LinearKind::Capacitor(1e-9));
    let freqs = log_frequencies(10.0, 1e6, 2);
    let e = double_injection(&t.lc, BreakPoint { part: 3, node: 0 }, &freqs).unwrap_err();
    assert_eq!(e, BreakError::OnGround);
    assert!(e.to_string().contains("ground"));
    let e = double_injection(&t.lc, BreakPoint { part: 13, node: n }, &freqs).unwrap_err();
    assert_eq!(e, BreakError::NotInLoop, "{e}");
    let e = double_injection(&t.lc, BreakPoint { part: 13, node: 2 }, &freqs).unwrap_err();
    assert_eq!(e, BreakError::NotOnNode);
}
