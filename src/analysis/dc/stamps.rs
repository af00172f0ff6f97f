//! The DC asks over a whole circuit: the linearised companion models the
//! Newton iteration solves, and the exact currents the residual check and
//! the report are computed from. Each element kind's own equations are in
//! its home in `analysis::elements`; here only the loops over the elements,
//! the gmin aid and the residual and rounding bookkeeping.

use crate::analysis::circuit::{Circuit, Element, Node};
use crate::analysis::elements::{with_model, At, Model};
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
    with_model!(&e.kind, |m| m.junction(e, x))
}

/// A Newton step of element `e`'s junction voltages from `old` towards
/// the solution `x_new`: the junction voltages there, the step limited
/// (critical-voltage method, the 1/qb guard; elements without a junction
/// keep `old`), and whether the limit acted.
pub fn step_junction(e: &Element, old: Junction, x_new: &[f64]) -> (Junction, Junction, bool) {
    with_model!(&e.kind, |m| {
        let j = m.junction(e, x_new);
        let (limited, hit) = m.limit(old, j);
        (j, limited, hit)
    })
}

/// Stamp every element, linearised at `junctions`, under `cond`.
pub fn stamp_all(c: &Circuit, s: &mut impl Stamp<f64>, junctions: &[Junction], cond: Conditions) {
    for n in 1..=c.node_count {
        mna::conductance(s, n, 0, cond.gmin);
    }
    for (k, e) in c.elements.iter().enumerate() {
        let at = At {
            circuit: c,
            index: k,
            element: e,
        };
        with_model!(&e.kind, |m| m.stamp_dc(
            &at,
            s,
            junctions[k],
            cond.source_scale
        ));
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
    pub(crate) fn push(&mut self, node: Node, current: f64) {
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
    let at = At::new(c, k);
    with_model!(&at.element.kind, |m| m.terminals(&at, x, alpha))
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
            let target = with_model!(&e.kind, |m| m.branch_voltage(cond.source_scale));
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
        let g = with_model!(&e.kind, |m| m.rounding_conductance(e, x));
        let t = terminal_currents(c, k, x, cond.source_scale);
        let vsum: f64 = t.iter().map(|(n, _)| voltage(x, n).abs()).sum();
        for (n, i) in t.iter() {
            if n > 0 {
                floor[n - 1] += eps * (i.abs() + g * vsum);
            }
        }
        if let Some(b) = c.branch_of[k] {
            let target = with_model!(&e.kind, |m| m.branch_voltage(cond.source_scale));
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
