//! The assembled system: cuts, then the circuit core of [`crate::analysis::mna`]
//! — its element stamps, its folding of grounded sources and its solver.
//!
//! A voltage source with one end on ground fixes its other node's voltage,
//! so that node is not an unknown: it is *folded* by `mna::fold` (the same
//! routine the DC solve uses), its column moved to the right-hand side with
//! the source's value (zero unless driven). Exact, and it keeps large
//! circuits sparse (a rail touches every stage) and small ones small. A
//! folded source's current is recovered from Kirchhoff's current law at its
//! node.
//!
//! Numbering of the full system (before folding): nodes `1..=nodes` after
//! cuts at rows `0..nodes`, then one branch current per element that needs
//! one (and the test voltage source), in element order.

use super::*;
use crate::analysis::mna::{
    self, fold, Folded, LinearSystem, PatternCollector, Reduction, Scalar, Stamp,
};
use std::cell::RefCell;
use std::f64::consts::PI;

mod adjoint;
mod covariance;
mod factored;
mod local;
mod pencil;
pub use adjoint::Adjoint;
pub use covariance::{Combination, Covariance};
pub use factored::{AdjointFactors, Change, Probe};
pub use local::LocalInverse;
use pencil::Stamps;
pub use pencil::{DenseMatrix, Pencil};

/// A circuit with its cuts, mode and test source fixed, ready to solve at
/// any number of frequencies.
pub struct System<'a> {
    circuit: &'a LinearCircuit,
    mode: Mode,
    /// Element endpoints (a, b, control +, control −) after cuts, in the
    /// circuit's numbering (fresh nodes appended).
    ends: Vec<(Node, Node, Node, Node)>,
    /// Nodes after cuts.
    nodes: usize,
    /// For each folded source: its node, the sign of that node's voltage
    /// against the source value, and its index among the known voltages.
    folded: Vec<Option<(Node, f64, usize)>>,
    /// Index among the known voltages of each node (None: an unknown).
    known_of: Vec<Option<usize>>,
    known: usize,
    /// Branch index of each element that has one (full row `nodes + k`).
    branch: Vec<Option<usize>>,
    test: Option<Test>,
    test_branch: Option<usize>,
    /// Nodes of islands with no path to ground, tied down by 1 S (no current flows in it).
    anchors: Vec<Node>,
    reduction: Reduction,
    /// The system's stamps recorded once at ω = 1 rad/s: the pencil (G, C)
    /// in stamping order, from which every solve assembles G + jωC.
    stamps: Stamps,
    solver: RefCell<LinearSystem<C64>>,
    /// The transposed system, made on the first adjoint solve (its sparse
    /// pattern is the transpose of the system's).
    adjoint_solver: RefCell<Option<LinearSystem<C64>>>,
    dense_limit: usize,
    /// Each part's element indices (see [`Self::current_into_part`]).
    by_part: std::cell::OnceCell<std::collections::HashMap<usize, Vec<usize>>>,
}

impl<'a> System<'a> {
    pub fn new(circuit: &'a LinearCircuit, mode: Mode, cuts: &[Cut], test: Option<Test>) -> Self {
        Self::build(
            circuit,
            mode,
            cuts,
            test,
            true,
            <C64 as Scalar>::DENSE_LIMIT,
        )
    }

    /// Without folding grounded sources: every voltage source keeps its
    /// branch unknown (for checking the folding, and for comparison).
    pub fn unfolded(
        circuit: &'a LinearCircuit,
        mode: Mode,
        cuts: &[Cut],
        test: Option<Test>,
    ) -> Self {
        Self::build(
            circuit,
            mode,
            cuts,
            test,
            false,
            <C64 as Scalar>::DENSE_LIMIT,
        )
    }

    /// As [`Self::new`] with a chosen dense/sparse crossover.
    pub fn with_dense_limit(
        circuit: &'a LinearCircuit,
        mode: Mode,
        cuts: &[Cut],
        test: Option<Test>,
        dense_limit: usize,
    ) -> Self {
        Self::build(circuit, mode, cuts, test, true, dense_limit)
    }

    fn build(
        circuit: &'a LinearCircuit,
        mode: Mode,
        cuts: &[Cut],
        test: Option<Test>,
        fold: bool,
        dense_limit: usize,
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
        // Fold grounded voltage sources (one per node).
        let mut folded = vec![None; circuit.elements.len()];
        let mut known_of: Vec<Option<usize>> = vec![None; nodes + 1];
        let mut known = 0;
        if fold {
            let sources = circuit
                .elements
                .iter()
                .enumerate()
                .filter(|(_, e)| e.kind == LinearKind::VoltageSource)
                .map(|(i, _)| (i, ends[i].0, ends[i].1));
            for g in fold::grounded_sources(nodes, sources) {
                known_of[g.node] = Some(known);
                folded[g.element] = Some((g.node, g.sign, known));
                known += 1;
            }
        }
        let mut branches = 0;
        let branch: Vec<Option<usize>> = circuit
            .elements
            .iter()
            .enumerate()
            .map(|(i, e)| {
                let has_branch = folded[i].is_none()
                    && match e.kind {
                        LinearKind::VoltageSource => true,
                        LinearKind::Capacitor(_) => mode == Mode::Midband,
                        LinearKind::Inductor(_) => mode == Mode::Frequency,
                        _ => false,
                    };
                has_branch.then(|| {
                    branches += 1;
                    branches - 1
                })
            })
            .collect();
        let test_branch = match test {
            Some(Test::Voltage(_)) => {
                branches += 1;
                Some(branches - 1)
            }
            _ => None,
        };
        let removed: Vec<usize> = (1..=nodes)
            .filter(|&n| known_of[n].is_some())
            .map(|n| n - 1)
            .collect();
        let reduction = Reduction::new(nodes + branches, &removed);
        let mut sys = System {
            circuit,
            mode,
            ends,
            nodes,
            folded,
            known_of,
            known,
            branch,
            test,
            test_branch,
            anchors: Vec::new(),
            reduction,
            stamps: Stamps::default(),
            solver: RefCell::new(LinearSystem::with_limit(0, &PatternCollector::default(), 0)),
            adjoint_solver: RefCell::new(None),
            dense_limit,
            by_part: Default::default(),
        };
        sys.find_islands();
        let mut stamps = Stamps::default();
        sys.stamp(1.0, &mut stamps);
        sys.stamps = stamps;
        let size = sys.size();
        let mut pattern = PatternCollector::default();
        if size > dense_limit {
            sys.stamps.replay(
                0.0,
                &mut Folded {
                    inner: &mut pattern,
                    reduction: &sys.reduction,
                    moved: &mut Vec::new(),
                },
            );
        }
        sys.solver = RefCell::new(LinearSystem::with_limit(size, &pattern, dense_limit));
        sys
    }

    /// The same system with structural zeros between each pair of rows in
    /// `pairs` (both ways): no value changes, but the sparse factors then
    /// join those unknowns, so their entries of the inverse lie on the
    /// selected pattern ([`LocalInverse`]). Pairs with ground, a folded node
    /// or an element without a branch are skipped.
    pub fn joining(mut self, pairs: &[(Probe, Probe)]) -> Self {
        let full = |p: Probe| match p {
            Probe::Node(n) => {
                (n != 0 && n <= self.nodes && self.known_of[n].is_none()).then(|| n - 1)
            }
            Probe::Branch(e) => self
                .branch
                .get(e)
                .copied()
                .flatten()
                .map(|k| self.nodes + k),
        };
        let mut added = false;
        for &(a, b) in pairs {
            if let (Some(r), Some(c)) = (full(a), full(b)) {
                self.stamps.add(r, c, C64::default());
                self.stamps.add(c, r, C64::default());
                added = true;
            }
        }
        let size = self.size();
        if added && size > self.dense_limit {
            let mut pattern = PatternCollector::default();
            self.stamps.replay(
                0.0,
                &mut Folded {
                    inner: &mut pattern,
                    reduction: &self.reduction,
                    moved: &mut Vec::new(),
                },
            );
            self.solver = RefCell::new(LinearSystem::with_limit(size, &pattern, self.dense_limit));
            self.adjoint_solver = RefCell::new(None);
        }
        self
    }

    /// Number of unknowns (node voltages and branch currents).
    pub fn size(&self) -> usize {
        self.reduction.reduced_size()
    }

    /// Is the sparse LU used (above the dense limit)?
    pub fn is_sparse(&self) -> bool {
        self.solver.borrow().is_sparse()
    }

    fn present(&self, i: usize) -> bool {
        if self.folded[i].is_some() {
            return false;
        }
        match self.circuit.elements[i].kind {
            LinearKind::DeviceCapacitance(_) | LinearKind::Inductor(_) => {
                self.mode == Mode::Frequency
            }
            _ => true,
        }
    }

    /// The node as the reduced system sees it: folded nodes are ground.
    fn live(&self, n: Node) -> Node {
        if self.known_of[n].is_some() {
            0
        } else {
            n
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
            let (a, b) = (self.live(a), self.live(b));
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
            if self.known_of[n].is_some() {
                continue;
            }
            let r = find(&mut parent, n);
            if r != find(&mut parent, ground) && seen.insert(r) {
                self.anchors.push(n);
            }
        }
    }

    /// Stamp every element at angular frequency `w` in the full numbering
    /// (the caller wraps `s` in the folding). Called once, at ω = 1 rad/s,
    /// to record [`Stamps`]; solves replay those.
    fn stamp(&self, w: f64, s: &mut impl Stamp<C64>) {
        let zero = C64::default();
        let row_of = |k: usize| self.nodes + k;
        for (i, e) in self.circuit.elements.iter().enumerate() {
            if !self.present(i) {
                continue;
            }
            let (a, b, cp, cn) = self.ends[i];
            match e.kind {
                LinearKind::Conductance(g) => mna::conductance(s, a, b, C64::new(g, 0.0)),
                LinearKind::DeviceCapacitance(c) => mna::conductance(s, a, b, C64::new(0.0, w * c)),
                LinearKind::Capacitor(c) => match self.branch[i] {
                    Some(k) => mna::voltage_branch(s, a, b, row_of(k), zero, zero),
                    None => mna::conductance(s, a, b, C64::new(0.0, w * c)),
                },
                LinearKind::Inductor(l) => {
                    if let Some(k) = self.branch[i] {
                        // Always present so the pattern does not depend on the frequency.
                        mna::voltage_branch(s, a, b, row_of(k), zero, C64::new(0.0, w * l))
                    }
                }
                LinearKind::VoltageSource => {
                    if let Some(k) = self.branch[i] {
                        mna::voltage_branch(s, a, b, row_of(k), zero, zero)
                    }
                }
                LinearKind::CurrentSource => {}
                LinearKind::Transconductance { gm, .. } => {
                    mna::transconductance(s, a, b, cp, cn, C64::new(gm, 0.0))
                }
            }
        }
        for &n in &self.anchors {
            s.add(n - 1, n - 1, C64::new(1.0, 0.0));
        }
        if let (Some(Test::Voltage(n)), Some(k)) = (self.test, self.test_branch) {
            mna::voltage_branch(s, n, 0, row_of(k), zero, zero);
        }
    }

    /// Reduced row of a node (None: ground, folded or beyond the circuit).
    fn node_row(&self, node: Node) -> Option<usize> {
        if node == 0 || node > self.nodes {
            return None;
        }
        self.reduction.to_reduced[node - 1]
    }

    /// The right-hand side and the known (folded) node voltages for one set of drives.
    fn rhs(&self, drives: &[Drive], moved: &[(usize, usize, C64)]) -> (Vec<C64>, Vec<C64>) {
        let n = self.size();
        let mut b = vec![C64::default(); n];
        let mut known = vec![C64::default(); self.known];
        let inject = |b: &mut Vec<C64>, node: Node, v: C64| {
            if let Some(r) = self.node_row(node) {
                b[r] += v;
            }
        };
        for d in drives {
            if let Some(node) = d.node {
                inject(&mut b, node, d.value);
                continue;
            }
            let Some(e) = self.circuit.elements.get(d.element) else {
                continue;
            };
            let (a, bn, _, _) = self.ends[d.element];
            match e.kind {
                LinearKind::VoltageSource => {
                    if let Some((_, sign, j)) = self.folded[d.element] {
                        known[j] += d.value * sign;
                    } else if let Some(k) = self.branch[d.element] {
                        let r = self.reduction.to_reduced[self.nodes + k].expect("kept");
                        b[r] += d.value;
                    }
                }
                LinearKind::CurrentSource => {
                    // The source pushes current out of `a` into the circuit, back in at `b`.
                    inject(&mut b, a, d.value);
                    inject(&mut b, bn, -d.value);
                }
                _ => {}
            }
        }
        match (self.test, self.test_branch) {
            (Some(Test::Current(p)), _) => inject(&mut b, p, C64::new(1.0, 0.0)),
            (Some(Test::Between(p, q)), _) => {
                inject(&mut b, p, C64::new(1.0, 0.0));
                inject(&mut b, q, C64::new(-1.0, 0.0));
            }
            (Some(Test::Voltage(_)), Some(k)) => {
                let r = self.reduction.to_reduced[self.nodes + k].expect("kept");
                b[r] += C64::new(1.0, 0.0)
            }
            _ => {}
        }
        if known.iter().any(|v| v.norm() > 0.0) {
            for &(r, col, v) in moved {
                let j = self.known_of[col + 1].expect("a folded column");
                b[r] -= v * known[j];
            }
        }
        (b, known)
    }

    fn omega(&self, frequency: f64) -> f64 {
        if self.mode == Mode::Midband {
            0.0
        } else {
            2.0 * PI * frequency
        }
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
        let w = self.omega(frequency);
        let mut solver = self.solver.borrow_mut();
        solver.clear();
        // Entries in the columns of folded nodes, moved to the right-hand side.
        let mut moved = Vec::new();
        self.stamps.replay(
            w,
            &mut Folded {
                inner: &mut *solver,
                reduction: &self.reduction,
                moved: &mut moved,
            },
        );
        solver.factor().map_err(|_| SingularSystem)?;
        let mut out = Vec::with_capacity(drive_sets.len());
        for drives in drive_sets {
            let (b, known) = self.rhs(drives, &moved);
            let x = solver.solve_again(&b).map_err(|_| SingularSystem)?;
            out.push(self.finish(w, drives, &x, &known)?);
        }
        Ok(out)
    }

    fn finish(
        &self,
        w: f64,
        drives: &[Drive],
        x: &[C64],
        known: &[C64],
    ) -> Result<Solution, SingularSystem> {
        if x.iter().any(|v| !v.re.is_finite() || !v.im.is_finite()) {
            return Err(SingularSystem);
        }
        let voltages: Vec<C64> = (0..=self.nodes)
            .map(|n| match (self.node_row(n), self.known_of[n]) {
                (Some(r), _) => x[r],
                (None, Some(j)) if n != 0 => known[j],
                _ => C64::default(),
            })
            .collect();
        let branch_x = |k: usize| x[self.reduction.to_reduced[self.nodes + k].expect("kept")];
        let mut currents = vec![C64::default(); self.circuit.elements.len()];
        for (i, e) in self.circuit.elements.iter().enumerate() {
            if !self.present(i) {
                continue;
            }
            let (a, b, cp, cn) = self.ends[i];
            let vab = voltages[a] - voltages[b];
            currents[i] = if let Some(k) = self.branch[i] {
                branch_x(k)
            } else {
                match e.kind {
                    LinearKind::Conductance(g) => vab * g,
                    LinearKind::DeviceCapacitance(c) | LinearKind::Capacitor(c) => {
                        vab * C64::new(0.0, w * c)
                    }
                    LinearKind::Transconductance { gm, .. } => (voltages[cp] - voltages[cn]) * gm,
                    LinearKind::CurrentSource => -drives
                        .iter()
                        .filter(|d| d.element == i && d.node.is_none())
                        .map(|d| d.value)
                        .sum::<C64>(),
                    _ => C64::default(),
                }
            };
        }
        // A folded source carries what Kirchhoff's current law leaves at its node.
        for (i, f) in self.folded.iter().enumerate() {
            let Some((x_node, _, _)) = *f else {
                continue;
            };
            let mut leaving = C64::default();
            for (j, &(a, b, _, _)) in self.ends.iter().enumerate() {
                if j == i || !self.present(j) {
                    continue;
                }
                if a == x_node {
                    leaving += currents[j];
                }
                if b == x_node {
                    leaving -= currents[j];
                }
            }
            let injected: C64 = drives
                .iter()
                .filter(|d| d.node == Some(x_node))
                .map(|d| d.value)
                .sum();
            let from_node = injected - leaving;
            currents[i] = if self.ends[i].0 == x_node {
                from_node
            } else {
                -from_node
            };
        }
        let test_current = self.test_branch.map(|k| -branch_x(k)).unwrap_or_default();
        Ok(Solution {
            voltages,
            currents,
            test_current,
        })
    }

    /// The node an element endpoint sits on after cuts: (a, b).
    pub fn element_nodes(&self, element: usize) -> (Node, Node) {
        let (a, b, _, _) = self.ends[element];
        (a, b)
    }

    /// Current flowing from `node` into part `part` (summed over its elements
    /// touching that node, after cuts).
    pub fn current_into_part(&self, sol: &Solution, part: usize, node: Node) -> C64 {
        // Each part's elements, in element order, indexed on the first call
        // (a scan of every element per call made the stage figures of a
        // long chain grow as its square).
        let by_part = self.by_part.get_or_init(|| {
            let mut m: std::collections::HashMap<usize, Vec<usize>> = Default::default();
            for (i, e) in self.circuit.elements.iter().enumerate() {
                if let Some(p) = e.part {
                    m.entry(p).or_default().push(i);
                }
            }
            m
        });
        let mut total = C64::default();
        for &i in by_part.get(&part).map_or(&[][..], Vec::as_slice) {
            let (a, b, _, _) = self.ends[i];
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
