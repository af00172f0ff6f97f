//! The design report: one self-contained HTML file a reviewer reads in a
//! browser or prints, with every figure the program computes.
//!
//! One source of truth: every number in a table is read from the JSON the
//! commands print — `analyze --json` ([`crate::results::Session::analyze_json`]), `spread
//! --json` and the project file itself — gathered into one [`Context::root`]
//! object (`/analyze`, `/spread`, `/project`, `/transient`). Each numeric
//! cell names its value's JSON pointer (`data-json`) and carries the exact
//! value (`data-value`), so a test (or a reader) can check it against the
//! command's output. Figures are inline SVG drawn by the same renderers as
//! `export`, text in DejaVu Sans embedded once as CSS `@font-face` data.
//! Nothing is fetched: no external URL, no script. The same project gives
//! the same bytes (a timestamp only when asked).
//!
//! Files: [`gather`] runs the analyses, [`page`] holds the HTML helpers and
//! the print style, [`sections`] one file per section, [`histogram`] the
//! Monte Carlo histograms.

pub mod gather;
pub mod histogram;
pub mod page;
pub mod sections;

use crate::document::Document;
use crate::scene::{Annotations, LayerSet, ModelKind};
use std::path::Path;

/// Whether the spread section is computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum SpreadChoice {
    /// When the project has `spread` settings.
    #[default]
    WhenSet,
    /// Always (with the project's settings or the defaults: 1,000 runs).
    Always,
    /// Never.
    Never,
}

/// Choices for one report.
#[derive(Debug, Clone, PartialEq)]
pub struct Options {
    /// Layers of the annotated drawing.
    pub layers: LayerSet,
    /// The device model drawn in the stages' AC equivalents.
    pub model: ModelKind,
    pub spread: SpreadChoice,
    /// Monte Carlo runs (None: the project's setting).
    pub runs: Option<usize>,
    /// Seed of the draws (None: the project's setting).
    pub seed: Option<u64>,
    /// Worker threads of the Monte Carlo runs (0: all cores).
    pub threads: usize,
    /// Use the annotation positions stored in the document.
    pub use_stored_layout: bool,
    /// A date and time to print in the title block (None: none, so the same
    /// project gives the same bytes).
    pub timestamp: Option<String>,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            layers: LayerSet::standard(),
            model: ModelKind::T,
            spread: SpreadChoice::WhenSet,
            runs: None,
            seed: None,
            threads: 0,
            use_stored_layout: true,
            timestamp: None,
        }
    }
}

/// Everything the sections read.
pub struct Context<'a> {
    pub doc: &'a Document,
    pub opts: &'a Options,
    /// `{"analyze": …, "spread": … or null, "project": …, "transient": null}`.
    pub root: serde_json::Value,
    /// The file name as given, and the SHA-256 of its bytes (hex).
    pub file: String,
    pub sha256: String,
    /// Why the operating point could not be found (None: solved).
    pub not_solvable: Option<String>,
    /// Annotations of the drawing (voltages, currents, stage cards).
    pub annotations: Annotations,
    /// The noise densities across the sweep (for the plot).
    pub noise: Option<crate::results::noise::NoiseReport>,
    /// Per quantity, the Monte Carlo samples of the spread runs (run order).
    pub samples: Vec<(String, Vec<f64>)>,
    /// Why the spread section has no results (None: it ran or was not asked for).
    pub spread_error: Option<String>,
}

/// A finished report.
#[derive(Debug, Clone)]
pub struct Report {
    pub html: String,
    /// The operating point was found.
    pub solved: bool,
    /// Warnings and findings shown (rules-check and designer).
    pub warnings: usize,
    /// Why the operating point could not be found (None: solved).
    pub not_solvable: Option<String>,
    /// Why an asked-for spread section has no results (None: it ran or was
    /// not asked for).
    pub spread_error: Option<String>,
}

/// Analyse `doc` (read from `file`, whose bytes are `bytes`, for the hash)
/// and write the report.
pub fn build(doc: &Document, file: &Path, bytes: &[u8], opts: &Options) -> Result<Report, String> {
    let ctx = gather::gather(doc, file, bytes, opts)?;
    let html = page::document(&ctx);
    let warnings = ctx
        .root
        .pointer("/analyze/warnings")
        .and_then(|w| w.as_array())
        .map_or(0, |w| w.len());
    Ok(Report {
        html,
        solved: ctx.not_solvable.is_none(),
        warnings,
        not_solvable: ctx.not_solvable.clone(),
        spread_error: ctx.spread_error.clone(),
    })
}
