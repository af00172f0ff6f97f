//! The one place that decides what a document's findings are: the rules
//! check, then (when the rules allow it) the operating point with its
//! designer warnings and the safety caution. Every command reports this set
//! and takes its exit code from it, so `check`, `analyze`, `sweep`, `noise`
//! and `spread` never disagree about one file.

use super::dc::{self, OperatingPoint};
use super::AnalysisError;
use crate::document::Document;
use crate::netlist::{self, Finding, Netlist, Severity};

/// The findings of one document.
#[derive(Debug, Clone)]
pub struct Assessment {
    /// Everything the rules check found (errors first).
    pub rules: Vec<Finding>,
    /// The operating point, or why there is none (rules errors included).
    pub operating_point: Result<OperatingPoint, AnalysisError>,
}

/// How a command should end, before its own concerns are added.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum Verdict {
    /// No findings, no warnings.
    Clean,
    /// Solved, with warnings (rules warnings, designer warnings, the safety caution).
    Warnings,
    /// Rules errors or no operating point: an analysis cannot proceed.
    Unsolved,
}

impl Assessment {
    /// Rules check and operating point of `doc`.
    pub fn of(doc: &Document, nl: &Netlist) -> Self {
        let rules = netlist::check(doc, nl);
        let operating_point = if rules.iter().any(|f| f.severity == Severity::Error) {
            Err(AnalysisError::Rules(
                rules
                    .iter()
                    .filter(|f| f.severity == Severity::Error)
                    .cloned()
                    .collect(),
            ))
        } else {
            dc::solve(doc, nl)
        };
        Assessment {
            rules,
            operating_point,
        }
    }

    /// Rules errors.
    pub fn errors(&self) -> impl Iterator<Item = &Finding> {
        self.rules.iter().filter(|f| f.severity == Severity::Error)
    }

    /// The warnings every command shows: rules warnings, then the designer
    /// warnings and safety caution of the operating point.
    pub fn warnings(&self) -> Vec<&Finding> {
        let op = self
            .operating_point
            .as_ref()
            .map(|op| op.warnings.iter())
            .into_iter()
            .flatten();
        self.rules
            .iter()
            .filter(|f| f.severity == Severity::Warning)
            .chain(op)
            .collect()
    }

    pub fn verdict(&self) -> Verdict {
        if self.operating_point.is_err() {
            Verdict::Unsolved
        } else if self.warnings().is_empty() {
            Verdict::Clean
        } else {
            Verdict::Warnings
        }
    }
}
