//! The system as two real matrices: the conductance matrix G and the
//! capacitance matrix C. Every solve (the sweep at each frequency, the
//! midband measurements, noise) assembles its matrix as G + jωC from them,
//! and the pole analysis reads the pencil (G, C).
//!
//! The elements are stamped once, at ω = 1 rad/s, into [`Stamps`]: every
//! conductance, transconductance and branch incidence lands in the real part
//! (G), every capacitance (jωC) and inductance (jωL on its branch row) in the
//! imaginary part (C), each with ω = 1 exactly. The pencil is kept as those
//! stamps in stamping order (a triplet form of G and C, duplicates not yet
//! summed), and a solve at ω adds `G_k + j·(ω·C_k)` entry by entry in that
//! order: the very additions the elements' own stamps at ω would make, so
//! each figure is bit-for-bit what stamping the elements at every frequency
//! gave (`replaying_the_stamps_is_stamping_at_omega` checks it).

use super::*;

/// A dense square matrix in the reduced numbering, row-major.
#[derive(Debug, Clone, PartialEq)]
pub struct DenseMatrix {
    pub size: usize,
    pub values: Vec<f64>,
}

impl DenseMatrix {
    fn zeros(size: usize) -> Self {
        DenseMatrix {
            size,
            values: vec![0.0; size * size],
        }
    }
    pub fn get(&self, row: usize, col: usize) -> f64 {
        self.values[row * self.size + col]
    }
}

/// The conductance and capacitance matrices of one system.
#[derive(Debug, Clone, PartialEq)]
pub struct Pencil {
    pub g: DenseMatrix,
    pub c: DenseMatrix,
}

/// One recorded stamp, in the full numbering.
#[derive(Debug, Clone, Copy)]
enum Entry {
    /// `G + jC` at (row, col).
    Matrix(usize, usize, C64),
    /// `G + jC` on the right-hand side (zero in the small-signal system;
    /// kept so the replay makes the same calls as the stamps).
    Rhs(usize, C64),
}

/// The pencil (G, C) as the stamps at ω = 1 rad/s, in stamping order.
#[derive(Debug, Clone, Default)]
pub(super) struct Stamps(Vec<Entry>);

impl Stamp<C64> for Stamps {
    fn add(&mut self, row: usize, col: usize, value: C64) {
        self.0.push(Entry::Matrix(row, col, value));
    }
    fn add_rhs(&mut self, row: usize, value: C64) {
        self.0.push(Entry::Rhs(row, value));
    }
}

impl Stamps {
    /// Add G + jωC into `s`, stamp by stamp.
    pub(super) fn replay(&self, w: f64, s: &mut impl Stamp<C64>) {
        let at = |v: C64| C64::new(v.re, w * v.im);
        for e in &self.0 {
            match *e {
                Entry::Matrix(r, c, v) => s.add(r, c, at(v)),
                Entry::Rhs(r, v) => s.add_rhs(r, at(v)),
            }
        }
    }
}

/// Collects complex stamps into a dense matrix.
pub(super) struct DenseCollector {
    pub(super) size: usize,
    pub(super) values: Vec<C64>,
}

impl Stamp<C64> for DenseCollector {
    fn add(&mut self, row: usize, col: usize, value: C64) {
        self.values[row * self.size + col] += value;
    }
    fn add_rhs(&mut self, _row: usize, _value: C64) {}
}

impl System<'_> {
    /// The dense matrix the sweep factors at angular frequency `w`.
    pub(super) fn dense_at(&self, w: f64) -> Vec<C64> {
        let n = self.size();
        let mut dense = DenseCollector {
            size: n,
            values: vec![C64::default(); n * n],
        };
        self.stamps.replay(
            w,
            &mut Folded {
                inner: &mut dense,
                reduction: &self.reduction,
                moved: &mut Vec::new(),
            },
        );
        dense.values
    }

    /// G and C of the reduced system (Frequency mode: every capacitance and
    /// inductance present). Dense: the caller bounds the size.
    pub fn pencil(&self) -> Pencil {
        let n = self.size();
        let at_one = self.dense_at(1.0);
        let mut g = DenseMatrix::zeros(n);
        let mut c = DenseMatrix::zeros(n);
        for (k, v) in at_one.iter().enumerate() {
            g.values[k] = v.re;
            c.values[k] = v.im;
        }
        Pencil { g, c }
    }

    /// Reduced row of a node's voltage (None: ground, a folded node, or beyond the circuit).
    pub fn row_of_node(&self, node: Node) -> Option<usize> {
        self.node_row(node)
    }

    /// Nodes after cuts (fresh nodes included).
    pub fn node_count(&self) -> usize {
        self.nodes
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A circuit with every kind of element: source, R, C parts, device
    /// capacitances, an inductor, a floating source and a transconductance.
    fn mixed() -> LinearCircuit {
        let mut lc = LinearCircuit::new(5);
        lc.add(Some(0), 1, 0, LinearKind::VoltageSource);
        lc.add(Some(1), 1, 2, LinearKind::Conductance(1e-3));
        lc.add(Some(2), 2, 3, LinearKind::Capacitor(1e-6));
        lc.add(Some(3), 3, 0, LinearKind::DeviceCapacitance(5e-12));
        lc.add(Some(3), 3, 0, LinearKind::Conductance(2e-4));
        lc.add(
            Some(3),
            4,
            0,
            LinearKind::Transconductance {
                gm: 0.04,
                cp: 3,
                cn: 0,
            },
        );
        lc.add(Some(4), 4, 5, LinearKind::Inductor(1e-5));
        lc.add(Some(5), 5, 0, LinearKind::Conductance(1e-2));
        lc.add(Some(6), 4, 2, LinearKind::VoltageSource);
        lc
    }

    /// The dense matrix made by stamping every element at `w` directly.
    fn stamped_at(sys: &System, w: f64) -> Vec<C64> {
        let n = sys.size();
        let mut dense = DenseCollector {
            size: n,
            values: vec![C64::default(); n * n],
        };
        sys.stamp(
            w,
            &mut Folded {
                inner: &mut dense,
                reduction: &sys.reduction,
                moved: &mut Vec::new(),
            },
        );
        dense.values
    }

    #[test]
    fn replaying_the_stamps_is_stamping_at_omega() {
        // invariant: G + jωC assembled from the recorded pencil is bit for bit the
        // matrix the element stamps make at ω (so no figure moves by assembling
        // from the pencil), in both modes and at ω = 0
        let lc = mixed();
        for mode in [Mode::Frequency, Mode::Midband] {
            let sys = System::new(&lc, mode, &[], None);
            for f in [0.0, 1.0, 1e3, 1.234e6, 1e9, 3.3e-7] {
                let w = 2.0 * std::f64::consts::PI * f;
                let bits = |m: Vec<C64>| -> Vec<(u64, u64)> {
                    m.iter().map(|v| (v.re.to_bits(), v.im.to_bits())).collect()
                };
                assert_eq!(
                    bits(sys.dense_at(w)),
                    bits(stamped_at(&sys, w)),
                    "{mode:?} {f} Hz"
                );
            }
        }
    }

    #[test]
    fn g_plus_j_omega_c_is_the_sweep_matrix() {
        // invariant: the sweep's matrix at ω equals G + jωC from the pencil (1e-15 relative)
        let lc = mixed();
        let sys = System::new(&lc, Mode::Frequency, &[], None);
        let p = sys.pencil();
        let n = sys.size();
        assert!(n >= 5);
        for f in [1.0, 1e3, 1.234e6, 1e9] {
            let w = 2.0 * std::f64::consts::PI * f;
            let old = stamped_at(&sys, w);
            let scale = old.iter().map(|v| v.norm()).fold(0.0, f64::max);
            for r in 0..n {
                for c in 0..n {
                    let new = C64::new(p.g.get(r, c), w * p.c.get(r, c));
                    let diff = (new - old[r * n + c]).norm();
                    assert!(diff <= 1e-15 * scale, "({r},{c}) at {f} Hz: {diff:e}");
                }
            }
        }
        // invariant: a capacitance is in C only, a conductance in G only
        let row3 = sys.row_of_node(3).unwrap();
        assert!((p.c.get(row3, row3) - (1e-6 + 5e-12)).abs() < 1e-21);
        assert!((p.g.get(row3, row3) - 2e-4).abs() < 1e-19);
    }
}
