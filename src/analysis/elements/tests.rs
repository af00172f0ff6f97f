use super::{with_model, At, Model};
use crate::analysis::circuit::{self, Circuit, Element, ElementKind};
use crate::analysis::dc::stamps::{junction_of, terminal_currents};
use crate::analysis::devices::diode::DiodeModel;
use crate::analysis::mna::Stamp;

/// A dense real system to stamp one element into.
struct Dense {
    n: usize,
    a: Vec<f64>,
    b: Vec<f64>,
}

impl Stamp<f64> for Dense {
    fn add(&mut self, row: usize, col: usize, v: f64) {
        self.a[row * self.n + col] += v;
    }
    fn add_rhs(&mut self, row: usize, v: f64) {
        self.b[row] += v;
    }
}

/// For every element of `c` at the point `x`: the Newton companion,
/// linearised at the junction voltages of `x` itself, must give back the
/// exact terminal currents there, row by row (A·x − b at a node row is the
/// current flowing from that node into the element).
fn companion_matches_exact_currents(c: &Circuit, x: &[f64]) {
    let n = c.size();
    for (k, e) in c.elements.iter().enumerate() {
        let mut s = Dense {
            n,
            a: vec![0.0; n * n],
            b: vec![0.0; n],
        };
        let at = At::new(c, k);
        let j = junction_of(e, x);
        with_model!(&e.kind, |m| m.stamp_dc(&at, &mut s, j, 1.0));
        let mut exact = vec![0.0; n];
        let mut scale = vec![0.0f64; n];
        for (node, i) in terminal_currents(c, k, x, 1.0).iter() {
            if node > 0 {
                exact[node - 1] += i;
                scale[node - 1] = scale[node - 1].max(i.abs());
            }
        }
        for r in 0..c.node_count {
            let ax: f64 = (0..n).map(|col| s.a[r * n + col] * x[col]).sum();
            let got = ax - s.b[r];
            let tol = 1e-9 * scale[r].max(1e-12);
            assert!(
                (got - exact[r]).abs() <= tol,
                "{} row {r}: companion {got:e} A, exact {:e} A",
                e.designator,
                exact[r]
            );
        }
    }
}

/// Deterministic, spread-out test voltages (and branch currents).
fn point(size: usize) -> Vec<f64> {
    (0..size)
        .map(|i| 0.37 * ((i * 7919 % 23) as f64 / 23.0 - 0.2) + 0.05 * i as f64)
        .collect()
}

#[test]
fn every_demo_element_companion_is_exact_at_its_own_point() {
    // invariant: a Newton companion i(v0) + g·(v − v0) equals the device
    // current at v = v0 (first-order Taylor expansion is exact at its point).
    for path in [
        "projects/two-stage-preamp.json",
        "projects/common-emitter.json",
        "projects/pnp-sensor-loop.json",
        "projects/photodiode-buffer.json",
    ] {
        let doc = crate::document::load_file(std::path::Path::new(path)).unwrap();
        let nl = crate::netlist::connect(&doc);
        let c = circuit::build(&doc, &nl).unwrap();
        companion_matches_exact_currents(&c, &point(c.size()));
    }
}

#[test]
fn diode_companion_is_exact_with_and_without_series_resistance() {
    // invariant: as above, for the Shockley junction behind its series resistance.
    for rs in [0.0, 12.0] {
        let mut params = std::collections::BTreeMap::new();
        params.insert(crate::presets::keys::SERIES_RESISTANCE.to_string(), rs);
        let model = DiodeModel::from_parameters(&params, 300.15);
        let internal = if rs > 0.0 { vec![3] } else { vec![] };
        let element = |kind, nodes: Vec<usize>, internal_nodes: Vec<usize>| Element {
            part: 0,
            designator: "D1".into(),
            kind,
            nodes,
            internal_nodes,
            power_rating: None,
            voltage_rating: None,
            polarised: false,
        };
        let c = Circuit {
            node_count: if rs > 0.0 { 3 } else { 2 },
            net_node: vec![0, 1, 2],
            node_names: vec!["0".into(), "a".into(), "k".into(), "a'".into()],
            elements: vec![
                element(ElementKind::Diode(model), vec![1, 2], internal),
                element(
                    ElementKind::Resistor { resistance: 1e3 },
                    vec![2, 0],
                    vec![],
                ),
            ],
            kelvin: 300.15,
            net_names: vec!["0".into(), "a".into(), "k".into()],
            branch_of: vec![None, None],
            branch_count: 0,
        };
        for x in [[0.68, 0.01, 0.66], [0.3, 0.1, 0.25], [-2.0, 0.0, -1.9]] {
            companion_matches_exact_currents(&c, &x[..c.size()]);
        }
    }
}

#[test]
fn small_signal_conductances_are_the_dc_jacobian_at_the_operating_point() {
    // invariant: linearising an element at the operating point gives the
    // Jacobian of its DC equations there (the small-signal model of a
    // resistor, diode or transistor, NPN and PNP, is dI/dV at the bias point).
    use crate::analysis::linear::LinearKind;
    use crate::analysis::{dc, mna, small_signal};
    for path in [
        "projects/two-stage-preamp.json",
        "projects/common-emitter.json",
        "projects/pnp-sensor-loop.json",
        "projects/photodiode-buffer.json",
    ] {
        let doc = crate::document::load_file(std::path::Path::new(path)).unwrap();
        let nl = crate::netlist::connect(&doc);
        let c = circuit::build(&doc, &nl).unwrap();
        let op = dc::solve_circuit(&c).unwrap();
        let ss = small_signal::linearise(&c, &op);
        let n = c.size();
        let mut x = op.node_voltages[1..].to_vec();
        x.extend(&op.branch_currents);
        let dense = || Dense {
            n,
            a: vec![0.0; n * n],
            b: vec![0.0; n],
        };
        let mut checked = 0;
        for (k, e) in c.elements.iter().enumerate() {
            let nonlinear_or_resistor = match e.kind {
                ElementKind::Resistor { resistance } => resistance > 0.0,
                ElementKind::Diode(_) | ElementKind::Bjt { .. } => true,
                _ => false,
            };
            if !nonlinear_or_resistor {
                continue;
            }
            let mut jacobian = dense();
            let at = At::new(&c, k);
            let j = junction_of(e, &x);
            with_model!(&e.kind, |m| m.stamp_dc(&at, &mut jacobian, j, 1.0));
            let mut linear = dense();
            for le in &ss.circuit.elements[ss.handles[k].clone()] {
                match le.kind {
                    LinearKind::Conductance(g) => mna::conductance(&mut linear, le.a, le.b, g),
                    LinearKind::Transconductance { gm, cp, cn } => {
                        mna::transconductance(&mut linear, le.a, le.b, cp, cn, gm)
                    }
                    _ => {}
                }
            }
            for r in 0..c.node_count {
                let row = &jacobian.a[r * n..r * n + c.node_count];
                let scale = row.iter().fold(0.0f64, |m, v| m.max(v.abs()));
                for col in 0..c.node_count {
                    let (want, got) = (jacobian.a[r * n + col], linear.a[r * n + col]);
                    assert!(
                        (want - got).abs() <= 1e-9 * scale,
                        "{path} {} ({r}, {col}): DC Jacobian {want:e}, small-signal {got:e}",
                        e.designator
                    );
                }
            }
            checked += 1;
        }
        assert!(checked > 0, "{path}: nothing checked");
    }
}

#[test]
fn an_element_whose_currents_are_not_linear_says_so() {
    // invariant: superposition — a linear element's terminal currents at
    // 2·x, with its own sources off (alpha = 0), are twice those at x; an
    // element for which that fails must answer `nonlinear()` (the time
    // step solves a circuit of linear elements once a step, so a device
    // that forgot to say so would be taken for linear). Every element kind
    // of the demos, FETs and diodes included.
    let (mut linear_seen, mut nonlinear_seen) = (0, 0);
    for path in [
        "projects/two-stage-preamp.json",
        "projects/piezo-jfet-preamp.json",
        "projects/mosfet-gain-stage.json",
        "projects/photodiode-buffer.json",
        "projects/line-driver.json",
        "projects/connections/class-ab-output.json",
    ] {
        let doc = crate::document::load_file(std::path::Path::new(path)).unwrap();
        let nl = crate::netlist::connect(&doc);
        let c = circuit::build(&doc, &nl).unwrap();
        let x = point(c.size());
        let x2: Vec<f64> = x.iter().map(|v| 2.0 * v).collect();
        for (k, e) in c.elements.iter().enumerate() {
            let at = At::new(&c, k);
            let once = with_model!(&e.kind, |m| m.terminals(&at, &x, 0.0));
            let twice = with_model!(&e.kind, |m| m.terminals(&at, &x2, 0.0));
            let linear = once
                .iter()
                .zip(twice.iter())
                .all(|((_, a), (_, b))| (b - 2.0 * a).abs() <= 1e-9 * b.abs().max(1e-15));
            let says = with_model!(&e.kind, |m| m.nonlinear());
            assert!(
                linear || says,
                "{} ({path}) is not linear but says it is",
                e.designator
            );
            if linear {
                linear_seen += 1;
            } else {
                nonlinear_seen += 1;
            }
        }
    }
    // The demos hold linear and nonlinear elements both (the check bites).
    assert!(
        linear_seen > 10 && nonlinear_seen > 5,
        "{linear_seen} {nonlinear_seen}"
    );
}
