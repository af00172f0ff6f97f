//! Companion models of the stored charges and fluxes for one time step.
//!
//! A charge q between nodes a and b carries the current dq/dt from a to b.
//! Over a step of length h the integration rule turns it into
//! i_n = α·(q_n − q_{n−1}) − β·i_{n−1}, with α = 2/h, β = 1 for the
//! trapezoidal rule and α = 1/h, β = 0 for backward Euler (L. W. Nagel,
//! "SPICE2: A computer program to simulate semiconductor circuits", 1975, ch. 5). Linearised at the Newton point, q_n ≈ q0 + Σ dq·(v − v0),
//! so the stamp is a (trans)conductance α·dq beside a current source. An
//! inductor's flux L·i is treated the same way in its branch equation.
//! Transistor charges are computed in NPN sense; a PNP's terminal charge is
//! the NPN charge of the negated voltages, negated (dq/dv is unchanged).

use crate::analysis::circuit::{Circuit, Node};
use crate::analysis::dc::stamps::Junction;
use crate::analysis::elements::{with_model, At, Model};
use crate::analysis::mna::{self, Stamp};

/// What a slot stores.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SlotKind {
    /// A linear capacitor (farads).
    Capacitor(f64),
    /// A transistor's base–emitter charge (depletion + diffusion).
    BaseEmitter,
    /// A transistor's base–collector depletion charge.
    BaseCollector,
    /// A diode's junction charge.
    Diode,
    /// A field-effect transistor's gate–source, gate–drain and drain–source
    /// charges.
    GateSource,
    GateDrain,
    DrainSource,
    /// An inductor's flux L·i (henries); its branch row.
    Flux(f64, usize),
}

/// One stored charge (or flux): where it sits and what it is.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Slot {
    pub element: usize,
    pub kind: SlotKind,
    /// The current dq/dt flows from `a` to `b` through the element.
    pub a: Node,
    pub b: Node,
    /// Third node of a transistor's base–emitter charge (its collector):
    /// the diffusion charge depends on the base–collector voltage too.
    pub c: Node,
}

/// The slots of a circuit: every capacitor and inductor, every transistor
/// junction and diode with a capacitance or transit time (each kind says
/// which, [`crate::analysis::elements::Model::slots`]).
pub fn slots(c: &Circuit) -> Vec<Slot> {
    let mut out = Vec::new();
    for (k, e) in c.elements.iter().enumerate() {
        let at = At::new(c, k);
        with_model!(&e.kind, |m| m.slots(&at, &mut out));
    }
    out
}

/// A slot's charge (terminal sense) and its slopes by (node+, node−) pair,
/// linearised at junctions `j` (devices) or the solution `x` (linear parts).
#[derive(Debug, Clone, Copy, Default)]
pub struct ChargeEval {
    pub q: f64,
    /// Up to two (p, n, dq/d(vp − vn)) entries.
    pub slope: [(Node, Node, f64); 2],
    /// The pair voltages the linearisation is taken at.
    pub at: [f64; 2],
}

/// Evaluate slot `s` at junctions `j` of its element (NPN sense) or at `x`.
pub fn evaluate(c: &Circuit, s: &Slot, j: Junction, x: &[f64]) -> ChargeEval {
    with_model!(&c.elements[s.element].kind, |m| m.charge(s, j, x))
}

/// The integration rule of one step: i_n = α·(q_n − q_prev) − β·i_prev.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rule {
    pub alpha: f64,
    pub beta: f64,
}

impl Rule {
    pub fn trapezoidal(h: f64) -> Rule {
        Rule {
            alpha: 2.0 / h,
            beta: 1.0,
        }
    }
    pub fn backward_euler(h: f64) -> Rule {
        Rule {
            alpha: 1.0 / h,
            beta: 0.0,
        }
    }
    /// The current (or an inductor's voltage) at the new point.
    pub fn derivative(&self, q: f64, q_prev: f64, i_prev: f64) -> f64 {
        self.alpha * (q - q_prev) - self.beta * i_prev
    }
}

/// Stamp slot `s`'s companion model for the step.
pub fn stamp(
    st: &mut impl Stamp<f64>,
    s: &Slot,
    ev: &ChargeEval,
    rule: Rule,
    q_prev: f64,
    i_prev: f64,
) {
    if let SlotKind::Flux(l, row) = s.kind {
        // v(a) − v(b) − α·L·i = −α·Φ_prev − β·v_prev.
        st.add(row, row, -rule.alpha * l);
        st.add_rhs(row, -rule.alpha * q_prev - rule.beta * i_prev);
        return;
    }
    let mut ieq = rule.derivative(ev.q, q_prev, i_prev);
    for (k, &(p, n, g)) in ev.slope.iter().enumerate() {
        if p == 0 && n == 0 {
            continue;
        }
        mna::transconductance(st, s.a, s.b, p, n, rule.alpha * g);
        ieq -= rule.alpha * g * ev.at[k];
    }
    mna::current(st, s.a, s.b, ieq);
}
