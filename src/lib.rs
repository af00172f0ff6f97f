//! Biasline: draw a transistor amplifier and see its bias, small-signal
//! models, stage figures and frequency response.
//!
//! Data flows one way: [`document`] → [`netlist`] → analysis → scene →
//! renderers. Nothing here depends on the GUI.

pub mod analysis;
pub mod cli;
pub mod document;
pub mod generate;
pub mod netlist;
pub mod presets;
pub mod spread;
pub mod symbols;
pub mod units;

#[cfg(feature = "gui")]
pub mod gui;
