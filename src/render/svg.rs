//! SVG export. Text stays text, drawn with DejaVu Sans embedded in the file
//! as `@font-face` data, kerning off, so it measures the same in every
//! viewer as it did during placement. With `outline_text` the text is
//! turned into paths instead (through usvg, with the same font).
//!
//! The user space is the sheet grid (one unit = 2.54 mm); width and height
//! are given in millimetres so the drawing prints at 100 %.

use super::{Background, RenderError};
use crate::document::GRID_PITCH_MM;
use crate::scene::{
    Anchor, Arrow, Colour, Element, Layer, LayerSet, PathItem, Primitive, Scene, Shape, Stroke,
    TextRun, Weight,
};
use std::fmt::Write;

#[derive(Debug, Clone, PartialEq)]
pub struct SvgOptions {
    pub background: Background,
    /// Embed the font as `@font-face` data (off: viewers need DejaVu Sans).
    pub embed_font: bool,
    /// Turn text into outlines (no font needed to view; not searchable).
    pub outline_text: bool,
    /// The document title, written as the SVG `<title>`.
    pub title: String,
}

impl Default for SvgOptions {
    fn default() -> Self {
        SvgOptions {
            background: Background::White,
            embed_font: true,
            outline_text: false,
            title: String::new(),
        }
    }
}

/// A number for SVG: three decimals, no trailing zeros, never `-0`.
fn n(v: f64) -> String {
    let mut s = format!("{v:.3}");
    if s.contains('.') {
        s = s.trim_end_matches('0').trim_end_matches('.').to_string();
    }
    if s == "-0" {
        s = "0".into();
    }
    s
}

pub(crate) fn escape(s: &str) -> String {
    let mut o = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => o.push_str("&amp;"),
            '<' => o.push_str("&lt;"),
            '>' => o.push_str("&gt;"),
            '"' => o.push_str("&quot;"),
            _ => o.push(c),
        }
    }
    o
}

fn paint(c: Colour) -> String {
    if c.a == 255 {
        c.hex()
    } else {
        format!("{}\" fill-opacity=\"{}", c.hex(), n(c.a as f64 / 255.0))
    }
}

fn stroke_attrs(s: &Option<Stroke>) -> String {
    match s {
        None => " stroke=\"none\"".into(),
        Some(s) => {
            let mut a = format!(
                " stroke=\"{}\" stroke-width=\"{}\" stroke-linecap=\"round\" stroke-linejoin=\"round\"",
                s.colour.hex(),
                n(s.width)
            );
            if s.colour.a != 255 {
                let _ = write!(a, " stroke-opacity=\"{}\"", n(s.colour.a as f64 / 255.0));
            }
            if let Some([d, g]) = s.dash {
                let _ = write!(a, " stroke-dasharray=\"{} {}\"", n(d), n(g));
            }
            a
        }
    }
}

fn fill_attr(f: &Option<Colour>) -> String {
    match f {
        None => " fill=\"none\"".into(),
        Some(c) => format!(" fill=\"{}\"", paint(*c)),
    }
}

fn path_data(shape: &Shape) -> Option<String> {
    match shape {
        Shape::Polyline { points, closed } => {
            let mut d = String::new();
            for (i, p) in points.iter().enumerate() {
                let _ = write!(
                    d,
                    "{}{} {}",
                    if i == 0 { "M" } else { " L" },
                    n(p[0]),
                    n(p[1])
                );
            }
            if *closed {
                d.push_str(" Z");
            }
            Some(d)
        }
        Shape::Arc {
            center,
            radius,
            start_degrees,
            sweep_degrees,
        } => {
            let a0 = start_degrees.to_radians();
            let a1 = (start_degrees + sweep_degrees).to_radians();
            let p0 = [center[0] + radius * a0.cos(), center[1] + radius * a0.sin()];
            let p1 = [center[0] + radius * a1.cos(), center[1] + radius * a1.sin()];
            let large = (sweep_degrees.abs() > 180.0) as u8;
            // y is down: a positive (clockwise on screen) sweep is SVG's sweep-flag 1.
            let sweep = (*sweep_degrees > 0.0) as u8;
            Some(format!(
                "M{} {} A{} {} 0 {} {} {} {}",
                n(p0[0]),
                n(p0[1]),
                n(*radius),
                n(*radius),
                large,
                sweep,
                n(p1[0]),
                n(p1[1])
            ))
        }
        _ => None,
    }
}

fn write_path(out: &mut String, item: &PathItem) {
    let style = format!("{}{}", stroke_attrs(&item.stroke), fill_attr(&item.fill));
    match &item.shape {
        Shape::Circle { center, radius } => {
            let _ = writeln!(
                out,
                "<circle cx=\"{}\" cy=\"{}\" r=\"{}\"{style}/>",
                n(center[0]),
                n(center[1]),
                n(*radius)
            );
        }
        Shape::Rect { rect, corner } => {
            let _ = writeln!(
                out,
                "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" rx=\"{}\"{style}/>",
                n(rect.min[0]),
                n(rect.min[1]),
                n(rect.width()),
                n(rect.height()),
                n(*corner)
            );
        }
        shape => {
            if let Some(d) = path_data(shape) {
                let _ = writeln!(out, "<path d=\"{d}\"{style}/>");
            }
        }
    }
}

fn write_arrow(out: &mut String, a: &Arrow) {
    let head = a.head_points();
    // The shaft stops inside the head so its round cap does not poke out.
    let base = [
        (head[1][0] + head[2][0]) / 2.0,
        (head[1][1] + head[2][1]) / 2.0,
    ];
    let _ = writeln!(
        out,
        "<path d=\"M{} {} L{} {}\"{} fill=\"none\"/>",
        n(a.from[0]),
        n(a.from[1]),
        n(base[0]),
        n(base[1]),
        stroke_attrs(&Some(a.stroke))
    );
    let _ = writeln!(
        out,
        "<path d=\"M{} {} L{} {} L{} {} Z\" fill=\"{}\" stroke=\"none\"/>",
        n(head[0][0]),
        n(head[0][1]),
        n(head[1][0]),
        n(head[1][1]),
        n(head[2][0]),
        n(head[2][1]),
        a.stroke.colour.hex()
    );
}

fn write_text(out: &mut String, t: &TextRun) {
    let anchor = match t.anchor {
        Anchor::Start => "start",
        Anchor::Middle => "middle",
        Anchor::End => "end",
    };
    let weight = match t.weight {
        Weight::Regular => "normal",
        Weight::Bold => "bold",
    };
    let _ = writeln!(
        out,
        "<text x=\"{}\" y=\"{}\" font-size=\"{}\" font-weight=\"{weight}\" text-anchor=\"{anchor}\" fill=\"{}\">{}</text>",
        n(t.position[0]),
        n(t.position[1]),
        n(t.size),
        paint(t.colour),
        escape(&t.text)
    );
}

fn write_element(out: &mut String, e: &Element) {
    match &e.primitive {
        Primitive::Path(p) => write_path(out, p),
        Primitive::Text(t) => write_text(out, t),
        Primitive::Arrow(a) => write_arrow(out, a),
    }
}

/// Standard base64 (RFC 4648) of `data`.
pub(crate) fn base64(data: &[u8]) -> String {
    const T: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    let mut o = String::with_capacity(data.len().div_ceil(3) * 4);
    for c in data.chunks(3) {
        let b = [c[0], *c.get(1).unwrap_or(&0), *c.get(2).unwrap_or(&0)];
        let v = (b[0] as u32) << 16 | (b[1] as u32) << 8 | b[2] as u32;
        o.push(T[(v >> 18) as usize & 63] as char);
        o.push(T[(v >> 12) as usize & 63] as char);
        o.push(if c.len() > 1 {
            T[(v >> 6) as usize & 63] as char
        } else {
            '='
        });
        o.push(if c.len() > 2 {
            T[v as usize & 63] as char
        } else {
            '='
        });
    }
    o
}

/// `@font-face` rules with the embedded font, each weight cut down to the
/// glyphs the drawing uses (see [`super::subset`]); a weight with no text
/// is left out. Text stays text: selectable and searchable.
fn font_face_css(scene: &Scene, layers: LayerSet) -> String {
    let mut used: [std::collections::BTreeSet<char>; 2] = Default::default();
    for e in scene.elements_in(layers) {
        if let Primitive::Text(t) = &e.primitive {
            used[(t.weight == Weight::Bold) as usize].extend(t.text.chars());
        }
    }
    let mut css = String::new();
    for (w, word, chars) in [
        (Weight::Regular, "normal", &used[0]),
        (Weight::Bold, "bold", &used[1]),
    ] {
        if chars.is_empty() {
            continue;
        }
        let full = crate::scene::text::font_data(w);
        let data = super::subset::subset(full, chars.iter().copied());
        let _ = writeln!(
            css,
            "@font-face{{font-family:'{}';font-weight:{word};src:url(data:font/ttf;base64,{}) format('truetype');}}",
            crate::scene::text::FAMILY,
            base64(data.as_deref().unwrap_or(full))
        );
    }
    css
}

/// Render the layers of a scene as an SVG document.
pub fn render(scene: &Scene, layers: LayerSet, opts: &SvgOptions) -> Result<String, RenderError> {
    let svg = render_plain(scene, layers, opts, opts.embed_font && !opts.outline_text);
    if !opts.outline_text {
        return Ok(svg);
    }
    let tree = resvg::usvg::Tree::from_str(&svg, &super::usvg_options())
        .map_err(|e| RenderError(format!("cannot turn the text into outlines: {e}")))?;
    let write = resvg::usvg::WriteOptions {
        preserve_text: false,
        ..resvg::usvg::WriteOptions::default()
    };
    Ok(tree.to_string(&write))
}

/// The SVG with text as text; `embed_font` adds the `@font-face` data.
pub(crate) fn render_plain(
    scene: &Scene,
    layers: LayerSet,
    opts: &SvgOptions,
    embed_font: bool,
) -> String {
    let b = scene.bounds;
    let mut out = String::with_capacity(64 * 1024);
    let _ = writeln!(
        out,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{}mm\" height=\"{}mm\" viewBox=\"{} {} {} {}\" font-family=\"{}\" font-kerning=\"none\">",
        n(b.width() * GRID_PITCH_MM),
        n(b.height() * GRID_PITCH_MM),
        n(b.min[0]),
        n(b.min[1]),
        n(b.width()),
        n(b.height()),
        crate::scene::text::FAMILY
    );
    if !opts.title.is_empty() {
        let _ = writeln!(out, "<title>{}</title>", escape(&opts.title));
    }
    if embed_font {
        let _ = writeln!(out, "<style>\n{}</style>", font_face_css(scene, layers));
    }
    if let Some(c) = opts.background.colour() {
        let _ = writeln!(
            out,
            "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{}\"/>",
            n(b.min[0]),
            n(b.min[1]),
            n(b.width()),
            n(b.height()),
            c.hex()
        );
    }
    let mut current: Option<Layer> = None;
    for e in scene.elements_in(layers) {
        if current != Some(e.layer) {
            if current.is_some() {
                out.push_str("</g>\n");
            }
            let _ = writeln!(out, "<g class=\"{}\">", e.layer.word());
            current = Some(e.layer);
        }
        write_element(&mut out, e);
    }
    if current.is_some() {
        out.push_str("</g>\n");
    }
    out.push_str("</svg>\n");
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn base64_matches_the_standard_vectors() {
        // source: RFC 4648 §10 test vectors.
        assert_eq!(base64(b""), "");
        assert_eq!(base64(b"f"), "Zg==");
        assert_eq!(base64(b"fo"), "Zm8=");
        assert_eq!(base64(b"foo"), "Zm9v");
        assert_eq!(base64(b"foobar"), "Zm9vYmFy");
    }
}
