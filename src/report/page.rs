//! The page: HTML skeleton, the print style, escaping, and table cells that
//! name the JSON value they show.

use super::Context;
use crate::units::{self, Unit};
use serde_json::Value;
use std::fmt::Write;

/// The style sheet (screen and print: A4 and Letter, page breaks between
/// sections, figures and small tables kept whole).
pub const STYLE: &str = include_str!("style.css");

/// Escape text for HTML content and attribute values.
pub fn esc(s: &str) -> String {
    crate::render::svg::escape(s)
}

/// How a number is shown. Every form carries its unit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Show {
    /// Engineering notation with an SI prefix and the unit, 3 significant figures.
    Si(Unit),
    /// A plain ratio to 3 significant figures, with its unit word (e.g. `V/V`; empty: none).
    Ratio(&'static str),
    /// Decibels, two decimals.
    Db,
    /// A fraction shown as a percentage, one decimal.
    Percent,
    /// A percentage already in per cent, one decimal, signed.
    PercentSigned,
    /// Degrees Celsius, one decimal.
    Celsius,
    /// Kelvin, two decimals.
    Kelvin,
    /// A density per √Hz.
    Density(Unit),
    /// An integer count.
    Count,
    /// An angle in degrees, one decimal.
    Degrees,
}

/// Three significant figures of a plain number, with a real minus sign.
pub fn sig3(v: f64) -> String {
    if !v.is_finite() {
        return "—".into();
    }
    if v == 0.0 {
        return "0".into();
    }
    if v.abs() < 1e-3 || v.abs() >= 1e6 {
        return format!("{v:.2e}").replace('-', "−");
    }
    let digits = (2 - v.abs().log10().floor() as i32).max(0) as usize;
    format!("{v:.digits$}").replace('-', "−")
}

/// The text of a number.
pub fn text(v: f64, show: Show) -> String {
    if !v.is_finite() {
        return "—".into();
    }
    let minus = |s: String| s.replace('-', "−");
    match show {
        Show::Si(u) => minus(units::format(v, u)),
        Show::Ratio("") => sig3(v),
        Show::Ratio(w) => format!("{} {w}", sig3(v)),
        Show::Db => minus(format!("{v:.2} dB")),
        Show::Percent => minus(format!("{:.1} %", 100.0 * v)),
        Show::PercentSigned => {
            let s = format!("{:.1} %", v.abs());
            if v < 0.0 {
                format!("−{s}")
            } else {
                format!("+{s}")
            }
        }
        Show::Celsius => minus(format!("{v:.1} °C")),
        Show::Kelvin => format!("{v:.2} K"),
        Show::Density(u) => format!("{}/√Hz", minus(units::format(v, u))),
        Show::Count => format!("{}", v.round()),
        Show::Degrees => minus(format!("{v:.1}°")),
    }
}

/// A table cell with the value at JSON `pointer` of the report's root:
/// `data-json` names the pointer, `data-value` holds the exact number
/// (empty for `null`: shown as —).
pub fn cell(root: &Value, pointer: &str, show: Show) -> String {
    let v = root.pointer(pointer);
    let num = v.and_then(Value::as_f64);
    let value = num.map(|x| format!("{x:?}")).unwrap_or_default();
    let shown = num.map_or("—".to_string(), |x| text(x, show));
    format!(
        "<td class=\"num\" data-json=\"{}\" data-value=\"{value}\">{}</td>",
        esc(pointer),
        esc(&shown)
    )
}

/// The number at `pointer`, if any.
pub fn number(root: &Value, pointer: &str) -> Option<f64> {
    root.pointer(pointer).and_then(Value::as_f64)
}

/// The string at `pointer`, or empty.
pub fn string(root: &Value, pointer: &str) -> String {
    root.pointer(pointer)
        .and_then(Value::as_str)
        .unwrap_or_default()
        .to_string()
}

/// The array at `pointer` (empty when absent).
pub fn array<'v>(root: &'v Value, pointer: &str) -> &'v [Value] {
    root.pointer(pointer)
        .and_then(Value::as_array)
        .map_or(&[], Vec::as_slice)
}

/// A text cell.
pub fn td(s: &str) -> String {
    format!("<td>{}</td>", esc(s))
}

/// A header row.
pub fn head(out: &mut String, names: &[&str]) {
    out.push_str("<thead><tr>");
    for n in names {
        let _ = write!(out, "<th scope=\"col\">{}</th>", esc(n));
    }
    out.push_str("</tr></thead>\n");
}

/// A figure: inline SVG and a caption.
pub fn figure(out: &mut String, class: &str, svg: &str, caption: &str) {
    let _ = writeln!(
        out,
        "<figure class=\"{class}\">\n{}<figcaption>{}</figcaption>\n</figure>",
        strip_xml_declaration(svg),
        esc(caption)
    );
}

/// The SVG as it goes inline: from its `<svg` on, without the namespace
/// attribute (the HTML parser puts `<svg>` in the SVG namespace itself, and
/// the page then holds no address of any kind).
fn strip_xml_declaration(svg: &str) -> String {
    let svg = match svg.find("<svg") {
        Some(k) => &svg[k..],
        None => svg,
    };
    svg.replacen(" xmlns=\"http://www.w3.org/2000/svg\"", "", 1)
}

/// The `@font-face` rules of the embedded font (regular and bold, once for
/// the whole page: every inline SVG and the text use it).
fn font_faces() -> &'static str {
    static CSS: std::sync::OnceLock<String> = std::sync::OnceLock::new();
    CSS.get_or_init(font_faces_once)
}

fn font_faces_once() -> String {
    let mut css = String::new();
    for (w, word) in [
        (crate::scene::Weight::Regular, "normal"),
        (crate::scene::Weight::Bold, "bold"),
    ] {
        let _ = writeln!(
            css,
            "@font-face{{font-family:'{}';font-weight:{word};src:url(data:font/ttf;base64,{}) format('truetype');}}",
            crate::scene::text::FAMILY,
            crate::render::svg::base64(crate::scene::text::font_data(w))
        );
    }
    css
}

/// The whole HTML document.
pub fn document(ctx: &Context) -> String {
    let mut out = String::with_capacity(3 << 20);
    let title = if ctx.doc.title.is_empty() {
        "Untitled design".to_string()
    } else {
        crate::document::limits::repeated_title(&ctx.doc.title)
    };
    let _ = write!(
        out,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
         <meta name=\"generator\" content=\"Biasline {}\">\n\
         <title>{} — design report</title>\n<style>\n{}{}</style>\n</head>\n<body>\n",
        env!("CARGO_PKG_VERSION"),
        esc(&title),
        font_faces(),
        STYLE
    );
    for section in super::sections::all(ctx) {
        out.push_str(&section);
    }
    out.push_str("</body>\n</html>\n");
    out
}
