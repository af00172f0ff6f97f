use super::*;
use std::f64::consts::PI;

/// Source 1 V at node 1, R from 1 to 2, C from 2 to ground: low-pass.
fn rc(low_pass: bool, r: f64, c: f64) -> (LinearCircuit, usize) {
    let mut lc = LinearCircuit::new(2);
    let src = lc.add(Some(0), 1, 0, LinearKind::VoltageSource);
    if low_pass {
        lc.add(Some(1), 1, 2, LinearKind::Conductance(1.0 / r));
        lc.add(Some(2), 2, 0, LinearKind::Capacitor(c));
    } else {
        lc.add(Some(2), 1, 2, LinearKind::Capacitor(c));
        lc.add(Some(1), 2, 0, LinearKind::Conductance(1.0 / r));
    }
    (lc, src)
}

#[test]
fn rc_low_pass_is_exact_at_its_corner() {
    // source: Sedra and Smith, "Microelectronic Circuits", single-time-constant networks —
    // single RC corner 1/(2πRC) exactly,
    // where |H| = 1/√2 and the phase is −45°
    let (r, c) = (1e3, 1e-7);
    let (lc, src) = rc(true, r, c);
    let sys = System::new(&lc, Mode::Frequency, &[], None);
    let fc = 1.0 / (2.0 * PI * r * c);
    let d = [Drive::unit(src)];
    let h = sys.solve(fc, &d).unwrap().v(2);
    assert!((h.norm() - std::f64::consts::FRAC_1_SQRT_2).abs() < 1e-12);
    assert!((h.arg().to_degrees() + 45.0).abs() < 1e-9);
    // invariant: at midband the capacitor part is a short
    let mid = System::new(&lc, Mode::Midband, &[], None);
    assert!(mid.solve(0.0, &d).unwrap().v(2).norm() < 1e-15);
}

#[test]
fn rc_high_pass_is_exact_at_its_corner() {
    // source: Sedra and Smith, "Microelectronic Circuits", single-time-constant networks —
    // single RC corner 1/(2πRC)
    let (r, c) = (10e3, 4.7e-6);
    let (lc, src) = rc(false, r, c);
    let sys = System::new(&lc, Mode::Frequency, &[], None);
    let fc = 1.0 / (2.0 * PI * r * c);
    let d = [Drive::unit(src)];
    let h = sys.solve(fc, &d).unwrap().v(2);
    assert!((h.norm() - std::f64::consts::FRAC_1_SQRT_2).abs() < 1e-12);
    assert!((h.arg().to_degrees() - 45.0).abs() < 1e-9);
}

#[test]
fn test_sources_measure_impedance() {
    // invariant: Ohm's law — 1 A into R1 ‖ R2 gives R1·R2/(R1+R2) volts; 1 V across it draws the inverse
    let mut lc = LinearCircuit::new(1);
    lc.add(Some(0), 1, 0, LinearKind::Conductance(1e-3));
    lc.add(Some(1), 1, 0, LinearKind::Conductance(1.0 / 3e3));
    let z = System::new(&lc, Mode::Midband, &[], Some(Test::Current(1)))
        .solve(0.0, &[])
        .unwrap()
        .v(1);
    assert!((z.re - 750.0).abs() < 1e-9);
    let i = System::new(&lc, Mode::Midband, &[], Some(Test::Voltage(1)))
        .solve(0.0, &[])
        .unwrap()
        .test_current;
    assert!((1.0 / i.re - 750.0).abs() < 1e-9);
    // invariant: cutting part 1 from the node leaves R1 alone (its far side floats, tied down harmlessly)
    let z = System::new(
        &lc,
        Mode::Midband,
        &[Cut { part: 1, node: 1 }],
        Some(Test::Current(1)),
    )
    .solve(0.0, &[])
    .unwrap()
    .v(1);
    assert!((z.re - 1000.0).abs() < 1e-9);
}

#[test]
fn sparse_and_dense_agree_on_a_ladder() {
    // invariant: two independent solvers (dense LU, sparse LU) give the same answer
    let n = 200;
    let mut lc = LinearCircuit::new(n);
    let src = lc.add(Some(0), 1, 0, LinearKind::VoltageSource);
    for k in 1..n {
        lc.add(Some(k), k, k + 1, LinearKind::Conductance(1e-3));
        lc.add(Some(k), k + 1, 0, LinearKind::DeviceCapacitance(1e-9));
    }
    let sys = System::new(&lc, Mode::Frequency, &[], None);
    assert!(sys.is_sparse());
    let d = [Drive::unit(src)];
    let sparse = sys.solve(1e4, &d).unwrap();
    let dense_sys = System::with_dense_limit(&lc, Mode::Frequency, &[], None, usize::MAX);
    assert!(!dense_sys.is_sparse());
    let dense = dense_sys.solve(1e4, &d).unwrap();
    for k in 1..=n {
        assert!((sparse.v(k) - dense.v(k)).norm() < 1e-10);
    }
}

#[test]
fn folding_zeroed_sources_into_ground_changes_nothing() {
    // invariant: a zeroed voltage source is a short, so removing its node is exact
    let mut lc = LinearCircuit::new(3);
    let sig = lc.add(Some(0), 1, 0, LinearKind::VoltageSource);
    let rail = lc.add(Some(1), 3, 0, LinearKind::VoltageSource);
    lc.add(Some(2), 1, 2, LinearKind::Conductance(1e-3));
    lc.add(Some(3), 2, 3, LinearKind::Conductance(2e-3));
    lc.add(Some(4), 2, 0, LinearKind::DeviceCapacitance(1e-9));
    let d = [Drive::unit(sig)];
    let full = System::unfolded(&lc, Mode::Frequency, &[], None);
    let folded = System::new(&lc, Mode::Frequency, &[], None);
    assert_eq!(folded.size() + 4, full.size());
    let (a, b) = (full.solve(1e5, &d).unwrap(), folded.solve(1e5, &d).unwrap());
    for n in 1..=3 {
        assert!((a.v(n) - b.v(n)).norm() < 1e-14);
    }
    // the folded sources' currents, recovered from KCL, match the branch unknowns
    for k in [sig, rail, 2, 3] {
        assert!(
            (a.currents[k] - b.currents[k]).norm() < 1e-15,
            "element {k}"
        );
    }
    // a drive on a folded rail (supply rejection) matches too
    let dr = [Drive::unit(rail)];
    let (a, b) = (
        full.solve(1e5, &dr).unwrap(),
        folded.solve(1e5, &dr).unwrap(),
    );
    assert!((a.v(2) - b.v(2)).norm() < 1e-14 && (b.v(3) - C64::new(1.0, 0.0)).norm() < 1e-15);
    // invariant: a test current injected by a drive equals a test source (Ohm's law)
    let z1 = System::new(&lc, Mode::Frequency, &[], Some(Test::Current(2)))
        .solve(1e5, &[])
        .unwrap()
        .v(2);
    let z2 = full.solve(1e5, &[Drive::inject(2)]).unwrap().v(2);
    assert!((z1 - z2).norm() < 1e-12 * z1.norm());
}

#[test]
fn sweep_has_161_points_over_eight_decades() {
    // common practice (no source): 20 points per decade, both ends included
    let f = log_frequencies(1.0, 1e8, 20);
    assert_eq!(f.len(), 161);
    assert!((f[160] - 1e8).abs() < 1e-3);
}

#[test]
fn adjoint_transfers_equal_direct_solves_dense_and_sparse() {
    // invariant: eᵀ·A⁻¹·b = xᵀ·b with Aᵀ·x = e — the transposed solve gives the same
    // transfers as one direct solve per excitation, on a ladder with a transconductance
    // (an unsymmetric matrix) and a grounded, folded source; dense and sparse LU alike.
    let n = 120;
    let mut lc = LinearCircuit::new(n);
    let src = lc.add(Some(0), 1, 0, LinearKind::VoltageSource);
    for k in 1..n {
        lc.add(Some(k), k, k + 1, LinearKind::Conductance(1e-3));
        lc.add(Some(k), k + 1, 0, LinearKind::DeviceCapacitance(1e-9));
    }
    lc.add(
        Some(n),
        n,
        0,
        LinearKind::Transconductance {
            gm: 2e-3,
            cp: n / 2,
            cn: 0,
        },
    );
    let output = (n, 0);
    for limit in [0, usize::MAX] {
        let sys = System::with_dense_limit(&lc, Mode::Frequency, &[], None, limit);
        assert_eq!(sys.is_sparse(), limit == 0);
        let adj = sys.adjoint(3e3, output).unwrap();
        let d = [Drive::unit(src)];
        let direct = sys.solve(3e3, &d).unwrap().v(n);
        let via_adjoint = sys.adjoint_response(&adj, &d);
        assert!((direct - via_adjoint).norm() <= 1e-12 * direct.norm());
        for k in [2, n / 2, n - 1] {
            let direct = sys.solve(3e3, &[Drive::inject(k)]).unwrap().v(n);
            let t = adj.transfer(k, 0);
            assert!((direct - t).norm() <= 1e-12 * direct.norm(), "node {k}");
        }
    }
}
