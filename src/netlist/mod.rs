//! Connectivity: which pins touch which wires, and what each net is called.
//!
//! Pins, wire vertices and labels are nodes of a petgraph graph; edges join
//! wire segments, things at one grid point, points lying on another wire's
//! segment (a T-junction), labels of one name, and every ground symbol.
//! Two wires that merely cross, with no vertex at the crossing, do not join.

mod connections;
mod rules;
mod segments;
mod sheet_rules;

pub use connections::check_connections;
pub use rules::{check, Finding, Severity, Subject};

use crate::document::{Document, GridPoint, PartKind};
use crate::symbols;
use petgraph::graph::{NodeIndex, UnGraph};
use petgraph::unionfind::UnionFind;
use serde::Serialize;
use std::collections::{BTreeMap, HashMap};

/// Index of a net in [`Netlist::nets`].
pub type NetId = usize;

/// The name every ground symbol's net carries.
pub const GROUND_NET: &str = "ground";

/// One pin of one part.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PinRef {
    /// Index of the part in the document.
    #[serde(skip)]
    pub part: usize,
    pub designator: String,
    pub pin: &'static str,
    pub position: GridPoint,
}

impl PinRef {
    pub fn label(&self) -> String {
        format!("{}.{}", self.designator, self.pin)
    }
}

/// Where a net's name came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum NameSource {
    Ground,
    Label,
    Rail,
    Pin,
    /// A wire with nothing on it.
    Wire,
}

#[derive(Debug, Clone, Serialize)]
pub struct Net {
    pub name: String,
    pub named_by: NameSource,
    pub pins: Vec<PinRef>,
    /// Indices of wires in this net.
    pub wires: Vec<usize>,
    /// Indices of labels in this net.
    pub labels: Vec<usize>,
    /// Every other label name found on this net (a net should have one name).
    pub other_names: Vec<String>,
    /// Net names given to this net's pins by the parts' `connect` (one, when
    /// the file is consistent).
    #[serde(skip)]
    pub connected_names: Vec<String>,
}

impl Net {
    /// A grid point that belongs to the net (first pin, else first wire point).
    pub fn anchor(&self, doc: &Document) -> Option<GridPoint> {
        self.pins
            .first()
            .map(|p| p.position)
            .or_else(|| {
                self.wires
                    .first()
                    .and_then(|w| doc.wires[*w].points.first().copied())
            })
            .or_else(|| self.labels.first().map(|l| doc.labels[*l].position))
    }
}

/// The connectivity of a document.
#[derive(Debug, Clone, Serialize)]
pub struct Netlist {
    pub nets: Vec<Net>,
    /// For every part, the net of each pin in `PartKind::pin_names` order.
    #[serde(skip)]
    pub part_nets: Vec<Vec<NetId>>,
    #[serde(skip)]
    pub ground: Option<NetId>,
    /// Grid points where three or more connections meet (drawn as dots).
    pub junctions: Vec<GridPoint>,
}

impl Netlist {
    pub fn net_by_name(&self, name: &str) -> Option<NetId> {
        self.nets.iter().position(|n| n.name == name)
    }
    /// The net of a part's pin, by pin name.
    pub fn pin_net(&self, doc: &Document, part: usize, pin: &str) -> Option<NetId> {
        let i = doc.parts[part]
            .kind
            .pin_names()
            .iter()
            .position(|p| *p == pin)?;
        self.part_nets.get(part).and_then(|v| v.get(i)).copied()
    }
}

#[derive(Debug, Clone, Copy)]
enum Node {
    Pin { part: usize },
    WireVertex,
    Label(usize),
}

/// Sort key that orders R2 before R10.
fn natural_key(s: &str) -> (String, u64, String) {
    let split = s.find(|c: char| c.is_ascii_digit()).unwrap_or(s.len());
    let (head, rest) = s.split_at(split);
    let end = rest
        .find(|c: char| !c.is_ascii_digit())
        .unwrap_or(rest.len());
    let num = rest[..end].parse().unwrap_or(0);
    (head.to_string(), num, rest[end..].to_string())
}

/// The net a pin is given by name: its part's `connect` entry, else for an
/// unplaced rail the rail's own designator.
pub fn connection_name<'a>(part: &'a crate::document::Part, pin: &str) -> Option<&'a str> {
    part.connect.get(pin).map(String::as_str).or_else(|| {
        (part.kind == PartKind::Rail && !part.is_placed() && !part.designator.is_empty())
            .then_some(part.designator.as_str())
    })
}

/// Build the connectivity graph of a document and name its nets.
pub fn connect(doc: &Document) -> Netlist {
    let lib = symbols::library();
    let mut graph: UnGraph<Node, ()> = UnGraph::new_undirected();
    let mut at: HashMap<GridPoint, Vec<NodeIndex>> = HashMap::new();
    let mut pin_nodes: Vec<Vec<NodeIndex>> = Vec::with_capacity(doc.parts.len());
    let mut pin_pos: Vec<Vec<GridPoint>> = Vec::with_capacity(doc.parts.len());
    // Connection count at each point, for junction dots.
    let mut ends: HashMap<GridPoint, u32> = HashMap::new();

    for (pi, part) in doc.parts.iter().enumerate() {
        let mut nodes = Vec::new();
        let mut poss = Vec::new();
        let symbol = lib.get(part.symbol_name());
        let placed = part.is_placed();
        for name in part.kind.pin_names().iter() {
            let pos = symbol
                .filter(|_| placed)
                .and_then(|s| s.pin(name))
                .map(|p| symbols::pin_position(p, part.position, part.rotation, part.mirror))
                .unwrap_or(part.position);
            let n = graph.add_node(Node::Pin { part: pi });
            if placed {
                at.entry(pos).or_default().push(n);
                *ends.entry(pos).or_default() += 1;
            }
            nodes.push(n);
            poss.push(pos);
        }
        pin_nodes.push(nodes);
        pin_pos.push(poss);
    }

    // Wire vertices; segments indexed by row and column for the T-junction test.
    let mut horizontal: HashMap<i32, segments::Line> = HashMap::new();
    let mut vertical: HashMap<i32, segments::Line> = HashMap::new();
    // First vertex of each wire, by wire index (a wire without points, which
    // only an unfinished edit can hold, belongs to no net).
    let mut wire_first: Vec<(usize, NodeIndex)> = Vec::with_capacity(doc.wires.len());
    for (wi, wire) in doc.wires.iter().enumerate() {
        let mut prev: Option<(NodeIndex, GridPoint)> = None;
        for (k, &p) in wire.points.iter().enumerate() {
            let n = graph.add_node(Node::WireVertex);
            at.entry(p).or_default().push(n);
            if k == 0 {
                wire_first.push((wi, n));
            }
            let last = k + 1 == wire.points.len();
            *ends.entry(p).or_default() += if k == 0 || last { 1 } else { 2 };
            if let Some((pn, pp)) = prev {
                graph.add_edge(pn, n, ());
                if pp[1] == p[1] && pp[0] != p[0] {
                    horizontal
                        .entry(p[1])
                        .or_default()
                        .push(pp[0].min(p[0]), pp[0].max(p[0]), n);
                } else if pp[0] == p[0] && pp[1] != p[1] {
                    vertical
                        .entry(p[0])
                        .or_default()
                        .push(pp[1].min(p[1]), pp[1].max(p[1]), n);
                }
            }
            prev = Some((n, p));
        }
    }

    for (li, label) in doc.labels.iter().enumerate() {
        let n = graph.add_node(Node::Label(li));
        at.entry(label.position).or_default().push(n);
    }

    for line in horizontal.values_mut().chain(vertical.values_mut()) {
        line.finish();
    }
    // Everything at one point joins; a point inside a segment joins that segment.
    for (p, nodes) in &at {
        for w in nodes.windows(2) {
            graph.add_edge(w[0], w[1], ());
        }
        let mut on_segment = 0;
        let on_lines = [(horizontal.get(&p[1]), p[0]), (vertical.get(&p[0]), p[1])];
        for (line, along) in on_lines {
            for n in line.into_iter().flat_map(|l| l.inside(along)) {
                graph.add_edge(nodes[0], n, ());
                on_segment += 2;
            }
        }
        if on_segment > 0 {
            *ends.entry(*p).or_default() += on_segment;
        }
    }

    // Labels of one name join; every ground symbol is one net.
    let mut first_label: HashMap<&str, NodeIndex> = HashMap::new();
    let mut first_ground: Option<NodeIndex> = None;
    for n in graph.node_indices() {
        match graph[n] {
            Node::Label(li) => {
                let name = doc.labels[li].name.as_str();
                match first_label.get(name) {
                    Some(&m) => {
                        graph.add_edge(m, n, ());
                    }
                    None => {
                        first_label.insert(name, n);
                    }
                }
            }
            Node::Pin { part, .. } if doc.parts[part].kind == PartKind::Ground => {
                match first_ground {
                    Some(m) => {
                        graph.add_edge(m, n, ());
                    }
                    None => first_ground = Some(n),
                }
            }
            _ => {}
        }
    }

    // Pins given a net by name join every pin given that name; the name
    // "ground" joins the ground symbols.
    let mut by_name: HashMap<&str, NodeIndex> = HashMap::new();
    for (pi, part) in doc.parts.iter().enumerate() {
        for (k, pin) in part.kind.pin_names().iter().enumerate() {
            let Some(name) = connection_name(part, pin) else {
                continue;
            };
            let n = pin_nodes[pi][k];
            if name == GROUND_NET {
                match first_ground {
                    Some(m) => {
                        graph.add_edge(m, n, ());
                    }
                    None => first_ground = Some(n),
                }
                continue;
            }
            match by_name.get(name) {
                Some(&m) => {
                    graph.add_edge(m, n, ());
                }
                None => {
                    by_name.insert(name, n);
                }
            }
        }
    }

    // A name given by `connect` is the same net as a label of that name and
    // as a placed rail of that designator (a mixed file meets its drawing).
    if !by_name.is_empty() {
        let named: Vec<(NodeIndex, &str)> = graph
            .node_indices()
            .filter_map(|n| match graph[n] {
                Node::Label(li) => Some((n, doc.labels[li].name.as_str())),
                Node::Pin { part } if doc.parts[part].kind == PartKind::Rail => {
                    Some((n, doc.parts[part].designator.as_str()))
                }
                _ => None,
            })
            .collect();
        for (n, name) in named {
            if let Some(&m) = by_name.get(name) {
                graph.add_edge(m, n, ());
            }
        }
    }

    let mut uf = UnionFind::<usize>::new(graph.node_count());
    for e in graph.edge_indices() {
        let (a, b) = graph.edge_endpoints(e).expect("edge has ends");
        uf.union(a.index(), b.index());
    }

    // Components → nets, in a stable order (first node index of each).
    let mut comp_net: HashMap<usize, NetId> = HashMap::new();
    let mut nets: Vec<Net> = Vec::new();
    let mut net_of = |root: usize, nets: &mut Vec<Net>| -> NetId {
        *comp_net.entry(root).or_insert_with(|| {
            nets.push(Net {
                name: String::new(),
                named_by: NameSource::Wire,
                pins: Vec::new(),
                wires: Vec::new(),
                labels: Vec::new(),
                other_names: Vec::new(),
                connected_names: Vec::new(),
            });
            nets.len() - 1
        })
    };
    let mut part_nets = Vec::with_capacity(doc.parts.len());
    for (pi, nodes) in pin_nodes.iter().enumerate() {
        let mut v = Vec::with_capacity(nodes.len());
        for (k, n) in nodes.iter().enumerate() {
            let id = net_of(uf.find(n.index()), &mut nets);
            nets[id].pins.push(PinRef {
                part: pi,
                designator: doc.parts[pi].designator.clone(),
                pin: doc.parts[pi].kind.pin_names()[k],
                position: pin_pos[pi][k],
            });
            let pin = doc.parts[pi].kind.pin_names()[k];
            if let Some(name) = connection_name(&doc.parts[pi], pin) {
                if !nets[id].connected_names.iter().any(|n| n == name) {
                    nets[id].connected_names.push(name.to_string());
                }
            }
            v.push(id);
        }
        part_nets.push(v);
    }
    for &(wi, n) in &wire_first {
        let id = net_of(uf.find(n.index()), &mut nets);
        nets[id].wires.push(wi);
    }
    for n in graph.node_indices() {
        if let Node::Label(li) = graph[n] {
            let id = net_of(uf.find(n.index()), &mut nets);
            nets[id].labels.push(li);
        }
    }

    let ground = first_ground.map(|n| comp_net[&uf.find(n.index())]);
    name_nets(doc, &mut nets, ground);

    let mut junctions: Vec<GridPoint> = ends
        .into_iter()
        .filter(|(_, c)| *c >= 3)
        .map(|(p, _)| p)
        .collect();
    junctions.sort();

    Netlist {
        nets,
        part_nets,
        ground,
        junctions,
    }
}

fn name_nets(doc: &Document, nets: &mut [Net], ground: Option<NetId>) {
    for (id, net) in nets.iter_mut().enumerate() {
        let mut label_names: Vec<&str> = net
            .labels
            .iter()
            .map(|l| doc.labels[*l].name.as_str())
            .collect();
        label_names.extend(
            net.connected_names
                .iter()
                .map(String::as_str)
                .filter(|n| *n != GROUND_NET),
        );
        label_names.sort();
        label_names.dedup();
        let rails: Vec<&str> = net
            .pins
            .iter()
            .filter(|p| doc.parts[p.part].kind == PartKind::Rail)
            .map(|p| p.designator.as_str())
            .collect();
        let (name, source) = if Some(id) == ground {
            (GROUND_NET.to_string(), NameSource::Ground)
        } else if let Some(first) = label_names.first() {
            (first.to_string(), NameSource::Label)
        } else if let Some(r) = rails.iter().min_by_key(|d| natural_key(d)) {
            (r.to_string(), NameSource::Rail)
        } else if let Some(p) = net
            .pins
            .iter()
            .filter(|p| doc.parts[p.part].kind != PartKind::Ground)
            .min_by_key(|p| {
                let kind = doc.parts[p.part].kind;
                // Name a net after the pin a designer thinks of first.
                let rank = kind.info().naming_rank;
                let k = kind.pin_names();
                (
                    rank,
                    natural_key(&p.designator),
                    k.iter().position(|n| *n == p.pin),
                )
            })
        {
            (p.label(), NameSource::Pin)
        } else {
            (
                format!("wire{}", net.wires.first().map_or(0, |w| w + 1)),
                NameSource::Wire,
            )
        };
        net.other_names = label_names
            .iter()
            .filter(|n| **n != name)
            .map(|n| n.to_string())
            .collect();
        net.name = name;
        net.named_by = source;
    }
    // Names must be unique: a duplicate gets a suffix. The ground net keeps
    // "ground" and a name the user wrote (a label) wins over one made up from
    // a rail or pin; otherwise the later net in sheet order gets the suffix.
    let rank = |n: &Net| match n.named_by {
        NameSource::Ground => 0,
        NameSource::Label => 1,
        NameSource::Rail => 2,
        NameSource::Pin => 3,
        NameSource::Wire => 4,
    };
    let mut order: Vec<usize> = (0..nets.len()).collect();
    order.sort_by_key(|&i| (rank(&nets[i]), i));
    let mut seen: BTreeMap<String, usize> = BTreeMap::new();
    for i in order {
        let net = &mut nets[i];
        let count = seen.entry(net.name.clone()).or_insert(0);
        *count += 1;
        if *count > 1 {
            net.name = format!("{}#{}", net.name, count);
        }
    }
}
