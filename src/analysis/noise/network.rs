//! The linearised network the noise analysis solves: a short list of
//! small-signal elements between circuit nodes, assembled into the complex
//! modified-nodal-analysis matrix at one frequency (Ho, Ruehli, Brennan 1975).
//!
//! Unknowns: node voltages of nodes `1..=node_count` (index `node − 1`), then
//! one branch current for every element that needs one (voltage sources,
//! inductors), in element order. Node 0 is ground.
//!
//! The elements are kept separate (not only as a matrix) so that a what-if
//! can change one transistor's small-signal values and solve again.

use nalgebra::{DMatrix, DVector};
use num_complex::Complex64;

/// A circuit node; 0 is ground.
pub type Node = usize;

/// One small-signal element.
#[derive(Debug, Clone, PartialEq)]
pub enum Element {
    /// Admittance `conductance + jω·capacitance` between `a` and `b`.
    Admittance {
        a: Node,
        b: Node,
        conductance: f64,
        capacitance: f64,
    },
    /// A voltage-controlled current source: the current
    /// `gm·(v(control_p) − v(control_n))` leaves node `p` through the element
    /// and enters node `n` (a transistor's collector current: p = collector,
    /// n = emitter).
    Transconductance {
        p: Node,
        n: Node,
        control_p: Node,
        control_n: Node,
        gm: f64,
    },
    /// An independent voltage source, `v(p) − v(n) = volts` (zero for the
    /// supplies: a short at small signal). `signal` marks the signal source,
    /// whose value is the unit excitation of [`Network::excitation`].
    VoltageSource { p: Node, n: Node, signal: bool },
    /// An inductor: `v(a) − v(b) = jωL·i`.
    Inductor { a: Node, b: Node, inductance: f64 },
}

impl Element {
    fn has_branch(&self) -> bool {
        matches!(
            self,
            Element::VoltageSource { .. } | Element::Inductor { .. }
        )
    }
}

/// A linear small-signal network.
#[derive(Debug, Clone, PartialEq)]
pub struct Network {
    /// Unknown nodes, numbered `1..=node_count`.
    pub node_count: usize,
    pub elements: Vec<Element>,
    /// The document part each element came from (same order as `elements`).
    pub owners: Vec<Option<usize>>,
}

impl Network {
    pub fn new(node_count: usize) -> Self {
        Network {
            node_count,
            elements: Vec::new(),
            owners: Vec::new(),
        }
    }

    /// Add an element that belongs to no document part.
    pub fn push(&mut self, e: Element) -> usize {
        self.push_for(None, e)
    }

    /// Add an element of document part `part`.
    pub fn push_for(&mut self, part: Option<usize>, e: Element) -> usize {
        self.elements.push(e);
        self.owners.push(part);
        self.elements.len() - 1
    }

    /// Disconnect every element of `part` from `node`: their ends there move
    /// to one fresh node (returned). Controls are not moved.
    pub fn cut(&mut self, part: usize, node: Node) -> Node {
        self.node_count += 1;
        let fresh = self.node_count;
        let mv = |n: &mut Node| {
            if *n == node {
                *n = fresh;
            }
        };
        for (e, owner) in self.elements.iter_mut().zip(&self.owners) {
            if *owner != Some(part) || node == 0 {
                continue;
            }
            match e {
                Element::Admittance { a, b, .. } | Element::Inductor { a, b, .. } => {
                    mv(a);
                    mv(b)
                }
                Element::Transconductance { p, n, .. } | Element::VoltageSource { p, n, .. } => {
                    mv(p);
                    mv(n)
                }
            }
        }
        // A whisker to ground (1 pS) so a cut end never leaves the system singular.
        self.push(Element::Admittance {
            a: fresh,
            b: 0,
            conductance: 1e-12,
            capacitance: 0.0,
        });
        fresh
    }

    /// Size of the MNA system.
    pub fn size(&self) -> usize {
        self.node_count + self.elements.iter().filter(|e| e.has_branch()).count()
    }

    /// The unknown index of each element's branch current, if it has one.
    pub fn branch_index(&self, element: usize) -> Option<usize> {
        if !self.elements.get(element)?.has_branch() {
            return None;
        }
        let before = self.elements[..element]
            .iter()
            .filter(|e| e.has_branch())
            .count();
        Some(self.node_count + before)
    }

    /// The complex MNA matrix at `frequency` (Hz).
    pub fn matrix(&self, frequency: f64) -> DMatrix<Complex64> {
        let n = self.size();
        let mut m = DMatrix::<Complex64>::zeros(n, n);
        let omega = 2.0 * std::f64::consts::PI * frequency;
        let idx = |node: Node| node.checked_sub(1);
        let mut branch = self.node_count;
        for e in &self.elements {
            match *e {
                Element::Admittance {
                    a,
                    b,
                    conductance,
                    capacitance,
                } => {
                    let y = Complex64::new(conductance, omega * capacitance);
                    stamp_two(&mut m, idx(a), idx(b), y);
                }
                Element::Transconductance {
                    p,
                    n,
                    control_p,
                    control_n,
                    gm,
                } => {
                    let g = Complex64::new(gm, 0.0);
                    for (row, rs) in [(idx(p), 1.0), (idx(n), -1.0)] {
                        for (col, cs) in [(idx(control_p), 1.0), (idx(control_n), -1.0)] {
                            if let (Some(r), Some(c)) = (row, col) {
                                m[(r, c)] += g * (rs * cs);
                            }
                        }
                    }
                }
                Element::VoltageSource { p, n, .. } => {
                    stamp_branch(&mut m, idx(p), idx(n), branch);
                    branch += 1;
                }
                Element::Inductor { a, b, inductance } => {
                    stamp_branch(&mut m, idx(a), idx(b), branch);
                    m[(branch, branch)] -= Complex64::new(0.0, omega * inductance);
                    branch += 1;
                }
            }
        }
        m
    }

    /// The right-hand side for a unit (1 V) signal source: a one in the
    /// branch row of every element marked `signal`.
    pub fn excitation(&self) -> DVector<Complex64> {
        let mut b = DVector::<Complex64>::zeros(self.size());
        for (i, e) in self.elements.iter().enumerate() {
            if matches!(e, Element::VoltageSource { signal: true, .. }) {
                if let Some(k) = self.branch_index(i) {
                    b[k] = Complex64::new(1.0, 0.0);
                }
            }
        }
        b
    }

    /// The right-hand side for a unit current pushed into node `into` and
    /// drawn out of node `out_of`.
    pub fn current_injection(&self, into: Node, out_of: Node) -> DVector<Complex64> {
        let mut b = DVector::<Complex64>::zeros(self.size());
        if into > 0 {
            b[into - 1] += Complex64::new(1.0, 0.0);
        }
        if out_of > 0 {
            b[out_of - 1] -= Complex64::new(1.0, 0.0);
        }
        b
    }

    /// The selector `e` with `eᵀ·x = v(p) − v(n)`.
    pub fn probe(&self, p: Node, n: Node) -> DVector<Complex64> {
        let mut e = DVector::<Complex64>::zeros(self.size());
        if p > 0 {
            e[p - 1] += Complex64::new(1.0, 0.0);
        }
        if n > 0 {
            e[n - 1] -= Complex64::new(1.0, 0.0);
        }
        e
    }
}

fn stamp_two(m: &mut DMatrix<Complex64>, a: Option<usize>, b: Option<usize>, y: Complex64) {
    if let Some(a) = a {
        m[(a, a)] += y;
    }
    if let Some(b) = b {
        m[(b, b)] += y;
    }
    if let (Some(a), Some(b)) = (a, b) {
        m[(a, b)] -= y;
        m[(b, a)] -= y;
    }
}

fn stamp_branch(m: &mut DMatrix<Complex64>, p: Option<usize>, n: Option<usize>, k: usize) {
    let one = Complex64::new(1.0, 0.0);
    if let Some(p) = p {
        m[(p, k)] += one;
        m[(k, p)] += one;
    }
    if let Some(n) = n {
        m[(n, k)] -= one;
        m[(k, n)] -= one;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn divider_transfer_by_hand() {
        // invariant: Ohm's law — a 1 V source into R1 = 1 kΩ over R2 = 3 kΩ gives 0.75 V.
        let mut n = Network::new(2);
        n.push(Element::VoltageSource {
            p: 1,
            n: 0,
            signal: true,
        });
        n.push(Element::Admittance {
            a: 1,
            b: 2,
            conductance: 1e-3,
            capacitance: 0.0,
        });
        n.push(Element::Admittance {
            a: 2,
            b: 0,
            conductance: 1.0 / 3e3,
            capacitance: 0.0,
        });
        let x = n.matrix(1e3).lu().solve(&n.excitation()).unwrap();
        assert!((x[1].re - 0.75).abs() < 1e-12 && x[1].im.abs() < 1e-12);
    }

    #[test]
    fn transconductance_into_load_by_hand() {
        // invariant: a VCCS gm = 10 mS driven by 1 V into 1 kΩ to ground gives −10 V
        // (the current leaves the output node).
        let mut n = Network::new(2);
        n.push(Element::VoltageSource {
            p: 1,
            n: 0,
            signal: true,
        });
        n.push(Element::Transconductance {
            p: 2,
            n: 0,
            control_p: 1,
            control_n: 0,
            gm: 10e-3,
        });
        n.push(Element::Admittance {
            a: 2,
            b: 0,
            conductance: 1e-3,
            capacitance: 0.0,
        });
        let x = n.matrix(1.0).lu().solve(&n.excitation()).unwrap();
        assert!((x[1].re + 10.0).abs() < 1e-9);
    }
}
