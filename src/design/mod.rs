//! From targets to parts: preferred values and stage design.
//!
//! - [`eseries`]: the E-series of IEC 60063 as data, nearest / up / down,
//!   best pair.
//! - [`targets`]: what the designer asks for (supply, collector current,
//!   gain, Zin, load, low corner, β sensitivity) and its checks.
//! - [`layout`]: a stage (CE, CC, CB, CE→CC) as a drawn document on the grid.
//! - [`measure`]: the engine's own figures of a candidate (DC, small-signal,
//!   the exact low corner).
//! - [`guess`]: the textbook first guess (common practice).
//! - [`solve`]: Newton on the part values over the real analysis, then the
//!   coupling capacitors, then preferred values and re-analysis.
//! - `quiet`: `--ic low-noise`, the collector current from the noise what-if.
//! - [`fet`]: JFET stages (common source, source follower), self-biased,
//!   checked at the ends of the datasheet spread.
//! - [`snap`]: round every resistor and capacitor of any document to a series.
//! - [`report`]: targets against achieved, as text and JSON.
//!
//! Data flow stays one way: the solver only builds documents and calls the
//! analysis; nothing here draws or prints.

pub mod eseries;
pub mod fet;
pub mod fet_report;
pub mod guess;
pub mod layout;
pub mod line;
pub mod measure;
mod quiet;
pub mod report;
pub mod snap;
pub mod solve;
pub mod targets;

pub use solve::{design, Design, Stage};
pub use targets::{Targets, Topology};

use std::collections::BTreeMap;

/// Part values by designator (Ω for resistors, F for capacitors).
pub type Values = BTreeMap<String, f64>;

/// Why a design cannot be made: a message that says which target and why.
#[derive(Debug, Clone, PartialEq)]
pub struct DesignError(pub String);

impl std::fmt::Display for DesignError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for DesignError {}
