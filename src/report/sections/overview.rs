//! Title block and assumptions; findings and warnings (the safety caution
//! first and framed); the annotated drawing.

use super::super::page::{array, cell, esc, figure, number, string, td, Show};
use super::super::Context;
use super::{close, open, para};
use crate::presets::{self, keys};
use crate::scene::{LayerSet, SceneOptions};
use std::fmt::Write;

/// Where a safety caution starts (the wording of analysis::dc::warnings).
pub const CAUTION_PREFIX: &str = "safety caution";

/// The temperatures at which the device parameters were given.
fn parameter_temperatures(ctx: &Context) -> String {
    let mut temps: Vec<(f64, Vec<String>)> = Vec::new();
    for p in &ctx.doc.parts {
        if !(p.kind.is_transistor() || p.kind == crate::document::PartKind::Diode) {
            continue;
        }
        let t = presets::effective_parameters(p)
            .get(keys::PARAMETER_CELSIUS)
            .copied()
            .unwrap_or(27.0);
        match temps.iter_mut().find(|(x, _)| *x == t) {
            Some((_, v)) => v.push(p.designator.clone()),
            None => temps.push((t, vec![p.designator.clone()])),
        }
    }
    if temps.is_empty() {
        return "no semiconductor parts".into();
    }
    temps
        .iter()
        .map(|(t, d)| format!("{} at {t:.1} °C", d.join(", ")))
        .collect::<Vec<_>>()
        .join("; ")
}

pub fn title(ctx: &Context) -> String {
    let mut out = String::new();
    let _ = writeln!(
        out,
        "<section id=\"title\" class=\"first\">\n<h1>{}</h1>\n<p class=\"note\">Design report written by Biasline {} from {}</p>",
        esc(if ctx.doc.title.is_empty() { "Untitled design" } else { &ctx.doc.title }),
        env!("CARGO_PKG_VERSION"),
        esc(&ctx.file)
    );
    if !ctx.doc.notes.trim().is_empty() {
        para(&mut out, "", ctx.doc.notes.trim());
    }
    let r = &ctx.root;
    out.push_str("<table class=\"keep\" id=\"assumptions\">\n<caption>Assumptions and provenance</caption>\n<tbody>\n");
    let row = |out: &mut String, k: &str, v: String| {
        let _ = writeln!(out, "<tr><th scope=\"row\">{}</th>{v}</tr>", esc(k));
    };
    row(
        &mut out,
        "ambient temperature",
        cell(r, "/analyze/ambient_celsius", Show::Celsius),
    );
    row(
        &mut out,
        "device parameters given at",
        td(&parameter_temperatures(ctx)),
    );
    row(
        &mut out,
        "device model in the stage drawings",
        td(ctx.opts.model.title()),
    );
    row(
        &mut out,
        "DC operating point",
        td("capacitors open, inductors short; pin currents positive into the pin"),
    );
    row(
        &mut out,
        "stage figures",
        td("at midband: coupling and bypass capacitors short, device capacitances open, inductors open"),
    );
    let band = super::super::gather::NOISE_BAND;
    row(
        &mut out,
        "noise",
        td(&format!(
            "band {}–{}, spot figures at {}, one-sided densities",
            crate::units::format(band.0, crate::units::Unit::Hertz),
            crate::units::format(band.1, crate::units::Unit::Hertz),
            crate::units::format(super::super::gather::NOISE_SPOT, crate::units::Unit::Hertz)
        )),
    );
    let spread = if r["spread"].is_null() {
        "not computed (the project has no spread settings; `biasline report --spread` adds it)"
            .to_string()
    } else {
        format!(
            "Monte Carlo: {} runs, {} draws, seed {}; worst case and sensitivities; ambient {:.1}–{:.1} °C",
            r["spread"]["runs"],
            ctx.doc.spread.distribution.words(),
            r["spread"]["seed"],
            ctx.doc.spread.ambient_min_celsius,
            ctx.doc.spread.ambient_max_celsius
        )
    };
    row(&mut out, "spread", td(&spread));
    row(&mut out, "layers drawn", td(&layer_words(ctx.opts.layers)));
    row(
        &mut out,
        "program",
        td(&format!("Biasline {}", env!("CARGO_PKG_VERSION"))),
    );
    row(&mut out, "project file", td(&ctx.file));
    row(
        &mut out,
        "project SHA-256",
        format!("<td class=\"hash\"><code>{}</code></td>", esc(&ctx.sha256)),
    );
    if let Some(t) = &ctx.opts.timestamp {
        row(
            &mut out,
            "written",
            format!("<td class=\"time\">{}</td>", esc(t)),
        );
    }
    out.push_str("</tbody>\n</table>\n");
    close(&mut out);
    out
}

fn layer_words(layers: LayerSet) -> String {
    crate::scene::Layer::ALL
        .iter()
        .filter(|l| layers.contains(**l))
        .map(|l| l.word())
        .collect::<Vec<_>>()
        .join(", ")
}

pub fn findings(ctx: &Context) -> String {
    let mut out = String::new();
    open(&mut out, "findings", "Findings and warnings");
    let r = &ctx.root;
    if let Some(why) = &ctx.not_solvable {
        let _ = writeln!(
            out,
            "<div class=\"caution\"><strong>Not solvable.</strong> {}</div>",
            esc(why)
        );
        for f in array(r, "/analyze/error/findings") {
            let _ = writeln!(
                out,
                "<p>{}</p>",
                esc(f["message"].as_str().unwrap_or_default())
            );
        }
    }
    let warnings = array(r, "/analyze/warnings");
    for w in warnings {
        let m = w["message"].as_str().unwrap_or_default();
        if m.starts_with(CAUTION_PREFIX) {
            let _ = writeln!(
                out,
                "<div class=\"caution\" id=\"safety-caution\" role=\"note\"><strong>⚠ Safety caution.</strong> {}</div>",
                esc(m.trim_start_matches(CAUTION_PREFIX).trim_start_matches(':').trim())
            );
        }
    }
    if ctx.not_solvable.is_none() {
        let _ = writeln!(
            out,
            "<table class=\"keep\"><tbody><tr><th scope=\"row\">largest voltage between two nets</th>{}<td>between {} and {}</td></tr></tbody></table>",
            cell(r, "/analyze/largest_voltage/voltage", Show::Si(crate::units::Unit::Volt)),
            esc(&string(r, "/analyze/largest_voltage/between/0")),
            esc(&string(r, "/analyze/largest_voltage/between/1"))
        );
        let limit = crate::results::SAFETY_LIMIT_VOLTS;
        if number(r, "/analyze/largest_voltage/voltage").is_some_and(|v| v <= limit) {
            para(
                &mut out,
                "note",
                &format!(
                    "No two nets are more than {} apart: below the 60 V DC limit of IEC 62368-1 (ES1) at which the safety caution applies.",
                    crate::units::format(limit, crate::units::Unit::Volt)
                ),
            );
        }
    }
    if warnings.is_empty() {
        para(
            &mut out,
            "",
            "No warnings: the rules check and the designer checks found nothing to report.",
        );
    } else {
        let _ = writeln!(
            out,
            "<p>{} warning(s), rules check first, then the designer checks:</p>\n<ol class=\"warnings\">",
            warnings.len()
        );
        for w in warnings {
            let subject = match &w["subject"] {
                serde_json::Value::Object(o) => o
                    .iter()
                    .map(|(k, v)| format!("{k} {}", v.as_str().unwrap_or_default()))
                    .collect::<Vec<_>>()
                    .join(", "),
                serde_json::Value::String(s) => s.clone(),
                _ => String::new(),
            };
            let _ = writeln!(
                out,
                "<li class=\"warning\"><strong>{}</strong>: {}</li>",
                esc(&subject),
                esc(w["message"].as_str().unwrap_or_default())
            );
        }
        out.push_str("</ol>\n");
    }
    for s in array(r, "/analyze/small_signal/stages") {
        for c in s["caveats"].as_array().into_iter().flatten() {
            let _ = writeln!(
                out,
                "<p class=\"warning\"><strong>stage {}</strong>: {}</p>",
                esc(s["transistor"].as_str().unwrap_or_default()),
                esc(c.as_str().unwrap_or_default())
            );
        }
    }
    close(&mut out);
    out
}

pub fn schematic(ctx: &Context) -> String {
    let mut out = String::new();
    open(&mut out, "schematic", "Annotated schematic");
    let nl = crate::netlist::connect(ctx.doc);
    let scene = crate::scene::build(
        ctx.doc,
        &nl,
        &ctx.annotations,
        &SceneOptions {
            layers: ctx.opts.layers,
            model: ctx.opts.model,
            use_stored_layout: ctx.opts.use_stored_layout,
        },
    );
    let svg = crate::render::svg::render_plain(
        &scene,
        ctx.opts.layers,
        &crate::render::svg::SvgOptions {
            embed_font: false,
            title: crate::document::limits::repeated_title(&ctx.doc.title),
            ..Default::default()
        },
        false,
    );
    figure(
        &mut out,
        "schematic",
        &svg,
        &format!(
            "The sheet with the layers {}: DC voltages (teal tags), currents (amber arrows), stage cards (violet).",
            layer_words(ctx.opts.layers)
        ),
    );
    close(&mut out);
    out
}
