//! Design spread: how every quantity moves over part tolerances, β spread and
//! temperature — worst-case corners, sensitivities and Monte Carlo.
//!
//! The analysis to spread is any [`Evaluator`]: a function from a document
//! (one board, with its part values drawn) to named quantities. The shipped
//! evaluator ([`evaluate::Board`]) runs the DC operating point and the
//! midband stage figures; tests use closed-form evaluators too.
//!
//! Random inputs are "axes" in [−1, 1]: an unmatched variable has one axis;
//! the parts of a matched group share a common axis and each keeps a small
//! axis of its own (weight `mismatch`). An axis value u maps to the variable's
//! range piecewise-linearly: −1 → low, 0 → nominal, +1 → high.

pub mod evaluate;
pub mod figures;
pub mod report;
pub mod rng;
pub mod stats;
pub mod variables;

use crate::document::{Distribution, Document};
pub use figures::*;
use rayon::prelude::*;
use stats::Summary;
pub use variables::{collect, Target, Variable};

/// One board's figures.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Outcome {
    /// Named quantities, e.g. `V(Q1.collector)`, `IC(Q1)`, `Av(chain)`.
    pub values: Vec<(String, f64)>,
    /// Every transistor in its forward-active region.
    pub all_active: bool,
    /// Quantities this board has no value for, and why (a corner that
    /// does not exist, say).
    pub missing: Vec<(String, String)>,
}

/// The analysis under spread.
pub trait Evaluator: Sync {
    fn evaluate(&self, doc: &Document) -> Result<Outcome, String>;
}

impl<F> Evaluator for F
where
    F: Fn(&Document) -> Result<Outcome, String> + Sync,
{
    fn evaluate(&self, doc: &Document) -> Result<Outcome, String> {
        self(doc)
    }
}

/// An independent random input and the variables it moves.
#[derive(Debug, Clone, PartialEq)]
pub struct Axis {
    pub name: String,
    /// (variable index, weight)
    pub moves: Vec<(usize, f64)>,
}

/// Build the axes of a set of variables, honouring matched groups.
pub fn axes(doc: &Document, vars: &[Variable]) -> Vec<Axis> {
    let mut out = Vec::new();
    let class = |v: &Variable| match &v.target {
        Target::Parameter { key, .. } => key.to_string(),
        Target::VbeShift { .. } => "vbe".to_string(),
        Target::Ambient => "ambient".to_string(),
    };
    let mut done = vec![false; vars.len()];
    for (i, v) in vars.iter().enumerate() {
        if done[i] {
            continue;
        }
        match v.group {
            None => {
                out.push(Axis {
                    name: v.name.clone(),
                    moves: vec![(i, 1.0)],
                });
                done[i] = true;
            }
            Some(g) => {
                let k = doc.spread.matched[g].mismatch.clamp(0.0, 1.0);
                let members: Vec<usize> = (i..vars.len())
                    .filter(|&j| vars[j].group == Some(g) && class(&vars[j]) == class(v))
                    .collect();
                let names: Vec<&str> = members.iter().map(|&j| vars[j].name.as_str()).collect();
                out.push(Axis {
                    name: format!("matched {}", names.join("+")),
                    moves: members.iter().map(|&j| (j, 1.0 - k)).collect(),
                });
                if k > 0.0 {
                    for &j in &members {
                        out.push(Axis {
                            name: format!("{} (mismatch)", vars[j].name),
                            moves: vec![(j, k)],
                        });
                    }
                }
                for &j in &members {
                    done[j] = true;
                }
            }
        }
    }
    out
}

/// Variable values for given axis values.
pub fn values_at(vars: &[Variable], axes: &[Axis], u: &[f64]) -> Vec<f64> {
    let mut w = vec![0.0; vars.len()];
    for (a, &x) in axes.iter().zip(u) {
        for &(i, weight) in &a.moves {
            w[i] += weight * x;
        }
    }
    vars.iter()
        .zip(w)
        .map(|(v, x)| {
            let x = x.clamp(-1.0, 1.0);
            if x >= 0.0 {
                v.nominal + x * (v.high - v.nominal)
            } else {
                v.nominal + x * (v.nominal - v.low)
            }
        })
        .collect()
}

/// Options of a spread run.
#[derive(Debug, Clone)]
pub struct Options {
    pub runs: usize,
    pub seed: u64,
    /// Threads for Monte Carlo (0: all cores).
    pub threads: usize,
    pub worst_case: bool,
    pub sensitivities: bool,
    /// Counts the solves and carries the stop flag (Ctrl-C on the command line).
    pub progress: crate::progress::Progress,
    /// Most solves the worst-case corners and sensitivities may take
    /// together (4 per variable + 2 per quantity); a larger board gets
    /// Monte Carlo only, and the report says so.
    pub max_corner_solves: usize,
}

/// The default bound on worst-case and sensitivity solves: 2,000 (a board
/// of about 300 parts; the demos need under 300).
pub const MAX_CORNER_SOLVES: usize = 2_000;

impl Options {
    pub fn from_document(doc: &Document) -> Self {
        Options {
            runs: doc.spread.runs,
            seed: doc.spread.seed,
            threads: 0,
            worst_case: true,
            sensitivities: true,
            progress: crate::progress::Progress::default(),
            max_corner_solves: MAX_CORNER_SOLVES,
        }
    }
}

/// A quantity's value in an outcome. Every board of one evaluator lists its
/// quantities in the same order, so `at` (the nominal's index) is tried
/// first: O(1) instead of a search of every name (which made a run on a
/// board with thousands of quantities quadratic).
fn lookup_at(o: &Outcome, name: &str, at: usize) -> Option<f64> {
    match o.values.get(at) {
        Some((n, v)) if n == name => Some(*v),
        _ => lookup(o, name),
    }
}

fn lookup(o: &Outcome, name: &str) -> Option<f64> {
    o.values.iter().find(|(n, _)| n == name).map(|(_, v)| *v)
}

fn stopped(e: crate::progress::Stopped) -> String {
    e.to_string()
}

/// Worst-case corners: each axis alone at −1 and +1 gives the direction it
/// pushes each quantity; the corner with every axis pushing one way is then
/// solved to confirm the minimum and maximum.
pub fn worst_case(
    doc: &Document,
    vars: &[Variable],
    axes: &[Axis],
    nominal: &Outcome,
    eval: &dyn Evaluator,
    progress: &crate::progress::Progress,
) -> Result<(Vec<Option<WorstCase>>, usize), String> {
    let n = axes.len();
    progress.stage("worst-case corners", 2 * n + 2 * nominal.values.len());
    let mut low = Vec::with_capacity(n);
    let mut high = Vec::with_capacity(n);
    let mut solves = 0;
    for k in 0..n {
        let mut u = vec![0.0; n];
        u[k] = -1.0;
        low.push(eval.evaluate(&variables::apply(doc, vars, &values_at(vars, axes, &u))));
        u[k] = 1.0;
        high.push(eval.evaluate(&variables::apply(doc, vars, &values_at(vars, axes, &u))));
        solves += 2;
        progress.step().map_err(stopped)?;
        progress.step().map_err(stopped)?;
    }
    let mut out = Vec::with_capacity(nominal.values.len());
    for (qi, (name, _)) in nominal.values.iter().enumerate() {
        let mut dir = vec![0.0; n];
        let mut top = (String::new(), 0.0f64);
        for k in 0..n {
            let (Ok(lo), Ok(hi)) = (&low[k], &high[k]) else {
                continue;
            };
            let (Some(a), Some(b)) = (lookup_at(lo, name, qi), lookup_at(hi, name, qi)) else {
                continue;
            };
            dir[k] = (b - a).signum();
            if (b - a).abs() > top.1 {
                top = (axes[k].name.clone(), (b - a).abs());
            }
        }
        let up: Vec<f64> = dir.clone();
        let down: Vec<f64> = dir.iter().map(|d| -d).collect();
        let at = |u: &[f64]| {
            eval.evaluate(&variables::apply(doc, vars, &values_at(vars, axes, u)))
                .ok()
                .and_then(|o| lookup_at(&o, name, qi))
        };
        let (mx, mn) = (at(&up), at(&down));
        solves += 2;
        progress.step().map_err(stopped)?;
        progress.step().map_err(stopped)?;
        out.push(match (mn, mx) {
            (Some(a), Some(b)) => Some(WorstCase {
                min: a.min(b),
                max: a.max(b),
                top_contributor: top.0,
                top_swing: top.1,
            }),
            _ => None,
        });
    }
    Ok((out, solves))
}

/// Normalised sensitivities by central differences about the nominal board.
pub fn sensitivities(
    doc: &Document,
    vars: &[Variable],
    nominal: &Outcome,
    eval: &dyn Evaluator,
    progress: &crate::progress::Progress,
) -> Result<Vec<Vec<Sensitivity>>, String> {
    let base: Vec<f64> = vars.iter().map(|v| v.nominal).collect();
    let mut per_var = Vec::with_capacity(vars.len());
    progress.stage("sensitivities", 2 * vars.len());
    for (i, v) in vars.iter().enumerate() {
        let h = 1e-4 * (v.high - v.low).abs().max(1e-12);
        let mut x = base.clone();
        x[i] = v.nominal + h;
        let plus = eval.evaluate(&variables::apply(doc, vars, &x));
        x[i] = v.nominal - h;
        let minus = eval.evaluate(&variables::apply(doc, vars, &x));
        per_var.push((plus, minus, h));
        progress.step().map_err(stopped)?;
        progress.step().map_err(stopped)?;
    }
    Ok(nominal
        .values
        .iter()
        .enumerate()
        .map(|(qi, (name, q))| {
            let mut s: Vec<Sensitivity> = vars
                .iter()
                .zip(&per_var)
                .filter_map(|(v, (p, m, h))| {
                    let (Ok(p), Ok(m)) = (p, m) else { return None };
                    let d = (lookup_at(p, name, qi)? - lookup_at(m, name, qi)?) / (2.0 * h);
                    let normalised = (v.nominal != 0.0 && *q != 0.0).then(|| d * v.nominal / q);
                    Some(Sensitivity {
                        variable: v.name.clone(),
                        derivative: d,
                        normalised,
                        swing: d.abs() * 0.5 * (v.high - v.low).abs(),
                    })
                })
                .collect();
            s.sort_by(|a, b| b.swing.total_cmp(&a.swing));
            s
        })
        .collect())
}

/// One Monte Carlo run's axis values.
pub fn draw(axes: usize, distribution: Distribution, seed: u64, run: u64) -> Vec<f64> {
    let mut s = rng::Stream::for_run(seed, run);
    (0..axes)
        .map(|_| match distribution {
            Distribution::Uniform => 2.0 * s.uniform() - 1.0,
            Distribution::Normal => (s.normal() / 3.0).clamp(-1.0, 1.0),
        })
        .collect()
}

/// Monte Carlo runs in parallel; results are in run order whatever the
/// number of threads.
pub fn monte_carlo(
    doc: &Document,
    vars: &[Variable],
    axes: &[Axis],
    eval: &dyn Evaluator,
    runs: usize,
    seed: u64,
    threads: usize,
) -> Result<Vec<Result<Outcome, String>>, String> {
    let progress = crate::progress::Progress::default();
    monte_carlo_counted(doc, vars, axes, eval, runs, seed, threads, &progress)
}

/// [`monte_carlo`] counting runs on `progress` and stopping when asked.
#[allow(clippy::too_many_arguments)]
pub fn monte_carlo_counted(
    doc: &Document,
    vars: &[Variable],
    axes: &[Axis],
    eval: &dyn Evaluator,
    runs: usize,
    seed: u64,
    threads: usize,
    progress: &crate::progress::Progress,
) -> Result<Vec<Result<Outcome, String>>, String> {
    let distribution = doc.spread.distribution;
    progress.stage("Monte Carlo runs", runs);
    let job = || {
        (0..runs)
            .into_par_iter()
            .map(|r| {
                progress.check().map_err(stopped)?;
                let u = draw(axes.len(), distribution, seed, r as u64);
                let o = eval.evaluate(&variables::apply(doc, vars, &values_at(vars, axes, &u)));
                let _ = progress.step();
                Ok(o)
            })
            .collect::<Result<Vec<_>, String>>()
    };
    // More workers than cores only adds switching (10,000 asked for ran
    // 600 times slower than one); 0 means all cores.
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads.min(cores))
        .build()
        .map_err(|e| format!("could not start the worker threads: {e}"))?;
    pool.install(job)
}

/// The whole spread analysis of a document.
pub fn run(doc: &Document, eval: &dyn Evaluator, opt: &Options) -> Result<SpreadReport, String> {
    run_keeping_outcomes(doc, eval, opt).map(|(report, _)| report)
}

/// [`run`], also handing back every Monte Carlo run's outcome in run order
/// (for histograms drawn from the same runs the report summarises).
pub fn run_keeping_outcomes(
    doc: &Document,
    eval: &dyn Evaluator,
    opt: &Options,
) -> Result<(SpreadReport, Vec<Result<Outcome, String>>), String> {
    crate::document::limits::check_runs(opt.runs)?;
    let nominal = eval
        .evaluate(doc)
        .map_err(|e| format!("the nominal board does not solve: {e}"))?;
    let vars = collect(doc);
    let ax = axes(doc, &vars);
    for limit in &doc.spread.limits {
        if lookup(&nominal, &limit.quantity).is_none() {
            let names: Vec<&str> = nominal.values.iter().map(|(n, _)| n.as_str()).collect();
            return Err(format!(
                "spread limit on \"{}\": no such quantity; the quantities are: {}",
                limit.quantity,
                names.join(", ")
            ));
        }
    }
    // Corners and sensitivities cost whole solves per variable and per
    // quantity, each solve growing with the board: O(n²) in all. Past the
    // bound only Monte Carlo runs (its cost is runs × one solve).
    let wanted = (opt.worst_case as usize) * (2 * ax.len() + 2 * nominal.values.len())
        + (opt.sensitivities as usize) * 2 * vars.len();
    let skipped = (wanted > opt.max_corner_solves).then(|| {
        format!(
            "worst-case corners and sensitivities skipped: this board needs {wanted} extra \
             solves ({} sources of spread, {} quantities), more than the bound of {}; \
             Monte Carlo only",
            vars.len(),
            nominal.values.len(),
            opt.max_corner_solves
        )
    });
    let progress = &opt.progress;
    let (worst, corner_solves) = if opt.worst_case && skipped.is_none() {
        worst_case(doc, &vars, &ax, &nominal, eval, progress)?
    } else {
        (vec![None; nominal.values.len()], 0)
    };
    let sens = if opt.sensitivities && skipped.is_none() {
        sensitivities(doc, &vars, &nominal, eval, progress)?
    } else {
        vec![Vec::new(); nominal.values.len()]
    };
    let results = if opt.runs > 0 {
        monte_carlo_counted(
            doc,
            &vars,
            &ax,
            eval,
            opt.runs,
            opt.seed,
            opt.threads,
            progress,
        )?
    } else {
        Vec::new()
    };
    let ok: Vec<&Outcome> = results.iter().filter_map(|r| r.as_ref().ok()).collect();
    let failed = results.len() - ok.len();
    let left = ok.iter().filter(|o| !o.all_active).count();
    let yield_fraction = (!doc.spread.limits.is_empty() && !results.is_empty()).then(|| {
        let inside = ok
            .iter()
            .filter(|o| {
                doc.spread.limits.iter().all(|l| {
                    lookup(o, &l.quantity).is_some_and(|v| {
                        l.min.is_none_or(|m| v >= m) && l.max.is_none_or(|m| v <= m)
                    })
                })
            })
            .count();
        inside as f64 / results.len() as f64
    });
    let inside = |o: &Outcome, l: &crate::document::SpecLimit| {
        lookup(o, &l.quantity)
            .is_some_and(|v| l.min.is_none_or(|m| v >= m) && l.max.is_none_or(|m| v <= m))
    };
    let limit_results: Vec<LimitResult> = doc
        .spread
        .limits
        .iter()
        .map(|l| {
            let k = nominal.values.iter().position(|(n, _)| *n == l.quantity);
            let top = k.and_then(|k| {
                worst[k]
                    .as_ref()
                    .map(|w| w.top_contributor.clone())
                    .or_else(|| sens[k].first().map(|s| s.variable.clone()))
            });
            let missed = ok.iter().filter(|o| !inside(o, l)).count() + failed;
            let range = k.and_then(|k| worst[k].as_ref().map(|w| (w.min, w.max)));
            let worst_case_misses = range.is_some_and(|(lo, hi)| {
                l.min.is_some_and(|m| lo < m) || l.max.is_some_and(|m| hi > m)
            });
            LimitResult {
                worst_case: range,
                worst_case_misses,
                runs: results.len(),
                quantity: l.quantity.clone(),
                min: l.min,
                max: l.max,
                miss_fraction: if results.is_empty() {
                    0.0
                } else {
                    missed as f64 / results.len() as f64
                },
                top_contributor: top,
            }
        })
        .collect();
    let quantities = nominal
        .values
        .iter()
        .zip(worst)
        .zip(sens)
        .enumerate()
        .map(|(qi, (((name, q), w), s))| {
            let samples: Vec<f64> = ok.iter().filter_map(|o| lookup_at(o, name, qi)).collect();
            let missing = (samples.len() < ok.len()).then(|| MissingRuns {
                runs: ok.len() - samples.len(),
                of: ok.len(),
                reason: ok
                    .iter()
                    .find_map(|o| o.missing.iter().find(|(n, _)| n == name))
                    .map(|(_, why)| why.clone())
                    .unwrap_or_else(|| "not computed on those boards".into()),
            });
            QuantitySpread {
                missing,
                name: name.clone(),
                nominal: *q,
                worst_case: w,
                sensitivities: s,
                monte_carlo: Summary::of(&samples),
            }
        })
        .collect();
    let report = SpreadReport {
        variables: vars
            .iter()
            .map(|v| VariableInfo {
                name: v.name.clone(),
                unit: v.unit(),
                nominal: v.nominal,
                low: v.low,
                high: v.high,
            })
            .collect(),
        quantities,
        runs: results.len(),
        failed_runs: failed,
        left_active_fraction: if ok.is_empty() {
            0.0
        } else {
            left as f64 / ok.len() as f64
        },
        yield_fraction,
        seed: opt.seed,
        distribution: doc.spread.distribution,
        corner_solves,
        limits: limit_results,
        skipped,
    };
    Ok((report, results))
}
