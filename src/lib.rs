//! Biasline: draw a transistor amplifier and see its bias, small-signal
//! models, stage figures and frequency response.
//!
//! Data flows one way: [`document`] → [`netlist`] → analysis → scene →
//! renderers. Nothing here depends on the GUI.

pub mod analysis;
pub mod design;
pub mod document;
pub mod generate;
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

/// The editor. Its edit, history and value modules are plain Rust and build
/// without the `gui` feature; the window itself needs it.
pub mod gui;
