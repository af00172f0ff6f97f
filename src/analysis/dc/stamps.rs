//! Element stamps and terminal currents at DC: the linearised companion
//! models the Newton iteration solves, and the exact currents the residual
//! check and the report are computed from.

use crate::analysis::circuit::{Circuit, Element, ElementKind, Node};
use crate::analysis::mna::{self, Stamp};

/// The junction state a nonlinear element is linearised at (NPN sense for
/// a transistor: [VBE, VBC] at the internal base; a diode: [V, 0]).
pub type Junction = [f64; 2];

/// Conditions of one Newton run: the conductance added from every node to
/// ground (an aid; zero for the answer) and the factor every independent
/// source is multiplied by (an aid; one for the answer).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Conditions {
    pub gmin: f64,
    pub source_scale: f64,
}

impl Conditions {
    pub const PLAIN: Conditions = Conditions {
        gmin: 0.0,
        source_scale: 1.0,
    };
}

/// Voltage of a node in an MNA solution vector.
#[inline]
pub fn voltage(x: &[f64], n: Node) -> f64 {
    if n == 0 {
        0.0
    } else {
        x[n - 1]
    }
}

/// The junction voltages an element sees in the solution `x`.
pub fn junction_of(e: &Element, x: &[f64]) -> Junction {
    match &e.kind {
        ElementKind::Bjt {
            model,
            internal_base,
        } => {
            let s = model.polarity.sign();
            let vb = voltage(x, *internal_base);
            [
                s * (vb - voltage(x, e.nodes[2])),
                s * (vb - voltage(x, e.nodes[0])),
            ]
        }
        ElementKind::Diode(d) => {
            let a = if d.series_resistance > 0.0 {
                e.internal_nodes[0]
            } else {
                e.nodes[0]
            };
            [voltage(x, a) - voltage(x, e.nodes[1]), 0.0]
        }
        _ => [0.0, 0.0],
    }
}

/// Stamp every element, linearised at `junctions`, under `cond`.
pub fn stamp_all(c: &Circuit, s: &mut impl Stamp<f64>, junctions: &[Junction], cond: Conditions) {
    for n in 1..=c.node_count {
        mna::conductance(s, n, 0, cond.gmin);
    }
    for (k, e) in c.elements.iter().enumerate() {
        stamp(c, k, e, s, junctions[k], cond.source_scale);
    }
}

fn stamp(c: &Circuit, k: usize, e: &Element, s: &mut impl Stamp<f64>, j: Junction, alpha: f64) {
    let n = &e.nodes;
    match &e.kind {
        ElementKind::Resistor { resistance } => mna::conductance(s, n[0], n[1], 1.0 / resistance),
        ElementKind::Capacitor { .. } => {}
        ElementKind::Inductor { .. } => {
            let row = c.branch_row(c.branch_of[k].expect("inductor has a branch"));
            mna::voltage_branch(s, n[0], n[1], row, 0.0, 0.0);
        }
        ElementKind::VoltageSource { dc, .. } => {
            let row = c.branch_row(c.branch_of[k].expect("source has a branch"));
            mna::voltage_branch(s, n[0], n[1], row, alpha * dc, 0.0);
        }
        ElementKind::CurrentSource { dc } => {
            // Current runs inside the source from `in` to `out`.
            mna::current(s, n[1], n[0], alpha * dc);
        }
        ElementKind::Diode(d) => {
            let a = if d.series_resistance > 0.0 {
                let ai = e.internal_nodes[0];
                mna::conductance(s, n[0], ai, 1.0 / d.series_resistance);
                ai
            } else {
                n[0]
            };
            let (i, g) = d.evaluate(j[0]);
            mna::conductance(s, a, n[1], g);
            mna::current(s, a, n[1], i - g * j[0]);
        }
        ElementKind::Bjt {
            model,
            internal_base: bi,
        } => {
            let (c_, b, em, bi) = (n[0], n[1], n[2], *bi);
            if bi != b {
                mna::conductance(s, b, bi, 1.0 / model.base_resistance);
            }
            let sign = model.polarity.sign();
            let ev = model.evaluate(j[0], j[1]);
            // Pin current into the collector, linearised (s² = 1):
            // IC = s·(ic0 − gbe·vbe0 − gbc·vbc0) + gbe·(v_bi − v_e) + gbc·(v_bi − v_c).
            mna::transconductance(s, c_, em, bi, em, ev.dic_dvbe);
            mna::transconductance(s, c_, em, bi, c_, ev.dic_dvbc);
            let ic0 = sign * (ev.ic - ev.dic_dvbe * j[0] - ev.dic_dvbc * j[1]);
            mna::current(s, c_, em, ic0);
            // Base current from the internal base to the emitter, likewise.
            mna::transconductance(s, bi, em, bi, em, ev.dib_dvbe);
            mna::transconductance(s, bi, em, bi, c_, ev.dib_dvbc);
            let ib0 = sign * (ev.ib - ev.dib_dvbe * j[0] - ev.dib_dvbc * j[1]);
            mna::current(s, bi, em, ib0);
        }
    }
}

/// Exact currents of one element in solution `x`: up to five
/// (node, current flowing from that node into the element) pairs, pins
/// first in `pin_names()` order, then the currents at internal nodes, one
/// entry per branch (so the largest single current at an internal node is
/// visible to the residual test). `count` says how many are used.
#[derive(Debug, Clone, Copy, Default)]
pub struct Terminals {
    pub node: [Node; 5],
    pub current: [f64; 5],
    pub count: usize,
}

impl Terminals {
    fn push(&mut self, node: Node, current: f64) {
        self.node[self.count] = node;
        self.current[self.count] = current;
        self.count += 1;
    }
    pub fn iter(&self) -> impl Iterator<Item = (Node, f64)> + '_ {
        (0..self.count).map(|k| (self.node[k], self.current[k]))
    }
}

/// Exact terminal currents of element `k` (device equations, no linearising).
pub fn terminal_currents(c: &Circuit, k: usize, x: &[f64], alpha: f64) -> Terminals {
    let e = &c.elements[k];
    let n = &e.nodes;
    let v = |node: Node| voltage(x, node);
    let mut t = Terminals::default();
    match &e.kind {
        ElementKind::Resistor { resistance } => {
            let i = (v(n[0]) - v(n[1])) / resistance;
            t.push(n[0], i);
            t.push(n[1], -i);
        }
        ElementKind::Capacitor { .. } => {
            t.push(n[0], 0.0);
            t.push(n[1], 0.0);
        }
        ElementKind::Inductor { .. } | ElementKind::VoltageSource { .. } => {
            let j = x[c.branch_row(c.branch_of[k].expect("branch"))];
            t.push(n[0], j);
            if e.nodes.len() > 1 {
                t.push(n[1], -j);
            }
        }
        ElementKind::CurrentSource { dc } => {
            t.push(n[0], -alpha * dc);
            t.push(n[1], alpha * dc);
        }
        ElementKind::Diode(d) => {
            let jv = junction_of(e, x)[0];
            let (i, _) = d.evaluate(jv);
            if d.series_resistance > 0.0 {
                let ai = e.internal_nodes[0];
                let irs = (v(n[0]) - v(ai)) / d.series_resistance;
                t.push(n[0], irs);
                t.push(n[1], -i);
                t.push(ai, i);
                t.push(ai, -irs);
            } else {
                t.push(n[0], i);
                t.push(n[1], -i);
            }
        }
        ElementKind::Bjt {
            model,
            internal_base,
        } => {
            let j = junction_of(e, x);
            let ev = model.evaluate(j[0], j[1]);
            let sign = model.polarity.sign();
            let (ic, ib) = (sign * ev.ic, sign * ev.ib);
            if *internal_base != n[1] {
                let irb = (v(n[1]) - v(*internal_base)) / model.base_resistance;
                t.push(n[0], ic);
                t.push(n[1], irb);
                t.push(n[2], -(ic + ib));
                t.push(*internal_base, ib);
                t.push(*internal_base, -irb);
            } else {
                t.push(n[0], ic);
                t.push(n[1], ib);
                t.push(n[2], -(ic + ib));
            }
        }
    }
    t
}

/// Kirchhoff residuals at `x`: per node, the net current flowing out of it
/// into elements (including the gmin aid) and the largest single current
/// there; per branch row, the voltage equation's error and its scale.
pub fn residuals(c: &Circuit, x: &[f64], cond: Conditions) -> (Vec<f64>, Vec<f64>) {
    let size = c.size();
    let mut sum = vec![0.0; size];
    let mut scale = vec![0.0f64; size];
    for k in 0..c.elements.len() {
        for (node, i) in terminal_currents(c, k, x, cond.source_scale).iter() {
            if node > 0 {
                sum[node - 1] += i;
                scale[node - 1] = scale[node - 1].max(i.abs());
            }
        }
    }
    if cond.gmin > 0.0 {
        for n in 1..=c.node_count {
            let i = cond.gmin * x[n - 1];
            sum[n - 1] += i;
            scale[n - 1] = scale[n - 1].max(i.abs());
        }
    }
    for (k, e) in c.elements.iter().enumerate() {
        if let Some(b) = c.branch_of[k] {
            let target = match e.kind {
                ElementKind::VoltageSource { dc, .. } => cond.source_scale * dc,
                _ => 0.0,
            };
            let (va, vb) = (voltage(x, e.nodes[0]), voltage(x, e.nodes[1]));
            let r = c.branch_row(b);
            sum[r] = va - vb - target;
            scale[r] = va.abs().max(vb.abs()).max(target.abs());
        }
    }
    (sum, scale)
}

/// Multiple of the machine epsilon allowed for rounding in one current.
pub const ROUNDING_ULPS: f64 = 8.0;

/// The rounding allowance of each residual row: what evaluating the
/// residual in f64 can resolve at all. A current through a conductance g
/// between node voltages va and vb is only known to about
/// ε·g·(|va| + |vb|) (a 0.1 Ω sense resistor on a 48 V line carries a
/// current known to only ~1e-13 A), and a sum of currents to ε·Σ|i|. So a
/// node row allows ROUNDING_ULPS·ε·Σ over its terminals of
/// (|i| + g·Σ|v of the element's nodes|); a branch row
/// ROUNDING_ULPS·ε·(|va| + |vb| + |e|). The convergence test and the
/// Kirchhoff checks in the tests add this floor to their tolerances.
pub fn rounding_floor(c: &Circuit, x: &[f64], cond: Conditions) -> Vec<f64> {
    let eps = ROUNDING_ULPS * f64::EPSILON;
    let mut floor = vec![0.0; c.size()];
    for (k, e) in c.elements.iter().enumerate() {
        let g = match &e.kind {
            ElementKind::Resistor { resistance } => 1.0 / resistance,
            ElementKind::Diode(d) => {
                let (_, g) = d.evaluate(junction_of(e, x)[0]);
                g + if d.series_resistance > 0.0 {
                    1.0 / d.series_resistance
                } else {
                    0.0
                }
            }
            ElementKind::Bjt { model, .. } => {
                let j = junction_of(e, x);
                let ev = model.evaluate(j[0], j[1]);
                ev.dic_dvbe.abs()
                    + ev.dic_dvbc.abs()
                    + ev.dib_dvbe.abs()
                    + ev.dib_dvbc.abs()
                    + if model.base_resistance > 0.0 {
                        1.0 / model.base_resistance
                    } else {
                        0.0
                    }
            }
            _ => 0.0,
        };
        let t = terminal_currents(c, k, x, cond.source_scale);
        let vsum: f64 = t.iter().map(|(n, _)| voltage(x, n).abs()).sum();
        for (n, i) in t.iter() {
            if n > 0 {
                floor[n - 1] += eps * (i.abs() + g * vsum);
            }
        }
        if let Some(b) = c.branch_of[k] {
            let target = match e.kind {
                ElementKind::VoltageSource { dc, .. } => cond.source_scale * dc,
                _ => 0.0,
            };
            let (va, vb) = (voltage(x, e.nodes[0]), voltage(x, e.nodes[1]));
            floor[c.branch_row(b)] = eps * (va.abs() + vb.abs() + target.abs());
        }
    }
    if cond.gmin > 0.0 {
        for n in 1..=c.node_count {
            floor[n - 1] += eps * cond.gmin * x[n - 1].abs();
        }
    }
    floor
}
