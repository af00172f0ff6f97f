//! The time-domain section: the waveform and THD, shown only when that
//! analysis exists. The report reads it from `/transient` of the report's
//! root (null until a time-domain analysis fills it): every top-level number
//! becomes a table row (key, value), and arrays `time` (s) with `output`
//! (V) of equal length, when present, are drawn as a waveform.
//! Nothing else in the report depends on it.

use super::super::page::{cell, esc, figure, Show};
use super::super::Context;
use super::{close, open};
use crate::units::Unit;
use serde_json::Value;
use std::fmt::Write;

fn show_of(key: &str) -> Show {
    if key.ends_with("_db") {
        Show::Db
    } else if key.contains("percent") {
        Show::PercentSigned
    } else if key.contains("frequency") {
        Show::Si(Unit::Hertz)
    } else if key.contains("amplitude") || key.contains("voltage") {
        Show::Si(Unit::Volt)
    } else if key.contains("time") || key.contains("step") {
        Show::Si(Unit::Second)
    } else {
        Show::Ratio("")
    }
}

fn waveform(t: &[Value], v: &[Value]) -> Option<String> {
    let pts: Vec<(f64, f64)> = t
        .iter()
        .zip(v)
        .filter_map(|(a, b)| Some((a.as_f64()?, b.as_f64()?)))
        .collect();
    if pts.len() < 2 {
        return None;
    }
    let (t0, t1) = (pts[0].0, pts[pts.len() - 1].0);
    let lo = pts.iter().map(|p| p.1).fold(f64::INFINITY, f64::min);
    let hi = pts.iter().map(|p| p.1).fold(f64::NEG_INFINITY, f64::max);
    let span = if hi > lo { hi - lo } else { 1.0 };
    let mut d = String::new();
    for (k, (a, b)) in pts.iter().enumerate() {
        let x = 10.0 + (a - t0) / (t1 - t0).max(f64::MIN_POSITIVE) * 150.0;
        let y = 80.0 - (b - lo) / span * 70.0;
        let _ = write!(d, "{}{x:.2} {y:.2}", if k == 0 { "M" } else { " L" });
    }
    Some(format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"85mm\" height=\"45mm\" viewBox=\"0 0 170 90\" font-family=\"{}\">\n<rect x=\"0\" y=\"0\" width=\"170\" height=\"90\" fill=\"#ffffff\"/>\n<rect x=\"10\" y=\"10\" width=\"150\" height=\"70\" fill=\"none\" stroke=\"#23262f\" stroke-width=\"0.4\"/>\n<path d=\"{d}\" fill=\"none\" stroke=\"#0f766e\" stroke-width=\"0.6\"/>\n<text x=\"10\" y=\"88\" font-size=\"3.6\" fill=\"#5c6170\">{} … {}, {} … {}</text>\n</svg>\n",
        crate::scene::text::FAMILY,
        esc(&crate::units::format(t0, Unit::Second)),
        esc(&crate::units::format(t1, Unit::Second)),
        esc(&crate::units::format(lo, Unit::Volt)),
        esc(&crate::units::format(hi, Unit::Volt)),
    ))
}

pub fn render(ctx: &Context) -> Option<String> {
    let t = ctx.root.get("transient").filter(|v| v.is_object())?;
    let mut out = String::new();
    open(&mut out, "transient", "Time domain: waveform and THD");
    if let (Some(time), Some(v)) = (
        t.get("time").and_then(Value::as_array),
        t.get("output").and_then(Value::as_array),
    ) {
        if let Some(svg) = waveform(time, v) {
            figure(&mut out, "waveform", &svg, "Output voltage against time.");
        }
    }
    out.push_str("<table class=\"keep\" id=\"transient-figures\">\n<caption>Time-domain figures</caption>\n<tbody>\n");
    if let Some(o) = t.as_object() {
        for (k, v) in o {
            if v.is_number() {
                let _ = writeln!(
                    out,
                    "<tr><th scope=\"row\">{}</th>{}</tr>",
                    esc(&k.replace('_', " ")),
                    cell(&ctx.root, &format!("/transient/{k}"), show_of(k))
                );
            }
        }
    }
    out.push_str("</tbody>\n</table>\n");
    close(&mut out);
    Some(out)
}
