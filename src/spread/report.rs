//! Text and CSV forms of a spread report (JSON is the serde form).

use super::SpreadReport;
use crate::units::{self, Unit};
use std::fmt::Write;

/// The unit a quantity is shown in, from its name's prefix.
pub fn unit_of(name: &str) -> Unit {
    let head = name.split('(').next().unwrap_or("");
    match head {
        "V" | "VCE" | "VBE" | "VCB" | "VDS" | "VGS" => Unit::Volt,
        "I" | "IC" | "IB" | "IE" | "ID" => Unit::Ampere,
        "P" => Unit::Watt,
        "Zin" | "Zout" => Unit::Ohm,
        "f_low" | "f_high" => Unit::Hertz,
        _ => Unit::None,
    }
}

fn show(name: &str, v: f64) -> String {
    // No value (a gain with no signal reaching the stage's input): a dash,
    // never "NaN".
    if !v.is_finite() {
        return "—".into();
    }
    match unit_of(name) {
        Unit::None => significant(v, 4),
        u => units::format(v, u),
    }
}

/// A plain number (a gain, a ratio, dB) to `digits` significant figures.
fn significant(v: f64, digits: i32) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{v}");
    }
    // Far from 1 (a gain of 3e-211 when no signal reaches the stage):
    // scientific, never hundreds of digits.
    if !(1e-4..1e6).contains(&v.abs()) {
        return format!("{v:.prec$e}", prec = (digits - 1).max(0) as usize);
    }
    let decimals = (digits - 1 - v.abs().log10().floor() as i32).max(0) as usize;
    format!("{v:.decimals$}")
}

/// A quantity that is the same on every board (a net held at 0 V by a
/// coupling capacitor, say): listed once at the end instead of as a row.
fn constant(q: &super::QuantitySpread) -> bool {
    let wc = q.worst_case.as_ref().is_none_or(|w| w.min == w.max);
    let mc = q.monte_carlo.as_ref().is_none_or(|m| m.min == m.max);
    wc && mc && (q.worst_case.is_some() || q.monte_carlo.is_some())
}

fn show_variable(v: &super::VariableInfo, x: f64) -> String {
    match v.unit {
        VariableUnit::Celsius => format!("{x:.1} °C"),
        VariableUnit::Plain => significant(x, 3),
        VariableUnit::Si(u) => units::format(x, u),
    }
}

/// How a source of spread is shown.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub enum VariableUnit {
    Si(#[serde(skip)] Unit),
    Celsius,
    Plain,
}

/// Widest name column of the table, characters.
pub const MAX_NAME_COLUMN: usize = 64;

/// A readable table: one line per quantity, then the run summary.
pub fn text(rep: &SpreadReport) -> String {
    let mut s = String::new();
    let w = rep
        .quantities
        .iter()
        .map(|q| q.name.chars().count())
        .max()
        .unwrap_or(8)
        // A longer name runs past the column; the formatter's width is
        // limited (a ~65,500-character label panicked here).
        .clamp(8, MAX_NAME_COLUMN);
    let _ = writeln!(
        s,
        "{:w$}  {:>10}  {:>23}  {:>23}  {:>10}  most from",
        "quantity", "nominal", "worst case (min … max)", "runs (0.1 % … 99.9 %)", "σ"
    );
    for q in rep.quantities.iter().filter(|q| !constant(q)) {
        let wc = q
            .worst_case
            .as_ref()
            .map(|w| format!("{} … {}", show(&q.name, w.min), show(&q.name, w.max)))
            .unwrap_or_else(|| "—".into());
        let (mc, sd) = q
            .monte_carlo
            .as_ref()
            .map(|m| {
                (
                    format!("{} … {}", show(&q.name, m.p0_1), show(&q.name, m.p99_9)),
                    show(&q.name, m.standard_deviation),
                )
            })
            .unwrap_or_else(|| ("—".into(), "—".into()));
        let top = q
            .worst_case
            .as_ref()
            .map(|w| w.top_contributor.clone())
            .or_else(|| q.sensitivities.first().map(|s| s.variable.clone()))
            .unwrap_or_default();
        let pad = w - q.name.chars().count();
        let _ = writeln!(
            s,
            "{}{}  {:>10}  {:>23}  {:>23}  {:>10}  {}",
            q.name,
            " ".repeat(pad),
            show(&q.name, q.nominal),
            wc,
            mc,
            sd,
            top
        );
    }
    let fixed: Vec<String> = rep
        .quantities
        .iter()
        .filter(|q| constant(q))
        .map(|q| format!("{} = {}", q.name, show(&q.name, q.nominal)))
        .collect();
    if !fixed.is_empty() {
        let _ = writeln!(s, "the same on every board: {}", fixed.join(", "));
    }
    for q in &rep.quantities {
        if let Some(m) = &q.missing {
            let _ = writeln!(
                s,
                "{}: no value on {} of {} boards ({}); its runs column is over the other {}",
                q.name,
                m.runs,
                m.of,
                m.reason,
                m.of - m.runs
            );
        }
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "{} Monte Carlo runs ({} draws within tolerance, seed {}), {} failed to solve; \
         {} worst-case corner solves",
        rep.runs,
        rep.distribution.words(),
        rep.seed,
        rep.failed_runs,
        rep.corner_solves
    );
    if let Some(why) = &rep.skipped {
        let _ = writeln!(s, "{why}");
    }
    let _ = writeln!(
        s,
        "boards with a transistor out of its amplifying region (forward active; a FET's saturation): {:.1} %",
        100.0 * rep.left_active_fraction
    );
    if let Some(y) = rep.yield_fraction {
        let _ = writeln!(s, "yield (every spec limit met): {:.1} %", 100.0 * y);
    }
    for l in &rep.limits {
        let range = match (l.min, l.max) {
            (Some(a), Some(b)) => format!("{} … {}", show(&l.quantity, a), show(&l.quantity, b)),
            (Some(a), None) => format!("at least {}", show(&l.quantity, a)),
            (None, Some(b)) => format!("at most {}", show(&l.quantity, b)),
            (None, None) => "any value".into(),
        };
        let corner = l
            .worst_case
            .map(|(lo, hi)| format!("{} … {}", show(&l.quantity, lo), show(&l.quantity, hi)))
            .unwrap_or_default();
        let verdict = if l.runs == 0 {
            // No Monte Carlo boards: the worst-case corners are the only evidence.
            match (l.worst_case.is_some(), l.worst_case_misses) {
                (true, true) => format!(
                    "missed at a worst-case corner ({corner}); no Monte Carlo runs; to tighten first: {}",
                    l.top_contributor.as_deref().unwrap_or("(no single part)")
                ),
                (true, false) => format!("met at every worst-case corner ({corner}); no Monte Carlo runs"),
                (false, _) => "not judged: no Monte Carlo runs and no worst case".to_string(),
            }
        } else if l.miss_fraction == 0.0 && l.worst_case_misses {
            format!(
                "met on every one of {} boards run, but a worst-case corner misses it ({corner})",
                l.runs
            )
        } else if l.miss_fraction == 0.0 {
            "met on every board".to_string()
        } else {
            format!(
                "missed on {:.1} % of boards; to tighten first: {}",
                100.0 * l.miss_fraction,
                l.top_contributor.as_deref().unwrap_or("(no single part)")
            )
        };
        let _ = writeln!(s, "  {} {range}: {verdict}", l.quantity);
    }
    let _ = writeln!(s, "\nsources of spread:");
    for v in &rep.variables {
        let _ = writeln!(
            s,
            "  {:12} {} … {} (nominal {})",
            v.name,
            show_variable(v, v.low),
            show_variable(v, v.high),
            show_variable(v, v.nominal)
        );
    }
    s
}

/// CSV: one row per quantity with every figure in SI units.
pub fn csv(rep: &SpreadReport) -> String {
    let mut s = String::from(
        "quantity,nominal,worst_min,worst_max,top_contributor,mean,standard_deviation,p0_1,p50,p99_9,min,max\n",
    );
    for q in &rep.quantities {
        let (wmin, wmax, top) = q
            .worst_case
            .as_ref()
            .map(|w| {
                (
                    w.min.to_string(),
                    w.max.to_string(),
                    w.top_contributor.clone(),
                )
            })
            .unwrap_or_default();
        let m = q.monte_carlo.as_ref();
        let f =
            |g: fn(&super::stats::Summary) -> f64| m.map(|m| g(m).to_string()).unwrap_or_default();
        let _ = writeln!(
            s,
            "{},{},{},{},{},{},{},{},{},{},{},{}",
            quote(&q.name),
            q.nominal,
            wmin,
            wmax,
            quote(&top),
            f(|m| m.mean),
            f(|m| m.standard_deviation),
            f(|m| m.p0_1),
            f(|m| m.p50),
            f(|m| m.p99_9),
            f(|m| m.min),
            f(|m| m.max)
        );
    }
    s
}

fn quote(s: &str) -> String {
    if s.contains([',', '"', '\n']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}
