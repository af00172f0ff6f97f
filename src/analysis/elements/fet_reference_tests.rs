//! FET circuits solved by the DC engine against an independent bisection on
//! the one-unknown equation of each circuit (the drain current), with the
//! square law written out again here from the reference page
//! ("Field-effect transistors"; Shichman and Hodges 1968, Shockley 1952).

use crate::analysis::circuit::{Circuit, Element, ElementKind};
use crate::analysis::dc;
use crate::analysis::dc::stamps::terminal_currents;
use crate::analysis::devices::fet::{keys, Channel, FetKind, FetModel};
use crate::analysis::devices::kelvin;
use std::collections::BTreeMap;

/// Element kinds on nodes; node count = the largest node used.
fn circuit(parts: Vec<(ElementKind, Vec<usize>)>) -> Circuit {
    let node_count = parts
        .iter()
        .flat_map(|p| p.1.iter().copied())
        .max()
        .unwrap();
    let mut branch_count = 0;
    let branch_of = parts
        .iter()
        .map(|p| {
            p.0.has_dc_branch().then(|| {
                branch_count += 1;
                branch_count - 1
            })
        })
        .collect();
    let names: Vec<String> = (0..=node_count).map(|n| format!("n{n}")).collect();
    Circuit {
        node_count,
        net_node: (0..=node_count).collect(),
        node_names: names.clone(),
        elements: parts
            .into_iter()
            .enumerate()
            .map(|(k, (kind, nodes))| Element {
                part: k,
                designator: format!("X{k}"),
                kind,
                nodes,
                internal_nodes: vec![],
                power_rating: None,
                voltage_rating: None,
                polarised: false,
            })
            .collect(),
        kelvin: kelvin(27.0),
        net_names: names,
        branch_of,
        branch_count,
    }
}

fn r(ohms: f64) -> ElementKind {
    ElementKind::Resistor { resistance: ohms }
}

fn v(volts: f64) -> ElementKind {
    ElementKind::VoltageSource {
        dc: volts,
        ac: 0.0,
        is_signal: false,
        is_rail: false,
    }
}

fn fet(kind: FetKind, ch: Channel, vto: f64, beta: f64, lambda: f64) -> FetModel {
    let p: BTreeMap<String, f64> = [
        (keys::THRESHOLD_VOLTAGE, vto),
        (keys::TRANSCONDUCTANCE_PARAMETER, beta),
        (keys::CHANNEL_LENGTH_MODULATION, lambda),
        // Leakage far below the tolerance, so the one-unknown equation is exact.
        (keys::GATE_SATURATION_CURRENT, 1e-30),
        (keys::BODY_DIODE_SATURATION_CURRENT, 1e-30),
    ]
    .into_iter()
    .map(|(k, v)| (k.to_string(), v))
    .collect();
    FetModel::from_parameters(&p, kind, ch, kelvin(27.0))
}

/// The reference page's square law, N sense, VDS ≥ 0, written out again.
fn law(kind: FetKind, vto: f64, beta: f64, lambda: f64, vgs: f64, vds: f64) -> f64 {
    let vov = vgs - vto;
    if vov <= 0.0 {
        return 0.0;
    }
    let clm = 1.0 + lambda * vds;
    match (kind, vds < vov) {
        (FetKind::Mosfet, true) => beta * (vov * vds - vds * vds / 2.0) * clm,
        (FetKind::Mosfet, false) => beta / 2.0 * vov * vov * clm,
        (FetKind::Jfet, true) => beta * vds * (2.0 * vov - vds) * clm,
        (FetKind::Jfet, false) => beta * vov * vov * clm,
    }
}

/// Root of `g` on [lo, hi] by bisection (g changes sign there).
fn bisect(g: impl Fn(f64) -> f64, mut lo: f64, mut hi: f64) -> f64 {
    let glo = g(lo);
    assert!(glo * g(hi) <= 0.0, "no sign change");
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if (g(mid) > 0.0) == (glo > 0.0) {
            lo = mid
        } else {
            hi = mid
        }
    }
    0.5 * (lo + hi)
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * a.abs().max(b.abs()).max(1e-6)
}

/// Solve, check every node against `want` (node, volts), the FET's drain
/// current against `id` (into the drain), KCL and Tellegen.
fn check(c: &Circuit, fet_index: usize, want: &[(usize, f64)], id: f64) {
    let op = dc::solve_circuit(c).unwrap();
    for &(n, volts) in want {
        assert!(
            close(op.node_voltages[n], volts),
            "node {n}: {} vs {volts}",
            op.node_voltages[n]
        );
    }
    let mut x = op.node_voltages[1..].to_vec();
    x.extend(&op.branch_currents);
    let got = terminal_currents(c, fet_index, &x, 1.0).current[0];
    assert!(close(got, id), "ID {got} vs {id}");
    // invariant: KCL at every node and Tellegen's theorem (Σ v·i = 0 over all pins).
    let mut node_sum = vec![0.0; c.node_count + 1];
    let mut scale = vec![0.0f64; c.node_count + 1];
    let mut tellegen = 0.0;
    let mut t_scale = 0.0;
    for k in 0..c.elements.len() {
        for (n, i) in terminal_currents(c, k, &x, 1.0).iter() {
            node_sum[n] += i;
            scale[n] = scale[n].max(i.abs());
            tellegen += op.node_voltages[n] * i;
            t_scale += (op.node_voltages[n] * i).abs();
        }
    }
    for n in 1..=c.node_count {
        assert!(
            node_sum[n].abs() <= 1e-9 * scale[n].max(1e-12),
            "KCL at {n}: {}",
            node_sum[n]
        );
    }
    assert!(tellegen.abs() <= 1e-9 * t_scale, "Tellegen {tellegen}");
}

#[test]
fn jfet_self_bias_stage() {
    // source: Sedra and Smith, JFET self-bias — VGS = −ID·RS on the square law.
    let (vto, idss, lambda) = (-2.5, 8e-3, 0.01);
    let beta = idss / (vto * vto);
    let (vdd, rd, rs) = (15.0, 1.5e3, 470.0);
    // Nodes: 1 supply, 2 drain, 3 source, 4 gate.
    let c = circuit(vec![
        (v(vdd), vec![1, 0]),
        (r(rd), vec![1, 2]),
        (r(rs), vec![3, 0]),
        (r(1e6), vec![4, 0]),
        (
            ElementKind::Fet(fet(FetKind::Jfet, Channel::N, vto, beta, lambda)),
            vec![2, 4, 3],
        ),
    ]);
    let g = |id: f64| {
        id - law(
            FetKind::Jfet,
            vto,
            beta,
            lambda,
            -id * rs,
            vdd - id * (rd + rs),
        )
    };
    let id = bisect(g, 0.0, idss * 2.0);
    check(&c, 4, &[(2, vdd - id * rd), (3, id * rs), (4, 0.0)], id);
}

#[test]
fn jfet_source_follower() {
    // source: Sedra and Smith — the follower's VGS = VG − ID·RS, gate at 2 V.
    let (vto, idss, lambda) = (-1.8, 4e-3, 0.02);
    let beta = idss / (vto * vto);
    let (vdd, vg, rs) = (12.0, 2.0, 2.2e3);
    let c = circuit(vec![
        (v(vdd), vec![1, 0]),
        (v(vg), vec![2, 0]),
        (r(rs), vec![3, 0]),
        (
            ElementKind::Fet(fet(FetKind::Jfet, Channel::N, vto, beta, lambda)),
            vec![1, 2, 3],
        ),
    ]);
    let g = |id: f64| {
        id - law(
            FetKind::Jfet,
            vto,
            beta,
            lambda,
            vg - id * rs,
            vdd - id * rs,
        )
    };
    let id = bisect(g, 0.0, 10e-3);
    check(&c, 3, &[(3, id * rs)], id);
}

#[test]
fn p_jfet_self_bias_stage() {
    // source: reference page — P-channel: every voltage and current negated (mirror of the N stage).
    let (vto, idss, lambda) = (2.0, 5e-3, 0.015);
    let beta = idss / (vto * vto);
    let (vss, rd, rs) = (-12.0, 1.2e3, 390.0);
    let c = circuit(vec![
        (v(vss), vec![1, 0]),
        (r(rd), vec![2, 1]),
        (r(rs), vec![0, 3]),
        (r(1e6), vec![4, 0]),
        (
            ElementKind::Fet(fet(FetKind::Jfet, Channel::P, vto, beta, lambda)),
            vec![2, 4, 3],
        ),
    ]);
    // N sense: ID' = −ID flows source → drain; VGS' = ID'·RS·(−1)…, VDS' = |VSS| − ID'(RD + RS).
    let g = |id: f64| {
        id - law(
            FetKind::Jfet,
            -vto,
            beta,
            lambda,
            -id * rs,
            -vss - id * (rd + rs),
        )
    };
    let id = bisect(g, 0.0, 10e-3);
    check(&c, 4, &[(2, vss + id * rd), (3, -id * rs)], -id);
}

#[test]
fn divider_biased_n_mosfet() {
    // source: Sedra and Smith, MOSFET biasing with a gate divider and source resistance.
    let (vto, beta, lambda) = (2.1, 0.05, 0.01);
    let (vdd, r1, r2, rd, rs) = (15.0, 100e3, 47e3, 680.0, 220.0);
    let vg = vdd * r2 / (r1 + r2);
    let c = circuit(vec![
        (v(vdd), vec![1, 0]),
        (r(r1), vec![1, 4]),
        (r(r2), vec![4, 0]),
        (r(rd), vec![1, 2]),
        (r(rs), vec![3, 0]),
        (
            ElementKind::Fet(fet(FetKind::Mosfet, Channel::N, vto, beta, lambda)),
            vec![2, 4, 3],
        ),
    ]);
    let g = |id: f64| {
        id - law(
            FetKind::Mosfet,
            vto,
            beta,
            lambda,
            vg - id * rs,
            vdd - id * (rd + rs),
        )
    };
    let id = bisect(g, 0.0, vdd / (rd + rs));
    check(&c, 5, &[(2, vdd - id * rd), (3, id * rs), (4, vg)], id);
}

#[test]
fn p_mosfet_high_side_switch() {
    // source: reference page, P-channel negated; VSG = 10 V, load to ground.
    let (vto, beta, lambda) = (-2.0, 0.4, 0.0);
    let (vdd, rl) = (12.0, 47.0);
    let c = circuit(vec![
        (v(vdd), vec![1, 0]),
        (v(2.0), vec![2, 0]),
        (r(rl), vec![3, 0]),
        (
            ElementKind::Fet(fet(FetKind::Mosfet, Channel::P, vto, beta, lambda)),
            vec![3, 2, 1],
        ),
    ]);
    let g = |id: f64| id - law(FetKind::Mosfet, -vto, beta, lambda, 10.0, vdd - id * rl);
    let id = bisect(g, 0.0, vdd / rl);
    check(&c, 3, &[(3, id * rl)], -id);
    // The switch is in the triode region (VSD < VSG − |VTO|).
    assert!(vdd - id * rl < 8.0);
}

#[test]
fn n_mosfet_switch_in_triode() {
    // source: Sedra and Smith — a MOSFET switch: VGS = 10 V, the drain pulled by RD into the triode region.
    let (vto, beta, lambda) = (2.0, 1.2, 0.02);
    let (vdd, rd) = (12.0, 100.0);
    let c = circuit(vec![
        (v(vdd), vec![1, 0]),
        (v(10.0), vec![3, 0]),
        (r(rd), vec![1, 2]),
        (
            ElementKind::Fet(fet(FetKind::Mosfet, Channel::N, vto, beta, lambda)),
            vec![2, 3, 0],
        ),
    ]);
    let g = |id: f64| id - law(FetKind::Mosfet, vto, beta, lambda, 10.0, vdd - id * rd);
    let id = bisect(g, 0.0, vdd / rd);
    let vds = vdd - id * rd;
    assert!(vds < 8.0 && vds > 0.0, "{vds}");
    check(&c, 3, &[(2, vds)], id);
}

#[test]
fn small_signal_model_is_the_dc_jacobian_for_every_fet_kind() {
    // invariant: the FET's small-signal elements (gm·vgs, gds, gate junctions,
    // body diode) linearised at the operating point equal the Jacobian of its
    // DC companion there, as for the BJT (elements/tests.rs) — and the DC
    // Jacobian is the finite difference of the exact currents (devices/fet tests).
    use crate::analysis::dc::stamps::junction_of;
    use crate::analysis::elements::{with_model, At, Model};
    use crate::analysis::linear::LinearKind;
    use crate::analysis::mna::{self, Stamp};
    use crate::analysis::small_signal;
    struct Dense {
        n: usize,
        a: Vec<f64>,
    }
    impl Stamp<f64> for Dense {
        fn add(&mut self, row: usize, col: usize, v: f64) {
            self.a[row * self.n + col] += v;
        }
        fn add_rhs(&mut self, _row: usize, _v: f64) {}
    }
    let cases = [
        (FetKind::Jfet, Channel::N, -2.5, 1.28e-3),
        (FetKind::Jfet, Channel::P, 2.0, 1.25e-3),
        (FetKind::Mosfet, Channel::N, 2.1, 0.05),
        (FetKind::Mosfet, Channel::P, -2.1, 0.05),
    ];
    for (kind, ch, vto, beta) in cases {
        let s = ch.sign();
        // Self-biased / divider stage mirrored for P: supply, RD, RS, gate divider.
        let c = circuit(vec![
            (v(s * 15.0), vec![1, 0]),
            (r(1.5e3), vec![1, 2]),
            (r(330.0), vec![3, 0]),
            (r(100e3), vec![1, 4]),
            (
                r(if kind == FetKind::Jfet { 5e3 } else { 47e3 }),
                vec![4, 0],
            ),
            (
                ElementKind::Fet(fet(kind, ch, vto, beta, 0.01)),
                vec![2, 4, 3],
            ),
        ]);
        let op = dc::solve_circuit(&c).unwrap();
        let ss = small_signal::linearise(&c, &op);
        let n = c.size();
        let mut x = op.node_voltages[1..].to_vec();
        x.extend(&op.branch_currents);
        let k = 5;
        let e = &c.elements[k];
        let mut jacobian = Dense {
            n,
            a: vec![0.0; n * n],
        };
        let at = At::new(&c, k);
        let j = junction_of(e, &x);
        with_model!(&e.kind, |m| m.stamp_dc(&at, &mut jacobian, j, 1.0));
        let mut linear = Dense {
            n,
            a: vec![0.0; n * n],
        };
        for le in &ss.circuit.elements[ss.handles[k].clone()] {
            match le.kind {
                LinearKind::Conductance(g) => mna::conductance(&mut linear, le.a, le.b, g),
                LinearKind::Transconductance { gm, cp, cn } => {
                    mna::transconductance(&mut linear, le.a, le.b, cp, cn, gm)
                }
                _ => {}
            }
        }
        let scale = jacobian.a.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        assert!(scale > 1e-4, "{kind:?} {ch:?}: the channel conducts");
        for (want, got) in jacobian.a.iter().zip(&linear.a) {
            assert!(
                (want - got).abs() <= 1e-9 * scale,
                "{kind:?} {ch:?}: DC Jacobian {want:e}, small-signal {got:e}"
            );
        }
    }
}

#[test]
fn operating_point_report_names_region_margin_gm_ro_and_faults() {
    use crate::analysis::elements::fet_report::FetRegion;
    // JFET self-bias stage, saturation: source: Sedra and Smith — gm = 2·β·(VGS − VTO)·(1 + λ·VDS),
    // ro = (1/λ + VDS)/ID.
    let (vto, beta, lambda) = (-2.5, 1.28e-3, 0.01);
    let c = circuit(vec![
        (v(15.0), vec![1, 0]),
        (r(1.5e3), vec![1, 2]),
        (r(470.0), vec![3, 0]),
        (r(1e6), vec![4, 0]),
        (
            ElementKind::Fet(fet(FetKind::Jfet, Channel::N, vto, beta, lambda)),
            vec![2, 4, 3],
        ),
    ]);
    let op = dc::solve_circuit(&c).unwrap();
    let f = &fet_operating_points(&c, &op)[0];
    assert_eq!(f.region, FetRegion::Saturation);
    assert!(close(
        f.gm,
        2.0 * beta * (f.vgs - vto) * (1.0 + lambda * f.vds)
    ));
    assert!(close(f.ro, (1.0 / lambda + f.vds) / f.drain_current));
    assert!(close(f.triode_margin, f.vds - (f.vgs - vto)) && f.triode_margin > 0.0);
    // invariant: a FET's power is VDS·ID when no gate current flows.
    assert!((f.power - f.vds * f.drain_current).abs() < 1e-12);
    assert!(f.warnings.is_empty(), "{:?}", f.warnings);
    // A JFET gate pulled forward through 10 kΩ from 5 V: "gate conducting", named.
    let mut p = BTreeMap::new();
    p.insert(keys::THRESHOLD_VOLTAGE.to_string(), -2.0);
    let j = FetModel::from_parameters(&p, FetKind::Jfet, Channel::N, kelvin(27.0));
    // The same gate held at 0.75 V by an ideal source (a hard forward drive) converges too.
    let hard = circuit(vec![
        (v(10.0), vec![1, 0]),
        (v(0.75), vec![2, 0]),
        (r(1e3), vec![1, 3]),
        (ElementKind::Fet(j.clone()), vec![3, 2, 0]),
    ]);
    let op = dc::solve_circuit(&hard).unwrap();
    assert_eq!(
        fet_operating_points(&hard, &op)[0].region,
        FetRegion::GateConducting
    );
    let c = circuit(vec![
        (v(10.0), vec![1, 0]),
        (v(5.0), vec![4, 0]),
        (r(10e3), vec![4, 2]),
        (r(1e3), vec![1, 3]),
        (ElementKind::Fet(j), vec![3, 2, 0]),
    ]);
    let op = dc::solve_circuit(&c).unwrap();
    let f = &fet_operating_points(&c, &op)[0];
    assert_eq!(f.region, FetRegion::GateConducting);
    assert!(f
        .warnings
        .iter()
        .any(|w| w.contains("X4") && w.contains("forward")));
    // MOSFET switch: triode (negative margin) and a 25 V gate drive past the usual ±20 V.
    // common practice (no source): MOSFET gates break down near ±20 V.
    let c = circuit(vec![
        (v(12.0), vec![1, 0]),
        (v(25.0), vec![3, 0]),
        (r(100.0), vec![1, 2]),
        (
            ElementKind::Fet(fet(FetKind::Mosfet, Channel::N, 2.0, 1.2, 0.0)),
            vec![2, 3, 0],
        ),
    ]);
    let op = dc::solve_circuit(&c).unwrap();
    let f = &fet_operating_points(&c, &op)[0];
    assert_eq!(f.region, FetRegion::Triode);
    assert!(f.triode_margin < 0.0);
    assert!(f
        .warnings
        .iter()
        .any(|w| w.contains("VGS") && w.contains("20")));
}

#[test]
fn channel_noise_generator_is_4kt_two_thirds_gm_between_drain_and_source() {
    // source: van der Ziel, Proc. IRE 50 (1962) — channel noise 4·k·T·γ·gm, γ = 2/3, in saturation;
    // the output noise of a drain resistor stage is then that density × |transfer to the output|²,
    // which the noise analysis takes from its generator between drain and source.
    use crate::analysis::elements::{At, Model};
    use crate::analysis::noise::build::Collect;
    use crate::analysis::noise::Mechanism;
    use crate::analysis::{small_signal, BOLTZMANN};
    let mut p = BTreeMap::new();
    p.insert(keys::THRESHOLD_VOLTAGE.to_string(), -2.0);
    p.insert(keys::ZERO_GATE_DRAIN_CURRENT.to_string(), 6e-3);
    p.insert(keys::FLICKER_COEFFICIENT.to_string(), 1e-17);
    let j = FetModel::from_parameters(&p, FetKind::Jfet, Channel::N, kelvin(27.0));
    let c = circuit(vec![
        (v(15.0), vec![1, 0]),
        (r(1.5e3), vec![1, 2]),
        (r(330.0), vec![3, 0]),
        (r(1e6), vec![4, 0]),
        (ElementKind::Fet(j), vec![2, 4, 3]),
    ]);
    let op = dc::solve_circuit(&c).unwrap();
    let ss = small_signal::linearise(&c, &op);
    let doc = crate::document::Document::new("noise");
    let mut out = Collect {
        doc: &doc,
        op: &op,
        ss: &ss,
        kelvin: c.kelvin,
        wanted_signal: None,
        sources: vec![],
        transistors: vec![],
        signal: None,
        resistor_element: vec![],
    };
    let at = At::new(&c, 4);
    let ElementKind::Fet(m) = &c.elements[4].kind else {
        unreachable!()
    };
    crate::analysis::elements::fet::Fet { model: m }.noise(&at, &mut out);
    let f = &fet_operating_points(&c, &op)[0];
    let ch = out
        .sources
        .iter()
        .find(|s| s.mechanism == Mechanism::ChannelThermal)
        .unwrap();
    assert_eq!((ch.a, ch.b), (2, 3));
    assert!(close(
        ch.white,
        4.0 * BOLTZMANN * kelvin(27.0) * (2.0 / 3.0) * f.gm
    ));
    // Flicker: Kf·ID/f equals the white density at the corner.
    assert!(close(ch.flicker_corner * ch.white, 1e-17 * f.drain_current));
    assert_eq!(
        out.sources
            .iter()
            .filter(|s| s.mechanism == Mechanism::GateShot)
            .count(),
        2
    );
}

/// Every FET's report of `c` at the solved point `op` (as the DC solve makes
/// them, through the element's home), in element order.
fn fet_operating_points(
    c: &crate::analysis::circuit::Circuit,
    op: &crate::analysis::dc::OperatingPoint,
) -> Vec<crate::analysis::elements::fet_report::FetOperatingPoint> {
    let mut x = op.node_voltages[1..].to_vec();
    x.extend(&op.branch_currents);
    c.elements
        .iter()
        .enumerate()
        .filter_map(|(k, e)| match &e.kind {
            ElementKind::Fet(m) => Some(super::fet_report::report_of(c, k, m, &x)),
            _ => None,
        })
        .collect()
}
