//! The clipping level: the signal-source amplitude at which the output's
//! THD reaches a limit (default 1 %), which transistor leaves the forward-
//! active region first there (and into which region), beside the small-
//! signal load-line estimate of the same level.
//!
//! Search: from the source's amplitude (or 1 mV) the amplitude doubles
//! until THD passes the limit, then the bracket is halved on a log scale
//! until it is within [`CLIP_RESOLUTION`]. Every trial runs
//! [`CLIP_PERIODS`] periods from the operating point.

use super::engine::TransientError;
use super::steady::{self, Distortion, SteadyOptions};
use crate::analysis::circuit::Circuit;
use crate::analysis::elements::{with_model, At, Model};
use crate::document::Document;
use crate::netlist::Netlist;
use serde::Serialize;

/// Default THD limit of the search (1 %).
pub const DEFAULT_THD_LIMIT: f64 = 0.01;
/// Periods each trial runs before its last one is measured.
pub const CLIP_PERIODS: usize = 20;
/// The search stops when the bracket's ratio is below 1 + this.
pub const CLIP_RESOLUTION: f64 = 0.01;
/// A transistor whose margin falls below this share of its mean counts
/// as reaching that edge.
pub const NEAR_EDGE: f64 = 0.5;
/// Largest amplitude tried, V.
pub const MAX_AMPLITUDE: f64 = 1000.0;

/// One transistor's excursion out of forward-active over the last period.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Excursion {
    pub transistor: String,
    /// `saturation`, `cut-off` or `reverse active`.
    pub region: String,
    /// Fraction of the period spent there.
    pub fraction: f64,
}

/// The result of the clip search.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Clip {
    pub thd_limit: f64,
    /// Source amplitude (peak, V) at which THD reaches the limit.
    pub amplitude: Option<f64>,
    /// THD measured at that amplitude.
    pub thd: Option<f64>,
    /// What limits first, in words: "Q2 enters saturation", "the supply" …
    pub limited_by: String,
    pub excursions: Vec<Excursion>,
    /// Every transistor's nearest approach to cut-off and saturation, nearest first.
    pub approaches: Vec<Approach>,
    /// The small-signal load-line estimate: source amplitude, stage, limit.
    pub estimate: Option<f64>,
    pub estimate_stage: Option<String>,
    pub estimate_limit: Option<String>,
    /// (search − estimate)/estimate, %.
    pub difference_percent: Option<f64>,
    pub trials: usize,
    /// The waveform at the clip amplitude.
    #[serde(skip)]
    pub at_clip: Option<Distortion>,
}

/// How close each transistor came to its limits over the samples: the
/// regions it visits, and its nearest approach (0 = at the edge), each said
/// in the transistor kind's home (`Model::excursions`).
fn excursions(c: &Circuit, states: &[Vec<f64>]) -> (Vec<Excursion>, Vec<Approach>) {
    let mut out = Vec::new();
    let mut near = Vec::new();
    for (k, e) in c.elements.iter().enumerate() {
        let at = At::new(c, k);
        with_model!(&e.kind, |m| m.excursions(&at, states, &mut out, &mut near));
    }
    out.sort_by(|a, b| b.fraction.total_cmp(&a.fraction));
    near.sort_by(|a, b| a.remaining.total_cmp(&b.remaining));
    (out, near)
}

/// A transistor's nearest approach to a region edge over the period:
/// `remaining` is the share of its mean margin left at the closest point
/// (cut-off: lowest collector current / mean; saturation: the base–
/// collector voltage's distance from conducting, lowest / mean).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Approach {
    pub transistor: String,
    pub region: String,
    pub remaining: f64,
}

/// The load-line estimate: the smallest source amplitude any stage's swing
/// estimate allows, with the stage and its limit.
fn estimate(doc: &Document, nl: &Netlist, c: &Circuit) -> Option<(f64, String, String)> {
    let op = crate::analysis::dc::solve_circuit(c).ok()?;
    let a = crate::analysis::small_signal::analyse(doc, nl, c, &op);
    a.midband
        .stages
        .iter()
        .filter_map(|s| {
            let sw = s.swing.as_ref()?;
            Some((
                sw.source_amplitude?,
                s.transistor.clone(),
                sw.limited_by.clone(),
            ))
        })
        .min_by(|a, b| a.0.total_cmp(&b.0))
}

/// Search the source amplitude at which the output's THD reaches `limit`.
pub fn search(
    doc: &Document,
    nl: &Netlist,
    c: &Circuit,
    limit: f64,
    keep_going: &mut dyn FnMut(f64) -> bool,
) -> Result<Clip, TransientError> {
    if !(limit.is_finite() && limit > 0.0 && limit < 1.0) {
        return Err(TransientError {
            message: format!(
                "the THD limit {limit} is not usable: give a fraction between 0 and 1 (1 % = 0.01)"
            ),
        });
    }
    let mut trials = 0;
    let mut trial = |a: f64, keep: &mut dyn FnMut(f64) -> bool| {
        trials += 1;
        let o = SteadyOptions {
            amplitude: Some(a),
            periods: Some(CLIP_PERIODS),
            // The search's trials step by the truncation error alone (a
            // bracket to 1 %, not a steady-state figure).
            steps_per_period: None,
            keep_states: true,
            ..SteadyOptions::default()
        };
        steady::distortion(doc, nl, c, &o, keep)
    };
    let start = source_amplitude(doc, c)
        .filter(|a| *a > 0.0)
        .unwrap_or(1e-3);
    let mut lo: Option<(f64, Distortion)> = None;
    let mut hi: Option<(f64, Distortion)> = None;
    let mut a = start;
    // Bracket.
    for _ in 0..40 {
        let d = trial(a, keep_going)?;
        if d.output.spectrum.thd >= limit {
            hi = Some((a, d));
            if lo.is_some() {
                break;
            }
            a *= 0.5;
            if a < 1e-9 {
                break;
            }
        } else {
            lo = Some((a, d));
            if hi.is_some() {
                break;
            }
            a *= 2.0;
            if a > MAX_AMPLITUDE {
                break;
            }
        }
    }
    // Beside a push-pull output the block's estimate replaces a single
    // stage's load line (which does not apply to one half).
    let pp = crate::analysis::blocks::push_pull_clip::reading(doc, nl, c);
    let est = match &pp {
        Some(p) => p.estimate.clone(),
        None => estimate(doc, nl, c),
    };
    let (estimate, estimate_stage, estimate_limit) = match &est {
        Some((a, s, l)) => (Some(*a), Some(s.clone()), Some(l.clone())),
        None => (None, None, None),
    };
    let (Some(mut low), Some(mut high)) = (lo, hi) else {
        return Ok(Clip {
            thd_limit: limit,
            amplitude: None,
            thd: None,
            limited_by: format!(
                "THD did not reach the limit between 1 nV and {MAX_AMPLITUDE} V of input"
            ),
            excursions: Vec::new(),
            approaches: Vec::new(),
            estimate,
            estimate_stage,
            estimate_limit,
            difference_percent: None,
            trials,
            at_clip: None,
        });
    };
    while high.0 / low.0 > 1.0 + CLIP_RESOLUTION {
        let mid = (low.0 * high.0).sqrt();
        let d = trial(mid, keep_going)?;
        if d.output.spectrum.thd >= limit {
            high = (mid, d);
        } else {
            low = (mid, d);
        }
    }
    // Interpolate THD (log–log) between the bracket's ends.
    let (t_lo, t_hi) = (low.1.output.spectrum.thd, high.1.output.spectrum.thd);
    let amplitude = if t_lo > 0.0 && t_hi > t_lo {
        let f = (limit.ln() - t_lo.ln()) / (t_hi.ln() - t_lo.ln());
        (low.0.ln() + f * (high.0.ln() - low.0.ln())).exp()
    } else {
        high.0
    };
    // The THD and waveform reported are those of the level found, not of
    // the bracket's upper trial (which lies up to CLIP_RESOLUTION above).
    let found = trial(amplitude, keep_going)?;
    let (ex, near) = excursions(c, &high.1.states);
    // One half of a push-pull output reaching cut-off is normal, no limit.
    let (ex, near) = match &pp {
        Some(p) => p.filter(ex, near),
        None => (ex, near),
    };
    let limited_by = match (ex.first(), near.first()) {
        (Some(e), _) => pp
            .as_ref()
            .and_then(|p| p.explain(&e.transistor, &e.region, "enters"))
            .unwrap_or_else(|| format!("{} enters {}", e.transistor, e.region)),
        (None, Some(a)) if a.remaining < NEAR_EDGE && pp.is_some() => pp
            .as_ref()
            .and_then(|p| p.explain(&a.transistor, &a.region, "approaches"))
            .unwrap_or_else(|| {
                format!(
                    "{} approaches {} (its margin falls to {:.0} % of its mean)",
                    a.transistor,
                    a.region,
                    100.0 * a.remaining
                )
            }),
        (None, Some(a)) if a.remaining < NEAR_EDGE => format!(
            "{} approaches {} (its margin falls to {:.0} % of its mean)",
            a.transistor,
            a.region,
            100.0 * a.remaining
        ),
        _ => {
            let who = curviest_stage(&high.1)
                .map(|t| format!("the curvature of the {t} stage"))
                .unwrap_or_else(|| "the transistors' own curvature".into());
            let nearest = near
                .first()
                .map(|a| {
                    format!(
                        "; nearest edge: {} toward {}, {:.0} % of its margin left",
                        a.transistor,
                        a.region,
                        100.0 * a.remaining
                    )
                })
                .unwrap_or_default();
            format!("{who} (no transistor comes near cut-off or saturation{nearest})")
        }
    };
    Ok(Clip {
        thd_limit: limit,
        amplitude: Some(amplitude),
        thd: Some(found.output.spectrum.thd),
        limited_by,
        excursions: ex,
        approaches: near,
        difference_percent: estimate.map(|e| (amplitude - e) / e * 100.0),
        estimate,
        estimate_stage,
        estimate_limit,
        trials,
        at_clip: Some(found),
    })
}

/// The sine amplitude a document's source gives.
fn source_amplitude(doc: &Document, c: &Circuit) -> Option<f64> {
    match steady::drive_of(doc, c).signal {
        Some((_, super::Wave::Sine { amplitude, .. })) => Some(amplitude),
        _ => None,
    }
}

/// The stage whose output THD grows most over its input's (chain order).
fn curviest_stage(d: &Distortion) -> Option<String> {
    let mut before = d.input.spectrum.thd;
    let mut best: Option<(f64, String)> = None;
    for s in &d.stages {
        let growth = s.spectrum.thd - before;
        before = s.spectrum.thd;
        if best.as_ref().is_none_or(|b| growth > b.0) {
            best = s.transistor.clone().map(|t| (growth, t));
        }
    }
    best.map(|b| b.1)
}
