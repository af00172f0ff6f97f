//! The small-signal linear system: complex modified nodal analysis of a
//! linearised circuit (Ho, Ruehli, Brennan 1975).
//!
//! A [`LinearCircuit`] holds two-terminal elements (conductances, capacitors,
//! inductors, independent sources) and voltage-controlled current sources,
//! each tagged with the document part it came from. Independent sources are
//! zeroed (a voltage source is a short, a current source is open) unless a
//! [`Drive`] gives them a value.
//!
//! A [`System`] fixes what is solved: midband or a frequency sweep, which part
//! pins are disconnected (cuts), and an optional test source. In midband mode
//! capacitor parts (coupling and bypass) are shorts, device capacitances are
//! open and inductor parts are open (read as chokes). The system is stamped,
//! folded and solved by the circuit core in [`crate::analysis::mna`]: dense
//! LU for small systems, sparse LU with the symbolic analysis done once and
//! reused at every frequency for large ones (`Scalar::DENSE_LIMIT`).

use nalgebra::Complex;

/// A node of the linear circuit; 0 is ground.
pub type Node = usize;
/// Complex value.
pub type C64 = Complex<f64>;

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum LinearKind {
    /// Conductance, S (resistors, gπ, go, rb, diode g).
    Conductance(f64),
    /// A capacitor part: a short at midband.
    Capacitor(f64),
    /// A device capacitance (Cπ, Cμ, junction): open at midband.
    DeviceCapacitance(f64),
    /// An inductor part: open at midband.
    Inductor(f64),
    /// Current gm·(v(cp) − v(cn)) flowing from `a` through the element to `b`.
    Transconductance { gm: f64, cp: Node, cn: Node },
    /// Independent voltage source, + at `a`: zero unless driven.
    VoltageSource,
    /// Independent current source: it pushes its value into the circuit at `a`
    /// and takes it back at `b`; zero (open) unless driven.
    CurrentSource,
}

#[derive(Debug, Clone, PartialEq)]
pub struct LinearElement {
    /// Index of the document part this element belongs to (`None`: added by the analysis).
    pub part: Option<usize>,
    pub a: Node,
    pub b: Node,
    pub kind: LinearKind,
}

/// A linearised circuit.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct LinearCircuit {
    /// Unknown nodes are `1..=node_count`.
    pub node_count: usize,
    pub elements: Vec<LinearElement>,
}

impl LinearCircuit {
    pub fn new(node_count: usize) -> Self {
        LinearCircuit {
            node_count,
            elements: Vec::new(),
        }
    }
    /// Add a node (e.g. a device's internal node) and return it.
    pub fn add_node(&mut self) -> Node {
        self.node_count += 1;
        self.node_count
    }
    pub fn add(&mut self, part: Option<usize>, a: Node, b: Node, kind: LinearKind) -> usize {
        self.elements.push(LinearElement { part, a, b, kind });
        self.elements.len() - 1
    }
}

/// Disconnect part `part` from node `node`: every endpoint (and control
/// reference) of that part's elements at the node moves to a fresh node.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub struct Cut {
    pub part: usize,
    pub node: Node,
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Mode {
    /// Coupling/bypass capacitors short, device capacitances open, inductors open.
    Midband,
    /// Every element at its impedance at the frequency passed to `solve`.
    Frequency,
}

/// A test source attached between a node and ground.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Test {
    /// 1 A injected into the node: v(node) is the impedance there.
    Current(Node),
    /// 1 V at the node against ground.
    Voltage(Node),
    /// 1 A injected into the first node and taken out of the second:
    /// v(a) − v(b) is the impedance between them.
    Between(Node, Node),
}

/// A value given to one independent source (by element index), e.g. 1 V on
/// the signal source or on one rail for supply rejection; or, with `node`
/// set, a current injected into that node (the element is then ignored).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Drive {
    pub element: usize,
    pub value: C64,
    pub node: Option<Node>,
}

impl Drive {
    /// 1 (V or A) on independent source `element`.
    pub fn unit(element: usize) -> Self {
        Drive {
            element,
            value: C64::new(1.0, 0.0),
            node: None,
        }
    }
    /// 1 A injected into `node`.
    pub fn inject(node: Node) -> Self {
        Drive {
            element: usize::MAX,
            value: C64::new(1.0, 0.0),
            node: Some(node),
        }
    }
}

/// Why a linear solve failed.
#[derive(Debug, Clone, PartialEq)]
pub struct SingularSystem;

/// A solved system.
#[derive(Debug, Clone)]
pub struct Solution {
    /// By node (index 0 = ground), including fresh nodes made by cuts.
    pub voltages: Vec<C64>,
    /// Current through each element from `a` to `b` (after cuts), by element index.
    pub currents: Vec<C64>,
    /// Current flowing out of the test voltage source into its node.
    pub test_current: C64,
}

impl Solution {
    pub fn v(&self, node: Node) -> C64 {
        self.voltages.get(node).copied().unwrap_or_default()
    }
}

mod system;
pub use system::{
    Adjoint, AdjointFactors, Change, Combination, Covariance, DenseMatrix, LocalInverse, Pencil,
    Probe, System,
};

/// Frequencies of a logarithmic sweep: `per_decade` points per decade from
/// `start` to `stop`, both included (1 Hz–100 MHz at 20/decade is 161 points).
pub fn log_frequencies(start: f64, stop: f64, per_decade: u32) -> Vec<f64> {
    if !(start > 0.0 && stop >= start && per_decade > 0) {
        return Vec::new();
    }
    let decades = stop.log10() - start.log10();
    let steps = (decades * per_decade as f64 - 1e-9).ceil().max(0.0) as usize;
    if steps > crate::document::limits::MAX_SWEEP_POINTS {
        return Vec::new();
    }
    (0..=steps)
        .map(|k| {
            let f = start * 10f64.powf(k as f64 / per_decade as f64);
            f.min(stop)
        })
        .collect()
}

#[cfg(test)]
mod tests;
