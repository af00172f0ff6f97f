//! Linearise a circuit at its DC operating point.
//!
//! Every transistor is evaluated with `BjtModel::evaluate` at the intrinsic
//! junction voltages of the operating point; its Jacobian gives the
//! common-emitter y-parameters and from them the hybrid-π, h and T models
//! ([`super::two_port`]). Cπ = τF·gm + Cje(VBE) and Cμ = Cjc(VBC), the
//! depletion parts by `devices::bjt::depletion_capacitance`, which uses the
//! linear continuation of C(V) above φ/2 (a standard way to avoid the
//! singularity at V = φ). A forward-biased base–emitter junction always sits
//! above φ/2, so Cje here is on that continuation.
//!
//! A diode becomes its junction conductance dI/dV, its depletion capacitance
//! plus the diffusion capacitance τT·dI/dV, and its series resistance.

use super::circuit::Circuit;
use super::dc::{OperatingPoint, Region};
use super::elements::{with_model, At, Model};
use super::linear::{LinearCircuit, LinearKind, Node};
use super::two_port::TransistorModels;
use serde::Serialize;

/// The small-signal model of one transistor at its operating point.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TransistorSmallSignal {
    pub designator: String,
    #[serde(skip)]
    pub part: usize,
    pub region: Region,
    /// Collector current (NPN sense, A) and VCE (NPN sense, V) at the operating point.
    pub collector_current: f64,
    pub collector_emitter_voltage: f64,
    /// VCE − VCE,sat at the operating point (NPN sense, V).
    pub saturation_margin: f64,
    pub models: TransistorModels,
    /// Circuit nodes: collector, base pin, emitter, internal base.
    #[serde(skip)]
    pub nodes: [Node; 4],
    /// Handles of its elements in [`SmallSignal::circuit`], so a what-if can
    /// change this one transistor's values (the noise collector-current scan).
    #[serde(skip)]
    pub elements: TransistorElements,
}

/// Indices in the linear circuit of one transistor's hybrid-π elements
/// (`None`: the element is zero and not there).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct TransistorElements {
    pub base_resistance: Option<usize>,
    pub g_pi: usize,
    pub g_mu: Option<usize>,
    pub go: usize,
    pub gm: usize,
    pub c_pi: Option<usize>,
    pub c_mu: Option<usize>,
}

/// The small-signal model of one field-effect transistor at its operating
/// point: the FET hybrid-π (gm·vgs from drain to source, ro = 1/gds, Cgs,
/// Cgd, Cds; the gate draws only its junction conductance) and the T model
/// (1/gm in the source lead) are two drawings of these same values.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FetSmallSignal {
    pub designator: String,
    #[serde(skip)]
    pub part: usize,
    pub kind: crate::analysis::devices::fet::FetKind,
    pub channel: crate::analysis::devices::fet::Channel,
    pub region: crate::analysis::elements::fet_report::FetRegion,
    /// Drain current, channel sense (positive when conducting), A.
    pub drain_current: f64,
    /// VGS and VDS, channel sense, V.
    pub vgs: f64,
    pub vds: f64,
    /// VTO, channel sense, V.
    pub threshold: f64,
    /// VDS − VDS(sat), channel sense, V (negative in the triode region).
    pub triode_margin: f64,
    /// ∂ID/∂VGS, S.
    pub gm: f64,
    /// ∂ID/∂VDS, S.
    pub gds: f64,
    /// Gate–source, gate–drain and drain–source capacitances, F.
    pub cgs: f64,
    pub cgd: f64,
    pub cds: f64,
    /// Gate junction conductances to the source and to the drain (JFET), S.
    pub g_gate_source: f64,
    pub g_gate_drain: f64,
    /// Circuit nodes: drain, gate, source.
    #[serde(skip)]
    pub nodes: [Node; 3],
    /// Handles of its elements in [`SmallSignal::circuit`].
    #[serde(skip)]
    pub elements: FetElements,
}

impl FetSmallSignal {
    /// ro = 1/gds, Ω (infinite when gds is zero).
    pub fn ro(&self) -> f64 {
        if self.gds == 0.0 {
            f64::INFINITY
        } else {
            1.0 / self.gds
        }
    }
    /// 1/gm, the resistance in the source lead of the T model, Ω.
    pub fn inverse_gm(&self) -> f64 {
        if self.gm == 0.0 {
            f64::INFINITY
        } else {
            1.0 / self.gm
        }
    }
    /// VGS − VTO, channel sense, V.
    pub fn overdrive(&self) -> f64 {
        self.vgs - self.threshold
    }
}

/// Indices in the linear circuit of one FET's elements.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct FetElements {
    pub gm: usize,
    pub gds: usize,
}

/// The small-signal model of one diode.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DiodeSmallSignal {
    pub designator: String,
    /// dI/dV at the junction, S.
    pub conductance: f64,
    /// Depletion plus diffusion capacitance, F.
    pub capacitance: f64,
    pub series_resistance: f64,
}

/// A circuit linearised at its operating point.
#[derive(Debug, Clone)]
pub struct SmallSignal {
    pub circuit: LinearCircuit,
    /// By NetId, the node of each net (ground and pinless nets → 0).
    pub net_node: Vec<Node>,
    /// Element index of the signal source, if there is one.
    pub signal: Option<usize>,
    /// Element index of each rail and DC voltage source, with its designator.
    pub supplies: Vec<(String, usize)>,
    /// Element index of every independent source by document part.
    pub source_of_part: Vec<Option<usize>>,
    pub transistors: Vec<TransistorSmallSignal>,
    pub fets: Vec<FetSmallSignal>,
    pub diodes: Vec<DiodeSmallSignal>,
    /// Designator of each document part that is in the circuit (by part index).
    pub designators: Vec<String>,
    /// For each element of the DC circuit (`Circuit::elements` index), the
    /// range of linear elements it became.
    pub handles: Vec<std::ops::Range<usize>>,
}

impl SmallSignal {
    pub fn designator(&self, part: usize) -> &str {
        self.designators.get(part).map_or("?", |s| s.as_str())
    }
    /// One entry per part, built in part order, so found by bisection (a
    /// scan if the order does not hold).
    pub fn transistor(&self, part: usize) -> Option<&TransistorSmallSignal> {
        let v = &self.transistors;
        match v.binary_search_by_key(&part, |t| t.part) {
            Ok(i) => Some(&v[i]),
            _ => v.iter().find(|t| t.part == part),
        }
    }
    pub fn fet(&self, part: usize) -> Option<&FetSmallSignal> {
        let v = &self.fets;
        match v.binary_search_by_key(&part, |t| t.part) {
            Ok(i) => Some(&v[i]),
            _ => v.iter().find(|t| t.part == part),
        }
    }
}

/// The small-signal circuit while it is being built: what each element
/// kind adds to when it is linearised ([`crate::analysis::elements::Model::linearise`]).
pub struct Linearising<'a> {
    pub op: &'a OperatingPoint,
    pub lc: LinearCircuit,
    pub signal: Option<usize>,
    pub supplies: Vec<(String, usize)>,
    pub source_of_part: Vec<Option<usize>>,
    pub transistors: Vec<TransistorSmallSignal>,
    pub fets: Vec<FetSmallSignal>,
    pub diodes: Vec<DiodeSmallSignal>,
}

impl Linearising<'_> {
    /// Operating-point voltage of node `n`.
    pub fn v(&self, n: Node) -> f64 {
        self.op.node_voltages.get(n).copied().unwrap_or(0.0)
    }
}

/// Linearise `circuit` at `op`.
pub fn linearise(circuit: &Circuit, op: &OperatingPoint) -> SmallSignal {
    let mut out = Linearising {
        op,
        lc: LinearCircuit::new(circuit.node_count),
        signal: None,
        supplies: Vec::new(),
        source_of_part: Vec::new(),
        transistors: Vec::new(),
        fets: Vec::new(),
        diodes: Vec::new(),
    };
    let mut designators: Vec<String> = Vec::new();
    let mut handles = Vec::with_capacity(circuit.elements.len());
    for (k, e) in circuit.elements.iter().enumerate() {
        let first = out.lc.elements.len();
        if out.source_of_part.len() <= e.part {
            out.source_of_part.resize(e.part + 1, None);
            designators.resize(e.part + 1, String::new());
        }
        designators[e.part] = e.designator.clone();
        let at = At::new(circuit, k);
        with_model!(&e.kind, |m| m.linearise(&at, &mut out));
        handles.push(first..out.lc.elements.len());
    }
    SmallSignal {
        circuit: out.lc,
        net_node: circuit.net_node.clone(),
        signal: out.signal,
        supplies: out.supplies,
        source_of_part: out.source_of_part,
        transistors: out.transistors,
        fets: out.fets,
        diodes: out.diodes,
        designators,
        handles,
    }
}

/// Everything the small-signal work produces at midband for a document.
#[derive(Debug, Clone)]
pub struct Analysis {
    pub small_signal: SmallSignal,
    pub chain: super::stages::Chain,
    pub midband: super::figures::Midband,
    /// Groups of transistors read as one block, with their figures.
    pub blocks: Vec<super::blocks::Block>,
}

/// Linearise with each capacitor part in its midband role (coupling and
/// bypass short, shunt and compensation open), as [`analyse`] does, without
/// the figures: what the loop gains at midband need.
pub fn linearise_by_role(
    doc: &crate::document::Document,
    nl: &crate::netlist::Netlist,
    circuit: &Circuit,
    op: &OperatingPoint,
) -> SmallSignal {
    let mut small_signal = linearise(circuit, op);
    let chain = super::stages::recognise(doc, nl);
    classify_capacitors(&mut small_signal, &chain);
    small_signal
}

/// Linearise, recognise the stages and compute the midband figures.
pub fn analyse(
    doc: &crate::document::Document,
    nl: &crate::netlist::Netlist,
    circuit: &Circuit,
    op: &OperatingPoint,
) -> Analysis {
    let mut small_signal = linearise(circuit, op);
    let chain = super::stages::recognise(doc, nl);
    classify_capacitors(&mut small_signal, &chain);
    let mut midband = super::figures::midband(&small_signal, &chain);
    let found = super::blocks::find(doc, nl, &chain);
    let blocks = super::blocks::read(
        &super::blocks::FigureContext {
            doc,
            netlist: nl,
            op,
            small_signal: &small_signal,
            chain: &chain,
            midband: &midband,
        },
        &found,
    );
    super::blocks::revise_stages(&blocks, &mut midband, doc.signal.load.as_deref());
    Analysis {
        small_signal,
        chain,
        midband,
        blocks,
    }
}

/// What a capacitor part does, read from the topology (never from its value).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CapacitorRole {
    /// In series with the signal path (between two nets, neither on AC ground):
    /// a short at midband.
    Coupling,
    /// From a node off the signal path (an emitter, a base of a common-base
    /// stage, a supply node) to AC ground, across a resistor there: a short
    /// at midband.
    Bypass,
    /// From a node that carries the signal (the chain input, a stage's input
    /// or output, the load) to AC ground: it shunts the signal (a source's own
    /// capacitance, a filter or parasitic capacitance). Never a short at
    /// midband; its impedance counts in the sweep like a device capacitance.
    Shunt,
    /// Across one transistor's collector and base (drain and gate): a
    /// compensation (Miller) capacitor. Never a short at midband (that would
    /// tie the transistor's output to its input); it counts in the sweep
    /// like a device capacitance.
    Compensation,
}

/// AC ground nodes of a linear circuit: ground, and every node tied to it by
/// a voltage source other than the signal source (rails, DC sources), repeated
/// until nothing changes (a source stacked on a rail is AC ground too).
fn ac_ground_nodes(ss: &SmallSignal) -> Vec<bool> {
    let mut g = vec![false; ss.circuit.node_count + 1];
    g[0] = true;
    loop {
        let mut changed = false;
        for (k, e) in ss.circuit.elements.iter().enumerate() {
            if e.kind != LinearKind::VoltageSource || Some(k) == ss.signal {
                continue;
            }
            let (a, b) = (e.a.min(g.len() - 1), e.b.min(g.len() - 1));
            if g[a] != g[b] {
                g[a] = true;
                g[b] = true;
                changed = true;
            }
        }
        if !changed {
            return g;
        }
    }
}

/// The role of every capacitor part of the linearised circuit, by element index.
pub fn capacitor_roles(
    ss: &SmallSignal,
    chain: &super::stages::Chain,
) -> Vec<Option<CapacitorRole>> {
    let ground = ac_ground_nodes(ss);
    let node = |net: usize| ss.net_node.get(net).copied().unwrap_or(0);
    let mut signal = vec![false; ss.circuit.node_count + 1];
    let mut mark = |n: Node| {
        if n != 0 && n < signal.len() {
            signal[n] = true;
        }
    };
    if let Some(s) = &chain.source {
        mark(node(s.input));
    }
    for st in &chain.stages {
        mark(node(st.input));
        mark(node(st.output));
    }
    if let Some(l) = &chain.load {
        mark(node(l.net));
        // A floating load's second net carries the signal too.
        if let Some(n) = l.other_net {
            mark(node(n));
        }
    }
    let on_ground = |n: Node| ground.get(n).copied().unwrap_or(false);
    let on_signal = |n: Node| signal.get(n).copied().unwrap_or(false);
    // Each transistor's (collector, base) and FET's (drain, gate) nodes.
    let across: Vec<(Node, Node)> = ss
        .transistors
        .iter()
        .map(|t| (t.nodes[0], t.nodes[1]))
        .chain(ss.fets.iter().map(|f| (f.nodes[0], f.nodes[1])))
        .collect();
    let compensation = |a: Node, b: Node| {
        across
            .iter()
            .any(|&(c, q)| (a, b) == (c, q) || (a, b) == (q, c))
    };
    ss.circuit
        .elements
        .iter()
        .map(|e| {
            let LinearKind::Capacitor(_) = e.kind else {
                return None;
            };
            Some(match (on_ground(e.a), on_ground(e.b)) {
                (false, false) if compensation(e.a, e.b) => CapacitorRole::Compensation,
                (false, false) => CapacitorRole::Coupling,
                (true, false) if on_signal(e.b) => CapacitorRole::Shunt,
                (false, true) if on_signal(e.a) => CapacitorRole::Shunt,
                _ => CapacitorRole::Bypass,
            })
        })
        .collect()
}

/// Capacitor parts that shunt the signal, and compensation capacitors
/// across a transistor, are not shorted at midband: they
/// become frequency-dependent elements like a device capacitance (open at
/// midband, 1/(jωC) in the sweep), and so also leave the low-corner
/// (short-circuit time constant) estimate, which is about coupling and
/// bypass capacitors only.
fn classify_capacitors(ss: &mut SmallSignal, chain: &super::stages::Chain) {
    let roles = capacitor_roles(ss, chain);
    for (e, role) in ss.circuit.elements.iter_mut().zip(roles) {
        if let (
            LinearKind::Capacitor(c),
            Some(CapacitorRole::Shunt | CapacitorRole::Compensation),
        ) = (e.kind, role)
        {
            e.kind = LinearKind::DeviceCapacitance(c);
        }
    }
}
