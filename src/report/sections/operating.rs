//! The DC operating point: every net, every transistor with its region,
//! margins and βF sensitivity, diodes, pin currents and power, the solver.

use super::super::page::{array, cell, head, td, Show};
use super::super::Context;
use super::{close, open, para};
use crate::units::Unit;
use std::fmt::Write;

fn region_words(r: &str) -> &str {
    match r {
        "forward_active" => "forward active",
        "saturation" => "saturated",
        "cut_off" => "cut off",
        "reverse_active" => "reverse active",
        other => other,
    }
}

pub fn render(ctx: &Context) -> String {
    let r = &ctx.root;
    let mut out = String::new();
    open(&mut out, "operating-point", "DC operating point");
    para(
        &mut out,
        "note",
        "Voltages against the ground net; currents positive into the pin. hFE = IC/IB at the point; βF is the model parameter at the analysis temperature; S = ∂IC/∂βF · βF/IC (above 0.5 the bias leans on βF).",
    );
    out.push_str("<table id=\"nets\">\n<caption>Net voltages</caption>\n");
    head(&mut out, &["net", "voltage"]);
    out.push_str("<tbody>\n");
    for (k, n) in array(r, "/analyze/nets").iter().enumerate() {
        let _ = writeln!(
            out,
            "<tr>{}{}</tr>",
            td(n["name"].as_str().unwrap_or_default()),
            cell(
                r,
                &format!("/analyze/nets/{k}/voltage"),
                Show::Si(Unit::Volt)
            )
        );
    }
    out.push_str("</tbody>\n</table>\n");
    let ts = array(r, "/analyze/transistors");
    if !ts.is_empty() {
        out.push_str("<table id=\"transistors\" class=\"keep\">\n<caption>Transistors: region, currents and voltages</caption>\n");
        head(
            &mut out,
            &[
                "part", "type", "region", "IC", "IB", "IE", "VBE", "VCE", "VCB",
            ],
        );
        out.push_str("<tbody>\n");
        for (k, t) in ts.iter().enumerate() {
            let p = |key: &str| format!("/analyze/transistors/{k}/{key}");
            let _ = writeln!(
                out,
                "<tr>{}{}{}{}{}{}{}{}{}</tr>",
                td(t["designator"].as_str().unwrap_or_default()),
                td(&t["polarity"].as_str().unwrap_or_default().to_uppercase()),
                td(region_words(t["region"].as_str().unwrap_or_default())),
                cell(r, &p("collector_current"), Show::Si(Unit::Ampere)),
                cell(r, &p("base_current"), Show::Si(Unit::Ampere)),
                cell(r, &p("emitter_current"), Show::Si(Unit::Ampere)),
                cell(r, &p("base_emitter_voltage"), Show::Si(Unit::Volt)),
                cell(r, &p("collector_emitter_voltage"), Show::Si(Unit::Volt)),
                cell(r, &p("collector_base_voltage"), Show::Si(Unit::Volt)),
            );
        }
        out.push_str("</tbody>\n</table>\n");
        out.push_str("<table id=\"margins\" class=\"keep\">\n<caption>Transistors: margins, gains and power</caption>\n");
        head(
            &mut out,
            &[
                "part",
                "to saturation",
                "above cut-off",
                "hFE",
                "βF",
                "S (βF)",
                "power",
                "junction",
            ],
        );
        out.push_str("<tbody>\n");
        for (k, t) in ts.iter().enumerate() {
            let p = |key: &str| format!("/analyze/transistors/{k}/{key}");
            let _ = writeln!(
                out,
                "<tr>{}{}{}{}{}{}{}{}</tr>",
                td(t["designator"].as_str().unwrap_or_default()),
                cell(r, &p("saturation_margin"), Show::Si(Unit::Volt)),
                cell(r, &p("cutoff_margin"), Show::Si(Unit::Volt)),
                cell(r, &p("dc_current_gain"), Show::Ratio("")),
                cell(r, &p("forward_beta"), Show::Ratio("")),
                cell(r, &p("beta_sensitivity"), Show::Ratio("")),
                cell(r, &p("power"), Show::Si(Unit::Watt)),
                cell(r, &p("junction_celsius"), Show::Celsius),
            );
        }
        out.push_str("</tbody>\n</table>\n");
    }
    fets(ctx, &mut out);
    let ds = array(r, "/analyze/diodes");
    if !ds.is_empty() {
        out.push_str("<table id=\"diodes\" class=\"keep\">\n<caption>Diodes</caption>\n");
        head(&mut out, &["part", "state", "current", "voltage", "power"]);
        out.push_str("<tbody>\n");
        for (k, d) in ds.iter().enumerate() {
            let p = |key: &str| format!("/analyze/diodes/{k}/{key}");
            let _ = writeln!(
                out,
                "<tr>{}{}{}{}{}</tr>",
                td(d["designator"].as_str().unwrap_or_default()),
                td(d["state"].as_str().unwrap_or_default()),
                cell(r, &p("current"), Show::Si(Unit::Ampere)),
                cell(r, &p("voltage"), Show::Si(Unit::Volt)),
                cell(r, &p("power"), Show::Si(Unit::Watt)),
            );
        }
        out.push_str("</tbody>\n</table>\n");
    }
    out.push_str("<table id=\"pin-currents\">\n<caption>Parts: pin currents (into the pin) and power absorbed</caption>\n");
    head(&mut out, &["part", "kind", "pin", "current", "power"]);
    out.push_str("<tbody>\n");
    for (k, p) in array(r, "/analyze/parts").iter().enumerate() {
        let pins: Vec<&String> = p["pin_currents"]
            .as_object()
            .map(|o| o.keys().collect())
            .unwrap_or_default();
        for (j, pin) in pins.iter().enumerate() {
            let first = j == 0;
            let _ = writeln!(
                out,
                "<tr>{}{}{}{}{}</tr>",
                td(if first {
                    p["designator"].as_str().unwrap_or_default()
                } else {
                    ""
                }),
                td(if first {
                    p["kind"].as_str().unwrap_or_default()
                } else {
                    ""
                }),
                td(pin),
                cell(
                    r,
                    &format!("/analyze/parts/{k}/pin_currents/{}", pointer_escape(pin)),
                    Show::Si(Unit::Ampere)
                ),
                if first {
                    cell(
                        r,
                        &format!("/analyze/parts/{k}/power"),
                        Show::Si(Unit::Watt),
                    )
                } else {
                    "<td></td>".into()
                }
            );
        }
    }
    out.push_str("</tbody>\n</table>\n");
    let aids: Vec<String> = array(r, "/analyze/solver/aids")
        .iter()
        .filter_map(|a| a.as_str().map(String::from))
        .collect();
    let _ = writeln!(
        out,
        "<table class=\"keep\" id=\"solver\">\n<caption>Solver</caption>\n<tbody>\n<tr><th scope=\"row\">Newton iterations</th>{}</tr>\n<tr><th scope=\"row\">aids</th>{}</tr>\n<tr><th scope=\"row\">Tellegen balance Σv·i</th>{}</tr>\n</tbody>\n</table>",
        cell(r, "/analyze/solver/iterations", Show::Count),
        td(if aids.is_empty() { "none (plain Newton–Raphson converged)".to_string() } else { aids.join("; ") }.as_str()),
        cell(r, "/analyze/solver/tellegen_residual", Show::Si(Unit::Watt)),
    );
    close(&mut out);
    out
}

/// Escape a key for a JSON pointer (RFC 6901: `~` → `~0`, `/` → `~1`).
pub fn pointer_escape(key: &str) -> String {
    key.replace('~', "~0").replace('/', "~1")
}

fn fet_region_words(r: &str) -> &str {
    match r {
        "saturation" => "saturation (constant current)",
        "triode" => "triode (ohmic)",
        "cut_off" => "cut off",
        "gate_conducting" => "gate conducting (a fault)",
        other => other,
    }
}

/// Field-effect transistors: region, current, voltages, margin, gm, ro, power.
fn fets(ctx: &Context, out: &mut String) {
    let r = &ctx.root;
    let fs = array(r, "/analyze/field_effect_transistors");
    if fs.is_empty() {
        return;
    }
    out.push_str("<table id=\"fets\" class=\"keep\">\n<caption>Field-effect transistors: region, current, voltages, margin, gm, ro and power</caption>\n");
    head(
        out,
        &[
            "part",
            "type",
            "region",
            "ID",
            "VGS",
            "VDS",
            "to the triode edge",
            "gm",
            "ro",
            "power",
            "junction",
        ],
    );
    out.push_str("<tbody>\n");
    for (k, t) in fs.iter().enumerate() {
        let p = |key: &str| format!("/analyze/field_effect_transistors/{k}/{key}");
        let kind = format!(
            "{}-{}",
            t["channel"].as_str().unwrap_or_default().to_uppercase(),
            t["kind"].as_str().unwrap_or_default().to_uppercase()
        );
        let _ = writeln!(
            out,
            "<tr>{}{}{}{}{}{}{}{}{}{}{}</tr>",
            td(t["designator"].as_str().unwrap_or_default()),
            td(&kind),
            td(fet_region_words(t["region"].as_str().unwrap_or_default())),
            cell(r, &p("drain_current"), Show::Si(Unit::Ampere)),
            cell(r, &p("gate_source_voltage"), Show::Si(Unit::Volt)),
            cell(r, &p("drain_source_voltage"), Show::Si(Unit::Volt)),
            cell(r, &p("triode_margin"), Show::Si(Unit::Volt)),
            cell(r, &p("transconductance"), Show::Si(Unit::Siemens)),
            cell(r, &p("output_resistance"), Show::Si(Unit::Ohm)),
            cell(r, &p("power"), Show::Si(Unit::Watt)),
            cell(r, &p("junction_celsius"), Show::Celsius),
        );
    }
    out.push_str("</tbody>\n</table>\n");
}
