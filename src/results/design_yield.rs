//! A yield target the design meets (issue 18, item 16): when the design
//! for the targets as given misses `--yield`, design again and measure
//! again, stopping at the first design that meets it.
//!
//! The limits stay the ones the targets as given make (gain ±1 dB, Zin
//! ±20 %, VCE ≥ 1 V); what changes is what the design aims at and how
//! stiff its bias is:
//! 1. aim the gain and Zin targets at the middle of the boards' spread: the
//!    Monte Carlo boards of the last design, each figure moved by one shift
//!    (Zin scaled by k, the gain moved by d dB), give the share inside the
//!    limits for every shift; the best shift (the smallest among equals)
//!    becomes the new aim (common practice, no source: centre the
//!    distribution in its window);
//! 2. when the design chose the collector current, the next lower choices
//!    (a lower IC lets RC rise, so the βF-dependent part of Zin grows against
//!    the bias divider's and Zin follows βF less), each re-aimed as in 1;
//! 3. stiffen the bias: the βF sensitivity S allowed halved, then halved
//!    again, each re-aimed;
//! 4. a finer resistor series (E48, then E96: 2 % and 1 % parts), re-aimed.
//!
//! Every candidate is a whole new design measured by the same spread run as
//! the first (same seed and runs), so the yield printed is what
//! `biasline spread` gives on the project written.

use super::design_checks::{check_keeping, DesignChecks};
use crate::design::{self, eseries, Design, Targets, Topology};
use crate::document::{Document, SpecLimit};
use crate::spread::Outcome;
use crate::units::{format as f, Unit};
use serde::Serialize;
use std::fmt::Write;

/// One design tried.
#[derive(Debug, Clone, Serialize)]
pub struct YieldStep {
    /// What differs from the design for the targets as given, in words.
    pub changed: String,
    /// The targets this design aimed at.
    pub gain_db: Option<f64>,
    pub input_impedance: Option<f64>,
    pub stability: f64,
    pub resistor_series: &'static str,
    /// Its yield (share of the Monte Carlo boards inside every limit).
    pub fraction: f64,
    pub met: bool,
}

/// The search: the yield before, every design tried, the one kept.
#[derive(Debug, Clone, Serialize)]
pub struct YieldSearch {
    pub target: f64,
    /// The yield of the design for the targets as given.
    pub before: f64,
    pub steps: Vec<YieldStep>,
    /// Index into `steps` of the design kept (the first that meets the
    /// target, else the best), `None` when no redesign did better.
    pub kept: Option<usize>,
    pub met: bool,
    /// The yield of the design kept.
    pub after: f64,
    /// When not met: the limit the kept design misses most, the share of
    /// boards missing it and the source of spread that moves it most.
    pub limited_by: Option<(String, f64, Option<String>)>,
}

/// A design tried: the design, its project, its checks.
struct Candidate {
    design: Design,
    document: Document,
    checks: DesignChecks,
}

/// The kept design, its project and checks, and the search.
pub struct Redesign {
    pub design: Design,
    pub document: Document,
    pub checks: DesignChecks,
    pub search: YieldSearch,
}

/// The share of `boards` (of `runs`) inside `limits` with every Zin scaled
/// by `k` and every gain moved by `db` (the source-to-load gain also by the
/// input fraction Zin/(Zin + RS) that the scaling changes).
fn shifted_yield(
    boards: &[Outcome],
    runs: usize,
    limits: &[SpecLimit],
    rs: f64,
    k: f64,
    db: f64,
) -> f64 {
    let get = |o: &Outcome, n: &str| o.values.iter().find(|(q, _)| q == n).map(|(_, v)| *v);
    let inside = boards
        .iter()
        .filter(|o| {
            let zin = get(o, "Zin(chain)");
            limits.iter().all(|l| {
                let v = get(o, &l.quantity).map(|v| match l.quantity.as_str() {
                    "Zin(chain)" => v * k,
                    "Avs_dB(chain)" => {
                        let frac =
                            zin.map_or(0.0, |z| 20.0 * ((k * (z + rs)) / (k * z + rs)).log10());
                        v + db + frac
                    }
                    _ => v,
                });
                v.is_some_and(|v| l.min.is_none_or(|m| v >= m) && l.max.is_none_or(|m| v <= m))
            })
        })
        .count();
    inside as f64 / runs.max(1) as f64
}

/// The shift (Zin factor, gain dB) that puts the most boards inside the
/// limits; among equals the smallest. `None` when no shift does better.
fn best_shift(
    boards: &[Outcome],
    runs: usize,
    limits: &[SpecLimit],
    rs: f64,
    has_gain: bool,
    has_zin: bool,
) -> Option<(f64, f64)> {
    let base = shifted_yield(boards, runs, limits, rs, 1.0, 0.0);
    let ks: Vec<f64> = if has_zin {
        (-40..=40).map(|i| (0.005 * i as f64).exp()).collect()
    } else {
        vec![1.0]
    };
    let dbs: Vec<f64> = if has_gain {
        (-18..=18).map(|i| 0.05 * i as f64).collect()
    } else {
        vec![0.0]
    };
    let mut best = (base, 0.0, 1.0, 0.0);
    for &k in &ks {
        for &db in &dbs {
            let y = shifted_yield(boards, runs, limits, rs, k, db);
            let size = k.ln().abs() + db.abs() / 20.0;
            if y > best.0 + 1e-12 || (y >= best.0 - 1e-12 && y > base && size < best.1) {
                best = (y, size, k, db);
            }
        }
    }
    (best.0 > base).then_some((best.2, best.3))
}

/// The designs to try, in order: the targets as given (already measured),
/// the collector current one choice lower at a time (only when the design
/// chose it: a lower IC lets RC rise, so the βF-dependent part of Zin grows
/// against the divider's), the βF sensitivity allowed halved twice, then a
/// finer resistor series. Each is re-aimed after it is measured.
fn configurations(original: &Targets, first: &Design) -> Vec<Targets> {
    let mut out = vec![original.clone()];
    if first.current_chosen {
        let ic = first.targets.ic();
        let mut pinned = original.clone();
        if original.topology == Topology::EmitterIntoFollower {
            // The follower keeps its current: only the gain stage's moves.
            pinned.follower_current = Some(first.targets.follower_current.unwrap_or(ic));
        }
        for lower in design::solve::CURRENT_CHOICES
            .iter()
            .copied()
            .filter(|&c| c < ic * (1.0 - 1e-9))
            .take(3)
        {
            let mut t = pinned.clone();
            t.collector_current = Some(lower);
            out.push(t);
        }
    }
    for k in [0.5, 0.25] {
        let mut t = original.clone();
        t.stability = original.stability * k;
        out.push(t);
    }
    for name in ["E48", "E96"] {
        if let Some(s) = eseries::find(name) {
            if s.len() > original.resistor_series.len() {
                let mut t = original.clone();
                t.resistor_series = s;
                out.push(t);
            }
        }
    }
    out
}

fn describe(original: &Targets, first: &Design, t: &Targets) -> String {
    let mut parts = Vec::new();
    if original.collector_current.is_none() {
        if let Some(ic) = t.collector_current {
            parts.push(format!(
                "IC(Q1) {} (the design chose {})",
                f(ic, Unit::Ampere),
                f(first.targets.ic(), Unit::Ampere)
            ));
        }
    }
    if let (Some(a), Some(b)) = (original.gain_db, t.gain_db) {
        if (a - b).abs() > 1e-9 {
            parts.push(format!("gain aimed at {b:.2} dB (asked {a:.2} dB)"));
        }
    }
    if let (Some(a), Some(b)) = (original.input_impedance, t.input_impedance) {
        if (b / a - 1.0).abs() > 1e-9 {
            parts.push(format!(
                "Zin aimed at {} (asked {})",
                f(b, Unit::Ohm),
                f(a, Unit::Ohm)
            ));
        }
    }
    if (t.stability - original.stability).abs() > 1e-12 {
        parts.push(format!(
            "S ≤ {} (asked {})",
            crate::units::echo(t.stability),
            crate::units::echo(original.stability)
        ));
    }
    if t.resistor_series.name != original.resistor_series.name {
        parts.push(format!(
            "resistors {} ({} % parts, asked {})",
            t.resistor_series.name,
            100.0 * design::layout::series_tolerance(t.resistor_series.name),
            original.resistor_series.name
        ));
    }
    if parts.is_empty() {
        "nothing".into()
    } else {
        parts.join(", ")
    }
}

/// When the design for `original` (`first`, written as `first_doc`, with
/// its checks and Monte Carlo `boards` from `check_keeping`) misses its
/// `--yield`, design again as the module says. `document_of` turns a design
/// into the project written (its spread limits those of `original`).
/// `None` when no yield target was given, it is met, or the yield could not
/// be computed.
pub fn meet_yield(
    original: &Targets,
    first: &Design,
    first_doc: &Document,
    first_checks: &DesignChecks,
    boards: &[Outcome],
    document_of: &dyn Fn(&Design) -> Document,
) -> Option<Redesign> {
    let target = original.yield_target?;
    let (doc, checks) = (first_doc.clone(), first_checks.clone());
    let y = checks.design_yield.as_ref()?;
    if y.met {
        return None;
    }
    let (before, runs) = (y.fraction, y.runs);
    let limits = doc.spread.limits.clone();
    let rs = original.source_resistance;
    let mut steps: Vec<YieldStep> = Vec::new();
    let mut best: Option<(f64, usize, Candidate)> = None;
    let configs = configurations(original, first);
    'configs: for (ci, mut t) in configs.into_iter().enumerate() {
        // The first configuration is the design already measured.
        let (mut last_boards, mut last_yield) = if ci == 0 {
            (boards.to_vec(), before)
        } else {
            match try_design(&t, document_of) {
                Some(r) => {
                    let fr = r.0.checks.design_yield.as_ref().map_or(0.0, |y| y.fraction);
                    let out = (r.1.clone(), fr);
                    record(original, first, &t, r.0, fr, target, &mut steps, &mut best);
                    if fr >= target {
                        break 'configs;
                    }
                    out
                }
                None => continue,
            }
        };
        // Re-aim twice: the second from the first re-aimed design's boards.
        for _ in 0..2 {
            let Some((k, db)) = best_shift(
                &last_boards,
                runs,
                &limits,
                rs,
                t.gain_db.is_some(),
                t.input_impedance.is_some(),
            ) else {
                break;
            };
            t.input_impedance = t.input_impedance.map(|z| z * k);
            t.gain_db = t.gain_db.map(|g| g + db);
            let Some(r) = try_design(&t, document_of) else {
                break;
            };
            let fr = r.0.checks.design_yield.as_ref().map_or(0.0, |y| y.fraction);
            let improved = fr > last_yield;
            last_boards = r.1.clone();
            last_yield = fr;
            record(original, first, &t, r.0, fr, target, &mut steps, &mut best);
            if fr >= target {
                break 'configs;
            }
            if !improved {
                break;
            }
        }
    }
    let (kept, redesign) = match best {
        Some((fr, i, r)) if fr > before => (Some(i), Some(r)),
        _ => (None, None),
    };
    let (design, document, checks) = match redesign {
        Some(r) => (r.design, r.document, r.checks),
        None => (first.clone(), doc, checks),
    };
    let after = checks.design_yield.as_ref().map_or(before, |y| y.fraction);
    let met = after >= target;
    let limited_by = if met {
        None
    } else {
        checks
            .design_yield
            .as_ref()
            .and_then(|y| y.most_missed.clone())
    };
    Some(Redesign {
        design,
        document,
        checks,
        search: YieldSearch {
            target,
            before,
            steps,
            kept,
            met,
            after,
            limited_by,
        },
    })
}

/// Design `t`, write it as the original targets' project and measure its yield; the
/// boards for the next re-aim. `None` when it cannot be designed.
fn try_design(
    t: &Targets,
    document_of: &dyn Fn(&Design) -> Document,
) -> Option<(Candidate, Vec<Outcome>)> {
    let d = design::design(t).ok()?;
    d.snapped.measured.as_ref().ok()?;
    let doc = document_of(&d);
    let (checks, boards) = check_keeping(&d, &doc);
    checks.design_yield.as_ref()?;
    Some((
        Candidate {
            design: d,
            document: doc,
            checks,
        },
        boards,
    ))
}

#[allow(clippy::too_many_arguments)]
fn record(
    original: &Targets,
    first: &Design,
    t: &Targets,
    r: Candidate,
    fraction: f64,
    target: f64,
    steps: &mut Vec<YieldStep>,
    best: &mut Option<(f64, usize, Candidate)>,
) {
    steps.push(YieldStep {
        changed: describe(original, first, t),
        gain_db: t.gain_db,
        input_impedance: t.input_impedance,
        stability: t.stability,
        resistor_series: t.resistor_series.name,
        fraction,
        met: fraction >= target,
    });
    let i = steps.len() - 1;
    if best.as_ref().is_none_or(|b| fraction > b.0) {
        *best = Some((fraction, i, r));
    }
}

/// The search as lines of text: the yield before and after and what changed.
pub fn text(s: &YieldSearch) -> String {
    let mut o = String::new();
    let _ = writeln!(
        o,
        "\nYield search: the design for the targets as given reaches {:.1} %, below the \
         target of {:.1} %; designed again against the same limits:",
        100.0 * s.before,
        100.0 * s.target
    );
    for (i, st) in s.steps.iter().enumerate() {
        let _ = writeln!(
            o,
            "  {}. {}: {:.1} %{}",
            i + 1,
            st.changed,
            100.0 * st.fraction,
            if Some(i) == s.kept { "  ← kept" } else { "" }
        );
    }
    match s.kept {
        Some(i) if s.met => {
            let _ = writeln!(
                o,
                "Meets the yield target: {:.1} % before, {:.1} % after; changed: {}. The design \
                 above is that one.",
                100.0 * s.before,
                100.0 * s.after,
                s.steps[i].changed
            );
        }
        _ => {
            let _ = write!(
                o,
                "warning: no design tried meets the yield target of {:.1} %: the best reaches \
                 {:.1} % (before: {:.1} %)",
                100.0 * s.target,
                100.0 * s.after,
                100.0 * s.before
            );
            if let Some(i) = s.kept {
                let _ = write!(
                    o,
                    " with {}; the design above is that one",
                    s.steps[i].changed
                );
            }
            if let Some((q, miss, top)) = &s.limited_by {
                let _ = write!(
                    o,
                    ". What limits it: {q} misses on {:.1} % of boards, most from {}",
                    100.0 * miss,
                    top.as_deref().unwrap_or("no single part")
                );
            }
            let through_beta = s
                .limited_by
                .as_ref()
                .and_then(|l| l.2.as_deref())
                .is_some_and(|t| t.starts_with("βF"));
            let _ = writeln!(
                o,
                ". {}, widen the targets, or lower the yield asked.",
                if through_beta {
                    "Choose a transistor with a narrower βF grade (its datasheet's hFE \
                     minimum and maximum), add a stage"
                } else {
                    "Tighten that part's tolerance"
                }
            );
        }
    }
    o
}

/// The search under `"yield_search"` in the design's JSON.
pub fn add_to_json(v: &mut serde_json::Value, s: &YieldSearch) {
    if let Some(o) = v.as_object_mut() {
        o.insert(
            "yield_search".into(),
            serde_json::to_value(s).unwrap_or(serde_json::Value::Null),
        );
    }
}
