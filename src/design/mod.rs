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
//!   checked at the ends of the datasheet spread; [`mos`]: the N-MOSFET
//!   common-source stage on a gate divider, checked at the ends of the
//!   VGS(th) spread; [`fet_device`]: what both know of their device.
//! - [`snap`]: round every resistor and capacitor of any document to a series.
//! - [`report`]: targets against achieved, as text and JSON.
//!
//! Data flow stays one way: the solver only builds documents and calls the
//! analysis; nothing here draws or prints.

pub mod eseries;
pub mod fet;
pub mod fet_device;
pub mod fet_report;
pub mod guess;
pub mod layout;
pub mod line;
pub mod measure;
pub mod mos;
mod quiet;
pub mod report;
pub mod snap;
pub mod solve;
pub mod targets;

pub use solve::{design, Design, Stage};
pub use targets::{Targets, Topology};

use std::collections::BTreeMap;

/// Every stage `design --stage` takes, one row each: the word typed and
/// what it designs. The editor's dialog and the refusal of an unknown stage
/// list them from here.
pub const STAGES: &[(&str, &str)] = &[
    ("ce", "common emitter"),
    ("cc", "common collector (emitter follower)"),
    ("cb", "common base"),
    ("ce-cc", "common emitter into an emitter follower"),
    ("jfet-cs", "JFET common source, self-biased"),
    ("jfet-sf", "JFET source follower, self-biased"),
    ("mos-cs", "N-MOSFET common source on a gate divider"),
];

/// The stage words joined for a hint: `ce|cc|…`.
pub fn stage_words(sep: &str) -> String {
    STAGES.iter().map(|s| s.0).collect::<Vec<_>>().join(sep)
}

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
