//! The response: the Bode plot (source EMF to load) with its −3 dB corners,
//! and the capacitor that sets each corner.

use super::super::page::{array, cell, esc, figure, head, number, td, Show};
use super::super::Context;
use super::{close, open, para};
use crate::render::plot::{response_scene, ResponseData};
use crate::scene::LayerSet;
use crate::units::Unit;
use serde_json::Value;
use std::fmt::Write;

/// The plot's data, read from the `response` keys (the corners are the
/// analysis's own, not found again from the plotted points).
fn data(r: &Value, title: &str) -> Option<ResponseData> {
    let f = array(r, "/analyze/response/frequencies");
    let m = array(r, "/analyze/response/gain/magnitude_db");
    let p = array(r, "/analyze/response/gain/phase_degrees");
    if f.len() < 2 || m.len() < 2 {
        return None;
    }
    let points = f
        .iter()
        .zip(m)
        .zip(p)
        .map(|((f, m), p)| {
            (
                f.as_f64().unwrap_or(f64::NAN),
                m.as_f64().unwrap_or(f64::NAN),
                p.as_f64().unwrap_or(f64::NAN),
            )
        })
        .collect();
    let corners = ["lower_corner", "upper_corner"]
        .iter()
        .filter_map(|k| number(r, &format!("/analyze/response/{k}")))
        .collect();
    Some(ResponseData {
        title: title.to_string(),
        points,
        corners,
        marks: Vec::new(),
    })
}

pub fn render(ctx: &Context) -> String {
    let r = &ctx.root;
    let mut out = String::new();
    open(&mut out, "response", "Frequency response");
    let name = r
        .pointer("/analyze/response/gain/name")
        .and_then(Value::as_str)
        .unwrap_or("gain")
        .to_string();
    match data(
        r,
        &format!(
            "{} — {name}",
            crate::document::limits::repeated_title(&ctx.doc.title)
        ),
    ) {
        Some(d) => {
            let svg = crate::render::svg::render_plain(
                &response_scene(&d),
                LayerSet::all(),
                &crate::render::svg::SvgOptions {
                    embed_font: false,
                    title: d.title.clone(),
                    ..Default::default()
                },
                false,
            );
            figure(
                &mut out,
                "bode",
                &svg,
                &format!(
                    "Bode plot, {} points: gain (solid) and phase (dashed) against frequency; the −3 dB corners marked.",
                    d.points.len()
                ),
            );
        }
        None => para(
            &mut out,
            "",
            "No response: the project has no signal source and load to sweep between.",
        ),
    }
    out.push_str("<table class=\"keep\" id=\"corners\">\n<caption>Midband gain and corners</caption>\n<tbody>\n");
    let set_by = r
        .pointer("/analyze/response/low_corner_set_by")
        .and_then(Value::as_str)
        .map(|d| format!("set mostly by {d} (largest 1/(R·C))"))
        .unwrap_or_default();
    // The upper corner: the stage with the lowest Miller estimate.
    let upper_by = array(r, "/analyze/small_signal/stages")
        .iter()
        .filter_map(|s| {
            Some((
                s["miller"]["upper_corner"].as_f64()?,
                s["transistor"].as_str()?.to_string(),
            ))
        })
        .min_by(|a, b| a.0.total_cmp(&b.0))
        .map(|(_, t)| format!("set mostly by {t}'s input capacitance (lowest Miller estimate)"))
        .unwrap_or_default();
    for (k, p, show, why) in [
        (
            "midband |Avs|",
            "/analyze/response/midband_gain_db",
            Show::Db,
            String::new(),
        ),
        (
            "lower −3 dB corner",
            "/analyze/response/lower_corner",
            Show::Si(Unit::Hertz),
            set_by,
        ),
        (
            "short-circuit time-constant estimate Σ 1/(2π·R·C)",
            "/analyze/response/short_circuit_estimate",
            Show::Si(Unit::Hertz),
            String::new(),
        ),
        (
            "upper −3 dB corner",
            "/analyze/response/upper_corner",
            Show::Si(Unit::Hertz),
            upper_by,
        ),
    ] {
        let _ = writeln!(
            out,
            "<tr><th scope=\"row\">{}</th>{}{}</tr>",
            esc(k),
            cell(r, p, show),
            td(&why)
        );
    }
    out.push_str("</tbody>\n</table>\n");
    let tcs = array(r, "/analyze/response/time_constants");
    if !tcs.is_empty() {
        out.push_str("<table class=\"keep\" id=\"time-constants\">\n<caption>Each capacitor's short-circuit time constant</caption>\n");
        head(
            &mut out,
            &[
                "capacitor",
                "capacitance",
                "resistance it sees",
                "1/(2π·R·C)",
            ],
        );
        out.push_str("<tbody>\n");
        for (k, t) in tcs.iter().enumerate() {
            let p = |key: &str| format!("/analyze/response/time_constants/{k}/{key}");
            let _ = writeln!(
                out,
                "<tr>{}{}{}{}</tr>",
                td(t["designator"].as_str().unwrap_or_default()),
                cell(r, &p("capacitance"), Show::Si(Unit::Farad)),
                cell(r, &p("resistance"), Show::Si(Unit::Ohm)),
                cell(r, &p("corner"), Show::Si(Unit::Hertz)),
            );
        }
        out.push_str("</tbody>\n</table>\n");
    }
    for n in array(r, "/analyze/response/notes") {
        para(
            &mut out,
            "note",
            &format!("Note: {}", n.as_str().unwrap_or_default()),
        );
    }
    close(&mut out);
    out
}
