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
//! open and inductor parts are open (read as chokes). Small systems are solved
//! densely (nalgebra LU); large ones use faer's sparse LU with the symbolic
//! analysis done once and reused at every frequency.

use nalgebra::{Complex, DMatrix, DVector};
use std::f64::consts::PI;

/// A node of the linear circuit; 0 is ground.
pub type Node = usize;
/// Complex value.
pub type C64 = Complex<f64>;

/// Systems with at least this many unknowns use the sparse solver.
pub const SPARSE_THRESHOLD: usize = 80;

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
#[derive(Debug, Clone, Default)]
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

enum Factor {
    Dense,
    Sparse {
        symbolic: faer::sparse::SymbolicSparseColMat<usize>,
        argsort: faer::sparse::Argsort<usize>,
        lu: faer::sparse::linalg::solvers::SymbolicLu<usize>,
    },
}

/// A circuit with its cuts, mode and test source fixed, ready to solve at
/// any number of frequencies.
pub struct System<'a> {
    circuit: &'a LinearCircuit,
    mode: Mode,
    /// Element endpoints after cuts and elimination, in matrix numbering.
    ends: Vec<(Node, Node, Node, Node)>,
    /// Element endpoints after cuts, in the circuit's numbering (fresh nodes appended).
    orig_ends: Vec<(Node, Node, Node, Node)>,
    /// Circuit node (after cuts) → matrix node (0: ground or eliminated).
    compact: Vec<Node>,
    /// Zeroed voltage sources to ground that were folded into ground.
    eliminated: Vec<bool>,
    /// Branch index (into the extra unknowns) of each element that has one.
    branch: Vec<Option<usize>>,
    nodes: usize,
    branches: usize,
    test: Option<Test>,
    test_branch: Option<usize>,
    /// Nodes of islands with no path to ground, tied down by 1 S (no current flows in it).
    anchors: Vec<Node>,
    entries: Vec<(usize, usize)>,
    factor: Factor,
}

impl<'a> System<'a> {
    pub fn new(circuit: &'a LinearCircuit, mode: Mode, cuts: &[Cut], test: Option<Test>) -> Self {
        Self::build(circuit, mode, cuts, test, None)
    }

    /// Like [`System::new`], but every voltage source between a node and
    /// ground that is not in `driven` is folded into ground (its node is
    /// removed from the system). Exact, since a zeroed source is a short;
    /// it keeps large circuits sparse (a rail touches every stage).
    /// Solutions report those nodes at 0 V and those sources' currents as 0.
    pub fn new_driving(
        circuit: &'a LinearCircuit,
        mode: Mode,
        cuts: &[Cut],
        test: Option<Test>,
        driven: &[usize],
    ) -> Self {
        Self::build(circuit, mode, cuts, test, Some(driven))
    }

    fn build(
        circuit: &'a LinearCircuit,
        mode: Mode,
        cuts: &[Cut],
        test: Option<Test>,
        driven: Option<&[usize]>,
    ) -> Self {
        let mut nodes = circuit.node_count;
        let mut fresh: std::collections::BTreeMap<Cut, Node> = Default::default();
        let mut moved = |part: Option<usize>, n: Node, nodes: &mut usize| -> Node {
            match part {
                Some(p) if n != 0 && cuts.contains(&Cut { part: p, node: n }) => {
                    *fresh.entry(Cut { part: p, node: n }).or_insert_with(|| {
                        *nodes += 1;
                        *nodes
                    })
                }
                _ => n,
            }
        };
        let mut ends = Vec::with_capacity(circuit.elements.len());
        let mut branch = Vec::with_capacity(circuit.elements.len());
        let mut branches = 0;
        for e in &circuit.elements {
            let a = moved(e.part, e.a, &mut nodes);
            let b = moved(e.part, e.b, &mut nodes);
            let (cp, cn) = match e.kind {
                LinearKind::Transconductance { cp, cn, .. } => {
                    (moved(e.part, cp, &mut nodes), moved(e.part, cn, &mut nodes))
                }
                _ => (0, 0),
            };
            ends.push((a, b, cp, cn));
        }
        // Fold undriven grounded voltage sources into ground.
        let mut eliminated = vec![false; circuit.elements.len()];
        let mut compact: Vec<Node> = (0..=nodes).collect();
        if let Some(driven) = driven {
            let mut gone = vec![false; nodes + 1];
            for (i, e) in circuit.elements.iter().enumerate() {
                if e.kind != LinearKind::VoltageSource || driven.contains(&i) {
                    continue;
                }
                let (a, b, _, _) = ends[i];
                if (a == 0) != (b == 0) {
                    gone[a.max(b)] = true;
                    eliminated[i] = true;
                }
            }
            let mut k = 0;
            for n in 1..=nodes {
                compact[n] = if gone[n] {
                    0
                } else {
                    k += 1;
                    k
                };
            }
            nodes = k;
        }
        let orig_ends = ends.clone();
        for t in ends.iter_mut() {
            *t = (compact[t.0], compact[t.1], compact[t.2], compact[t.3]);
        }
        let test = test.map(|t| match t {
            Test::Current(n) => Test::Current(compact[n]),
            Test::Voltage(n) => Test::Voltage(compact[n]),
            Test::Between(a, b) => Test::Between(compact[a], compact[b]),
        });
        for (i, e) in circuit.elements.iter().enumerate() {
            let has_branch = !eliminated[i]
                && match e.kind {
                    LinearKind::VoltageSource => true,
                    LinearKind::Capacitor(_) => mode == Mode::Midband,
                    LinearKind::Inductor(_) => mode == Mode::Frequency,
                    _ => false,
                };
            branch.push(if has_branch {
                branches += 1;
                Some(branches - 1)
            } else {
                None
            });
        }
        let test_branch = match test {
            Some(Test::Voltage(_)) => {
                branches += 1;
                Some(branches - 1)
            }
            _ => None,
        };
        let mut sys = System {
            circuit,
            mode,
            ends,
            orig_ends,
            compact,
            eliminated,
            branch,
            nodes,
            branches,
            test,
            test_branch,
            anchors: Vec::new(),
            entries: Vec::new(),
            factor: Factor::Dense,
        };
        sys.find_islands();
        sys.entries = sys.pattern();
        let n = sys.size();
        if n >= SPARSE_THRESHOLD {
            use faer::sparse::{Pair, SymbolicSparseColMat};
            let pairs: Vec<Pair<usize, usize>> = sys
                .entries
                .iter()
                .map(|&(r, c)| Pair { row: r, col: c })
                .collect();
            if let Ok((symbolic, argsort)) =
                SymbolicSparseColMat::try_new_from_indices(n, n, &pairs)
            {
                if let Ok(lu) =
                    faer::sparse::linalg::solvers::SymbolicLu::try_new(symbolic.as_ref())
                {
                    sys.factor = Factor::Sparse {
                        symbolic,
                        argsort,
                        lu,
                    };
                }
            }
        }
        sys
    }

    /// Number of unknowns (node voltages and branch currents).
    pub fn size(&self) -> usize {
        self.nodes + self.branches
    }

    fn present(&self, i: usize) -> bool {
        if self.eliminated[i] {
            return false;
        }
        match self.circuit.elements[i].kind {
            LinearKind::DeviceCapacitance(_) | LinearKind::Inductor(_) => {
                self.mode == Mode::Frequency
            }
            _ => true,
        }
    }

    fn find_islands(&mut self) {
        let mut parent: Vec<usize> = (0..=self.nodes).collect();
        fn find(p: &mut [usize], mut x: usize) -> usize {
            while p[x] != x {
                p[x] = p[p[x]];
                x = p[x];
            }
            x
        }
        for (i, &(a, b, _, _)) in self.ends.iter().enumerate() {
            let conducts = self.present(i)
                && !matches!(self.circuit.elements[i].kind, LinearKind::CurrentSource);
            if conducts {
                let (ra, rb) = (find(&mut parent, a), find(&mut parent, b));
                parent[ra] = rb;
            }
        }
        let ground = find(&mut parent, 0);
        let mut seen = std::collections::BTreeSet::new();
        for n in 1..=self.nodes {
            let r = find(&mut parent, n);
            if r != find(&mut parent, ground) && seen.insert(r) {
                self.anchors.push(n);
            }
        }
    }

    /// (row, column) of every matrix entry, in stamping order.
    fn pattern(&self) -> Vec<(usize, usize)> {
        let mut out = Vec::new();
        self.stamp(0.0, &mut |r, c, _| out.push((r, c)));
        out
    }

    /// Call `put(row, col, value)` for every stamp at angular frequency `w`.
    /// Rows and columns are 0-based unknown indices (node n → n − 1).
    fn stamp(&self, w: f64, put: &mut dyn FnMut(usize, usize, C64)) {
        let nn = self.nodes;
        let two = |a: Node, b: Node, y: C64, put: &mut dyn FnMut(usize, usize, C64)| {
            if a != 0 {
                put(a - 1, a - 1, y);
            }
            if b != 0 {
                put(b - 1, b - 1, y);
            }
            if a != 0 && b != 0 {
                put(a - 1, b - 1, -y);
                put(b - 1, a - 1, -y);
            }
        };
        let branch_stamp =
            |a: Node, b: Node, k: usize, z: C64, put: &mut dyn FnMut(usize, usize, C64)| {
                let row = nn + k;
                if a != 0 {
                    put(a - 1, row, C64::new(1.0, 0.0));
                    put(row, a - 1, C64::new(1.0, 0.0));
                }
                if b != 0 {
                    put(b - 1, row, C64::new(-1.0, 0.0));
                    put(row, b - 1, C64::new(-1.0, 0.0));
                }
                // Always present so the pattern does not depend on the frequency.
                put(row, row, -z);
            };
        for (i, e) in self.circuit.elements.iter().enumerate() {
            if !self.present(i) {
                continue;
            }
            let (a, b, cp, cn) = self.ends[i];
            match e.kind {
                LinearKind::Conductance(g) => two(a, b, C64::new(g, 0.0), put),
                LinearKind::DeviceCapacitance(c) => two(a, b, C64::new(0.0, w * c), put),
                LinearKind::Capacitor(c) => match self.branch[i] {
                    Some(k) => branch_stamp(a, b, k, C64::default(), put),
                    None => two(a, b, C64::new(0.0, w * c), put),
                },
                LinearKind::Inductor(l) => {
                    if let Some(k) = self.branch[i] {
                        branch_stamp(a, b, k, C64::new(0.0, w * l), put)
                    }
                }
                LinearKind::VoltageSource => {
                    if let Some(k) = self.branch[i] {
                        branch_stamp(a, b, k, C64::default(), put)
                    }
                }
                LinearKind::CurrentSource => {}
                LinearKind::Transconductance { gm, .. } => {
                    let g = C64::new(gm, 0.0);
                    for (row, sign) in [(a, 1.0), (b, -1.0)] {
                        if row == 0 {
                            continue;
                        }
                        if cp != 0 {
                            put(row - 1, cp - 1, g * sign);
                        }
                        if cn != 0 {
                            put(row - 1, cn - 1, -g * sign);
                        }
                    }
                }
            }
        }
        for &n in &self.anchors {
            put(n - 1, n - 1, C64::new(1.0, 0.0));
        }
        if let (Some(Test::Voltage(n)), Some(k)) = (self.test, self.test_branch) {
            branch_stamp(n, 0, k, C64::default(), put);
        }
    }

    fn rhs(&self, drives: &[Drive]) -> Vec<C64> {
        let mut b = vec![C64::default(); self.size()];
        for d in drives {
            if let Some(n) = d.node {
                let c = self.compact.get(n).copied().unwrap_or(0);
                if c != 0 {
                    b[c - 1] += d.value;
                }
                continue;
            }
            let Some(e) = self.circuit.elements.get(d.element) else {
                continue;
            };
            let (a, bn, _, _) = self.ends[d.element];
            match e.kind {
                LinearKind::VoltageSource => {
                    if let Some(k) = self.branch[d.element] {
                        b[self.nodes + k] += d.value;
                    }
                }
                LinearKind::CurrentSource => {
                    // The source pushes current out of `a` into the circuit, back in at `b`.
                    if a != 0 {
                        b[a - 1] += d.value;
                    }
                    if bn != 0 {
                        b[bn - 1] -= d.value;
                    }
                }
                _ => {}
            }
        }
        match (self.test, self.test_branch) {
            (Some(Test::Current(n)), _) if n != 0 => b[n - 1] += C64::new(1.0, 0.0),
            (Some(Test::Between(p, q)), _) => {
                if p != 0 {
                    b[p - 1] += C64::new(1.0, 0.0);
                }
                if q != 0 {
                    b[q - 1] -= C64::new(1.0, 0.0);
                }
            }
            (Some(Test::Voltage(_)), Some(k)) => b[self.nodes + k] += C64::new(1.0, 0.0),
            _ => {}
        }
        b
    }

    /// Solve at `frequency` (Hz; ignored at midband) with the given drives.
    pub fn solve(&self, frequency: f64, drives: &[Drive]) -> Result<Solution, SingularSystem> {
        let mut v = self.solve_each(frequency, &[drives])?;
        Ok(v.remove(0))
    }

    /// Factor once at `frequency` and solve for each set of drives.
    pub fn solve_each(
        &self,
        frequency: f64,
        drive_sets: &[&[Drive]],
    ) -> Result<Vec<Solution>, SingularSystem> {
        let w = if self.mode == Mode::Midband {
            0.0
        } else {
            2.0 * PI * frequency
        };
        let n = self.size();
        let mut out = Vec::with_capacity(drive_sets.len());
        match &self.factor {
            Factor::Dense => {
                let mut m = DMatrix::<C64>::zeros(n, n);
                self.stamp(w, &mut |r, c, v| m[(r, c)] += v);
                let lu = m.lu();
                for drives in drive_sets {
                    let x = lu
                        .solve(&DVector::from_vec(self.rhs(drives)))
                        .ok_or(SingularSystem)?;
                    out.push(self.finish(w, drives, x.as_slice())?);
                }
            }
            Factor::Sparse {
                symbolic,
                argsort,
                lu,
            } => {
                use faer::linalg::solvers::Solve;
                let mut vals = Vec::with_capacity(self.entries.len());
                self.stamp(w, &mut |_, _, v| vals.push(v));
                let mat =
                    faer::sparse::SparseColMat::new_from_argsort(symbolic.clone(), argsort, &vals)
                        .map_err(|_| SingularSystem)?;
                let f = faer::sparse::linalg::solvers::Lu::try_new_with_symbolic(
                    lu.clone(),
                    mat.as_ref(),
                )
                .map_err(|_| SingularSystem)?;
                for drives in drive_sets {
                    let b = self.rhs(drives);
                    let mut rhs = faer::Mat::<C64>::from_fn(n, 1, |i, _| b[i]);
                    f.solve_in_place(rhs.as_mut());
                    let x: Vec<C64> = (0..n).map(|i| rhs[(i, 0)]).collect();
                    out.push(self.finish(w, drives, &x)?);
                }
            }
        }
        Ok(out)
    }

    fn finish(&self, w: f64, drives: &[Drive], x: &[C64]) -> Result<Solution, SingularSystem> {
        if x.iter().any(|v| !v.re.is_finite() || !v.im.is_finite()) {
            return Err(SingularSystem);
        }
        let mut compact_v = vec![C64::default(); self.nodes + 1];
        compact_v[1..].copy_from_slice(&x[..self.nodes]);
        let voltages: Vec<C64> = self.compact.iter().map(|&c| compact_v[c]).collect();
        let mut currents = vec![C64::default(); self.circuit.elements.len()];
        for (i, e) in self.circuit.elements.iter().enumerate() {
            if !self.present(i) {
                continue;
            }
            let (a, b, cp, cn) = self.orig_ends[i];
            let vab = voltages[a] - voltages[b];
            currents[i] = if let Some(k) = self.branch[i] {
                x[self.nodes + k]
            } else {
                match e.kind {
                    LinearKind::Conductance(g) => vab * g,
                    LinearKind::DeviceCapacitance(c) | LinearKind::Capacitor(c) => {
                        vab * C64::new(0.0, w * c)
                    }
                    LinearKind::Transconductance { gm, .. } => (voltages[cp] - voltages[cn]) * gm,
                    LinearKind::CurrentSource => -drives
                        .iter()
                        .filter(|d| d.element == i)
                        .map(|d| d.value)
                        .sum::<C64>(),
                    _ => C64::default(),
                }
            };
        }
        let test_current = self
            .test_branch
            .map(|k| -x[self.nodes + k])
            .unwrap_or_default();
        Ok(Solution {
            voltages,
            currents,
            test_current,
        })
    }

    /// The node an element endpoint sits on after cuts: (a, b).
    pub fn element_nodes(&self, element: usize) -> (Node, Node) {
        let (a, b, _, _) = self.orig_ends[element];
        (a, b)
    }

    /// Current flowing from `node` into part `part` (summed over its elements
    /// touching that node, after cuts).
    pub fn current_into_part(&self, sol: &Solution, part: usize, node: Node) -> C64 {
        let mut total = C64::default();
        for (i, e) in self.circuit.elements.iter().enumerate() {
            if e.part != Some(part) {
                continue;
            }
            let (a, b, _, _) = self.orig_ends[i];
            if a == node {
                total += sol.currents[i];
            }
            if b == node {
                total -= sol.currents[i];
            }
        }
        total
    }
}

/// Frequencies of a logarithmic sweep: `per_decade` points per decade from
/// `start` to `stop`, both included (1 Hz–100 MHz at 20/decade is 161 points).
pub fn log_frequencies(start: f64, stop: f64, per_decade: u32) -> Vec<f64> {
    if !(start > 0.0 && stop >= start && per_decade > 0) {
        return Vec::new();
    }
    let decades = (stop / start).log10();
    let steps = (decades * per_decade as f64 - 1e-9).ceil().max(0.0) as usize;
    (0..=steps)
        .map(|k| {
            let f = start * 10f64.powf(k as f64 / per_decade as f64);
            f.min(stop)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Source 1 V at node 1, R from 1 to 2, C from 2 to ground: low-pass.
    fn rc(low_pass: bool, r: f64, c: f64) -> (LinearCircuit, usize) {
        let mut lc = LinearCircuit::new(2);
        let src = lc.add(Some(0), 1, 0, LinearKind::VoltageSource);
        if low_pass {
            lc.add(Some(1), 1, 2, LinearKind::Conductance(1.0 / r));
            lc.add(Some(2), 2, 0, LinearKind::Capacitor(c));
        } else {
            lc.add(Some(2), 1, 2, LinearKind::Capacitor(c));
            lc.add(Some(1), 2, 0, LinearKind::Conductance(1.0 / r));
        }
        (lc, src)
    }

    #[test]
    fn rc_low_pass_is_exact_at_its_corner() {
        // source: REFERENCES.md frequency response — single RC corner 1/(2πRC) exactly,
        // where |H| = 1/√2 and the phase is −45°
        let (r, c) = (1e3, 1e-7);
        let (lc, src) = rc(true, r, c);
        let sys = System::new(&lc, Mode::Frequency, &[], None);
        let fc = 1.0 / (2.0 * PI * r * c);
        let d = [Drive::unit(src)];
        let h = sys.solve(fc, &d).unwrap().v(2);
        assert!((h.norm() - std::f64::consts::FRAC_1_SQRT_2).abs() < 1e-12);
        assert!((h.arg().to_degrees() + 45.0).abs() < 1e-9);
        // invariant: at midband the capacitor part is a short
        let mid = System::new(&lc, Mode::Midband, &[], None);
        assert!(mid.solve(0.0, &d).unwrap().v(2).norm() < 1e-15);
    }

    #[test]
    fn rc_high_pass_is_exact_at_its_corner() {
        // source: REFERENCES.md frequency response — single RC corner 1/(2πRC)
        let (r, c) = (10e3, 4.7e-6);
        let (lc, src) = rc(false, r, c);
        let sys = System::new(&lc, Mode::Frequency, &[], None);
        let fc = 1.0 / (2.0 * PI * r * c);
        let d = [Drive::unit(src)];
        let h = sys.solve(fc, &d).unwrap().v(2);
        assert!((h.norm() - std::f64::consts::FRAC_1_SQRT_2).abs() < 1e-12);
        assert!((h.arg().to_degrees() - 45.0).abs() < 1e-9);
    }

    #[test]
    fn test_sources_measure_impedance() {
        // invariant: Ohm's law — 1 A into R1 ‖ R2 gives R1·R2/(R1+R2) volts; 1 V across it draws the inverse
        let mut lc = LinearCircuit::new(1);
        lc.add(Some(0), 1, 0, LinearKind::Conductance(1e-3));
        lc.add(Some(1), 1, 0, LinearKind::Conductance(1.0 / 3e3));
        let z = System::new(&lc, Mode::Midband, &[], Some(Test::Current(1)))
            .solve(0.0, &[])
            .unwrap()
            .v(1);
        assert!((z.re - 750.0).abs() < 1e-9);
        let i = System::new(&lc, Mode::Midband, &[], Some(Test::Voltage(1)))
            .solve(0.0, &[])
            .unwrap()
            .test_current;
        assert!((1.0 / i.re - 750.0).abs() < 1e-9);
        // invariant: cutting part 1 from the node leaves R1 alone (its far side floats, tied down harmlessly)
        let z = System::new(
            &lc,
            Mode::Midband,
            &[Cut { part: 1, node: 1 }],
            Some(Test::Current(1)),
        )
        .solve(0.0, &[])
        .unwrap()
        .v(1);
        assert!((z.re - 1000.0).abs() < 1e-9);
    }

    #[test]
    fn sparse_and_dense_agree_on_a_ladder() {
        // invariant: two independent solvers (dense LU, sparse LU) give the same answer
        let n = 200;
        let mut lc = LinearCircuit::new(n);
        let src = lc.add(Some(0), 1, 0, LinearKind::VoltageSource);
        for k in 1..n {
            lc.add(Some(k), k, k + 1, LinearKind::Conductance(1e-3));
            lc.add(Some(k), k + 1, 0, LinearKind::DeviceCapacitance(1e-9));
        }
        let sys = System::new(&lc, Mode::Frequency, &[], None);
        assert!(matches!(sys.factor, Factor::Sparse { .. }));
        let d = [Drive::unit(src)];
        let sparse = sys.solve(1e4, &d).unwrap();
        let mut dense_sys = System::new(&lc, Mode::Frequency, &[], None);
        dense_sys.factor = Factor::Dense;
        let dense = dense_sys.solve(1e4, &d).unwrap();
        for k in 1..=n {
            assert!((sparse.v(k) - dense.v(k)).norm() < 1e-10);
        }
    }

    #[test]
    fn folding_zeroed_sources_into_ground_changes_nothing() {
        // invariant: a zeroed voltage source is a short, so removing its node is exact
        let mut lc = LinearCircuit::new(3);
        let sig = lc.add(Some(0), 1, 0, LinearKind::VoltageSource);
        let rail = lc.add(Some(1), 3, 0, LinearKind::VoltageSource);
        lc.add(Some(2), 1, 2, LinearKind::Conductance(1e-3));
        lc.add(Some(3), 2, 3, LinearKind::Conductance(2e-3));
        lc.add(Some(4), 2, 0, LinearKind::DeviceCapacitance(1e-9));
        let d = [Drive::unit(sig)];
        let full = System::new(&lc, Mode::Frequency, &[], None);
        let folded = System::new_driving(&lc, Mode::Frequency, &[], None, &[sig]);
        assert_eq!(folded.size() + 2, full.size());
        let (a, b) = (full.solve(1e5, &d).unwrap(), folded.solve(1e5, &d).unwrap());
        assert!((a.v(2) - b.v(2)).norm() < 1e-14);
        assert_eq!(b.v(3), C64::default());
        assert!((a.currents[2] - b.currents[2]).norm() < 1e-15);
        let _ = rail;
        // invariant: a test current injected by a drive equals a test source (Ohm's law)
        let z1 = System::new(&lc, Mode::Frequency, &[], Some(Test::Current(2)))
            .solve(1e5, &[])
            .unwrap()
            .v(2);
        let z2 = full.solve(1e5, &[Drive::inject(2)]).unwrap().v(2);
        assert!((z1 - z2).norm() < 1e-12 * z1.norm());
    }

    #[test]
    fn sweep_has_161_points_over_eight_decades() {
        // common practice (no source): 20 points per decade, both ends included
        let f = log_frequencies(1.0, 1e8, 20);
        assert_eq!(f.len(), 161);
        assert!((f[160] - 1e8).abs() < 1e-3);
    }
}
