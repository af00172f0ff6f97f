//! What `biasline design` states beside the figures it solved for: the
//! output level the stage reaches at the load (against `--swing`) and the
//! yield of the design against its own targets at the chosen tolerances
//! (a spread run over the designed project's spread limits, against
//! `--yield`).

use crate::design::Design;
use crate::document::Document;
use crate::spread::{self, evaluate::Board};
use crate::units::{format as f, Unit};
use serde::Serialize;
use std::fmt::Write;

/// The output level at the load before the output stage clips.
#[derive(Debug, Clone, Serialize)]
pub struct SwingAtLoad {
    /// The transistor of the stage that drives the load.
    pub transistor: String,
    /// Peak output before clipping: the smaller of the two ways, V.
    pub peak: f64,
    /// "saturation" or "cut-off": the way it clips first.
    pub limited_by: &'static str,
    /// The `--swing` target, V peak.
    pub target: Option<f64>,
    /// The target is reached (true without a target).
    pub reached: bool,
}

/// The design's yield against its own targets.
#[derive(Debug, Clone, Serialize)]
pub struct DesignYield {
    /// Share of Monte Carlo boards inside every spread limit.
    pub fraction: f64,
    pub runs: usize,
    /// The `--yield` target.
    pub target: Option<f64>,
    pub met: bool,
    /// The limit missed most: quantity, share of boards missing it, and the
    /// source of spread that moves it most.
    pub most_missed: Option<(String, f64, Option<String>)>,
}

#[derive(Debug, Clone, Default, Serialize)]
pub struct DesignChecks {
    pub swing_at_load: Option<SwingAtLoad>,
    #[serde(rename = "yield")]
    pub design_yield: Option<DesignYield>,
    /// Why the yield was not computed.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub yield_error: Option<String>,
}

impl DesignChecks {
    /// A target that was asked for and is missed.
    pub fn missed(&self) -> bool {
        self.swing_at_load.as_ref().is_some_and(|s| !s.reached)
            || self.design_yield.as_ref().is_some_and(|y| !y.met)
    }
}

/// Swing and yield of the preferred-value design; `doc` is the designed
/// project with its spread limits set.
pub fn check(d: &Design, doc: &Document) -> DesignChecks {
    check_keeping(d, doc).0
}

/// [`check`], also handing back the Monte Carlo boards' figures (in run
/// order; empty when the yield could not be computed) for the yield search.
pub fn check_keeping(d: &Design, doc: &Document) -> (DesignChecks, Vec<spread::Outcome>) {
    let t = &d.targets;
    let swing_at_load = d.snapped.measured.as_ref().ok().and_then(|m| {
        let dev = m.devices.iter().rev().find(|x| x.swing.is_some())?;
        let (sat, cut) = dev.swing?;
        let (peak, limited_by) = if cut <= sat {
            (cut, "cut-off")
        } else {
            (sat, "saturation")
        };
        Some(SwingAtLoad {
            transistor: dev.designator.clone(),
            peak,
            limited_by,
            target: t.swing,
            reached: t.swing.is_none_or(|s| peak >= s),
        })
    });
    let opt = spread::Options {
        // The sensitivities (2 solves a source of spread) name the part
        // that moves the most-missed figure; the corners are not needed.
        worst_case: false,
        ..spread::Options::from_document(doc)
    };
    let mut boards = Vec::new();
    let (design_yield, yield_error) =
        match spread::run_keeping_outcomes(doc, &Board::new(doc), &opt) {
            Ok((rep, outcomes)) => {
                boards = outcomes.into_iter().filter_map(Result::ok).collect();
                let fraction = rep.yield_fraction.unwrap_or(1.0);
                let most_missed = rep
                    .limits
                    .iter()
                    .filter(|l| l.miss_fraction > 0.0)
                    .max_by(|a, b| a.miss_fraction.total_cmp(&b.miss_fraction))
                    .map(|l| {
                        (
                            l.quantity.clone(),
                            l.miss_fraction,
                            l.top_contributor.clone(),
                        )
                    });
                (
                    Some(DesignYield {
                        fraction,
                        runs: rep.runs,
                        target: t.yield_target,
                        met: t.yield_target.is_none_or(|y| fraction >= y),
                        most_missed,
                    }),
                    None,
                )
            }
            Err(e) => (None, Some(e)),
        };
    (
        DesignChecks {
            swing_at_load,
            design_yield,
            yield_error,
        },
        boards,
    )
}

/// The checks as lines of text.
pub fn text(c: &DesignChecks) -> String {
    let mut s = String::new();
    if let Some(w) = &c.swing_at_load {
        let _ = write!(
            s,
            "Output level at the load: {} peak before {} clips toward {}",
            f(w.peak, Unit::Volt),
            w.transistor,
            w.limited_by
        );
        match w.target {
            Some(target) if w.reached => {
                let _ = writeln!(
                    s,
                    "; meets the swing target of {} peak",
                    f(target, Unit::Volt)
                );
            }
            Some(target) => {
                let _ = writeln!(s);
                let _ = writeln!(
                    s,
                    "warning: the swing target of {} peak at the load is not reached ({} toward {}): \
                     raise the output stage's current{} or the load resistance, or lower the target",
                    f(target, Unit::Volt),
                    f(w.peak, Unit::Volt),
                    w.limited_by,
                    if w.transistor == "Q2" { " (--ic2)" } else { " (--ic)" }
                );
            }
            None => {
                let _ = writeln!(s, " (no swing target given: --swing)");
            }
        }
    }
    if let Some(y) = &c.design_yield {
        let _ = write!(
            s,
            "Yield against the design's own targets (gain ±1 dB, Zin ±20 %, VCE ≥ 1 V) at the \
             chosen tolerances: {:.1} % of {} boards",
            100.0 * y.fraction,
            y.runs
        );
        if let Some((q, miss, top)) = &y.most_missed {
            let _ = write!(
                s,
                "; {q} misses on {:.1} %, most from {}",
                100.0 * miss,
                top.as_deref().unwrap_or("no single part")
            );
        }
        let _ = writeln!(s);
        if let Some(target) = y.target {
            if y.met {
                let _ = writeln!(s, "meets the yield target of {:.1} %", 100.0 * target);
            } else {
                let _ = writeln!(
                    s,
                    "warning: this design cannot meet the yield target of {:.1} % ({:.1} %): \
                     tighten the tolerance of the part named above, choose a βF-stable bias \
                     (a lower --stability), or widen the targets",
                    100.0 * target,
                    100.0 * y.fraction
                );
            }
        }
    }
    if let Some(e) = &c.yield_error {
        let _ = writeln!(s, "yield not computed: {e}");
    }
    s
}
