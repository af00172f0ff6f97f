//! Stability: the circuit's own poles and the loop gain of its feedback
//! loops (from the `stability` keys), with a Bode plot of one loop gain —
//! the break point's (`analysis.loop_break`), else the transistor loop
//! with the least phase margin — its crossover and margins marked.

use super::super::page::{array, cell, figure, head, number, td, Show};
use super::super::Context;
use super::{close, open, para};
use crate::render::plot::{response_scene, ResponseData};
use crate::scene::LayerSet;
use crate::units::{format as si, Unit};
use serde_json::Value;
use std::fmt::Write;

/// The pointer of the plotted loop under `/stability`.
fn plotted(r: &Value) -> Option<String> {
    if r.pointer("/stability/break_point/name").is_some() {
        return Some("/stability/break_point".into());
    }
    array(r, "/stability/loops")
        .iter()
        .enumerate()
        .filter_map(|(k, l)| Some((k, l["phase_margin_degrees"].as_f64()?)))
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .map(|(k, _)| format!("/stability/loops/{k}"))
}

/// The plot's data: T(f) in dB and degrees, crossover and phase crossover marked.
fn data(r: &Value, at: &str, title: &str) -> Option<ResponseData> {
    let f = array(r, "/stability/frequencies");
    let m = array(r, &format!("{at}/magnitude_db"));
    let p = array(r, &format!("{at}/phase_degrees"));
    if f.len() < 2 || m.len() != f.len() || p.len() != f.len() {
        return None;
    }
    let num = |v: &Value| v.as_f64().unwrap_or(f64::NAN);
    let points = f
        .iter()
        .zip(m)
        .zip(p)
        .map(|((f, m), p)| (num(f), num(m), num(p)))
        .collect();
    let mut marks = Vec::new();
    if let (Some(fc), Some(pm)) = (
        number(r, &format!("{at}/crossover_hz")),
        number(r, &format!("{at}/phase_margin_degrees")),
    ) {
        marks.push((
            fc,
            0.0,
            format!("|T| = 1 at {}: phase margin {pm:.1}°", si(fc, Unit::Hertz)),
        ));
    }
    if let (Some(f180), Some(gm)) = (
        number(r, &format!("{at}/phase_crossover_hz")),
        number(r, &format!("{at}/gain_margin_db")),
    ) {
        marks.push((
            f180,
            -gm,
            format!("−180° at {}: gain margin {gm:.1} dB", si(f180, Unit::Hertz)),
        ));
    }
    Some(ResponseData {
        title: title.to_string(),
        points,
        corners: Vec::new(),
        marks,
    })
}

fn loops_table(out: &mut String, r: &Value) {
    out.push_str("<table class=\"keep\" id=\"loops\">\n<caption>Loop gain T: Bode's return ratio of each transistor's controlled source, and the break point's (double injection)</caption>\n");
    head(
        out,
        &[
            "loop",
            "largest |T| in the sweep",
            "crossover (|T| = 1)",
            "phase margin",
            "gain margin",
        ],
    );
    out.push_str("<tbody>\n");
    let mut rows: Vec<(String, String)> = array(r, "/stability/loops")
        .iter()
        .enumerate()
        .map(|(k, l)| {
            (
                format!("{} (return ratio)", l["name"].as_str().unwrap_or_default()),
                format!("/stability/loops/{k}"),
            )
        })
        .collect();
    if let Some(n) = r
        .pointer("/stability/break_point/name")
        .and_then(Value::as_str)
    {
        rows.push((
            format!("at {n} (double injection)"),
            "/stability/break_point".into(),
        ));
    }
    for (name, at) in rows {
        let _ = writeln!(
            out,
            "<tr>{}{}{}{}{}</tr>",
            td(&name),
            cell(r, &format!("{at}/largest_magnitude"), Show::Ratio("")),
            cell(r, &format!("{at}/crossover_hz"), Show::Si(Unit::Hertz)),
            cell(r, &format!("{at}/phase_margin_degrees"), Show::Degrees),
            cell(r, &format!("{at}/gain_margin_db"), Show::Db),
        );
    }
    out.push_str("</tbody>\n</table>\n");
}

fn poles_table(out: &mut String, r: &Value) {
    let poles = array(r, "/stability/poles");
    if poles.is_empty() {
        return;
    }
    let _ = writeln!(
        out,
        "<table class=\"keep\" id=\"poles\">\n<caption>The circuit's own poles at the operating point ({} unknowns)</caption>",
        number(r, "/stability/unknowns").unwrap_or(0.0)
    );
    head(
        out,
        &[
            "pole",
            "natural frequency",
            "oscillation frequency",
            "damping ζ",
            "Q",
            "parts it depends on most",
        ],
    );
    out.push_str("<tbody>\n");
    for (k, p) in poles.iter().enumerate() {
        let at = |key: &str| format!("/stability/poles/{k}/{key}");
        let parts: Vec<String> = p["parts"]
            .as_array()
            .map_or(&[][..], Vec::as_slice)
            .iter()
            .take(3)
            .map(|q| {
                format!(
                    "{} {:.0} %",
                    q["part"].as_str().unwrap_or_default(),
                    q["share"].as_f64().unwrap_or(0.0) * 100.0
                )
            })
            .collect();
        let flag = if p["unstable"].as_bool() == Some(true) {
            "; right half-plane: the circuit oscillates"
        } else {
            ""
        };
        let _ = writeln!(
            out,
            "<tr>{}{}{}{}{}{}</tr>",
            td(&format!(
                "s = {:.4e} {:+.4e}j /s",
                p["real_per_s"].as_f64().unwrap_or(f64::NAN),
                p["imaginary_per_s"].as_f64().unwrap_or(f64::NAN)
            )),
            cell(r, &at("natural_hz"), Show::Si(Unit::Hertz)),
            cell(r, &at("oscillation_hz"), Show::Si(Unit::Hertz)),
            cell(r, &at("damping"), Show::Ratio("")),
            cell(r, &at("q"), Show::Ratio("")),
            td(&format!("{}{flag}", parts.join(", "))),
        );
    }
    out.push_str("</tbody>\n</table>\n");
}

/// The section, or nothing when the operating point was not found.
pub fn render(ctx: &Context) -> Option<String> {
    let r = &ctx.root;
    let st = r.get("stability").filter(|v| !v.is_null())?;
    let mut out = String::new();
    open(&mut out, "stability", "Stability and loop gain");
    if let Some(e) = st.get("error").and_then(Value::as_str) {
        para(&mut out, "note", &format!("No stability figures: {e}"));
        close(&mut out);
        return Some(out);
    }
    for w in array(r, "/stability/warnings") {
        para(
            &mut out,
            "warning",
            &format!("Warning: {}", w.as_str().unwrap_or_default()),
        );
    }
    if let Some(at) = plotted(r) {
        let name = string_at(r, &format!("{at}/name"));
        let how = if at.ends_with("break_point") {
            format!("loop gain at {name} (double injection)")
        } else {
            format!("return ratio of {name}")
        };
        let title = format!(
            "{} — {how}",
            crate::document::limits::repeated_title(&ctx.doc.title)
        );
        if let Some(d) = data(r, &at, &title) {
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
                "bode loop-gain",
                &svg,
                &format!(
                    "Loop gain T, {} points: |T| (solid) and its phase (dashed); where |T| falls through 1 the phase margin, where the phase reaches −180° the gain margin.",
                    d.points.len()
                ),
            );
        }
    } else {
        para(
            &mut out,
            "",
            "No loop gain reaches 1 over the sweep: no feedback loop to give a margin for.",
        );
    }
    feedback_table(&mut out, r);
    textbook_table(&mut out, r);
    loops_table(&mut out, r);
    poles_table(&mut out, r);
    close(&mut out);
    Some(out)
}

/// The gain split into what the feedback network sets and what the loop
/// gain leaves (Rosenstark), and Zin, Zout by Blackman's formula.
fn feedback_table(out: &mut String, r: &Value) {
    const F: &str = "/stability/feedback";
    let Some(around) = r.pointer(&format!("{F}/around")).and_then(Value::as_str) else {
        return;
    };
    para(
        out,
        "",
        &format!(
            "Feedback around {around} (the transistor with the largest return ratio at \
             midband): the gain from the source is A = A∞·T/(1 + T) + A0/(1 + T), where \
             A∞ is what the feedback network sets (infinite loop gain) and A0 the direct \
             feedthrough; each impedance is Z0·(1 + T with the port shorted)/(1 + T with \
             it open) (Blackman), Z0 with {around}'s controlled source at zero."
        ),
    );
    let _ = writeln!(
        out,
        "<table class=\"keep\">\n<caption>Feedback around {}: gain split and impedances</caption>",
        super::super::page::esc(around)
    );
    head(
        out,
        &[
            "figure",
            "exact",
            "controlled source at zero (A0, Z0)",
            "infinite loop gain (A∞)",
            "T, port shorted",
            "T, port open",
        ],
    );
    out.push_str("<tbody>\n");
    let ratio = Show::Ratio("");
    let c = |k: &str, show| cell(r, &format!("{F}/{k}"), show);
    let _ = writeln!(
        out,
        "<tr>{}{}{}{}{}{}</tr>",
        td("gain from the source A"),
        c("gain", ratio),
        c("direct_gain", ratio),
        c("ideal_gain", ratio),
        td(""),
        td("")
    );
    let _ = writeln!(
        out,
        "<tr>{}{}{}{}{}{}</tr>",
        td("loop gain T at midband"),
        c("loop_gain", ratio),
        td(""),
        td(""),
        td(""),
        td("")
    );
    for (what, key) in [("Zin", "input_impedance"), ("Zout", "output_impedance")] {
        if r.pointer(&format!("{F}/{key}/impedance")).is_none() {
            continue;
        }
        let ohm = Show::Si(Unit::Ohm);
        let _ = writeln!(
            out,
            "<tr>{}{}{}{}{}{}</tr>",
            td(what),
            c(&format!("{key}/impedance"), ohm),
            c(&format!("{key}/without_loop"), ohm),
            td(""),
            c(&format!("{key}/loop_gain_shorted"), ratio),
            c(&format!("{key}/loop_gain_open"), ratio)
        );
    }
    out.push_str("</tbody>\n</table>\n");
}

fn string_at(r: &Value, pointer: &str) -> String {
    r.pointer(pointer)
        .and_then(Value::as_str)
        .unwrap_or_default()
        .to_string()
}

/// The textbook estimate of a series–shunt or shunt–shunt amplifier beside
/// its exact figure.
fn textbook_table(out: &mut String, r: &Value) {
    const T: &str = "/stability/feedback/textbook";
    let Some(topology) = r.pointer(&format!("{T}/topology")).and_then(Value::as_str) else {
        return;
    };
    let text = |k: &str| {
        r.pointer(&format!("{T}/{k}"))
            .and_then(Value::as_str)
            .unwrap_or_default()
            .to_string()
    };
    let _ = writeln!(
        out,
        "<table class=\"keep\">\n<caption>{} feedback: the textbook estimate beside the exact figure</caption>",
        super::super::page::esc(topology)
    );
    head(
        out,
        &["figure", "exact", "estimate", "difference", "estimate from"],
    );
    let show = Show::Ratio("");
    let _ = writeln!(
        out,
        "<tbody>\n<tr>{}{}{}{}{}</tr>\n</tbody>\n</table>",
        td(&text("figure")),
        cell(r, &format!("{T}/exact"), show),
        cell(r, &format!("{T}/estimate"), show),
        cell(r, &format!("{T}/difference_percent"), Show::PercentSigned),
        td(&text("formula"))
    );
}
