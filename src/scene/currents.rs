//! The `currents` layer: one marker per branch — an arrow in the real
//! direction of the current with its value — offered to the placer beside
//! the part's body and along the wire that carries the same current.

use super::build::{Content, Leader, Pending};
use super::geometry::Rect;
use super::labels::{line_box, samples, text_run, GAP};
use super::place::{Candidate, Request};
use super::schematic::{part_item, Obstacles};
use super::{
    style, text, Anchor, Annotations, Arrow, ItemRef, Layer, Point, Primitive, Stroke, Weight,
};
use crate::document::{Document, PartKind};
use crate::netlist::Netlist;
use crate::units::{self, Unit};

/// A direction on the sheet: right, down, left, up.
fn direction_of(d: Point) -> usize {
    if d[0].abs() >= d[1].abs() {
        if d[0] >= 0.0 {
            0
        } else {
            2
        }
    } else if d[1] >= 0.0 {
        1
    } else {
        3
    }
}

const ARROW_LEN: f64 = 1.4;
const ARROW_BAND: f64 = 0.45;

/// A current marker in sixteen variants: direction (right, down, left, up)
/// × side (0: arrow toward the bottom/right edge of the box, 1: toward the
/// top/left), so the arrow always lies nearer the wire than the text; then
/// the same eight with a named value on two lines (`IE` over `691 µA`),
/// narrower for tight spots.
fn marker_variants(prefix: &str, value: &str, zero: bool) -> Vec<Content> {
    let one = if prefix.is_empty() {
        vec![value.to_string()]
    } else {
        vec![format!("{prefix} {value}")]
    };
    let two = if prefix.is_empty() {
        one.clone()
    } else {
        vec![prefix.to_string(), value.to_string()]
    };
    let mut out = marker_layouts(&one, zero);
    out.extend(marker_layouts(&two, zero));
    out
}

fn marker_layouts(lines: &[String], zero: bool) -> Vec<Content> {
    let (up, down) = line_box();
    let line_h = up + down + 0.08;
    let tw = lines
        .iter()
        .map(|l| text::measure(l, style::TEXT_TAG, Weight::Regular).width)
        .fold(0.0, f64::max);
    let th = line_h * lines.len() as f64 - 0.08;
    let mut out = Vec::with_capacity(8);
    for dir in 0..4usize {
        for side in 0..2 {
            let horizontal = dir.is_multiple_of(2);
            // (box size, arrow centre, first text baseline, anchor)
            let (size, arrow_mid, text_pos, anchor) = if horizontal {
                let w = tw.max(ARROW_LEN);
                let h = th + 0.15 + ARROW_BAND;
                if side == 0 {
                    // Text on top, arrow at the bottom (box above the wire).
                    (
                        [w, h],
                        [w / 2.0, h - ARROW_BAND / 2.0],
                        [w / 2.0, up],
                        Anchor::Middle,
                    )
                } else {
                    (
                        [w, h],
                        [w / 2.0, ARROW_BAND / 2.0],
                        [w / 2.0, ARROW_BAND + 0.15 + up],
                        Anchor::Middle,
                    )
                }
            } else {
                let w = tw + 0.2 + ARROW_BAND;
                let h = th.max(ARROW_LEN);
                let y = (h - th) / 2.0 + up;
                if side == 0 {
                    // Text left, arrow at the right (box left of the wire).
                    (
                        [w, h],
                        [w - ARROW_BAND / 2.0, h / 2.0],
                        [0.0, y],
                        Anchor::Start,
                    )
                } else {
                    ([w, h], [ARROW_BAND / 2.0, h / 2.0], [w, y], Anchor::End)
                }
            };
            let d: Point = [[1.0, 0.0], [0.0, 1.0], [-1.0, 0.0], [0.0, -1.0]][dir];
            let half = ARROW_LEN / 2.0 - 0.05;
            let mut prims = Vec::new();
            if !zero {
                prims.push(Primitive::Arrow(Arrow {
                    from: [arrow_mid[0] - d[0] * half, arrow_mid[1] - d[1] * half],
                    to: [arrow_mid[0] + d[0] * half, arrow_mid[1] + d[1] * half],
                    head: 0.45,
                    stroke: Stroke {
                        colour: style::CURRENT,
                        width: style::ARROW,
                        dash: None,
                    },
                }));
            }
            for (k, l) in lines.iter().enumerate() {
                prims.push(Primitive::Text(text_run(
                    l,
                    [text_pos[0], text_pos[1] + k as f64 * line_h],
                    anchor,
                    style::CURRENT,
                )));
            }
            out.push(Content { size, prims });
        }
    }
    out
}

/// The top-left corner that puts a marker's arrow beside `p` on the wire side.
fn marker_spot(p: Point, dir: usize, side: usize, size: [f64; 2]) -> Point {
    let [w, h] = size;
    if dir.is_multiple_of(2) {
        if side == 0 {
            [p[0] - w / 2.0, p[1] - GAP - h]
        } else {
            [p[0] - w / 2.0, p[1] + GAP]
        }
    } else if side == 0 {
        [p[0] - GAP - w, p[1] - h / 2.0]
    } else {
        [p[0] + GAP, p[1] - h / 2.0]
    }
}

/// Where wires and junctions are, found by position instead of by a scan of
/// the whole sheet per pin (which made the markers of n parts O(n²)).
pub(super) struct WireIndex {
    /// Wire segments by each end (indices into `Obstacles::segments`, in order).
    by_end: std::collections::HashMap<(i64, i64), Vec<usize>>,
    /// Junctions by grid cell (see `spatial::Grid`).
    junctions: super::spatial::Grid,
    /// Wires (indices into `doc.wires`) by the cells of their boxes.
    wires: super::spatial::Grid,
    /// Whether a capacitor pin sits at a point.
    capacitor_at: std::collections::HashSet<[i32; 2]>,
    junction_at: std::collections::HashSet<[i32; 2]>,
}

fn key(p: Point) -> (i64, i64) {
    ((p[0] * 1e6).round() as i64, (p[1] * 1e6).round() as i64)
}

impl WireIndex {
    pub fn new(doc: &Document, nl: &Netlist, obs: &Obstacles) -> WireIndex {
        let mut by_end: std::collections::HashMap<(i64, i64), Vec<usize>> = Default::default();
        for (k, (_, a, b)) in obs.segments.iter().enumerate() {
            by_end.entry(key(*a)).or_default().push(k);
            if key(*a) != key(*b) {
                by_end.entry(key(*b)).or_default().push(k);
            }
        }
        let mut junctions = super::spatial::Grid::new(8.0);
        for (k, j) in nl.junctions.iter().enumerate() {
            let p = [j[0] as f64, j[1] as f64];
            junctions.insert(k, &super::geometry::Rect::new(p, p).inflate(1e-6));
        }
        let mut wires = super::spatial::Grid::new(8.0);
        for (k, w) in doc.wires.iter().enumerate() {
            let b = w.points.iter().fold(Rect::empty(), |r, p| {
                let p = [p[0] as f64, p[1] as f64];
                r.union(&Rect::new(p, p))
            });
            wires.insert(k, &b.inflate(1e-6));
        }
        let capacitor_at = nl
            .nets
            .iter()
            .flat_map(|n| n.pins.iter())
            .filter(|p| {
                matches!(
                    doc.parts[p.part].kind,
                    PartKind::Capacitor | PartKind::PolarisedCapacitor
                )
            })
            .map(|p| p.position)
            .collect();
        let junction_at = nl.junctions.iter().copied().collect();
        WireIndex {
            by_end,
            junctions,
            wires,
            capacitor_at,
            junction_at,
        }
    }
}

/// The piece of wire running from a pin to the first junction or bend:
/// the same current flows along all of it.
fn wire_runs_from(
    pin: Point,
    doc: &Document,
    nl: &Netlist,
    obs: &Obstacles,
    index: &mut WireIndex,
    net: &str,
) -> Vec<(Point, Point)> {
    let near = |a: Point, b: Point| (a[0] - b[0]).abs() < 1e-9 && (a[1] - b[1]).abs() < 1e-9;
    let mut out = Vec::new();
    let mut found = Vec::new();
    // Where the pin itself is a junction the current splits right there:
    // no single wire carries it.
    index.junctions.begin();
    index
        .junctions
        .query(&super::geometry::Rect::new(pin, pin), &mut found);
    if found.iter().any(|&k| {
        let j = nl.junctions[k];
        near([j[0] as f64, j[1] as f64], pin)
    }) {
        return out;
    }
    let segments = index.by_end.get(&key(pin)).cloned().unwrap_or_default();
    for (name, a, b) in segments.iter().map(|&k| &obs.segments[k]) {
        if name != net {
            continue;
        }
        let (outer, inner) = if near(*a, pin) {
            (*b, *a)
        } else if near(*b, pin) {
            (*a, *b)
        } else {
            continue;
        };
        // Stop at the junction nearest the pin, unless everything else at
        // that junction is open at DC (a wire to a capacitor only).
        let mut far = outer;
        let dist = |p: Point| (p[0] - inner[0]).abs() + (p[1] - inner[1]).abs();
        found.clear();
        index.junctions.begin();
        index.junctions.query(
            &super::geometry::Rect::new(inner, outer).inflate(1e-6),
            &mut found,
        );
        found.sort_unstable();
        for j in found.iter().map(|&k| &nl.junctions[k]) {
            let j = [j[0] as f64, j[1] as f64];
            if super::geometry::distance_to_segment(j, inner, outer) < 1e-9
                && !near(j, inner)
                && dist(j) < dist(far)
                && !open_at_dc(
                    j,
                    doc,
                    &mut index.wires,
                    &index.capacitor_at,
                    &index.junction_at,
                    inner,
                    outer,
                )
            {
                far = j;
            }
        }
        if !near(far, inner) {
            out.push((far, inner));
        }
    }
    out
}

/// True when every wire that leaves junction `j` (other than the run
/// `inner`–`outer` itself) ends at a capacitor pin and nowhere else, so no
/// DC current turns off there.
fn open_at_dc(
    j: Point,
    doc: &Document,
    wires: &mut super::spatial::Grid,
    capacitor_at: &std::collections::HashSet<[i32; 2]>,
    junction_at: &std::collections::HashSet<[i32; 2]>,
    inner: Point,
    outer: Point,
) -> bool {
    let at = |p: Point, q: [i32; 2]| {
        (p[0] - q[0] as f64).abs() < 1e-9 && (p[1] - q[1] as f64).abs() < 1e-9
    };
    let on_run = |q: [i32; 2]| {
        super::geometry::distance_to_segment([q[0] as f64, q[1] as f64], inner, outer) < 1e-9
    };
    // Only wires whose box holds j can end at it or pass through it.
    let mut near = Vec::new();
    wires.begin();
    wires.query(&Rect::new(j, j), &mut near);
    let mut others = 0;
    for w in near.iter().map(|&k| &doc.wires[k]) {
        let (Some(first), Some(last)) = (w.points.first(), w.points.last()) else {
            continue;
        };
        let far = if at(j, *first) {
            *last
        } else if at(j, *last) {
            *first
        } else {
            // A wire passing through j, or the run's own wire.
            if w.points.windows(2).any(|s| {
                super::geometry::distance_to_segment(
                    j,
                    [s[0][0] as f64, s[0][1] as f64],
                    [s[1][0] as f64, s[1][1] as f64],
                ) < 1e-9
            }) && !(w.points.iter().all(|q| on_run(*q)))
            {
                return false;
            }
            continue;
        };
        if w.points.iter().all(|q| on_run(*q)) {
            continue;
        }
        others += 1;
        let ends_at_capacitor = capacitor_at.contains(&far);
        let junction = junction_at.contains(&far);
        if !ends_at_capacitor || junction {
            return false;
        }
    }
    others > 0
}

/// One current marker per branch: every two-terminal part that passes DC
/// (resistors, inductors, diodes, sources), each transistor terminal, and
/// each rail. Capacitors are open at DC and grounds carry no branch of their own.
pub fn current_markers(
    doc: &Document,
    nl: &Netlist,
    ann: &Annotations,
    obs: &Obstacles,
) -> Vec<Pending> {
    let mut out = Vec::new();
    let mut wires = WireIndex::new(doc, nl, obs);
    let mut body_of: std::collections::HashMap<&ItemRef, Rect> = Default::default();
    for (i, r) in &obs.bodies {
        body_of.entry(i).or_insert(*r);
    }
    // Currents at the solver's floor relative to this print as ≈ 0 A.
    let largest = units::largest_current(ann.pin_currents.values().flat_map(|p| p.values()));
    for (index, part) in doc.parts.iter().enumerate() {
        if !carries_dc_branch(part.kind) {
            continue;
        }
        let Some(currents) = ann.pin_currents.get(&part.designator) else {
            continue;
        };
        let body = body_of.get(&part_item(doc, index)).copied();
        let pins = part.kind.pin_names();
        let pin_pos = |k: usize| -> Option<Point> {
            let net = nl.part_nets.get(index)?.get(k)?;
            nl.nets[*net]
                .pins
                .iter()
                .find(|p| p.part == index && p.pin == pins[k])
                .map(|p| [p.position[0] as f64, p.position[1] as f64])
        };
        let net_name = |k: usize| -> String {
            nl.part_nets
                .get(index)
                .and_then(|v| v.get(k))
                .map(|n| nl.nets[*n].name.clone())
                .unwrap_or_default()
        };
        // Which pins get a marker, with the text prefix.
        let branches: Vec<(usize, &str)> = if part.kind.is_bipolar() {
            vec![(0, "IC"), (1, "IB"), (2, "IE")]
        } else if part.kind.is_fet() {
            // The gate carries leakage only: the drain current tells it all.
            vec![(0, "ID")]
        } else {
            vec![(0, "")]
        };
        for (k, prefix) in branches {
            let Some(&i) = currents.get(pins[k]) else {
                continue;
            };
            let Some(p) = pin_pos(k) else { continue };
            let zero = i.abs() < 1e-12;
            let value = units::format_current(i.abs(), largest);
            let mut variants = marker_variants(prefix, &value, zero);
            let mut candidates = Vec::new();
            // A rail also gets a plain sentence beside its symbol.
            if part.kind == PartKind::Rail {
                if let Some(body) = body {
                    let words = if zero {
                        "supplies 0 A".to_string()
                    } else if i < 0.0 {
                        format!("supplies {}", units::format(-i, Unit::Ampere))
                    } else {
                        format!("takes in {}", units::format(i, Unit::Ampere))
                    };
                    let (up, down) = line_box();
                    let w = text::measure(&words, style::TEXT_TAG, Weight::Regular).width;
                    let size = [w, up + down];
                    variants.push(Content {
                        size,
                        prims: vec![Primitive::Text(text_run(
                            &words,
                            [0.0, up],
                            Anchor::Start,
                            style::CURRENT,
                        ))],
                    });
                    let c = body.center();
                    // Along the rail's bar, either side, then above its name.
                    let bar = body.min[1];
                    let mut spots = Vec::new();
                    for k in 0..6 {
                        let dx = k as f64 * 0.75;
                        spots.push(([body.max[0] + GAP + dx, bar - size[1] / 2.0], k as f64));
                        spots.push((
                            [body.min[0] - GAP - w - dx, bar - size[1] / 2.0],
                            k as f64 + 0.2,
                        ));
                    }
                    for k in 0..3 {
                        let y = bar - 1.3 - size[1] - k as f64 * 0.5;
                        spots.push(([c[0] - w / 2.0, y], 3.0 + k as f64));
                    }
                    for (min, cost) in spots {
                        candidates.push(Candidate {
                            min,
                            size,
                            cost: 0.2 * cost,
                            anchor: [c[0], bar],
                            variant: 16,
                        });
                    }
                }
            }
            // Beside the body of a two-terminal part, along its axis.
            if !part.kind.is_transistor() && pins.len() == 2 {
                if let (Some(a), Some(b), Some(body)) = (pin_pos(0), pin_pos(1), body) {
                    let c = body.center();
                    let axis_h = (a[1] - b[1]).abs() < 1e-9;
                    // Sample across the body's width so the arrow clears it.
                    let reach = if axis_h {
                        body.height() / 2.0
                    } else {
                        body.width() / 2.0
                    };
                    for sgn in [-1.0, 1.0] {
                        let off = if axis_h {
                            [0.0, sgn * (reach - GAP + 0.02)]
                        } else {
                            [sgn * (reach - GAP + 0.02), 0.0]
                        };
                        let o = [a[0] + off[0], a[1] + off[1]];
                        let q = [b[0] + off[0], b[1] + off[1]];
                        let flow = if i >= 0.0 {
                            [q[0] - o[0], q[1] - o[1]]
                        } else {
                            [o[0] - q[0], o[1] - q[1]]
                        };
                        let dir = direction_of(flow);
                        // side 0 sits left/above of the line, side 1 right/below.
                        let side = if sgn < 0.0 { 0 } else { 1 };
                        let v = dir * 2 + side;
                        let size = variants[v].size;
                        let spot = [c[0] + off[0], c[1] + off[1]];
                        candidates.push(Candidate {
                            min: marker_spot(spot, dir, side, size),
                            size,
                            cost: 0.0,
                            anchor: c,
                            variant: v as u8,
                        });
                    }
                }
            }
            let mut add_run = |outer: Point, inner: Point, current: f64, base: f64| {
                // Positive current into the pin flows from outer to inner.
                let flow = if current >= 0.0 {
                    [inner[0] - outer[0], inner[1] - outer[1]]
                } else {
                    [outer[0] - inner[0], outer[1] - inner[1]]
                };
                let dir = direction_of(flow);
                for (s, off) in samples(outer, inner) {
                    for side in 0..2 {
                        // One-line text, then the narrower two-line form.
                        for (v, extra) in [(dir * 2 + side, 0.0), (8 + dir * 2 + side, 0.3)] {
                            let size = variants[v].size;
                            candidates.push(Candidate {
                                min: marker_spot(s, dir, side, size),
                                size,
                                cost: base + off * 0.2 + side as f64 * 0.05 + extra,
                                anchor: s,
                                variant: v as u8,
                            });
                        }
                    }
                }
            };
            let net = net_name(k);
            let runs = wire_runs_from(p, doc, nl, obs, &mut wires, &net);
            // A moved marker points at the wire that carries its current.
            let run_mid = runs
                .first()
                .map(|(o, n)| [(o[0] + n[0]) / 2.0, (o[1] + n[1]) / 2.0]);
            for (outer, inner) in runs {
                add_run(outer, inner, i, 0.4);
            }
            // Two-terminal parts: the far pin's wire carries the same current.
            if !part.kind.is_transistor() && pins.len() == 2 {
                if let Some(q) = pin_pos(1) {
                    for (outer, inner) in wire_runs_from(q, doc, nl, obs, &mut wires, &net_name(1))
                    {
                        add_run(outer, inner, -i, 0.6);
                    }
                }
            }
            // Moved away, a marker takes its compact two-line form.
            let lv = candidates.first().map_or(8, |c| {
                if c.variant < 16 {
                    8 + c.variant % 8
                } else {
                    c.variant
                }
            });
            let size = variants[lv as usize].size;
            let (anchor, target) = if part.kind.is_transistor() || body.is_none() {
                (run_mid.unwrap_or(p), None)
            } else {
                (body.map_or(p, |b| b.center()), body)
            };
            out.push(Pending {
                layer: Layer::Currents,
                item: ItemRef::Current {
                    index,
                    designator: part.designator.clone(),
                    pin: if part.kind.is_transistor() {
                        pins[k].to_string()
                    } else {
                        String::new()
                    },
                },
                variants,
                request: Request {
                    size,
                    anchor,
                    candidates,
                    user: None,
                    max_leader: 14.0,
                    leader_variant: lv,
                },
                colour: style::CURRENT,
                leader: Leader::WhenMoved,
                target,
            });
        }
    }
    out
}

/// Does a part of this kind form a DC branch that gets a current marker?
pub fn carries_dc_branch(kind: PartKind) -> bool {
    !matches!(
        kind,
        PartKind::Ground | PartKind::Capacitor | PartKind::PolarisedCapacitor
    )
}
