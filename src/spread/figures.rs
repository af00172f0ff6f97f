//! The figures a spread run reports (the serde form is the JSON).

use super::stats::Summary;
use crate::document::Distribution;
use serde::Serialize;

/// Where a quantity lands at its worst corners.
#[derive(Debug, Clone, Serialize)]
pub struct WorstCase {
    pub min: f64,
    pub max: f64,
    /// The axis that moves the quantity most, and by how much (max − min of that axis alone).
    pub top_contributor: String,
    pub top_swing: f64,
}

/// ∂q/∂p and the normalised ∂q/∂p · p/q of one quantity against one variable.
#[derive(Debug, Clone, Serialize)]
pub struct Sensitivity {
    pub variable: String,
    pub derivative: f64,
    /// None where p or q is zero (a VBE shift has nominal 0).
    pub normalised: Option<f64>,
    /// |∂q/∂p| × half the variable's range: how far this part alone moves q.
    pub swing: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct QuantitySpread {
    pub name: String,
    pub nominal: f64,
    pub worst_case: Option<WorstCase>,
    /// Largest contributors first.
    pub sensitivities: Vec<Sensitivity>,
    pub monte_carlo: Option<Summary>,
    /// Monte Carlo boards that solved but have no value of this quantity.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub missing: Option<MissingRuns>,
}

/// How many solved boards lack a quantity, and why.
#[derive(Debug, Clone, Serialize)]
pub struct MissingRuns {
    /// Boards without a value.
    pub runs: usize,
    /// Boards that solved.
    pub of: usize,
    /// The reason the evaluator gave on the first such board (or "not computed").
    pub reason: String,
}

#[derive(Debug, Clone, Serialize)]
pub struct SpreadReport {
    pub variables: Vec<VariableInfo>,
    pub quantities: Vec<QuantitySpread>,
    pub runs: usize,
    pub failed_runs: usize,
    /// Fraction of runs in which a transistor left its forward-active region.
    pub left_active_fraction: f64,
    /// Fraction of runs inside every spec limit (None without limits).
    pub yield_fraction: Option<f64>,
    pub seed: u64,
    pub distribution: Distribution,
    /// Every worst-case corner that was solved.
    pub corner_solves: usize,
    /// Each spec limit: how often it was missed and what moves it most.
    pub limits: Vec<LimitResult>,
    /// Why the worst-case corners and sensitivities were left out, if they were.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub skipped: Option<String>,
}

#[derive(Debug, Clone, Serialize)]
pub struct LimitResult {
    pub quantity: String,
    pub min: Option<f64>,
    pub max: Option<f64>,
    /// Fraction of runs that missed this limit (a failed solve counts as a miss).
    pub miss_fraction: f64,
    /// The source of spread that moves the quantity most: the part to tighten.
    pub top_contributor: Option<String>,
    /// The worst-case range of the quantity, when it was solved.
    pub worst_case: Option<(f64, f64)>,
    /// A worst-case corner falls outside the limit.
    pub worst_case_misses: bool,
    /// Monte Carlo runs the miss fraction is taken over.
    pub runs: usize,
}

#[derive(Debug, Clone, Serialize)]
pub struct VariableInfo {
    pub name: String,
    #[serde(skip)]
    pub unit: super::report::VariableUnit,
    pub nominal: f64,
    pub low: f64,
    pub high: f64,
}
