//! Spread: worst case, Monte Carlo summary and histograms of the spec
//! quantities, yield per limit, the sources of spread. Only when the spread
//! analysis ran (the project sets `spread`, or the report was asked for it).

use super::super::histogram::{self, Histogram};
use super::super::page::{array, cell, esc, figure, head, td, text, Show};
use super::super::Context;
use super::{close, open, para};
use crate::units::Unit;
use serde_json::Value;
use std::fmt::Write;

/// How a spread quantity is shown, from its name (as `spread` names it).
pub fn show_of(name: &str) -> Show {
    if name.starts_with("Avs_dB") {
        return Show::Db;
    }
    match crate::results::spread::unit_of(name) {
        Unit::None if name.starts_with("Av") => Show::Ratio("V/V"),
        Unit::None => Show::Ratio(""),
        u => Show::Si(u),
    }
}

/// The quantities drawn as histograms: those with spec limits, else the
/// chain gain and each transistor's collector current and VCE (at most six).
fn histogram_quantities(ctx: &Context) -> Vec<String> {
    let mut names: Vec<String> = Vec::new();
    for l in &ctx.doc.spread.limits {
        if !names.contains(&l.quantity) {
            names.push(l.quantity.clone());
        }
    }
    if names.is_empty() {
        for (n, _) in &ctx.samples {
            if n == "Avs_dB(chain)" || n.starts_with("IC(") || n.starts_with("VCE(") {
                names.push(n.clone());
            }
        }
        names.truncate(6);
    }
    names
}

pub fn render(ctx: &Context) -> Option<String> {
    let r = &ctx.root;
    if r["spread"].is_null() && ctx.spread_error.is_none() {
        return None;
    }
    let mut out = String::new();
    open(&mut out, "spread", "Spread: tolerances, β and temperature");
    if let Some(e) = &ctx.spread_error {
        para(
            &mut out,
            "warning",
            &format!("The spread analysis did not run: {e}"),
        );
        close(&mut out);
        return Some(out);
    }
    let s = "/spread";
    out.push_str("<table class=\"keep\" id=\"spread-summary\">\n<caption>Runs and yield</caption>\n<tbody>\n");
    for (k, key, show) in [
        ("Monte Carlo runs", "runs", Show::Count),
        ("runs that failed to solve", "failed_runs", Show::Count),
        ("worst-case corner solves", "corner_solves", Show::Count),
        (
            "boards with a transistor out of forward-active",
            "left_active_fraction",
            Show::Percent,
        ),
        (
            "yield: every spec limit met",
            "yield_fraction",
            Show::Percent,
        ),
    ] {
        if key == "yield_fraction" && r.pointer(&format!("{s}/{key}")).is_none_or(Value::is_null) {
            continue;
        }
        let _ = writeln!(
            out,
            "<tr><th scope=\"row\">{}</th>{}</tr>",
            esc(k),
            cell(r, &format!("{s}/{key}"), show)
        );
    }
    out.push_str("</tbody>\n</table>\n");
    let limits = array(r, "/spread/limits");
    if !limits.is_empty() {
        out.push_str("<table class=\"keep\" id=\"spread-limits\">\n<caption>Yield per spec limit</caption>\n");
        head(
            &mut out,
            &[
                "quantity",
                "at least",
                "at most",
                "missed on",
                "to tighten first",
            ],
        );
        out.push_str("<tbody>\n");
        for (k, l) in limits.iter().enumerate() {
            let q = l["quantity"].as_str().unwrap_or_default();
            let show = show_of(q);
            let p = |key: &str| format!("{s}/limits/{k}/{key}");
            let _ = writeln!(
                out,
                "<tr>{}{}{}{}{}</tr>",
                td(q),
                cell(r, &p("min"), show),
                cell(r, &p("max"), show),
                cell(r, &p("miss_fraction"), Show::Percent),
                td(l["top_contributor"].as_str().unwrap_or("—")),
            );
        }
        out.push_str("</tbody>\n</table>\n");
    }
    let wanted = histogram_quantities(ctx);
    if !wanted.is_empty() {
        out.push_str("<div class=\"figs\">\n");
        for name in &wanted {
            let Some((_, xs)) = ctx.samples.iter().find(|(n, _)| n == name) else {
                continue;
            };
            let q = array(r, "/spread/quantities")
                .iter()
                .find(|q| q["name"] == name.as_str());
            let nominal = q.and_then(|q| q["nominal"].as_f64());
            let limit = ctx.doc.spread.limits.iter().find(|l| &l.quantity == name);
            let show = show_of(name);
            let label = move |v: f64| text(v, show);
            let svg = histogram::svg(&Histogram {
                title: name,
                samples: xs,
                nominal,
                limits: (limit.and_then(|l| l.min), limit.and_then(|l| l.max)),
                label: &label,
            });
            figure(
                &mut out,
                "histogram",
                &svg,
                &format!("{name}: {} runs in {} bars.", xs.len(), histogram::BINS),
            );
        }
        out.push_str("</div>\n");
    }
    out.push_str("<table id=\"spread-quantities\">\n<caption>Every quantity: nominal, worst case, Monte Carlo</caption>\n");
    head(
        &mut out,
        &[
            "quantity",
            "nominal",
            "worst min",
            "worst max",
            "0.1 %",
            "median",
            "99.9 %",
            "σ",
            "moves it most",
        ],
    );
    out.push_str("<tbody>\n");
    for (k, q) in array(r, "/spread/quantities").iter().enumerate() {
        let name = q["name"].as_str().unwrap_or_default();
        let show = show_of(name);
        let p = |key: &str| format!("{s}/quantities/{k}/{key}");
        let top = q["worst_case"]["top_contributor"]
            .as_str()
            .or_else(|| q["sensitivities"][0]["variable"].as_str())
            .unwrap_or("—");
        let _ = writeln!(
            out,
            "<tr>{}{}{}{}{}{}{}{}{}</tr>",
            td(name),
            cell(r, &p("nominal"), show),
            cell(r, &p("worst_case/min"), show),
            cell(r, &p("worst_case/max"), show),
            cell(r, &p("monte_carlo/p0_1"), show),
            cell(r, &p("monte_carlo/p50"), show),
            cell(r, &p("monte_carlo/p99_9"), show),
            cell(r, &p("monte_carlo/standard_deviation"), show),
            td(top),
        );
    }
    out.push_str("</tbody>\n</table>\n");
    out.push_str("<table id=\"spread-sources\">\n<caption>Sources of spread</caption>\n");
    head(&mut out, &["source", "low", "nominal", "high"]);
    out.push_str("<tbody>\n");
    for (k, v) in array(r, "/spread/variables").iter().enumerate() {
        let name = v["name"].as_str().unwrap_or_default();
        let show = variable_show(ctx, k);
        let p = |key: &str| format!("{s}/variables/{k}/{key}");
        let _ = writeln!(
            out,
            "<tr>{}{}{}{}</tr>",
            td(name),
            cell(r, &p("low"), show),
            cell(r, &p("nominal"), show),
            cell(r, &p("high"), show),
        );
    }
    out.push_str("</tbody>\n</table>\n");
    para(
        &mut out,
        "note",
        "Worst case: every source at the limit that pushes the quantity one way (directions from one-at-a-time solves at each limit), then that corner solved. Monte Carlo percentiles by linear interpolation between closest ranks.",
    );
    close(&mut out);
    Some(out)
}

/// How the k-th source of spread is shown (its unit from the variable list).
fn variable_show(ctx: &Context, k: usize) -> Show {
    use crate::results::spread::VariableUnit;
    let vars = crate::results::spread::variables(ctx.doc);
    match vars.get(k).map(|v| v.unit()) {
        Some(VariableUnit::Si(u)) => Show::Si(u),
        Some(VariableUnit::Celsius) => Show::Celsius,
        _ => Show::Ratio(""),
    }
}
