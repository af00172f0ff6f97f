//! The `schematic` layer: symbols (rotated and mirrored, text upright),
//! wires, junction dots, net labels, designators and values.

use super::geometry::{shape_bounds, Rect};
use super::style;
use super::{
    Anchor, Element, HitRegion, HitShape, ItemRef, Layer, PathItem, Point, Primitive, Shape,
    Stroke, TextRun, Weight,
};
use crate::document::{Document, Part, PartKind, Role};
use crate::netlist::Netlist;
use crate::symbols::{self, Primitive as SymbolPrimitive};
use crate::units::{self, Unit};
use std::collections::HashMap;

/// What the schematic leaves for the annotation layers to avoid.
#[derive(Debug, Default)]
pub struct Obstacles {
    /// Symbol bodies (with their leads), per part.
    pub bodies: Vec<(ItemRef, Rect)>,
    /// Wire segments with their net.
    pub segments: Vec<(String, Point, Point)>,
    /// Text and label boxes already drawn.
    pub texts: Vec<Rect>,
}

/// A part's text lines, upright, beside its body.
fn part_texts(part: &Part) -> Vec<(String, f64, Weight)> {
    let value = |key: &str, unit: Unit| part.parameter(key).map(|v| units::format(v, unit));
    let mut lines = Vec::new();
    if !part.designator.is_empty() && part.kind != PartKind::Ground {
        lines.push((part.designator.clone(), style::TEXT_PART, Weight::Bold));
    }
    let v = match part.kind {
        PartKind::SignalSource => {
            let a = value("amplitude", Unit::Volt);
            let f = value("frequency", Unit::Hertz);
            match (a, f) {
                (Some(a), Some(f)) => Some(format!("{a} pk, {f}")),
                (a, _) => a.map(|a| format!("{a} pk")),
            }
        }
        // Device presets are listed in the title block, not crowded in here
        // (devices have no main value).
        kind => kind.info().value.and_then(|(key, unit)| value(key, unit)),
    };
    if let Some(v) = v {
        lines.push((v, style::TEXT_PART, Weight::Regular));
    }
    if part.kind == PartKind::Rail && lines.len() == 2 {
        // One line over the rail bar: "VCC 9 V".
        let v = lines.pop().map(|l| l.0).unwrap_or_default();
        lines[0].0 = format!("{} {}", lines[0].0, v);
    }
    lines
}

fn stroke() -> Option<Stroke> {
    Some(Stroke {
        colour: style::INK,
        width: style::LINE,
        dash: None,
    })
}

/// Transform a symbol primitive into sheet shapes.
fn place_primitive(prim: &SymbolPrimitive, part: &Part) -> PathItem {
    let t = |p: &[f64; 2]| symbols::transform(*p, part.position, part.rotation, part.mirror);
    match prim {
        SymbolPrimitive::Line { points } => PathItem {
            shape: Shape::Polyline {
                points: points.iter().map(t).collect(),
                closed: false,
            },
            stroke: stroke(),
            fill: None,
        },
        SymbolPrimitive::Polygon { points, filled } => PathItem {
            shape: Shape::Polyline {
                points: points.iter().map(t).collect(),
                closed: true,
            },
            stroke: stroke(),
            fill: filled.then_some(style::INK),
        },
        SymbolPrimitive::Circle {
            center,
            radius,
            filled,
        } => PathItem {
            shape: Shape::Circle {
                center: t(center),
                radius: *radius,
            },
            stroke: stroke(),
            fill: filled.then_some(style::INK),
        },
        SymbolPrimitive::Arc {
            center,
            radius,
            start_degrees,
            sweep_degrees,
        } => {
            // Mirror flips left–right (angle → 180° − angle, sweep reverses);
            // a clockwise rotation adds to every angle.
            let (mut start, mut sweep) = (*start_degrees, *sweep_degrees);
            if part.mirror {
                start = 180.0 - start;
                sweep = -sweep;
            }
            start += (part.rotation % 360) as f64;
            PathItem {
                shape: Shape::Arc {
                    center: t(center),
                    radius: *radius,
                    start_degrees: start,
                    sweep_degrees: sweep,
                },
                stroke: stroke(),
                fill: None,
            }
        }
    }
}

pub fn part_item(doc: &Document, index: usize) -> ItemRef {
    let p = &doc.parts[index];
    ItemRef::Part {
        index,
        designator: if p.designator.is_empty() {
            p.id.clone()
        } else {
            p.designator.clone()
        },
    }
}

/// Build the schematic layer into `out`; returns what annotations must avoid.
pub fn build(
    doc: &Document,
    nl: &Netlist,
    out: &mut Vec<Element>,
    hits: &mut Vec<HitRegion>,
) -> Obstacles {
    let lib = symbols::library();
    let mut obs = Obstacles::default();
    let push = |out: &mut Vec<Element>, item: Option<ItemRef>, primitive: Primitive| {
        out.push(Element {
            layer: Layer::Schematic,
            item,
            primitive,
        })
    };

    // Wires first, under the symbols.
    let mut point_net: HashMap<[i32; 2], &str> = HashMap::new();
    for net in &nl.nets {
        for p in &net.pins {
            point_net.insert(p.position, &net.name);
        }
        for &w in &net.wires {
            let pts = &doc.wires[w].points;
            pts.iter().for_each(|p| {
                point_net.insert(*p, &net.name);
            });
            let points: Vec<Point> = pts.iter().map(|p| [p[0] as f64, p[1] as f64]).collect();
            for s in points.windows(2) {
                obs.segments.push((net.name.clone(), s[0], s[1]));
                hits.push(HitRegion {
                    item: ItemRef::Net(net.name.clone()),
                    layer: Layer::Schematic,
                    shape: HitShape::Segment {
                        a: s[0],
                        b: s[1],
                        tolerance: 0.35,
                    },
                });
            }
            push(
                out,
                Some(ItemRef::Net(net.name.clone())),
                Primitive::Path(PathItem {
                    shape: Shape::Polyline {
                        points,
                        closed: false,
                    },
                    stroke: stroke(),
                    fill: None,
                }),
            );
        }
    }

    // Symbols and their bodies.
    let mut part_hits = Vec::new();
    let mut placed_bodies = Vec::new();
    for (index, part) in doc.parts.iter().enumerate() {
        let Some(symbol) = lib.get(part.symbol_name()) else {
            continue;
        };
        let item = part_item(doc, index);
        let mut body = Rect::empty();
        for prim in &symbol.primitives {
            let path = place_primitive(prim, part);
            body = body.union(&shape_bounds(&path.shape));
            push(out, Some(item.clone()), Primitive::Path(path));
        }
        if body.is_empty() {
            continue;
        }
        // Thin symbols (a vertical resistor's leads) still need room to be read.
        let body = Rect::new(
            [body.min[0].min(body.center()[0] - 0.3), body.min[1]],
            [body.max[0].max(body.center()[0] + 0.3), body.max[1]],
        );
        obs.bodies.push((item.clone(), body));
        part_hits.push(HitRegion {
            item: item.clone(),
            layer: Layer::Schematic,
            shape: HitShape::Rect(body.inflate(0.2)),
        });
        placed_bodies.push((index, item, body));
    }
    // Designators and values: on the side that is clear of other symbols,
    // wires and text; a transistor's preset name is left off when no side is.
    let mut near = Near::new(&obs);
    for (index, item, body) in placed_bodies {
        let part = &doc.parts[index];
        let mut lines = part_texts(part);
        loop {
            let mut best: Option<(f64, Vec<TextRun>)> = None;
            for side in 0..4 {
                let runs = part_text_runs(part, &body, &lines, side);
                let cost = text_cost(&runs, &item, &obs, &mut near) + side as f64 * 0.01;
                if best.as_ref().is_none_or(|(c, _)| cost < *c) {
                    best = Some((cost, runs));
                }
            }
            let (cost, runs) = best.expect("four sides were tried");
            let droppable =
                lines.len() == 2 && matches!(part.kind.info().role, Role::Bipolar | Role::Diode);
            if cost >= 1.0 && droppable {
                lines.pop();
                continue;
            }
            for run in runs {
                near.texts.insert(obs.texts.len(), &run.bounds());
                obs.texts.push(run.bounds());
                push(out, Some(item.clone()), Primitive::Text(run));
            }
            break;
        }
    }

    // Junction dots.
    for j in &nl.junctions {
        let item = point_net.get(j).map(|n| ItemRef::Net(n.to_string()));
        push(
            out,
            item,
            Primitive::Path(PathItem {
                shape: Shape::Circle {
                    center: [j[0] as f64, j[1] as f64],
                    radius: style::DOT,
                },
                stroke: None,
                fill: Some(style::INK),
            }),
        );
    }

    // Net labels: a flag beside the point, on the side clear of symbols and wires.
    for label in &doc.labels {
        let (shapes, run, rect) = label_flag(label, &obs);
        let item = Some(ItemRef::Net(
            point_net
                .get(&label.position)
                .map(|n| n.to_string())
                .unwrap_or_else(|| label.name.clone()),
        ));
        for s in shapes {
            push(
                out,
                item.clone(),
                Primitive::Path(PathItem {
                    shape: s,
                    stroke: Some(Stroke {
                        colour: style::INK,
                        width: style::FRAME,
                        dash: None,
                    }),
                    fill: None,
                }),
            );
        }
        obs.texts.push(rect);
        push(out, item, Primitive::Text(run));
    }

    // Parts answer hits before the wires they sit on.
    let wires = std::mem::take(hits);
    hits.extend(part_hits);
    hits.extend(wires);
    obs
}

/// Bodies, wire segments and text boxes by grid cell, so a text position is
/// scored against its neighbours only: O(1) per position instead of O(n),
/// which made the texts of n parts O(n²).
struct Near {
    bodies: super::spatial::Grid,
    segments: super::spatial::Grid,
    texts: super::spatial::Grid,
    found: Vec<usize>,
}

impl Near {
    fn new(obs: &Obstacles) -> Near {
        let mut n = Near {
            bodies: super::spatial::Grid::new(8.0),
            segments: super::spatial::Grid::new(8.0),
            texts: super::spatial::Grid::new(8.0),
            found: Vec::new(),
        };
        for (k, (_, b)) in obs.bodies.iter().enumerate() {
            n.bodies.insert(k, b);
        }
        for (k, (_, a, c)) in obs.segments.iter().enumerate() {
            n.segments.insert(k, &Rect::new(*a, *c));
        }
        for (k, t) in obs.texts.iter().enumerate() {
            n.texts.insert(k, t);
        }
        n
    }

    /// Ids in `grid` near `r`, ascending (the order of a full scan).
    fn ids(grid: &mut super::spatial::Grid, r: &Rect, found: &mut Vec<usize>) {
        found.clear();
        grid.begin();
        grid.query(r, found);
        found.sort_unstable();
    }
}

/// How badly text runs collide with other symbols, wires and text. Terms
/// are added in the order of a full scan, so the sum is the same to the bit.
fn text_cost(runs: &[TextRun], own: &ItemRef, obs: &Obstacles, near: &mut Near) -> f64 {
    let mut cost = 0.0;
    let mut found = std::mem::take(&mut near.found);
    for r in runs {
        let b = r.bounds().inflate(0.05);
        Near::ids(&mut near.bodies, &b, &mut found);
        for (item, body) in found.iter().map(|&k| &obs.bodies[k]) {
            if item != own && b.overlaps(body) {
                cost += 10.0 + b.overlap_area(body);
            }
        }
        Near::ids(&mut near.segments, &b, &mut found);
        for (_, a, c) in found.iter().map(|&k| &obs.segments[k]) {
            if b.crosses_segment(*a, *c) {
                cost += 5.0;
            }
        }
        Near::ids(&mut near.texts, &b, &mut found);
        for t in found.iter().map(|&k| &obs.texts[k]) {
            if b.overlaps(t) {
                cost += 10.0 + b.overlap_area(t);
            }
        }
    }
    near.found = found;
    cost
}

/// Designator and value, upright. `side` 0 is the usual place (right of a
/// vertical part, left when mirrored; above a horizontal part or a rail),
/// 1 the opposite side, 2 above, 3 below.
fn part_text_runs(
    part: &Part,
    body: &Rect,
    lines: &[(String, f64, Weight)],
    side: u8,
) -> Vec<TextRun> {
    if lines.is_empty() {
        return Vec::new();
    }
    let line_h = style::TEXT_PART * 1.15;
    let total = line_h * lines.len() as f64;
    let vertical = part.rotation.is_multiple_of(180) && part.kind != PartKind::Rail;
    let above = (
        body.center()[0],
        Anchor::Middle,
        body.min[1] - 0.2 - total + line_h * 0.8,
    );
    let below = (
        body.center()[0],
        Anchor::Middle,
        body.max[1] + 0.2 + line_h * 0.8,
    );
    let c = body.center()[1] - total / 2.0 + line_h * 0.8;
    let right = (body.max[0] + 0.3, Anchor::Start, c);
    let left = (body.min[0] - 0.3, Anchor::End, c);
    let (x, anchor, y0) = match (vertical, part.mirror, side) {
        (true, false, 0) | (true, true, 1) => right,
        (true, true, 0) | (true, false, 1) => left,
        (false, _, 0) => above,
        (false, _, 1) => below,
        (true, _, 2) => above,
        (true, _, _) => below,
        (false, _, 2) => right,
        (false, _, _) => left,
    };
    lines
        .iter()
        .enumerate()
        .map(|(i, (text, size, weight))| TextRun {
            text: text.clone(),
            position: [x, y0 + i as f64 * line_h],
            anchor,
            size: *size,
            weight: *weight,
            colour: if *weight == Weight::Bold {
                style::INK
            } else {
                style::INK_SOFT
            },
        })
        .collect()
}

/// A label flag: the outline, the name, and the box it covers.
fn label_flag(label: &crate::document::NetLabel, obs: &Obstacles) -> (Vec<Shape>, TextRun, Rect) {
    let p = [label.position[0] as f64, label.position[1] as f64];
    let size = style::TEXT_PART;
    let w = super::text::measure(&label.name, size, Weight::Regular).width + 0.5;
    let h = 0.5;
    // Candidate directions: right, left, raised above on a stem, hung below.
    let mut best: Option<(f64, Vec<Shape>, TextRun, Rect)> = None;
    for dir in 0..4 {
        let (base, right, stem) = match dir {
            0 => (p, true, None),
            1 => (p, false, None),
            2 => ([p[0], p[1] - 1.2], true, Some([p[0], p[1] - 1.2])),
            _ => ([p[0], p[1] + 1.2], true, Some([p[0], p[1] + 1.2])),
        };
        let s = if right { 1.0 } else { -1.0 };
        let tip = base;
        let flag = vec![
            tip,
            [tip[0] + s * 0.5, tip[1] - h],
            [tip[0] + s * (0.5 + w), tip[1] - h],
            [tip[0] + s * (0.5 + w), tip[1] + h],
            [tip[0] + s * 0.5, tip[1] + h],
        ];
        let rect = Rect::new([tip[0], tip[1] - h], [tip[0] + s * (0.5 + w), tip[1] + h]);
        let mut cost = dir as f64 * 0.5;
        let probe = rect.inflate(-0.05);
        for (_, b) in &obs.bodies {
            cost += 100.0 * probe.overlap_area(b);
        }
        for (_, a, b) in &obs.segments {
            if probe.crosses_segment(*a, *b) {
                cost += 50.0;
            }
        }
        for t in &obs.texts {
            cost += 100.0 * probe.overlap_area(t);
        }
        if best.as_ref().is_none_or(|b| cost < b.0) {
            let mut shapes = vec![Shape::Polyline {
                points: flag,
                closed: true,
            }];
            if let Some(st) = stem {
                shapes.push(Shape::Polyline {
                    points: vec![p, st],
                    closed: false,
                });
            }
            let run = TextRun {
                text: label.name.clone(),
                position: [tip[0] + s * (0.5 + w / 2.0), tip[1] + size * 0.35],
                anchor: Anchor::Middle,
                size,
                weight: Weight::Regular,
                colour: style::INK,
            };
            best = Some((cost, shapes, run, rect));
        }
    }
    let (_, shapes, run, rect) = best.expect("four candidates were scored");
    (shapes, run, rect)
}
