//! Each stage: configuration, its AC equivalent drawn, the device model
//! values, Zin/Zout/Av/Ai exact beside the estimates, swing and Miller;
//! then the whole amplifier's figures.

use super::super::page::{array, cell, esc, figure, head, td, Show};
use super::super::Context;
use super::{close, open, para};
use crate::scene::{Element, Layer, LayerSet, Primitive, Rect, Scene};
use crate::units::Unit;
use serde_json::Value;
use std::fmt::Write;

/// The AC equivalent of one stage as SVG (the drawing of its stage card).
fn equivalent_svg(ctx: &Context, transistor: &str) -> Option<String> {
    let card = ctx
        .annotations
        .stages
        .iter()
        .find(|c| c.transistor == transistor)?;
    let (prims, size) = crate::scene::draw_equivalent(card, ctx.opts.model);
    let elements = prims
        .into_iter()
        .map(|primitive: Primitive| Element {
            layer: Layer::Stages,
            item: None,
            primitive,
        })
        .collect();
    let scene = Scene {
        elements,
        bounds: Rect::new([-1.0, -0.5], [size[0] + 1.0, size[1] + 0.8]),
        ..Scene::default()
    };
    Some(crate::render::svg::render_plain(
        &scene,
        LayerSet::all(),
        &crate::render::svg::SvgOptions {
            embed_font: false,
            title: format!("{transistor}: AC equivalent"),
            ..Default::default()
        },
        false,
    ))
}

/// A FET's model values: the FET hybrid-π (gm, gds = 1/ro, Cgs, Cgd, Cds)
/// and the T model's 1/gm in the source lead.
fn fet_models(out: &mut String, r: &Value, transistor: &str) {
    let Some(j) = array(r, "/analyze/small_signal/field_effect_transistors")
        .iter()
        .position(|t| t["designator"] == transistor)
    else {
        return;
    };
    let base = format!("/analyze/small_signal/field_effect_transistors/{j}");
    let _ = writeln!(
        out,
        "<table class=\"keep model\">\n<caption>{}: small-signal model values at the operating point</caption>",
        esc(transistor)
    );
    head(out, &["model", "quantity", "value"]);
    out.push_str("<tbody>\n");
    for (model, q, key, show) in [
        ("FET hybrid-π", "gm", "gm", Show::Si(Unit::Siemens)),
        ("FET hybrid-π", "gds = 1/ro", "gds", Show::Si(Unit::Siemens)),
        ("FET hybrid-π", "Cgs", "cgs", Show::Si(Unit::Farad)),
        ("FET hybrid-π", "Cgd", "cgd", Show::Si(Unit::Farad)),
        ("FET hybrid-π", "Cds", "cds", Show::Si(Unit::Farad)),
    ] {
        let p = format!("{base}/{key}");
        let _ = writeln!(out, "<tr>{}{}{}</tr>", td(model), td(q), cell(r, &p, show));
    }
    for (q, key) in [("1/gm (in the source lead)", "gm"), ("ro", "gds")] {
        let g = r
            .pointer(&format!("{base}/{key}"))
            .and_then(Value::as_f64)
            .unwrap_or(0.0);
        let shown = if g > 0.0 {
            crate::units::format(1.0 / g, Unit::Ohm)
        } else {
            "open".to_string()
        };
        let _ = writeln!(out, "<tr>{}{}{}</tr>", td("T (1/gm)"), td(q), td(&shown));
    }
    out.push_str("</tbody>\n</table>\n");
}

fn models(out: &mut String, r: &Value, transistor: &str) {
    let Some(j) = array(r, "/analyze/small_signal/transistors")
        .iter()
        .position(|t| t["designator"] == transistor)
    else {
        fet_models(out, r, transistor);
        return;
    };
    let base = format!("/analyze/small_signal/transistors/{j}/models");
    let _ = writeln!(
        out,
        "<table class=\"keep model\">\n<caption>{}: small-signal model values at the operating point</caption>",
        esc(transistor)
    );
    head(out, &["model", "quantity", "value"]);
    out.push_str("<tbody>\n");
    let rows: [(&str, &str, &str, Show); 17] = [
        ("hybrid-π", "gm", "hybrid_pi/gm", Show::Si(Unit::Siemens)),
        (
            "hybrid-π",
            "gπ = 1/rπ",
            "hybrid_pi/g_pi",
            Show::Si(Unit::Siemens),
        ),
        (
            "hybrid-π",
            "gμ = 1/rμ",
            "hybrid_pi/g_mu",
            Show::Si(Unit::Siemens),
        ),
        (
            "hybrid-π",
            "go = 1/ro",
            "hybrid_pi/go",
            Show::Si(Unit::Siemens),
        ),
        ("hybrid-π", "Cπ", "hybrid_pi/c_pi", Show::Si(Unit::Farad)),
        ("hybrid-π", "Cμ", "hybrid_pi/c_mu", Show::Si(Unit::Farad)),
        ("hybrid-π", "rb", "hybrid_pi/rb", Show::Si(Unit::Ohm)),
        ("T (re)", "α", "t/alpha", Show::Ratio("")),
        ("T (re)", "re", "t/re", Show::Si(Unit::Ohm)),
        ("T (re)", "ro", "t/ro", Show::Si(Unit::Ohm)),
        ("T (re)", "rμ", "t/r_mu", Show::Si(Unit::Ohm)),
        (
            "h, common emitter",
            "hie",
            "h/common_emitter/h11",
            Show::Si(Unit::Ohm),
        ),
        (
            "h, common emitter",
            "hre",
            "h/common_emitter/h12",
            Show::Ratio(""),
        ),
        (
            "h, common emitter",
            "hfe",
            "h/common_emitter/h21",
            Show::Ratio(""),
        ),
        (
            "h, common emitter",
            "hoe",
            "h/common_emitter/h22",
            Show::Si(Unit::Siemens),
        ),
        (
            "common-emitter y",
            "y21 = ∂IC/∂VBE",
            "y/y21",
            Show::Si(Unit::Siemens),
        ),
        (
            "common-emitter y",
            "y11 = ∂IB/∂VBE",
            "y/y11",
            Show::Si(Unit::Siemens),
        ),
    ];
    // gμ, rμ and hre: the base current has no Early term in this model, so
    // they are zero (rμ open) up to rounding; say so instead of 1e-60.
    let negligible = |key: &str, v: f64| match key {
        "hybrid_pi/g_mu" => v.abs() < 1e-18,
        "t/r_mu" => v.abs() > 1e18,
        "h/common_emitter/h12" => v.abs() < 1e-12,
        _ => false,
    };
    let mut none = Vec::new();
    for (model, q, key, show) in rows {
        let p = format!("{base}/{key}");
        let Some(v) = r.pointer(&p) else {
            continue;
        };
        if v.as_f64().is_some_and(|v| negligible(key, v)) {
            none.push(q);
            continue;
        }
        let _ = writeln!(out, "<tr>{}{}{}</tr>", td(model), td(q), cell(r, &p, show));
    }
    out.push_str("</tbody>\n</table>\n");
    if !none.is_empty() {
        para(
            out,
            "note",
            &format!(
                "Not listed: {} — zero (rμ open) in this model, whose base current has no Early term.",
                none.join(", ")
            ),
        );
    }
}

/// A FET stage (its `family` is `field_effect`).
fn is_fet(r: &Value, base: &str) -> bool {
    r.pointer(&format!("{base}/family"))
        .and_then(Value::as_str)
        .is_some_and(|f| f == "field_effect")
}

fn lumps(out: &mut String, r: &Value, base: &str) {
    let fet = is_fet(r, base);
    let roles = [
        ("source", "driven by"),
        (
            "base",
            if fet {
                "bias network at the gate"
            } else {
                "bias network at the base"
            },
        ),
        (
            "emitter",
            if fet {
                "source (unbypassed)"
            } else {
                "emitter (unbypassed)"
            },
        ),
        ("output", "on the output"),
    ];
    let _ = writeln!(
        out,
        "<table class=\"keep\">\n<caption>AC equivalent: the resistances a designer redraws</caption>"
    );
    head(out, &["role", "parts", "resistance"]);
    out.push_str("<tbody>\n");
    for (key, words) in roles {
        let l = &r
            .pointer(&format!("{base}/ac/{key}"))
            .cloned()
            .unwrap_or(Value::Null);
        if l.is_null() {
            continue;
        }
        let _ = writeln!(
            out,
            "<tr>{}{}{}</tr>",
            td(words),
            td(l["label"].as_str().unwrap_or_default()),
            cell(
                r,
                &format!("{base}/ac/{key}/resistance"),
                Show::Si(Unit::Ohm)
            )
        );
    }
    if let Some(by) = r
        .pointer(&format!("{base}/ac/loaded_by"))
        .and_then(Value::as_str)
    {
        let _ = writeln!(
            out,
            "<tr>{}{}{}</tr>",
            td("loaded by"),
            td(by),
            cell(r, &format!("{base}/load_resistance"), Show::Si(Unit::Ohm))
        );
    }
    out.push_str("</tbody>\n</table>\n");
}

fn figures(out: &mut String, r: &Value, base: &str, transistor: &str) {
    let _ = writeln!(
        out,
        "<table class=\"keep figures\">\n<caption>{}: midband figures, exact from the small-signal circuit beside the textbook estimates</caption>",
        esc(transistor)
    );
    let (first, second) = if is_fet(r, base) {
        ("T model", "hybrid-π")
    } else {
        ("re model", "h-parameters")
    };
    head(
        out,
        &["figure", "exact", first, "difference", second, "difference"],
    );
    out.push_str("<tbody>\n");
    for (name, key, show) in [
        ("Zin", "input_impedance", Show::Si(Unit::Ohm)),
        ("Zout", "output_impedance", Show::Si(Unit::Ohm)),
        ("Av", "voltage_gain", Show::Ratio("V/V")),
        ("Ai", "current_gain", Show::Ratio("A/A")),
    ] {
        let p = |k: &str| format!("{base}/{key}/{k}");
        let _ = writeln!(
            out,
            "<tr>{}{}{}{}{}{}</tr>",
            td(name),
            cell(r, &p("exact"), show),
            cell(r, &p("re_model"), show),
            cell(r, &p("re_difference_percent"), Show::PercentSigned),
            cell(r, &p("h_model"), show),
            cell(r, &p("h_difference_percent"), Show::PercentSigned),
        );
    }
    out.push_str("</tbody>\n</table>\n");
    let words = |k: &str| {
        r.pointer(&format!("{base}/{k}"))
            .and_then(Value::as_array)
            .map(|a| {
                a.iter()
                    .filter_map(Value::as_str)
                    .collect::<Vec<_>>()
                    .join("; ")
            })
            .unwrap_or_default()
    };
    para(
        out,
        "note",
        &format!("The {first} leaves out: {}.", words("re_model_neglects")),
    );
    para(
        out,
        "note",
        &format!(
            "The {second} {} out: {}.",
            if second == "hybrid-π" {
                "leaves"
            } else {
                "leave"
            },
            words("h_model_neglects")
        ),
    );
}

fn swing_and_miller(out: &mut String, r: &Value, base: &str) {
    let has_swing = r
        .pointer(&format!("{base}/swing"))
        .is_some_and(|v| !v.is_null());
    let has_miller = r
        .pointer(&format!("{base}/miller"))
        .is_some_and(|v| !v.is_null());
    if !has_swing && !has_miller {
        return;
    }
    out.push_str(
        "<table class=\"keep\">\n<caption>Output swing and Miller estimate</caption>\n<tbody>\n",
    );
    let row = |out: &mut String, k: &str, key: &str, show: Show| {
        let _ = writeln!(
            out,
            "<tr><th scope=\"row\">{}</th>{}</tr>",
            esc(k),
            cell(r, &format!("{base}/{key}"), show)
        );
    };
    if has_swing {
        let by = r
            .pointer(&format!("{base}/swing/limited_by"))
            .and_then(Value::as_str)
            .unwrap_or_default();
        row(
            out,
            &format!("peak output swing (limited by {by})"),
            "swing/limit",
            Show::Si(Unit::Volt),
        );
        row(
            out,
            if is_fet(r, base) {
                "toward the triode edge"
            } else {
                "toward saturation"
            },
            "swing/toward_saturation",
            Show::Si(Unit::Volt),
        );
        row(
            out,
            "toward cut-off",
            "swing/toward_cut_off",
            Show::Si(Unit::Volt),
        );
        row(out, "AC load", "swing/ac_load", Show::Si(Unit::Ohm));
        row(
            out,
            "stage input amplitude that reaches it",
            "swing/input_amplitude",
            Show::Si(Unit::Volt),
        );
        row(
            out,
            "source amplitude that reaches it",
            "swing/source_amplitude",
            Show::Si(Unit::Volt),
        );
    }
    if has_miller {
        row(
            out,
            if is_fet(r, base) {
                "Miller input capacitance Cgs + Cgd(1 + gm·R′L)"
            } else {
                "Miller input capacitance Cπ + Cμ(1 + gm·R′L)"
            },
            "miller/input_capacitance",
            Show::Si(Unit::Farad),
        );
        row(
            out,
            if is_fet(r, base) {
                "R′L = ro ‖ RD ‖ load"
            } else {
                "R′L = ro ‖ RC ‖ load"
            },
            "miller/load",
            Show::Si(Unit::Ohm),
        );
        row(
            out,
            "resistance the input capacitance sees",
            "miller/resistance",
            Show::Si(Unit::Ohm),
        );
        row(
            out,
            "upper corner estimate 1/(2π·R·Cin)",
            "miller/upper_corner",
            Show::Si(Unit::Hertz),
        );
    }
    out.push_str("</tbody>\n</table>\n");
}

fn chain(out: &mut String, r: &Value) {
    let c = "/analyze/small_signal/chain";
    let name = |p: &str| {
        r.pointer(p)
            .and_then(Value::as_str)
            .unwrap_or("—")
            .to_string()
    };
    let _ = writeln!(
        out,
        "<h3>Whole amplifier</h3>\n<p>From the signal source {} to the load {}.</p>",
        esc(&name(
            "/analyze/small_signal/chain_topology/source/designator"
        )),
        esc(&name(
            "/analyze/small_signal/chain_topology/load/designator"
        ))
    );
    out.push_str("<table class=\"keep\" id=\"chain\">\n<caption>Whole-amplifier figures at midband</caption>\n<tbody>\n");
    for (k, key, show) in [
        (
            "Zin seen by the source",
            "input_impedance",
            Show::Si(Unit::Ohm),
        ),
        (
            "source resistance",
            "source_resistance",
            Show::Si(Unit::Ohm),
        ),
        (
            "Zout seen by the load",
            "output_impedance",
            Show::Si(Unit::Ohm),
        ),
        ("load", "load_impedance", Show::Si(Unit::Ohm)),
        ("Avs, source EMF to load", "source_gain", Show::Ratio("V/V")),
        ("Avs in dB", "source_gain_db", Show::Db),
        (
            "Av, amplifier input to load",
            "voltage_gain",
            Show::Ratio("V/V"),
        ),
        ("Av in dB", "voltage_gain_db", Show::Db),
        (
            "Ai, load current over input current",
            "current_gain",
            Show::Ratio("A/A"),
        ),
        ("open-circuit gain", "open_circuit_gain", Show::Ratio("V/V")),
        ("v(input)/vs", "input_fraction", Show::Ratio("V/V")),
    ] {
        let _ = writeln!(
            out,
            "<tr><th scope=\"row\">{}</th>{}</tr>",
            esc(k),
            cell(r, &format!("{c}/{key}"), show)
        );
    }
    out.push_str("</tbody>\n</table>\n");
    for u in array(r, "/analyze/small_signal/chain/unavailable") {
        para(
            out,
            "note",
            &format!("Unavailable: {}", u.as_str().unwrap_or_default()),
        );
    }
}

pub fn render(ctx: &Context) -> String {
    let r = &ctx.root;
    let mut out = String::new();
    open(&mut out, "stages", "Stages");
    let stages = array(r, "/analyze/small_signal/stages");
    if stages.is_empty() {
        let why: Vec<&str> = array(r, "/analyze/small_signal/chain_topology/notes")
            .iter()
            .filter_map(Value::as_str)
            .collect();
        para(
            &mut out,
            "",
            &format!(
                "No amplifier stage was recognised on the signal path{}",
                if why.is_empty() {
                    ".".to_string()
                } else {
                    format!(": {}", why.join("; "))
                }
            ),
        );
    }
    for (k, s) in stages.iter().enumerate() {
        let base = format!("/analyze/small_signal/stages/{k}");
        let t = s["transistor"].as_str().unwrap_or_default();
        let _ = writeln!(
            out,
            "<div class=\"stage\" id=\"stage-{}\">\n<h3>Stage {}: {} — {}{}</h3>\n<p>Input net {}, output net {}.</p>",
            esc(t),
            k + 1,
            esc(t),
            esc(s["configuration_words"].as_str().unwrap_or_default()),
            if s["overridden"].as_bool() == Some(true) { " (set by the project)" } else { "" },
            esc(s["input_net"].as_str().unwrap_or_default()),
            esc(s["output_net"].as_str().unwrap_or_default())
        );
        for n in s["notes"].as_array().into_iter().flatten() {
            para(
                &mut out,
                "note",
                &format!("Also: {}", n.as_str().unwrap_or_default()),
            );
        }
        for c in s["caveats"].as_array().into_iter().flatten() {
            para(
                &mut out,
                "warning",
                &format!("Caution: {}", c.as_str().unwrap_or_default()),
            );
        }
        if let Some(svg) = equivalent_svg(ctx, t) {
            figure(
                &mut out,
                "equivalent",
                &svg,
                &format!(
                    "{t}: AC equivalent at midband, the transistor drawn as the {}.",
                    if s["family"] == "field_effect" {
                        match ctx.opts.model {
                            crate::scene::ModelKind::HybridPi => "FET hybrid-π",
                            _ => "T model (1/gm)",
                        }
                    } else {
                        ctx.opts.model.title()
                    }
                ),
            );
        }
        lumps(&mut out, r, &base);
        models(&mut out, r, t);
        figures(&mut out, r, &base, t);
        swing_and_miller(&mut out, r, &base);
        out.push_str("</div>\n");
    }
    chain(&mut out, r);
    close(&mut out);
    out
}
