//! The four cut impedances of each stage (Zin, Zout, and the source and load
//! resistances the stage sees), exactly by one system per cut for short
//! chains, and for long ones through one factorization of the whole chain.
//!
//! Long chains: every (part, node) connection that some stage cuts gets a
//! zero-volt link of its own — the part's ends at the node move to a fresh
//! node joined to the node by a voltage source element — so the linked
//! circuit is the connected one. Opening the links of one cut set is a
//! change of rank one per link, solved through the one factorization by the
//! Sherman–Morrison–Woodbury formula ([`crate::analysis::linear::Change`]):
//! k + 1 solves for a cut of k links instead of a factorization (and no
//! solve at all where the entries it needs, among the node and its links,
//! are on the selected inverse of the factors:
//! [`crate::analysis::linear::LocalInverse`]). Where an
//! opened set would leave a piece of the circuit with no path to ground (the
//! exact system ties such an island down) or the small update system is
//! singular, that impedance is solved exactly as for a short chain.

use super::linear::{Change, LinearCircuit, LinearKind, Mode, Node, Probe, System};
use super::small_signal::SmallSignal;
use super::stages::{Chain, StageTopology};
use std::collections::{BTreeMap, HashMap, VecDeque};

/// Chains of more stages than this take the one-factorization path; every
/// demo and test fixture has fewer, so their figures are those of the
/// per-cut systems, bit for bit.
pub const FAST_STAGES: usize = 8;

/// The smallest impedance, as a share of the largest selected entry, that
/// the selected entries give to about 1e-10: their rounding error is about
/// the rounding unit times the largest entry, so a smaller one goes to the
/// rows (checked by the random long-chain test against the exact path).
const LOCAL_FLOOR: f64 = 1e-5;

/// The cut impedances of one stage, Ω (None where not defined or singular).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct StageImpedances {
    pub zin: Option<f64>,
    pub zout: Option<f64>,
    /// What drives the input: the input node with the stage's own parts cut.
    pub source: Option<f64>,
    /// What the output drives: the output node with the stage's own parts cut.
    pub load: Option<f64>,
}

fn nodes_of(ss: &SmallSignal, topo: &StageTopology) -> (Node, Node) {
    let ni = ss.net_node.get(topo.input).copied().unwrap_or(0);
    let no = ss.net_node.get(topo.output).copied().unwrap_or(0);
    (ni, no)
}

/// The four cut sets of a stage: (node, parts cut) for Zin, Zout, source, load
/// (None: the figure is not asked for).
fn cut_sets(ss: &SmallSignal, topo: &StageTopology) -> [Option<(Node, Vec<usize>)>; 4] {
    let (ni, no) = nodes_of(ss, topo);
    let own = |node: Node, cut: &[usize]| -> Vec<usize> {
        super::figures::parts_at(ss, node)
            .into_iter()
            .filter(|p| !cut.contains(p))
            .collect()
    };
    [
        Some((ni, topo.input_cut.clone())),
        Some((no, topo.output_cut.clone())),
        (!topo.input_cut.is_empty()).then(|| (ni, own(ni, &topo.input_cut))),
        (!topo.output_cut.is_empty()).then(|| (no, own(no, &topo.output_cut))),
    ]
}

fn exact(ss: &SmallSignal, set: &Option<(Node, Vec<usize>)>) -> Option<f64> {
    let (node, parts) = set.as_ref()?;
    let cuts: Vec<_> = parts
        .iter()
        .map(|&part| super::linear::Cut { part, node: *node })
        .collect();
    super::figures::impedance(ss, *node, &cuts)
}

/// The cut impedances of every stage of `chain`: by one system per cut, or
/// (`fast`) through one factorization of the linked chain.
pub fn chain_impedances(ss: &SmallSignal, chain: &Chain, fast: bool) -> Vec<StageImpedances> {
    let path = if fast { Path::Local } else { Path::Exact };
    chain_impedances_by(ss, chain, path).0
}

/// How the figures of a long chain are found: a system per figure
/// (`Exact`), rows of the one factorization (`Rows`), or entries of its
/// selected inverse among each stage's own unknowns with rows where an
/// entry is off the pattern (`Local`, what `analyze` uses).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Path {
    Exact,
    Rows,
    Local,
}

/// As [`chain_impedances`] by `path`, with the number of cuts answered
/// from selected entries (for the tests of the paths).
pub fn chain_impedances_by(
    ss: &SmallSignal,
    chain: &Chain,
    path: Path,
) -> (Vec<StageImpedances>, usize) {
    let fast = path != Path::Exact;
    let local_hits = std::cell::Cell::new(0);
    let sets: Vec<_> = chain.stages.iter().map(|t| cut_sets(ss, t)).collect();
    let each_exact = |s: &[Option<(Node, Vec<usize>)>; 4]| StageImpedances {
        zin: exact(ss, &s[0]),
        zout: exact(ss, &s[1]),
        source: exact(ss, &s[2]),
        load: exact(ss, &s[3]),
    };
    if !fast {
        return (sets.iter().map(each_exact).collect(), 0);
    }
    let linked = Linked::new(&ss.circuit, sets.iter().flatten().flatten());
    // Each cut's links joined in the pattern, so the entries among them
    // are on the selected inverse.
    let mut pairs = Vec::new();
    for (node, parts) in sets.iter().flatten().flatten() {
        let links: Vec<usize> = parts
            .iter()
            .filter_map(|&p| linked.links.get(&(p, *node)).map(|l| l.0))
            .collect();
        for (k, &a) in links.iter().enumerate() {
            pairs.extend(
                links[k + 1..]
                    .iter()
                    .map(|&b| (Probe::Branch(a), Probe::Branch(b))),
            );
        }
    }
    let sys = System::new(&linked.circuit, Mode::Midband, &[], None).joining(&pairs);
    let Ok(factors) = sys.adjoint_factors(0.0) else {
        return (sets.iter().map(each_exact).collect(), 0);
    };
    let graph = sys.conducting_graph();
    // The entries each cut needs, from the selected inverse (rows only for
    // an entry off its pattern).
    let local = (path == Path::Local)
        .then(|| factors.local_inverse())
        .flatten();
    let one = |set: &Option<(Node, Vec<usize>)>| -> Option<f64> {
        let (node, parts) = set.as_ref()?;
        if *node == 0 {
            return None;
        }
        let links: Vec<(usize, Node)> = parts
            .iter()
            .filter_map(|&p| linked.links.get(&(p, *node)).copied())
            .collect();
        let opened: Vec<usize> = links.iter().map(|l| l.0).collect();
        let grounded = std::iter::once(*node)
            .chain(links.iter().map(|l| l.1))
            .all(|start| reaches_ground(&graph, start, &opened));
        let changes: Vec<Change> = opened.iter().map(|&e| Change::Open(e)).collect();
        let at = Probe::Node(*node);
        // An impedance far below the largest selected entry carries its
        // rounding error (see `LOCAL_FLOOR`): rows decide.
        let from_entries = local
            .as_ref()
            .and_then(|z| factors.local_changed_entry(z, at, &changes, at))
            .filter(|v| match (v, &local) {
                (Ok(v), Some(z)) => v.norm() > LOCAL_FLOOR * factors.local_scale(z),
                _ => true,
            });
        local_hits.set(local_hits.get() + usize::from(from_entries.is_some()));
        match from_entries.unwrap_or_else(|| factors.changed_entry(at, &changes, at)) {
            Ok(z) if grounded => Some(z.re),
            _ => exact(ss, set),
        }
    };
    let mut out = Vec::with_capacity(sets.len());
    for batch in sets.chunks(BATCH) {
        // Every row the batch reads, solved together.
        let mut probes = Vec::new();
        for (node, parts) in batch.iter().flatten().flatten() {
            probes.push(Probe::Node(*node));
            probes.extend(
                parts
                    .iter()
                    .filter_map(|&p| linked.links.get(&(p, *node)))
                    .map(|l| Probe::Branch(l.0)),
            );
        }
        // A failure here shows again, row by row, below (then solved exactly).
        if local.is_none() {
            let _ = factors.prefetch(&probes);
        }
        out.extend(batch.iter().map(|s| StageImpedances {
            zin: one(&s[0]),
            zout: one(&s[1]),
            source: one(&s[2]),
            load: one(&s[3]),
        }));
        factors.forget();
    }
    (out, local_hits.get())
}

/// Stages whose rows are solved in one pass of the triangular solves.
pub(crate) const BATCH: usize = 16;

/// The most nodes a ground search visits before it gives up (the cut is
/// then solved exactly): in an amplifier a rail or ground is a few parts away.
const SEARCH_LIMIT: usize = 256;

/// Does `start` reach ground through conducting elements other than `opened`?
fn reaches_ground(graph: &[Vec<(Node, usize)>], start: Node, opened: &[usize]) -> bool {
    let mut seen = std::collections::HashSet::from([start]);
    let mut queue = VecDeque::from([start]);
    while let Some(n) = queue.pop_front() {
        if n == 0 {
            return true;
        }
        if seen.len() > SEARCH_LIMIT {
            return false;
        }
        for &(m, e) in &graph[n] {
            if !opened.contains(&e) && seen.insert(m) {
                queue.push_back(m);
            }
        }
    }
    false
}

/// A circuit with a zero-volt link in every cut connection.
pub(crate) struct Linked {
    pub circuit: LinearCircuit,
    /// (part, node) → (link element, fresh node).
    pub links: BTreeMap<(usize, Node), (usize, Node)>,
}

impl Linked {
    /// Links for the connections (part, node) of `sets` where the part has
    /// an element end (or control reference, with `controls`) on the node.
    /// With `whisker` g: each fresh node gets g to ground and its node −g,
    /// which cancel while the link is closed (an opened cut then removes
    /// the −g: [`crate::analysis::linear::Change::Shunt`] of +g at the node).
    pub(crate) fn build<'s>(
        base: &LinearCircuit,
        sets: impl Iterator<Item = &'s (Node, Vec<usize>)>,
        controls: bool,
        whisker: Option<f64>,
    ) -> Self {
        let mut circuit = base.clone();
        let mut by_part: HashMap<usize, Vec<usize>> = HashMap::new();
        for (i, e) in base.elements.iter().enumerate() {
            if let Some(p) = e.part {
                by_part.entry(p).or_default().push(i);
            }
        }
        let mut links = BTreeMap::new();
        for (node, parts) in sets {
            let node = *node;
            if node == 0 {
                continue;
            }
            for &p in parts {
                if links.contains_key(&(p, node)) {
                    continue;
                }
                let mine = by_part.get(&p).map_or(&[][..], Vec::as_slice);
                let touches = |e: &super::linear::LinearElement| {
                    e.a == node
                        || e.b == node
                        || (controls
                            && matches!(e.kind, LinearKind::Transconductance { cp, cn, .. }
                                if cp == node || cn == node))
                };
                if !mine.iter().any(|&i| touches(&circuit.elements[i])) {
                    continue;
                }
                let fresh = circuit.add_node();
                for &i in mine {
                    let e = &mut circuit.elements[i];
                    if e.a == node {
                        e.a = fresh;
                    }
                    if e.b == node {
                        e.b = fresh;
                    }
                    if controls {
                        if let LinearKind::Transconductance { cp, cn, .. } = &mut e.kind {
                            if *cp == node {
                                *cp = fresh;
                            }
                            if *cn == node {
                                *cn = fresh;
                            }
                        }
                    }
                }
                let link = circuit.add(None, node, fresh, LinearKind::VoltageSource);
                if let Some(g) = whisker {
                    circuit.add(None, fresh, 0, LinearKind::Conductance(g));
                    circuit.add(None, node, 0, LinearKind::Conductance(-g));
                }
                links.insert((p, node), (link, fresh));
            }
        }
        Linked { circuit, links }
    }

    fn new<'s>(base: &LinearCircuit, sets: impl Iterator<Item = &'s (Node, Vec<usize>)>) -> Self {
        Self::build(base, sets, true, None)
    }
}
