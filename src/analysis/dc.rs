//! DC operating point.
//!
//! CONTRACT (implemented in the DC work):
//! ```text
//! pub struct OperatingPoint {
//!     pub node_voltages: Vec<f64>,        // by circuit Node (index 0 = ground = 0 V)
//!     pub net_voltages: Vec<f64>,         // by NetId
//!     pub parts: Vec<PartOperatingPoint>, // by Document part index
//!     pub transistors: Vec<TransistorOperatingPoint>,
//!     pub diodes: Vec<DiodeOperatingPoint>,
//!     pub iterations: usize,
//!     pub aids: Vec<String>,              // plain words: "ramped the supplies up from zero"
//!     pub warnings: Vec<Finding>,         // designer warnings, each naming the part
//!     pub tellegen_residual: f64,         // Σ v·i over every branch (W)
//! }
//! pub struct PartOperatingPoint {
//!     pub designator: String,
//!     pub pin_currents: Vec<f64>,         // A, positive INTO the pin, pin_names() order
//!     pub power: f64,                     // W absorbed (negative: delivered)
//! }
//! pub struct TransistorOperatingPoint {
//!     pub part: usize, pub designator: String, pub polarity: Polarity,
//!     pub ic: f64, pub ib: f64, pub ie: f64,        // into the pins, A
//!     pub vbe: f64, pub vce: f64, pub vcb: f64,     // terminal, V
//!     pub vbe_intrinsic: f64, pub vbc_intrinsic: f64, // NPN sense, at the internal base
//!     pub region: Region,                   // ForwardActive | Saturation | CutOff | ReverseActive
//!     pub dc_current_gain: f64,             // hFE = IC/IB at this point
//!     pub saturation_margin: f64,           // VCE − VCE,sat (V, NPN sense)
//!     pub beta_sensitivity: f64,            // S = ∂IC/∂βF · βF/IC
//!     pub power: f64,
//! }
//! pub fn solve(doc: &Document, nl: &Netlist) -> Result<OperatingPoint, AnalysisError>;
//! pub fn solve_circuit(circuit: &Circuit) -> Result<OperatingPoint, AnalysisError>;
//! ```
