//! Biasline: draw a transistor amplifier and see its bias, small-signal
//! models, stage figures and frequency response.
//!
//! Data flows one way: [`document`] → [`netlist`] → [`analysis`] →
//! [`results`] → [`scene`] → [`render`]. Nothing here depends on the GUI;
//! the command line belongs to the binary.
//!
//! What a user of the library needs is re-exported here:
//!
//! ```no_run
//! let doc = biasline::load_file(std::path::Path::new("projects/two-stage-preamp.json"))?;
//! let session = biasline::Session::new(&doc);
//! let op = session.operating_point().map_err(|e| e.to_string())?;
//! println!("{} nets solved in {} iterations", op.net_voltages.len(), op.iterations);
//! let json = session.analyze_json(std::path::Path::new("two-stage-preamp.json"));
//! println!("{}", json["small_signal"]["chain"]);
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```
//!
//! The solver internals (the circuit core `analysis::mna`, the per-kind
//! element models, the textbook estimates) are crate-private.

pub mod analysis;
pub mod design;
pub mod document;
pub mod generate;
pub mod layout;
pub mod netlist;
pub mod presets;
pub mod progress;
pub mod render;
pub mod report;
pub mod results;
pub mod scene;
pub mod spread;
pub mod symbols;
pub mod units;

pub use analysis::AnalysisError;
pub use document::{load_file, save_file, Document, LoadError, PartKind};
pub use results::Session;

/// The editor. Its edit, history and value modules are plain Rust and build
/// without the `gui` feature; the window itself needs it.
pub mod gui;
