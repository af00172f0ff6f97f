use super::*;
use crate::analysis::thermal_voltage;

fn model(kind: FetKind, channel: Channel, params: &[(&str, f64)], celsius: f64) -> FetModel {
    let p: BTreeMap<String, f64> = params.iter().map(|(k, v)| (k.to_string(), *v)).collect();
    FetModel::from_parameters(&p, kind, channel, kelvin(celsius))
}

fn nmos() -> FetModel {
    model(
        FetKind::Mosfet,
        Channel::N,
        &[
            (keys::THRESHOLD_VOLTAGE, 1.8),
            (keys::TRANSCONDUCTANCE_PARAMETER, 0.02),
            (keys::CHANNEL_LENGTH_MODULATION, 0.01),
        ],
        27.0,
    )
}

fn njfet(lambda: f64) -> FetModel {
    model(
        FetKind::Jfet,
        Channel::N,
        &[
            (keys::THRESHOLD_VOLTAGE, -2.5),
            (keys::ZERO_GATE_DRAIN_CURRENT, 8e-3),
            (keys::CHANNEL_LENGTH_MODULATION, lambda),
        ],
        27.0,
    )
}

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * a.abs().max(b.abs()).max(1e-30)
}

#[test]
fn mosfet_square_law_and_gm_closed_forms() {
    let m = nmos();
    let (vgs, vds) = (3.0, 6.0);
    let c = m.channel(vgs, vds);
    // source: Shichman and Hodges 1968 — ID = (β/2)·(VGS − VTO)²·(1 + λ·VDS) in saturation.
    let id = 0.5 * 0.02 * 1.2f64.powi(2) * (1.0 + 0.01 * 6.0);
    assert!(close(c.id, id, 1e-14), "{} {id}", c.id);
    // source: Sedra and Smith, MOSFET chapter — gm = 2·ID/(VGS − VTO).
    assert!(close(c.did_dvgs, 2.0 * c.id / 1.2, 1e-14));
    // source: Sedra and Smith — gds = λ·ID/(1 + λ·VDS) in saturation (ro ≈ (1/λ + VDS)/ID).
    assert!(close(1.0 / c.did_dvds, (1.0 / 0.01 + vds) / c.id, 1e-12));
    // Triode: β·((VGS − VTO)·VDS − VDS²/2)·(1 + λ·VDS).
    let t = m.channel(vgs, 0.5);
    let want = 0.02 * (1.2 * 0.5 - 0.125) * 1.005;
    assert!(close(t.id, want, 1e-14));
    assert_eq!(m.region(vgs, 0.5), ChannelRegion::Triode);
    assert_eq!(m.region(vgs, 6.0), ChannelRegion::Saturation);
    assert_eq!(m.region(1.0, 6.0), ChannelRegion::CutOff);
    assert_eq!(m.channel(1.0, 6.0).id, 0.0);
}

#[test]
fn jfet_square_law_and_gm_closed_forms() {
    let m = njfet(0.0);
    // source: Shockley 1952 / Sedra and Smith JFET section — ID = IDSS·(1 − VGS/VP)², gm0 = 2·IDSS/|VP|.
    for vgs in [-2.0, -1.2, -0.3, 0.0] {
        let c = m.channel(vgs, 10.0);
        let id = 8e-3 * (1.0 - vgs / -2.5f64).powi(2);
        assert!(close(c.id, id, 1e-13), "{vgs}: {} {id}", c.id);
        // source: Sedra and Smith — gm = gm0·√(ID/IDSS).
        let gm0 = 2.0 * 8e-3 / 2.5;
        assert!(close(c.did_dvgs, gm0 * (c.id / 8e-3).sqrt(), 1e-12));
    }
    // Triode: β·VDS·(2·(VGS − VTO) − VDS).
    let beta = 8e-3 / 6.25;
    assert!(close(
        m.channel(-1.0, 0.4).id,
        beta * 0.4 * (3.0 - 0.4),
        1e-14
    ));
}

#[test]
fn current_and_derivatives_are_continuous_at_the_triode_edge() {
    // invariant: the two regions meet in value and first derivatives at VDS = VGS − VTO.
    for m in [nmos(), njfet(0.02)] {
        let vgs = m.threshold + 1.1;
        let edge = m.saturation_voltage(vgs);
        let a = m.channel(vgs, edge * (1.0 - 1e-12));
        let b = m.channel(vgs, edge * (1.0 + 1e-12));
        assert!(close(a.id, b.id, 1e-9), "{a:?} {b:?}");
        assert!(close(a.did_dvgs, b.did_dvgs, 1e-9), "{a:?} {b:?}");
        assert!(close(a.did_dvds, b.did_dvds, 1e-9), "{a:?} {b:?}");
        // And at VDS = 0, across the drain/source swap.
        let a = m.channel(vgs, -1e-13);
        let b = m.channel(vgs, 1e-13);
        assert!(close(a.did_dvds, b.did_dvds, 1e-9), "{a:?} {b:?}");
        assert!((a.did_dvgs - b.did_dvgs).abs() < 1e-9 * a.did_dvds.abs());
    }
}

#[test]
fn drain_and_source_swap_symmetrically() {
    // invariant: the device is symmetric — swapping the drain and source pins negates the drain current.
    for m in [nmos(), njfet(0.02)] {
        for (vd, vg, vs) in [(0.3, 2.6, 1.1), (-1.0, 0.5, 0.2), (5.0, 3.0, 0.0)] {
            let (i, _) = m.pin_currents(vd, vg, vs);
            let (j, _) = m.pin_currents(vs, vg, vd);
            let chan = |x: [f64; 3]| x[0];
            if m.kind == FetKind::Mosfet {
                // The body diode is not symmetric: only compare where it is off (VDS ≥ 0 both ways is impossible), so compare the channel alone.
                let a = m.channel(vg - vs, vd - vs).id;
                let b = m.channel(vg - vd, vs - vd).id;
                assert!(close(a, -b, 1e-13), "{a} {b}");
            } else {
                assert!(close(chan(i), j[2], 1e-12) && close(i[1], j[1], 1e-12));
            }
        }
    }
}

#[test]
fn pin_jacobian_matches_finite_differences_for_every_kind() {
    // invariant: the Jacobian the Newton step and small-signal model use is the derivative of the currents.
    let kinds = [
        (FetKind::Jfet, Channel::N, -2.0),
        (FetKind::Jfet, Channel::P, 2.0),
        (FetKind::Mosfet, Channel::N, 1.5),
        (FetKind::Mosfet, Channel::P, -1.5),
    ];
    for (kind, ch, vto) in kinds {
        let m = model(
            kind,
            ch,
            &[
                (keys::THRESHOLD_VOLTAGE, vto),
                (keys::TRANSCONDUCTANCE_PARAMETER, 4e-3),
                (keys::CHANNEL_LENGTH_MODULATION, 0.02),
            ],
            27.0,
        );
        let s = ch.sign();
        let points = [
            [s * 6.0, s * -0.8, 0.0],
            [s * 0.4, s * 3.5, s * 0.1],
            [s * -0.7, s * 2.9, 0.0],
            [s * 4.0, s * 0.55, 0.0],
        ];
        for p in points {
            let (_, jac) = m.pin_currents(p[0], p[1], p[2]);
            for k in 0..3 {
                let h = 1e-6;
                let mut up = p;
                let mut dn = p;
                up[k] += h;
                dn[k] -= h;
                let (iu, _) = m.pin_currents(up[0], up[1], up[2]);
                let (idn, _) = m.pin_currents(dn[0], dn[1], dn[2]);
                for r in 0..3 {
                    let fd = (iu[r] - idn[r]) / (2.0 * h);
                    let scale = jac[r].iter().map(|x| x.abs()).fold(1e-9, f64::max);
                    assert!(
                        (fd - jac[r][k]).abs() <= 1e-5 * scale,
                        "{kind:?} {ch:?} {p:?} [{r}][{k}]: {fd} vs {}",
                        jac[r][k]
                    );
                }
            }
            // invariant: KCL inside the device — the pin currents sum to zero.
            let (i, _) = m.pin_currents(p[0], p[1], p[2]);
            assert!(
                i.iter().sum::<f64>().abs()
                    <= 1e-15 * i.iter().map(|x| x.abs()).sum::<f64>().max(1e-30)
            );
        }
    }
}

#[test]
fn p_channel_is_the_n_channel_negated() {
    // source: reference page — P-channel: every terminal voltage and current negated.
    let n = model(
        FetKind::Jfet,
        Channel::N,
        &[(keys::THRESHOLD_VOLTAGE, -3.0)],
        27.0,
    );
    let p = model(
        FetKind::Jfet,
        Channel::P,
        &[(keys::THRESHOLD_VOLTAGE, 3.0)],
        27.0,
    );
    let (a, _) = n.pin_currents(9.0, -1.0, 0.5);
    let (b, _) = p.pin_currents(-9.0, 1.0, -0.5);
    for k in 0..3 {
        assert!(close(a[k], -b[k], 1e-14));
    }
    assert!(
        b[0] < 0.0,
        "a P-JFET's drain current flows out of the drain"
    );
}

#[test]
fn temperature_laws_follow_the_reference_page() {
    let p = [
        (keys::THRESHOLD_VOLTAGE, 2.0),
        (keys::TRANSCONDUCTANCE_PARAMETER, 0.1),
        (keys::THRESHOLD_TEMPERATURE_COEFFICIENT, -2.5e-3),
    ];
    let hot = model(FetKind::Mosfet, Channel::N, &p, 85.0);
    // source: reference page — mobility (β) falls as (T/T0)^−1.5; threshold shifts by the stated coefficient.
    let ratio = kelvin(85.0) / kelvin(27.0);
    assert!(close(hot.beta, 0.1 * ratio.powf(-1.5), 1e-14));
    assert!(close(hot.threshold, 2.0 - 2.5e-3 * 58.0, 1e-12));
    // P-channel: the coefficient applies in channel sense.
    let pp = model(
        FetKind::Mosfet,
        Channel::P,
        &[
            (keys::THRESHOLD_VOLTAGE, -2.0),
            (keys::THRESHOLD_TEMPERATURE_COEFFICIENT, -2.5e-3),
        ],
        85.0,
    );
    assert!(close(pp.threshold, hot.threshold, 1e-14));
    // A JFET has a current with zero temperature coefficient near VGS ≈ VP + 0.63 V
    // (common practice, no source) — with |VP| growing 2 mV/K and the −1.5 mobility law
    // the zero-TC overdrive is 2·(2 mV/K)·T/1.5 ≈ 0.8 V: the same place, within the
    // looseness of both figures.
    let j = |c: f64| {
        model(
            FetKind::Jfet,
            Channel::N,
            &[(keys::THRESHOLD_VOLTAGE, -2.0)],
            c,
        )
    };
    let dn = |vgs: f64| j(35.0).channel(vgs, 10.0).id - j(15.0).channel(vgs, 10.0).id;
    // Bisection for the zero-TC point.
    let (mut lo, mut hi) = (-1.9, 0.0);
    assert!(dn(lo) > 0.0 && dn(hi) < 0.0);
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if dn(mid) > 0.0 {
            lo = mid
        } else {
            hi = mid
        }
    }
    let ztc = lo + 2.0;
    assert!((0.55..0.85).contains(&ztc), "zero-TC overdrive {ztc} V");
}

#[test]
fn gate_junctions_are_shockley_diodes() {
    let m = njfet(0.0);
    let vt = thermal_voltage(kelvin(27.0));
    let (igs, igd) = m.gate_currents(0.5, 5.0);
    // source: Shockley 1949 — I = Is·(exp(V/(n·VT)) − 1), Is = 1e-14 A default.
    assert!(close(igs, 1e-14 * ((0.5 / vt).exp() - 1.0), 1e-12));
    assert!(close(igd, 1e-14 * ((-4.5 / vt).exp() - 1.0), 1e-12));
}

#[test]
fn datasheet_capacitances_map_as_common_practice() {
    // common practice (no source): Cgd = Crss, Cgs = Ciss − Crss, Cds = Coss − Crss at the test VDS.
    let m = model(
        FetKind::Mosfet,
        Channel::N,
        &[
            (keys::INPUT_CAPACITANCE, 60e-12),
            (keys::REVERSE_TRANSFER_CAPACITANCE, 5e-12),
            (keys::OUTPUT_CAPACITANCE, 25e-12),
            (keys::CAPACITANCE_TEST_VOLTAGE, 25.0),
        ],
        27.0,
    );
    let (cgs, cgd, cds) = m.capacitances(0.0, 25.0);
    assert!(close(cgs, 55e-12, 1e-14) && close(cgd, 5e-12, 1e-12) && close(cds, 20e-12, 1e-14));
    // Cgd rises as VDG falls.
    assert!(m.capacitances(0.0, 2.0).1 > 2.0 * cgd);
    // invariant: charges differentiate to the capacitances.
    let h = 1e-6;
    let (vgs, vds) = (3.0, 4.0);
    let dq = |a: f64, b: f64| m.charges(a, b);
    let cgd_fd = -(dq(vgs, vds + h).1 - dq(vgs, vds - h).1) / (2.0 * h);
    assert!(close(cgd_fd, m.capacitances(vgs, vds).1, 1e-6));
}

#[test]
fn channel_noise_is_4kt_gamma_gm_in_saturation_and_continuous_at_the_edge() {
    let m = nmos();
    let (vgs, vds) = (3.0, 6.0);
    let gm = m.channel(vgs, vds).did_dvgs;
    // source: van der Ziel, Proc. IRE 50 (1962) — 4·k·T·γ·gm, γ = 2/3.
    let (th, fl, sh) = m.noise(vgs, vds, 1e3);
    assert!(close(
        th,
        4.0 * BOLTZMANN * kelvin(27.0) * (2.0 / 3.0) * gm,
        1e-14
    ));
    assert_eq!((fl, sh), (0.0, 0.0));
    // invariant: the triode form meets the saturation form at the edge; at VDS = 0 it is 4kT·g0 (Johnson noise of the channel).
    let edge = m.saturation_voltage(vgs);
    let a = m.noise(vgs, edge * (1.0 - 1e-10), 1e3).0;
    let b = m.noise(vgs, edge * (1.0 + 1e-10), 1e3).0;
    assert!(close(a, b, 1e-8));
    let g0 = m.channel(vgs, 1e-12).did_dvds;
    assert!(close(
        m.noise(vgs, 1e-12, 1e3).0,
        4.0 * BOLTZMANN * kelvin(27.0) * g0,
        1e-6
    ));
    // Flicker Kf·ID^Af/f and gate shot 2·q·IG.
    let f = model(
        FetKind::Jfet,
        Channel::N,
        &[
            (keys::FLICKER_COEFFICIENT, 1e-16),
            (keys::FLICKER_EXPONENT, 1.0),
        ],
        27.0,
    );
    let id = f.channel(-1.0, 5.0).id;
    let (_, fl, sh) = f.noise(-1.0, 5.0, 10.0);
    assert!(close(fl, 1e-16 * id / 10.0, 1e-14));
    let (igs, igd) = f.gate_currents(-1.0, 5.0);
    assert!(close(
        sh,
        2.0 * ELEMENTARY_CHARGE * (igs.abs() + igd.abs()),
        1e-14
    ));
}

#[test]
fn step_limiting_leaves_small_steps_and_holds_large_ones() {
    // common practice (no source): the step windows of `limit_step`.
    let m = nmos();
    assert_eq!(m.limit_step((2.5, 3.0), (2.6, 3.5)), ((2.6, 3.5), false));
    let ((g, d), hit) = m.limit_step((2.0, 1.0), (40.0, -50.0));
    assert!(hit && (g - 2.6).abs() < 1e-12 && d >= -2.0, "{g} {d}");
    // A JFET gate pushed far forward is held near the junction's critical voltage.
    let j = njfet(0.0);
    let ((g, _), hit) = j.limit_step((0.0, 5.0), (0.9, 5.0));
    assert!(hit && g < 0.9);
}
