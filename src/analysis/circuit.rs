//! The circuit the solvers see: elements with node numbers, parameters
//! resolved (defaults ← preset ← part) and adjusted to the analysis
//! temperature.
//!
//! Node 0 is ground; nodes `1..=node_count` are unknowns: first every net
//! that touches a pin (in net order), then internal nodes (behind a
//! transistor's base resistance, "Q1.base'", or a diode's series
//! resistance, "D1.anode'"). A net that touches no pin is not part of the
//! circuit: it maps to node 0 (the rules check warns about it).
//!
//! Every element that fixes a voltage (voltage source, rail, signal source,
//! inductor at DC) owns one branch current unknown, numbered after the
//! nodes; see [`Circuit::branch_of`].

pub use super::elements::kinds::ElementKind;
use super::elements::kinds::{self, Building};
use super::AnalysisError;
use crate::document::{Document, PartKind};
use crate::netlist::{self, Netlist, Severity};
use crate::presets::{effective_parameters, keys};

pub type Node = usize;

#[derive(Debug, Clone, PartialEq)]
pub struct Circuit {
    /// Unknown nodes, numbered 1..=node_count.
    pub node_count: usize,
    /// By NetId; the ground net (and any net without pins) → 0.
    pub net_node: Vec<Node>,
    /// Index = node; internal nodes are named "Q1.base'".
    pub node_names: Vec<String>,
    pub elements: Vec<Element>,
    /// Ambient temperature of the analysis, K.
    pub kelvin: f64,
    /// Net names by NetId (for messages).
    pub net_names: Vec<String>,
    /// For every element, the index of its branch current unknown (0-based,
    /// so its row in the MNA system is `node_count + k`), if it has one.
    pub branch_of: Vec<Option<usize>>,
    /// Number of branch current unknowns.
    pub branch_count: usize,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Element {
    /// Index into Document::parts.
    pub part: usize,
    pub designator: String,
    pub kind: ElementKind,
    /// One per pin, `PartKind::pin_names()` order. A rail has one pin; its
    /// element carries a second node, 0, for the ground it is measured to.
    pub nodes: Vec<Node>,
    /// Internal nodes: a transistor's internal base, a diode's internal
    /// anode (only when the series resistance is above zero).
    pub internal_nodes: Vec<Node>,
    /// Power rating of a resistor (W), when the part gives one.
    pub power_rating: Option<f64>,
    /// Voltage rating of a capacitor (V), when the part gives one.
    pub voltage_rating: Option<f64>,
    /// A polarised capacitor (pins `positive`, `negative`).
    pub polarised: bool,
}

impl Circuit {
    /// The row/column of a node in the MNA system (`None` for ground).
    pub fn node_row(&self, node: Node) -> Option<usize> {
        node.checked_sub(1)
    }
    /// The row of a branch current unknown.
    pub fn branch_row(&self, branch: usize) -> usize {
        self.node_count + branch
    }
    /// Size of the MNA system.
    pub fn size(&self) -> usize {
        self.node_count + self.branch_count
    }
    /// Name of an unknown (node name or "current in X").
    pub fn unknown_name(&self, row: usize) -> String {
        if row < self.node_count {
            format!("net {}", self.node_names[row + 1])
        } else {
            let b = row - self.node_count;
            let e = self
                .branch_of
                .iter()
                .position(|x| *x == Some(b))
                .map(|i| self.elements[i].designator.clone())
                .unwrap_or_default();
            format!("the current in {e}")
        }
    }
}

/// Build the circuit of a document. Runs the rules check first: any error
/// there is returned as [`AnalysisError::Rules`].
pub fn build(doc: &Document, nl: &Netlist) -> Result<Circuit, AnalysisError> {
    let errors: Vec<_> = netlist::check(doc, nl)
        .into_iter()
        .filter(|f| f.severity == Severity::Error)
        .collect();
    if !errors.is_empty() {
        return Err(AnalysisError::Rules(errors));
    }
    build_unchecked(doc, nl)
}

/// Build without running the rules check (the caller vouches for it; the
/// solver still reports a singular system by naming nets and parts).
pub fn build_unchecked(doc: &Document, nl: &Netlist) -> Result<Circuit, AnalysisError> {
    let kelvin = doc.analysis.ambient_celsius + super::ZERO_CELSIUS;
    if !kelvin.is_finite() || kelvin <= 0.0 {
        return Err(AnalysisError::Singular {
            message: format!(
                "the ambient temperature {} °C is not a usable temperature: set \
                 analysis.ambient_celsius to a value above −273.15",
                doc.analysis.ambient_celsius
            ),
        });
    }
    let mut net_node = vec![0; nl.nets.len()];
    let mut node_names = vec![netlist::GROUND_NET.to_string()];
    for (id, net) in nl.nets.iter().enumerate() {
        let has_pins = net
            .pins
            .iter()
            .any(|p| doc.parts[p.part].kind != PartKind::Ground);
        if Some(id) == nl.ground || !has_pins {
            continue;
        }
        node_names.push(net.name.clone());
        net_node[id] = node_names.len() - 1;
    }
    let mut elements = Vec::new();
    for (pi, part) in doc.parts.iter().enumerate() {
        if part.kind == PartKind::Ground {
            continue;
        }
        let params = effective_parameters(part);
        let get = |k: &str| params.get(k).copied();
        let label = part.label();
        let mut nodes: Vec<Node> = nl.part_nets[pi].iter().map(|&n| net_node[n]).collect();
        let mut internal_nodes = Vec::new();
        let kind = kinds::element_kind(&mut Building {
            label: &label,
            kind: part.kind,
            params: &params,
            kelvin,
            nodes: &mut nodes,
            internal_nodes: &mut internal_nodes,
            node_names: &mut node_names,
        })?;
        for (k, v) in &params {
            if !v.is_finite()
                && k != keys::FORWARD_EARLY_VOLTAGE
                && k != keys::REVERSE_EARLY_VOLTAGE
                && k != keys::FORWARD_KNEE_CURRENT
                && k != keys::REVERSE_KNEE_CURRENT
            {
                return Err(AnalysisError::Singular {
                    message: format!("{}: {k} is not a finite number; set a value", part.label()),
                });
            }
        }
        elements.push(Element {
            part: pi,
            designator: part.label(),
            kind,
            nodes,
            internal_nodes,
            power_rating: get(keys::POWER_RATING),
            voltage_rating: get(keys::VOLTAGE_RATING),
            polarised: part.kind == PartKind::PolarisedCapacitor,
        });
    }
    let mut branch_count = 0;
    let branch_of = elements
        .iter()
        .map(|e| {
            e.kind.has_dc_branch().then(|| {
                branch_count += 1;
                branch_count - 1
            })
        })
        .collect();
    Ok(Circuit {
        node_count: node_names.len() - 1,
        net_node,
        node_names,
        elements,
        kelvin,
        net_names: nl.nets.iter().map(|n| n.name.clone()).collect(),
        branch_of,
        branch_count,
    })
}
