//! The network the noise analysis solves: the small-signal
//! [`LinearCircuit`] of [`crate::analysis::small_signal::linearise`] (the
//! same elements, stamps, folding and solver as the frequency response),
//! with the signal source marked. Noise generators are current injections
//! between its nodes; [`super::spectrum`] solves it by the adjoint.
//!
//! [`Element`] is a short way to write a network by hand (tests, what-ifs):
//! each one becomes one or two linear elements.

use crate::analysis::linear::{LinearCircuit, LinearKind};

/// A circuit node; 0 is ground.
pub type Node = usize;

/// One small-signal element, written by hand.
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
    /// An independent voltage source, + at `p` (a short at small signal).
    /// `signal` marks the signal source, whose unit value is the excitation
    /// the gain is measured from.
    VoltageSource { p: Node, n: Node, signal: bool },
    /// An inductor: `v(a) − v(b) = jωL·i`.
    Inductor { a: Node, b: Node, inductance: f64 },
}

/// A linear small-signal network with its signal source.
#[derive(Debug, Clone, PartialEq)]
pub struct Network {
    pub circuit: LinearCircuit,
    /// Element index (in `circuit`) of the signal source.
    pub signal: Option<usize>,
}

impl Network {
    pub fn new(node_count: usize) -> Self {
        Network {
            circuit: LinearCircuit::new(node_count),
            signal: None,
        }
    }

    /// Add an element that belongs to no document part.
    pub fn push(&mut self, e: Element) -> usize {
        self.push_for(None, e)
    }

    /// Add an element of document part `part`; returns the index of its
    /// (first) linear element. An admittance with a capacitance becomes a
    /// conductance followed by a device capacitance.
    pub fn push_for(&mut self, part: Option<usize>, e: Element) -> usize {
        let c = &mut self.circuit;
        match e {
            Element::Admittance {
                a,
                b,
                conductance,
                capacitance,
            } => {
                let k = c.add(part, a, b, LinearKind::Conductance(conductance));
                if capacitance != 0.0 {
                    c.add(part, a, b, LinearKind::DeviceCapacitance(capacitance));
                }
                k
            }
            Element::Transconductance {
                p,
                n,
                control_p,
                control_n,
                gm,
            } => c.add(
                part,
                p,
                n,
                LinearKind::Transconductance {
                    gm,
                    cp: control_p,
                    cn: control_n,
                },
            ),
            Element::VoltageSource { p, n, signal } => {
                let k = c.add(part, p, n, LinearKind::VoltageSource);
                if signal {
                    self.signal = Some(k);
                }
                k
            }
            Element::Inductor { a, b, inductance } => {
                c.add(part, a, b, LinearKind::Inductor(inductance))
            }
        }
    }

    /// Disconnect every element of `part` from `node`: their ends there move
    /// to one fresh node (returned). Controls are not moved: a transistor
    /// cut at its collector still senses its base and emitter.
    pub fn cut(&mut self, part: usize, node: Node) -> Node {
        let fresh = self.circuit.add_node();
        for e in &mut self.circuit.elements {
            if e.part != Some(part) || node == 0 {
                continue;
            }
            if e.a == node {
                e.a = fresh;
            }
            if e.b == node {
                e.b = fresh;
            }
        }
        // A whisker to ground (1 pS) so a cut end never leaves the system singular.
        self.circuit
            .add(None, fresh, 0, LinearKind::Conductance(1e-12));
        fresh
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::linear::{Drive, Mode, System};

    #[test]
    fn divider_transfer_by_hand() {
        // invariant: Ohm's law — a 1 V source into R1 = 1 kΩ over R2 = 3 kΩ gives 0.75 V.
        let mut n = Network::new(2);
        let vs = n.push(Element::VoltageSource {
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
        let sys = System::new(&n.circuit, Mode::Frequency, &[], None);
        let x = sys.solve(1e3, &[Drive::unit(vs)]).unwrap();
        assert!((x.v(2).re - 0.75).abs() < 1e-12 && x.v(2).im.abs() < 1e-12);
    }

    #[test]
    fn transconductance_into_load_by_hand() {
        // invariant: a VCCS gm = 10 mS driven by 1 V into 1 kΩ to ground gives −10 V
        // (the current leaves the output node).
        let mut n = Network::new(2);
        let vs = n.push(Element::VoltageSource {
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
        let sys = System::new(&n.circuit, Mode::Frequency, &[], None);
        let x = sys.solve(1.0, &[Drive::unit(vs)]).unwrap();
        assert!((x.v(2).re + 10.0).abs() < 1e-9);
    }
}
