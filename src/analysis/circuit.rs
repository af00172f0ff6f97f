//! The circuit the solvers see: elements with node numbers, parameters
//! resolved (defaults ← preset ← part) and adjusted to the analysis temperature.
//!
//! CONTRACT (implemented in the DC work):
//! ```text
//! pub type Node = usize;            // 0 is ground
//! pub struct Circuit {
//!     pub node_count: usize,        // unknown nodes, numbered 1..=node_count
//!     pub net_node: Vec<Node>,      // by NetId; ground net → 0
//!     pub node_names: Vec<String>,  // index = node; internal nodes "Q1.base'"
//!     pub elements: Vec<Element>,
//!     pub kelvin: f64,              // ambient temperature of the analysis
//! }
//! pub struct Element {
//!     pub part: usize,              // index into Document::parts
//!     pub designator: String,
//!     pub kind: ElementKind,
//!     pub nodes: Vec<Node>,         // one per pin, PartKind::pin_names() order
//! }
//! pub enum ElementKind {
//!     Resistor { resistance: f64 },
//!     Capacitor { capacitance: f64 },
//!     Inductor { inductance: f64 },
//!     /// rails, DC sources and the signal source (dc = its DC offset, ac = amplitude)
//!     VoltageSource { dc: f64, ac: f64, is_signal: bool, is_rail: bool },
//!     CurrentSource { dc: f64 },
//!     Diode(devices::diode::DiodeModel),
//!     /// `internal_base` is the node behind the base resistance (== the base pin's node when rb = 0)
//!     Bjt { model: devices::bjt::BjtModel, internal_base: Node },
//! }
//! pub fn build(doc: &Document, nl: &Netlist) -> Result<Circuit, AnalysisError>;
//! ```
