//! Noise: the density plot, the band and spot figures, input-referred
//! generators, the largest contributors and the better collector current.

use super::super::page::{array, cell, esc, figure, head, td, Show};
use super::super::Context;
use super::{close, open, para};
use crate::render::noise_plot::noise_scene;
use crate::scene::LayerSet;
use crate::units::Unit;
use serde_json::Value;
use std::fmt::Write;

pub fn render(ctx: &Context) -> String {
    let r = &ctx.root;
    let mut out = String::new();
    open(&mut out, "noise", "Noise");
    if r.pointer("/analyze/noise/available") != Some(&Value::Bool(true)) {
        para(
            &mut out,
            "",
            &format!(
                "No noise result: {}",
                r.pointer("/analyze/noise/reason")
                    .and_then(Value::as_str)
                    .unwrap_or("the noise analysis did not run")
            ),
        );
        close(&mut out);
        return out;
    }
    if let Some(n) = &ctx.noise {
        let d = crate::results::plots::noise_data(
            &format!(
                "{} — noise density",
                crate::document::limits::repeated_title(&ctx.doc.title)
            ),
            n,
        );
        let svg = crate::render::svg::render_plain(
            &noise_scene(&d),
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
            "noise-density",
            &svg,
            &format!(
                "Output noise density ({}) and the same referred to the signal source, per √Hz, {} frequencies.",
                n.output,
                d.points.len()
            ),
        );
    }
    let n = "/analyze/noise";
    let source = r
        .pointer(&format!("{n}/source_resistance"))
        .and_then(Value::as_str)
        .map(|s| format!(" (source resistance {s})"))
        .unwrap_or_default();
    out.push_str("<table class=\"keep\" id=\"noise-figures\">\n<caption>Band and spot figures</caption>\n<tbody>\n");
    for (k, key, show) in [
        ("temperature of the noise sources", "kelvin", Show::Kelvin),
        (
            "output noise over the band",
            "band_output_rms",
            Show::Si(Unit::Volt),
        ),
        (
            "input-referred noise over the band",
            "band_input_rms",
            Show::Si(Unit::Volt),
        ),
        (
            &*format!("noise figure over the band{source}"),
            "band_noise_figure_db",
            Show::Db,
        ),
        (
            "noise factor over the band",
            "band_noise_factor",
            Show::Ratio(""),
        ),
        ("spot frequency", "spot_frequency", Show::Si(Unit::Hertz)),
        ("spot noise figure", "spot_noise_figure_db", Show::Db),
        (
            "output density at the spot",
            "spot_output_density",
            Show::Density(Unit::Volt),
        ),
        (
            "input-referred density at the spot",
            "spot_input_density",
            Show::Density(Unit::Volt),
        ),
        (
            "signal-to-noise for the source amplitude",
            "signal_to_noise_db",
            Show::Db,
        ),
        (
            "source resistance",
            "source_resistance_ohms",
            Show::Si(Unit::Ohm),
        ),
        (
            "amplifier en at the spot",
            "chain_input_noise/voltage_density",
            Show::Density(Unit::Volt),
        ),
        (
            "amplifier in at the spot",
            "chain_input_noise/current_density",
            Show::Density(Unit::Ampere),
        ),
        (
            "optimum source resistance en/in",
            "chain_input_noise/optimum_source_resistance",
            Show::Si(Unit::Ohm),
        ),
        (
            "noise figure at the optimum",
            "chain_input_noise/optimum_noise_figure_db",
            Show::Db,
        ),
    ] {
        let _ = writeln!(
            out,
            "<tr><th scope=\"row\">{}</th>{}</tr>",
            esc(k),
            cell(r, &format!("{n}/{key}"), show)
        );
    }
    out.push_str("</tbody>\n</table>\n");
    let stages = array(r, "/analyze/noise/stages");
    if !stages.is_empty() {
        out.push_str("<table class=\"keep\" id=\"noise-stages\">\n<caption>Each stage's input generators at the spot frequency</caption>\n");
        head(&mut out, &["stage", "en", "in"]);
        out.push_str("<tbody>\n");
        for (k, s) in stages.iter().enumerate() {
            let _ = writeln!(
                out,
                "<tr>{}{}{}</tr>",
                td(s["transistor"].as_str().unwrap_or_default()),
                cell(
                    r,
                    &format!("{n}/stages/{k}/voltage_density"),
                    Show::Density(Unit::Volt)
                ),
                cell(
                    r,
                    &format!("{n}/stages/{k}/current_density"),
                    Show::Density(Unit::Ampere)
                ),
            );
        }
        out.push_str("</tbody>\n</table>\n");
    }
    out.push_str("<table class=\"keep\" id=\"noise-contributors\">\n<caption>Top contributors over the band</caption>\n");
    head(
        &mut out,
        &[
            "generator",
            "share of the output noise power",
            "output noise",
        ],
    );
    out.push_str("<tbody>\n");
    for (k, c) in array(r, "/analyze/noise/top_contributors")
        .iter()
        .enumerate()
    {
        let _ = writeln!(
            out,
            "<tr>{}{}{}</tr>",
            td(c["label"].as_str().unwrap_or_default()),
            cell(r, &format!("{n}/top_contributors/{k}/share"), Show::Percent),
            cell(
                r,
                &format!("{n}/top_contributors/{k}/band_output_rms"),
                Show::Si(Unit::Volt)
            ),
        );
    }
    out.push_str("</tbody>\n</table>\n");
    out.push_str("<table class=\"keep\" id=\"noise-parts\">\n<caption>By part (its generators together)</caption>\n");
    head(&mut out, &["part", "share of the output noise power"]);
    out.push_str("<tbody>\n");
    for (k, p) in array(r, "/analyze/noise/by_part").iter().enumerate() {
        let _ = writeln!(
            out,
            "<tr>{}{}</tr>",
            td(p["designator"].as_str().unwrap_or_default()),
            cell(r, &format!("{n}/by_part/{k}/share"), Show::Percent),
        );
    }
    out.push_str("</tbody>\n</table>\n");
    let hints = array(r, "/analyze/noise/better_collector_current");
    if !hints.is_empty() {
        out.push_str("<table class=\"keep\" id=\"noise-current\">\n<caption>Better collector current (band noise figure of the chain)</caption>\n");
        head(
            &mut out,
            &[
                "transistor",
                "IC now",
                "NF now",
                "better IC",
                "NF there",
                "classic VT·√hFE/(Rs + rb)",
            ],
        );
        out.push_str("<tbody>\n");
        for (k, h) in hints.iter().enumerate() {
            let p = |key: &str| format!("{n}/better_collector_current/{k}/{key}");
            let _ = writeln!(
                out,
                "<tr>{}{}{}{}{}{}</tr>",
                td(h["transistor"].as_str().unwrap_or_default()),
                cell(r, &p("present_current"), Show::Si(Unit::Ampere)),
                cell(r, &p("present_noise_figure_db"), Show::Db),
                cell(r, &p("better_current"), Show::Si(Unit::Ampere)),
                cell(r, &p("better_noise_figure_db"), Show::Db),
                cell(r, &p("classic_current"), Show::Si(Unit::Ampere)),
            );
        }
        out.push_str("</tbody>\n</table>\n");
        para(
            &mut out,
            "note",
            "The scan moves one transistor's current from 1/100 to 100 times with everything else held; the bias network that would set it is not redesigned. The classic estimate applies to the input transistor. It weighs noise alone: the current each stage must deliver to its load and to the next stage's base, and the swing, are not checked.",
        );
    }
    close(&mut out);
    out
}
