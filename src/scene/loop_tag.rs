//! The `stages` layer's feedback-loop marks: a dashed outline around each
//! part a loop runs through, and a tag in the margin beside its main
//! transistor with its loop gain, phase margin and gain split — in the
//! warning colour when the margin is below the floor.

use super::build::{Content, Pending};
use super::card::{framed, margin_card, part_body, Writer, PAD};
use super::schematic::Obstacles;
use super::{
    style, Anchor, Annotations, Element, ItemRef, Layer, LoopTag, PathItem, Primitive, Shape,
    Stroke, Weight,
};
use crate::document::Document;

/// Widest a tag's wrapped lines run, grid units.
const WRAP: f64 = 20.0;

fn colour(tag: &LoopTag) -> super::Colour {
    if tag.warning {
        style::WARNING
    } else {
        style::STAGE
    }
}

/// The dashed outlines around every part of every loop.
pub fn loop_outlines(doc: &Document, ann: &Annotations, obs: &Obstacles) -> Vec<Element> {
    let mut out = Vec::new();
    for tag in &ann.loops {
        for d in &tag.parts {
            let Some(r) = part_body(doc, obs, d) else {
                continue;
            };
            out.push(Element {
                layer: Layer::Stages,
                item: Some(ItemRef::Stage(format!("loop {}", tag.transistor))),
                primitive: Primitive::Path(PathItem {
                    shape: Shape::Rect {
                        rect: r.inflate(0.35),
                        corner: 0.5,
                    },
                    stroke: Some(Stroke {
                        colour: colour(tag),
                        width: style::FRAME,
                        dash: Some([0.4, 0.3]),
                    }),
                    fill: None,
                }),
            });
        }
    }
    out
}

/// The tag's content: heading, the parts it runs through, its lines.
pub fn loop_tag_content(tag: &LoopTag) -> Content {
    let mut w = Writer {
        prims: Vec::new(),
        y: PAD,
        width: 0.0,
    };
    w.y += style::TEXT_HEADING * 0.8;
    w.line_at(
        &format!("Feedback loop · around {}", tag.transistor),
        PAD,
        Anchor::Start,
        style::TEXT_HEADING,
        Weight::Bold,
        colour(tag),
    );
    w.y += style::TEXT_HEADING * 0.35;
    let rule_y = w.y;
    w.y += 0.1;
    let words = |s: &str| s.split(' ').map(str::to_string).collect::<Vec<_>>();
    let max = (w.width - PAD).max(WRAP);
    w.wrapped(
        &words(&format!("runs through {}", tag.parts.join(", "))),
        " ",
        max,
        style::INK_SOFT,
    );
    for l in &tag.lines {
        let c = if tag.warning && l.starts_with("phase margin") {
            style::WARNING
        } else {
            style::INK
        };
        w.wrapped(&words(l), " ", max, c);
    }
    framed(w, rule_y)
}

/// One tag per loop, in the margin nearest its main transistor.
pub fn loop_tags(doc: &Document, ann: &Annotations, obs: &Obstacles) -> Vec<Pending> {
    let mut out = Vec::new();
    for tag in &ann.loops {
        let Some(r) = part_body(doc, obs, &tag.transistor) else {
            continue;
        };
        let content = loop_tag_content(tag);
        out.push(margin_card(
            ItemRef::Stage(format!("loop {}", tag.transistor)),
            content,
            r.center(),
            colour(tag),
            Some(r),
        ));
    }
    out
}
