//! The assembled system: cuts, folding of grounded sources, stamps, dense
//! and sparse LU.
//!
//! A voltage source with one end on ground fixes its other node's voltage,
//! so that node is not an unknown: it is *folded* — numbered after the
//! unknowns, its column moved to the right-hand side with the source's value
//! (zero unless driven). Exact, and it keeps large circuits sparse (a rail
//! touches every stage) and small ones small. A folded source's current is
//! recovered from Kirchhoff's current law at its node.

use super::*;
use nalgebra::{DMatrix, DVector};
use std::f64::consts::PI;

pub(super) enum Factor {
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
    /// Circuit node (after cuts) → matrix node: 0 ground, `1..=nodes`
    /// unknowns, above `size()` a folded (known-voltage) node.
    compact: Vec<Node>,
    /// For each folded source: its folded circuit node, the sign of that node's
    /// voltage against the source value (+1 when it is the `a` end), and its
    /// index among the known voltages.
    folded: Vec<Option<(Node, f64, usize)>>,
    known: usize,
    /// Branch index (into the extra unknowns) of each element that has one.
    branch: Vec<Option<usize>>,
    nodes: usize,
    branches: usize,
    test: Option<Test>,
    test_branch: Option<usize>,
    /// Nodes of islands with no path to ground, tied down by 1 S (no current flows in it).
    anchors: Vec<Node>,
    entries: Vec<(usize, usize)>,
    pub(super) factor: Factor,
}

impl<'a> System<'a> {
    pub fn new(circuit: &'a LinearCircuit, mode: Mode, cuts: &[Cut], test: Option<Test>) -> Self {
        Self::build(circuit, mode, cuts, test, true)
    }

    /// Without folding grounded sources: every voltage source keeps its
    /// branch unknown (for checking the folding, and for comparison).
    pub fn unfolded(
        circuit: &'a LinearCircuit,
        mode: Mode,
        cuts: &[Cut],
        test: Option<Test>,
    ) -> Self {
        Self::build(circuit, mode, cuts, test, false)
    }

    fn build(
        circuit: &'a LinearCircuit,
        mode: Mode,
        cuts: &[Cut],
        test: Option<Test>,
        fold: bool,
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
        // Fold grounded voltage sources (one per node).
        let mut folded = vec![None; circuit.elements.len()];
        let mut known_of: Vec<Option<usize>> = vec![None; nodes + 1];
        let mut known = 0;
        if fold {
            for (i, e) in circuit.elements.iter().enumerate() {
                if e.kind != LinearKind::VoltageSource {
                    continue;
                }
                let (a, b, _, _) = ends[i];
                if (a == 0) == (b == 0) {
                    continue;
                }
                let x = a.max(b);
                if known_of[x].is_none() {
                    known_of[x] = Some(known);
                    folded[i] = Some((x, if a == x { 1.0 } else { -1.0 }, known));
                    known += 1;
                }
            }
        }
        let mut compact: Vec<Node> = vec![0; nodes + 1];
        let mut live = 0;
        for n in 1..=nodes {
            if known_of[n].is_none() {
                live += 1;
                compact[n] = live;
            }
        }
        for (i, e) in circuit.elements.iter().enumerate() {
            let has_branch = folded[i].is_none()
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
        let size = live + branches;
        for n in 1..=nodes {
            if let Some(j) = known_of[n] {
                compact[n] = size + 1 + j;
            }
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
        let nodes = live;
        let mut sys = System {
            circuit,
            mode,
            ends,
            orig_ends,
            compact,
            folded,
            known,
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

    fn find_islands(&mut self) {
        let mut parent: Vec<usize> = (0..=self.nodes).collect();
        fn find(p: &mut [usize], mut x: usize) -> usize {
            while p[x] != x {
                p[x] = p[p[x]];
                x = p[x];
            }
            x
        }
        let real = |n: Node| if n > self.nodes { 0 } else { n };
        for (i, &(a, b, _, _)) in self.ends.iter().enumerate() {
            let (a, b) = (real(a), real(b));
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
        let n = self.size();
        let mut out = Vec::new();
        self.stamp(0.0, &mut |r, c, _| {
            if r < n && c < n {
                out.push((r, c))
            }
        });
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

    /// The right-hand side and the known (folded) node voltages for one set of drives.
    fn rhs(&self, drives: &[Drive], known_entries: &[(usize, usize, C64)]) -> (Vec<C64>, Vec<C64>) {
        let n = self.size();
        let mut b = vec![C64::default(); n];
        let mut known = vec![C64::default(); self.known];
        let inject = |b: &mut Vec<C64>, node: Node, v: C64| {
            if node != 0 && node <= n {
                b[node - 1] += v;
            }
        };
        for d in drives {
            if let Some(node) = d.node {
                inject(
                    &mut b,
                    self.compact.get(node).copied().unwrap_or(0),
                    d.value,
                );
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
                        b[self.nodes + k] += d.value;
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
            (Some(Test::Voltage(_)), Some(k)) => b[self.nodes + k] += C64::new(1.0, 0.0),
            _ => {}
        }
        if known.iter().any(|v| v.norm() > 0.0) {
            for &(r, j, v) in known_entries {
                b[r] -= v * known[j];
            }
        }
        (b, known)
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
        // Entries in the columns of folded nodes, moved to the right-hand side.
        let mut known_entries: Vec<(usize, usize, C64)> = Vec::new();
        if n == 0 {
            // Nothing left to solve (every node held by a grounded source, or
            // no nodes at all): the answer is the known voltages alone. A
            // zero-size LU is not asked for (nalgebra's solve panics on it).
            for drives in drive_sets {
                let (_, known) = self.rhs(drives, &known_entries);
                out.push(self.finish(w, drives, &[], &known)?);
            }
            return Ok(out);
        }
        match &self.factor {
            Factor::Dense => {
                let mut m = DMatrix::<C64>::zeros(n, n);
                self.stamp(w, &mut |r, c, v| {
                    if r < n {
                        if c < n {
                            m[(r, c)] += v
                        } else {
                            known_entries.push((r, c - n, v))
                        }
                    }
                });
                let lu = m.lu();
                for drives in drive_sets {
                    let (b, known) = self.rhs(drives, &known_entries);
                    let x = lu.solve(&DVector::from_vec(b)).ok_or(SingularSystem)?;
                    out.push(self.finish(w, drives, x.as_slice(), &known)?);
                }
            }
            Factor::Sparse {
                symbolic,
                argsort,
                lu,
            } => {
                use faer::linalg::solvers::Solve;
                let mut vals = Vec::with_capacity(self.entries.len());
                self.stamp(w, &mut |r, c, v| {
                    if r < n {
                        if c < n {
                            vals.push(v)
                        } else {
                            known_entries.push((r, c - n, v))
                        }
                    }
                });
                let mat =
                    faer::sparse::SparseColMat::new_from_argsort(symbolic.clone(), argsort, &vals)
                        .map_err(|_| SingularSystem)?;
                let f = faer::sparse::linalg::solvers::Lu::try_new_with_symbolic(
                    lu.clone(),
                    mat.as_ref(),
                )
                .map_err(|_| SingularSystem)?;
                for drives in drive_sets {
                    let (b, known) = self.rhs(drives, &known_entries);
                    let mut rhs = faer::Mat::<C64>::from_fn(n, 1, |i, _| b[i]);
                    f.solve_in_place(rhs.as_mut());
                    let x: Vec<C64> = (0..n).map(|i| rhs[(i, 0)]).collect();
                    out.push(self.finish(w, drives, &x, &known)?);
                }
            }
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
        let size = self.size();
        let voltages: Vec<C64> = self
            .compact
            .iter()
            .map(|&c| {
                if c == 0 {
                    C64::default()
                } else if c <= self.nodes {
                    x[c - 1]
                } else {
                    known[c - size - 1]
                }
            })
            .collect();
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
            for (j, &(a, b, _, _)) in self.orig_ends.iter().enumerate() {
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
            currents[i] = if self.orig_ends[i].0 == x_node {
                from_node
            } else {
                -from_node
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
