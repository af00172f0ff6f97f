//! The time-domain section: the source's sine at its own amplitude, run to
//! steady state — the output's last period drawn, THD, the fundamental, the
//! harmonics 2–10 and the DC shift at the output and at every stage's output.
//! The report reads it from `/transient` of its root: the same JSON that
//! `biasline transient --json` prints (null when the project has no signal
//! source or the run did not finish; then the section is left out).

use super::super::page::{cell, esc, figure, string, Show};
use super::super::Context;
use super::{close, open};
use crate::units::Unit;
use serde_json::Value;
use std::fmt::Write;

fn waveform(t: &[Value], series: &[(&[Value], &str, &str)]) -> Option<String> {
    let times: Vec<f64> = t.iter().filter_map(Value::as_f64).collect();
    if times.len() < 2 {
        return None;
    }
    let all: Vec<f64> = series
        .iter()
        .flat_map(|(v, _, _)| v.iter().filter_map(Value::as_f64))
        .collect();
    let lo = all.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = all.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if !lo.is_finite() || !hi.is_finite() {
        return None;
    }
    let span = if hi > lo { hi - lo } else { 1.0 };
    let (t0, t1) = (times[0], times[times.len() - 1]);
    let mut paths = String::new();
    for (k, (v, colour, name)) in series.iter().enumerate() {
        let mut d = String::new();
        for (j, (a, b)) in times
            .iter()
            .zip(v.iter().filter_map(Value::as_f64))
            .enumerate()
        {
            let x = 10.0 + (a - t0) / (t1 - t0).max(f64::MIN_POSITIVE) * 150.0;
            let y = 80.0 - (b - lo) / span * 70.0;
            let _ = write!(d, "{}{x:.2} {y:.2}", if j == 0 { "M" } else { " L" });
        }
        let _ = writeln!(
            paths,
            "<path d=\"{d}\" fill=\"none\" stroke=\"{colour}\" stroke-width=\"0.6\"{}/>\n<text x=\"{}\" y=\"7\" font-size=\"3.6\" fill=\"{colour}\">{}</text>",
            if k == 0 { " stroke-dasharray=\"1.5 1\"" } else { "" },
            12.0 + 60.0 * k as f64,
            esc(name)
        );
    }
    Some(format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"85mm\" height=\"45mm\" viewBox=\"0 0 170 90\" font-family=\"{}\">\n<rect x=\"0\" y=\"0\" width=\"170\" height=\"90\" fill=\"#ffffff\"/>\n<rect x=\"10\" y=\"10\" width=\"150\" height=\"70\" fill=\"none\" stroke=\"#23262f\" stroke-width=\"0.4\"/>\n{paths}<text x=\"10\" y=\"88\" font-size=\"3.6\" fill=\"#5c6170\">{} … {}, {} … {}</text>\n</svg>\n",
        crate::scene::text::FAMILY,
        esc(&crate::units::format(t0, Unit::Second)),
        esc(&crate::units::format(t1, Unit::Second)),
        esc(&crate::units::format(lo, Unit::Volt)),
        esc(&crate::units::format(hi, Unit::Volt)),
    ))
}

fn row(out: &mut String, root: &Value, label: &str, pointer: &str, show: Show) {
    let _ = writeln!(
        out,
        "<tr><th scope=\"row\">{}</th>{}</tr>",
        esc(label),
        cell(root, pointer, show)
    );
}

fn net_rows(out: &mut String, root: &Value, what: &str, base: &str) {
    let net = string(root, &format!("{base}/net"));
    let who = format!("{what} ({net})");
    row(
        out,
        root,
        &format!("{who}: fundamental, peak"),
        &format!("{base}/spectrum/amplitude/0"),
        Show::Si(Unit::Volt),
    );
    row(
        out,
        root,
        &format!("{who}: THD"),
        &format!("{base}/spectrum/thd"),
        Show::Percent,
    );
    row(
        out,
        root,
        &format!("{who}: DC shift"),
        &format!("{base}/dc_shift"),
        Show::Si(Unit::Volt),
    );
}

pub fn render(ctx: &Context) -> Option<String> {
    let t = ctx.root.get("transient").filter(|v| v.is_object())?;
    let root = &ctx.root;
    let mut out = String::new();
    open(&mut out, "transient", "Time domain: waveform and THD");
    if let Some(e) = t.get("error").and_then(Value::as_str) {
        super::para(&mut out, "note", &format!("No time-domain figures: {e}"));
        close(&mut out);
        return Some(out);
    }
    let arr = |k: &str| {
        t.pointer(&format!("/waveform/{k}"))
            .and_then(Value::as_array)
            .map_or(&[][..], Vec::as_slice)
    };
    if let Some(svg) = waveform(
        arr("time"),
        &[
            (arr("input"), "#5c6170", "input (dashed)"),
            (arr("output"), "#0f766e", "output"),
        ],
    ) {
        figure(
            &mut out,
            "waveform",
            &svg,
            "Input and output over the last period at steady state, the source at its own amplitude.",
        );
    }
    out.push_str("<table class=\"keep\" id=\"transient-figures\">\n<caption>Time-domain figures at steady state</caption>\n<tbody>\n");
    let d = "/transient/distortion";
    row(
        &mut out,
        root,
        "source amplitude, peak",
        &format!("{d}/amplitude"),
        Show::Si(Unit::Volt),
    );
    row(
        &mut out,
        root,
        "frequency",
        &format!("{d}/frequency"),
        Show::Si(Unit::Hertz),
    );
    row(
        &mut out,
        root,
        "periods run",
        &format!("{d}/periods"),
        Show::Count,
    );
    net_rows(&mut out, root, "output", &format!("{d}/output"));
    let stages = t
        .pointer("/distortion/stages")
        .and_then(Value::as_array)
        .map_or(0, Vec::len);
    for k in 0..stages {
        net_rows(
            &mut out,
            root,
            &format!("stage {}", k + 1),
            &format!("{d}/stages/{k}"),
        );
    }
    out.push_str("</tbody>\n</table>\n");
    out.push_str("<table class=\"keep\" id=\"transient-harmonics\">\n<caption>Output harmonics, dB below the fundamental</caption>\n<thead><tr><th scope=\"col\">harmonic</th><th scope=\"col\">level</th></tr></thead>\n<tbody>\n");
    let n = t
        .pointer("/distortion/output/spectrum/relative_db")
        .and_then(Value::as_array)
        .map_or(0, Vec::len);
    for k in 0..n {
        row(
            &mut out,
            root,
            &format!("H{}", k + 2),
            &format!("{d}/output/spectrum/relative_db/{k}"),
            Show::Db,
        );
    }
    out.push_str("</tbody>\n</table>\n");
    if t.pointer("/distortion/settled") == Some(&Value::Bool(false)) {
        out.push_str("<p class=\"note\">The output had not settled to the set tolerance within the longest run; the figures are of the last period run.</p>\n");
    }
    close(&mut out);
    Some(out)
}
