//! The results layer: one [`Session`] per document runs the analysis chain
//! once — netlist, assessment (rules check, operating point, warnings),
//! small-signal models and stages, the response, the noise report — and
//! every reader takes its figures from it: the command line, the design
//! report, the export, the editor.
//!
//! Invariants (checked by `tests/suite/architecture.rs`):
//! - only this layer knows the JSON schema of the commands
//!   (docs/analyze-json.md): [`analyze`], [`small_signal`], [`noise`],
//!   [`transient`];
//! - only this layer turns analysis results into the scene's plain data
//!   ([`annotations`], [`stage_cards`], [`layers`]): the scene runs no
//!   analysis and reads no analysis type;
//! - nothing here draws, prints or parses arguments.

pub mod analyze;
pub mod annotations;
pub mod design;
pub mod design_checks;
pub mod design_fet;
pub mod design_yield;
pub mod export;
pub mod feedback_topology;
pub mod fit;
pub mod layers;
pub mod loop_tags;
pub mod noise;
pub mod plots;
pub mod push_pull;
pub mod small_signal;
pub mod spread;
pub mod stability;
pub mod stage_cards;
pub mod transient;

use crate::analysis::ac::FrequencyResponse;
use crate::analysis::assess::{Assessment, Verdict};
use crate::analysis::dc::OperatingPoint;
use crate::analysis::noise::NoiseReport;
use crate::analysis::small_signal::Analysis;
use crate::analysis::AnalysisError;
use crate::document::Document;
use crate::netlist::{self, Finding, Netlist, Severity};
use crate::scene::Annotations;
use std::path::Path;
use std::sync::OnceLock;

/// The DC voltage between two nets above which the safety caution is shown.
pub use crate::analysis::dc::SAFETY_LIMIT_VOLTS;
pub use annotations::{annotations_for, annotations_from_dc, annotations_from_failure};

/// The analysis chain of one document, each step run once, on first ask.
pub struct Session<'d> {
    pub doc: &'d Document,
    pub netlist: Netlist,
    /// Rules check and operating point (the findings of every command).
    pub assessment: Assessment,
    small: OnceLock<Result<Analysis, String>>,
    response: OnceLock<FrequencyResponse>,
    noise: OnceLock<Result<NoiseReport, AnalysisError>>,
}

impl<'d> Session<'d> {
    /// Connect the document and assess it (rules check, then the operating
    /// point). Everything else is computed when first asked for.
    pub fn new(doc: &'d Document) -> Self {
        let netlist = netlist::connect(doc);
        let assessment = Assessment::of(doc, &netlist);
        Session {
            doc,
            netlist,
            assessment,
            small: OnceLock::new(),
            response: OnceLock::new(),
            noise: OnceLock::new(),
        }
    }

    /// The operating point, or why there is none.
    pub fn operating_point(&self) -> Result<&OperatingPoint, &AnalysisError> {
        self.assessment.operating_point.as_ref()
    }

    /// How a command ends before its own concerns are added.
    pub fn verdict(&self) -> Verdict {
        self.assessment.verdict()
    }

    /// The rules check's warnings (its errors leave no operating point).
    pub fn rule_warnings(&self) -> Vec<Finding> {
        self.assessment
            .rules
            .iter()
            .filter(|f| f.severity == Severity::Warning)
            .cloned()
            .collect()
    }

    /// Small-signal models, stages and midband figures at the operating
    /// point; `None` when there is no operating point.
    pub fn small_signal(&self) -> Option<&Result<Analysis, String>> {
        let op = self.operating_point().ok()?;
        Some(
            self.small
                .get_or_init(|| small_signal::analysis(self.doc, &self.netlist, op)),
        )
    }

    /// The small-signal analysis with its swept response, when both can be had.
    pub fn small_signal_and_response(&self) -> Option<(&Analysis, &FrequencyResponse)> {
        let a = self.small_signal()?.as_ref().ok()?;
        Some((
            a,
            self.response
                .get_or_init(|| small_signal::response(self.doc, a)),
        ))
    }

    /// The noise report of `analyze` (audio band, spot at 1 kHz).
    pub fn noise(&self) -> &Result<NoiseReport, AnalysisError> {
        self.noise.get_or_init(|| noise::analyze_report(self.doc))
    }

    /// What `analyze --json` prints: the whole object of a solved document,
    /// or the failure object.
    pub fn analyze_json(&self, file: &Path) -> serde_json::Value {
        match self.operating_point() {
            Ok(op) => analyze::full_json(
                self.doc,
                &self.netlist,
                op,
                &self.rule_warnings(),
                self.small_signal_and_response(),
                noise::json_of(self.noise()),
                file,
            ),
            Err(e) => analyze::failure_json(e, file),
        }
    }

    /// The drawing's plain data: voltages, currents, stage cards and the
    /// title block (what [`annotations_for`] gives, from this session's
    /// results).
    pub fn annotations(&self) -> Annotations {
        annotations::from_session(self)
    }

    /// The spread run (worst case, sensitivities, Monte Carlo) with, for
    /// each quantity, its value on every board that solved (the report's
    /// histograms).
    pub fn spread_with_samples(&self, opts: &spread::Options) -> spread::WithSamples {
        spread::run_with_samples(self.doc, opts)
    }

    /// The source's sine run to steady state, as `transient --json` prints it;
    /// null when the project has no signal source or the run does not finish
    /// (the `transient` command says why).
    pub fn steady_json(&self) -> serde_json::Value {
        transient::steady_json_of(self.doc, &self.netlist)
    }
}
