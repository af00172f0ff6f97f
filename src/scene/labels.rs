//! The `voltages` layer: one tag per net, offered to the placer with
//! candidate spots along every wire of the net (the `currents` layer is in
//! `currents.rs` and shares the helpers here).
//!
//! A voltage tag is a framed box with the value in volts and a short tick to
//! its wire. A current marker is an arrow in the real direction of the
//! current with the value beside it (no frame), so the two read apart
//! without colour.

use super::build::{Content, Leader, Pending};
use super::geometry::Rect;
use super::place::{Candidate, Request};
use super::schematic::Obstacles;
use super::{
    style, text, Anchor, Annotations, Colour, ItemRef, Layer, PathItem, Point, Primitive, Shape,
    Stroke, TextRun, Weight,
};
use crate::document::Document;
use crate::netlist::Netlist;
use crate::units::{self, Unit};

/// Gap between a wire and the tag beside it (more than the clearance).
pub(super) const GAP: f64 = 0.32;
/// Step between candidate spots along a wire.
const STEP: f64 = 0.5;

pub(super) fn text_run(s: &str, pos: Point, anchor: Anchor, colour: Colour) -> TextRun {
    TextRun {
        text: s.to_string(),
        position: pos,
        anchor,
        size: style::TEXT_TAG,
        weight: Weight::Regular,
        colour,
    }
}

/// Height of a tag's text line: cap height plus room for `µ`'s tail.
pub(super) fn line_box() -> (f64, f64) {
    let s = style::TEXT_TAG;
    (0.76 * s, 0.24 * s)
}

fn stroke(colour: Colour, width: f64) -> Option<Stroke> {
    Some(Stroke {
        colour,
        width,
        dash: None,
    })
}

/// A voltage tag in five variants: tick down (above a horizontal wire), tick
/// up (below), tick right (left of a vertical wire), tick left (right of
/// it), and no tick (moved away, leader drawn instead). With `range` (the
/// `spread` layer) the tag is two lines tall: the value, then the range.
fn tag_variants(value: &str, range: Option<&str>) -> Vec<Content> {
    let (up, down) = line_box();
    let pad = 0.16;
    let widest = std::iter::once(value)
        .chain(range)
        .map(|t| text::measure(t, style::TEXT_TAG, Weight::Regular).width)
        .fold(0.0, f64::max);
    let w = widest + 2.0 * pad + 0.1;
    // The second line sits a full font line (ascent + descent) lower, so
    // the two lines' boxes do not touch.
    let m = text::measure(value, style::TEXT_TAG, Weight::Regular);
    let lead = m.ascent + m.descent + 0.02;
    let extra = if range.is_some() { lead } else { 0.0 };
    let h = up + down + 2.0 * pad + extra;
    let frame = Primitive::Path(PathItem {
        shape: Shape::Rect {
            rect: Rect::from_size([0.0, 0.0], w, h),
            corner: 0.25,
        },
        stroke: stroke(style::VOLTAGE, style::FRAME),
        fill: Some(style::TAG_FILL),
    });
    let label = Primitive::Text(text_run(
        value,
        [w / 2.0, pad + up],
        Anchor::Middle,
        style::VOLTAGE,
    ));
    let range_label = range.map(|r| {
        Primitive::Text(text_run(
            r,
            [w / 2.0, pad + up + lead],
            Anchor::Middle,
            style::INK_SOFT,
        ))
    });
    let tick = |a: Point, b: Point| {
        Primitive::Path(PathItem {
            shape: Shape::Polyline {
                points: vec![a, b],
                closed: false,
            },
            stroke: stroke(style::VOLTAGE, style::FRAME),
            fill: None,
        })
    };
    let ticks = [
        Some(tick([w / 2.0, h], [w / 2.0, h + GAP])),
        Some(tick([w / 2.0, 0.0], [w / 2.0, -GAP])),
        Some(tick([w, h / 2.0], [w + GAP, h / 2.0])),
        Some(tick([0.0, h / 2.0], [-GAP, h / 2.0])),
        None,
    ];
    ticks
        .into_iter()
        .map(|t| {
            let mut prims = vec![frame.clone()];
            prims.extend(t);
            prims.push(label.clone());
            prims.extend(range_label.clone());
            Content {
                size: [w, h],
                prims,
            }
        })
        .collect()
}

/// `min … max` of a net's voltage for the `spread` layer, e.g.
/// `2.41 … 2.93 V` (the unit once, when both ends share a prefix).
pub fn range_text(lo: f64, hi: f64) -> String {
    let a = units::format(lo, Unit::Volt);
    let b = units::format(hi, Unit::Volt);
    let unit_of = |s: &str| s.rsplit_once(' ').map(|(_, u)| u.to_string());
    match (a.rsplit_once(' '), unit_of(&b)) {
        (Some((num, ua)), Some(ub)) if ua == ub => format!("{num} … {b}"),
        _ => format!("{a} … {b}"),
    }
}

/// Most spots [`samples`] gives on one segment.
const MAX_SAMPLES: usize = 1000;

/// Points every `STEP` along a segment, middle first.
pub(super) fn samples(a: Point, b: Point) -> Vec<(Point, f64)> {
    let len = ((b[0] - a[0]).powi(2) + (b[1] - a[1]).powi(2)).sqrt();
    // At most MAX_SAMPLES spots per segment: a wire across a huge sheet gave
    // one per step, gigabytes of candidates (issue 18); shorter segments
    // are unchanged.
    let n = ((len / STEP).floor() as usize).min(MAX_SAMPLES);
    (0..=n)
        .map(|i| {
            let t = if n == 0 { 0.5 } else { i as f64 / n as f64 };
            let p = [a[0] + (b[0] - a[0]) * t, a[1] + (b[1] - a[1]) * t];
            (p, (t - 0.5).abs() * len)
        })
        .collect()
}

/// One voltage tag per net except ground (the reference, drawn as its symbol).
pub fn voltage_tags(
    doc: &Document,
    nl: &Netlist,
    ann: &Annotations,
    obs: &Obstacles,
) -> Vec<Pending> {
    let mut out = Vec::new();
    // Each net's wire segments, in sheet order (one pass, not one per net).
    let mut segments_of: std::collections::HashMap<&str, Vec<usize>> = Default::default();
    for (k, (name, _, _)) in obs.segments.iter().enumerate() {
        segments_of.entry(name.as_str()).or_default().push(k);
    }
    for (id, net) in nl.nets.iter().enumerate() {
        if Some(id) == nl.ground {
            continue;
        }
        let Some(&v) = ann.net_voltages.get(&net.name) else {
            continue;
        };
        let value = units::format(v, Unit::Volt);
        let range = ann
            .voltage_ranges
            .get(&net.name)
            .map(|&(lo, hi)| range_text(lo, hi));
        let variants = tag_variants(&value, range.as_deref());
        let [w, h] = variants[0].size;
        let mut candidates = Vec::new();
        let mut main: Option<(f64, Point)> = None;
        let own = segments_of
            .get(net.name.as_str())
            .map_or(&[][..], |v| &v[..]);
        for (_, a, b) in own.iter().map(|&k| &obs.segments[k]) {
            let len = (b[0] - a[0]).abs() + (b[1] - a[1]).abs();
            let mid = [(a[0] + b[0]) / 2.0, (a[1] + b[1]) / 2.0];
            if main.is_none_or(|(l, _)| len > l) {
                main = Some((len, mid));
            }
            // Short stubs are where parts join: prefer the long runs.
            let short = if len < 2.0 { 0.6 } else { 0.0 };
            let horizontal = (a[1] - b[1]).abs() < 1e-9;
            for (p, off) in samples(*a, *b) {
                let cost = off * 0.15 + short;
                if horizontal {
                    candidates.push(Candidate {
                        size: [w, h],
                        min: [p[0] - w / 2.0, p[1] - GAP - h],
                        cost,
                        anchor: p,
                        variant: 0,
                    });
                    candidates.push(Candidate {
                        size: [w, h],
                        min: [p[0] - w / 2.0, p[1] + GAP],
                        cost: cost + 0.1,
                        anchor: p,
                        variant: 1,
                    });
                } else {
                    candidates.push(Candidate {
                        size: [w, h],
                        min: [p[0] - GAP - w, p[1] - h / 2.0],
                        cost: cost + 0.05,
                        anchor: p,
                        variant: 2,
                    });
                    candidates.push(Candidate {
                        size: [w, h],
                        min: [p[0] + GAP, p[1] - h / 2.0],
                        cost,
                        anchor: p,
                        variant: 3,
                    });
                }
            }
        }
        // A net with no wire (pins touching): spots around its first pin.
        let anchor = match main {
            Some((_, m)) => m,
            None => match net.anchor(doc) {
                Some(p) => [p[0] as f64, p[1] as f64],
                None => continue,
            },
        };
        if main.is_none() {
            for (k, min) in [
                [anchor[0] + GAP, anchor[1] - h / 2.0],
                [anchor[0] - GAP - w, anchor[1] - h / 2.0],
                [anchor[0] - w / 2.0, anchor[1] - GAP - h],
                [anchor[0] - w / 2.0, anchor[1] + GAP],
            ]
            .into_iter()
            .enumerate()
            {
                candidates.push(Candidate {
                    min,
                    size: [w, h],
                    cost: k as f64 * 0.1,
                    anchor,
                    variant: [3, 2, 0, 1][k],
                });
            }
        }
        out.push(Pending {
            layer: Layer::Voltages,
            item: ItemRef::Net(net.name.clone()),
            variants,
            request: Request {
                size: [w, h],
                anchor,
                candidates,
                user: None,
                max_leader: 14.0,
                leader_variant: 4,
            },
            colour: style::VOLTAGE,
            leader: Leader::WhenMoved,
            target: None,
        });
    }
    out
}
