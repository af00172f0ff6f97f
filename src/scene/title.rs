//! The title block: what the drawing is, under which conditions it was
//! analysed, by which program, and how far the analysis got.

use super::build::{Content, Leader, Pending};
use super::geometry::Rect;
use super::place::{Candidate, Request};
use super::{
    style, text, Anchor, Annotations, Colour, ItemRef, Layer, PathItem, Primitive, ResultState,
    Shape, Stroke, TextRun, Weight,
};
use crate::document::Document;

struct Line {
    text: String,
    size: f64,
    weight: Weight,
    colour: Colour,
}

fn lines(ann: &Annotations, doc: &Document) -> Vec<Line> {
    let t = &ann.title;
    let title = if t.title.is_empty() {
        doc.title.clone()
    } else {
        t.title.clone()
    };
    let mut out = vec![Line {
        text: text::shorten(&title, text::TITLE_DRAWN_MAX).into_owned(),
        size: style::TEXT_TITLE,
        weight: Weight::Bold,
        colour: style::INK,
    }];
    let line = |s: String, colour| Line {
        text: s,
        size: style::TEXT_CARD,
        weight: Weight::Regular,
        colour,
    };
    out.push(line(
        format!(
            "DC operating point at {} °C ambient",
            trim(t.ambient_celsius)
        ),
        style::INK,
    ));
    let (state, colour) = match &t.state {
        ResultState::Solved | ResultState::NotRun => (t.state.text(), style::INK),
        other => (format!("! {}", other.text()), style::WARNING),
    };
    out.push(line(format!("Result: {state}"), colour));
    const SHOWN: usize = 4;
    for w in t.warnings.iter().take(SHOWN) {
        for (k, piece) in wrap(w, 40.0).into_iter().enumerate() {
            let mark = if k == 0 { "! " } else { "   " };
            out.push(line(format!("{mark}{piece}"), style::WARNING));
        }
    }
    if t.warnings.len() > SHOWN {
        out.push(line(
            format!(
                "! … and {} more (see the findings)",
                t.warnings.len() - SHOWN
            ),
            style::WARNING,
        ));
    }
    for a in &t.assumptions {
        out.push(line(format!("• {a}"), style::INK_SOFT));
    }
    // Which device preset each transistor and diode uses.
    let mut presets: std::collections::BTreeMap<&str, Vec<&str>> = Default::default();
    for p in &doc.parts {
        if let Some(name) = &p.preset {
            if !p.designator.is_empty() {
                presets
                    .entry(name.as_str())
                    .or_default()
                    .push(&p.designator);
            }
        }
    }
    for (name, parts) in presets {
        out.push(line(
            format!("• {}: {name} preset", parts.join(", ")),
            style::INK_SOFT,
        ));
    }
    out.push(line(
        format!("Drawn by {} {}", t.program, t.version),
        style::INK_SOFT,
    ));
    out
}

/// Split text into lines at most `max` grid units wide at card size.
fn wrap(s: &str, max: f64) -> Vec<String> {
    let mut out = Vec::new();
    let mut line = String::new();
    for word in s.split_whitespace() {
        let next = if line.is_empty() {
            word.to_string()
        } else {
            format!("{line} {word}")
        };
        if !line.is_empty() && text::measure(&next, style::TEXT_CARD, Weight::Regular).width > max {
            out.push(std::mem::replace(&mut line, word.to_string()));
        } else {
            line = next;
        }
    }
    if !line.is_empty() {
        out.push(line);
    }
    out
}

fn trim(v: f64) -> String {
    let s = format!("{v:.1}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// The title block, waiting for its place (see [`candidates`]).
pub fn title_block(ann: &Annotations, doc: &Document) -> Pending {
    let lines = lines(ann, doc);
    let pad = 0.5;
    let w = lines
        .iter()
        .map(|l| text::measure(&l.text, l.size, l.weight).width)
        .fold(14.0f64, f64::max)
        + 2.0 * pad;
    let mut prims = Vec::new();
    let mut y = pad;
    let mut rule = 0.0;
    for (i, l) in lines.iter().enumerate() {
        let m = text::measure(&l.text, l.size, l.weight);
        y += m.ascent * 0.8;
        prims.push(Primitive::Text(TextRun {
            text: l.text.clone(),
            position: [pad, y],
            anchor: Anchor::Start,
            size: l.size,
            weight: l.weight,
            colour: l.colour,
        }));
        y += m.descent + 0.25;
        if i == 0 {
            rule = y;
            y += 0.3;
        }
    }
    let h = y + pad - 0.25;
    let thin = Stroke {
        colour: style::INK,
        width: style::FRAME,
        dash: None,
    };
    let stroke = Some(thin);
    prims.insert(
        0,
        Primitive::Path(PathItem {
            shape: Shape::Rect {
                rect: Rect::from_size([0.0, 0.0], w, h),
                corner: 0.0,
            },
            stroke: Some(Stroke {
                width: style::LINE,
                ..thin
            }),
            fill: Some(style::TAG_FILL),
        }),
    );
    prims.insert(
        1,
        Primitive::Path(PathItem {
            shape: Shape::Polyline {
                points: vec![[0.0, rule], [w, rule]],
                closed: false,
            },
            stroke,
            fill: None,
        }),
    );
    Pending {
        layer: Layer::Title,
        item: ItemRef::TitleBlock,
        variants: vec![Content {
            size: [w, h],
            prims,
        }],
        request: Request {
            size: [w, h],
            anchor: [0.0, 0.0],
            candidates: Vec::new(),
            user: None,
            max_leader: 0.0,
            leader_variant: 0,
        },
        colour: style::INK,
        leader: Leader::WhenMoved,
        target: None,
    }
}

/// Bottom right of everything drawn so far, as on a drawing sheet.
pub fn candidates(extent: &Rect, size: [f64; 2]) -> Vec<Candidate> {
    let ext = if extent.is_empty() {
        Rect::new([0.0, 0.0], [size[0], 0.0])
    } else {
        *extent
    };
    let x = (ext.max[0] - size[0]).max(ext.min[0]);
    (0..40)
        .map(|k| {
            let min = [x, ext.max[1] + 1.0 + k as f64];
            Candidate {
                min,
                size,
                cost: k as f64,
                anchor: min,
                variant: 0,
            }
        })
        .collect()
}
