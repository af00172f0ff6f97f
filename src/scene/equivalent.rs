//! The small AC equivalent drawn on a stage card: the signal path from the
//! input terminal to the output terminal with every element and its value,
//! the transistor drawn in the chosen model (T with re, h-parameters or
//! hybrid-π), AC ground as a rail along the bottom. A FET stage (its
//! configuration words name a source, drain or gate) is drawn in the FET
//! hybrid-π (open gate, gm·vgs, ro) or the T model (1/gm in the source lead).

use super::annotations::{EquivalentRole, ModelFigures, Quantity, StageCard};
use super::geometry::Rect;
use super::{
    style, text, Anchor, Arrow, Colour, ModelKind, PathItem, Point, Primitive, Shape, Stroke,
    TextRun, Weight,
};
use crate::units::{self, Unit};

/// Height of the drawing's vertical elements (signal rail to AC ground).
const G: f64 = 5.0;
/// Where the emitter rail sits when an emitter element hangs below it.
const E_SPLIT: f64 = 2.6;
const SERIES: f64 = 3.4;

/// How the stage is connected, read from its configuration words.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Common {
    /// Common emitter: in at the base, out at the collector.
    Emitter,
    /// Common collector (emitter follower): in at the base, out at the emitter.
    Collector,
    /// Common base: in at the emitter, out at the collector.
    Base,
}

impl Common {
    pub fn of(configuration: &str) -> Common {
        let c = configuration.to_lowercase();
        if c.contains("collector") || c.contains("follower") {
            Common::Collector
        } else if c.contains("common base")
            || c.contains("common_base")
            || c.contains("common gate")
            || c.contains("common_gate")
        {
            Common::Base
        } else {
            Common::Emitter
        }
    }
}

struct Pen {
    prims: Vec<Primitive>,
    colour: Colour,
}

impl Pen {
    fn stroke(&self) -> Option<Stroke> {
        Some(Stroke {
            colour: self.colour,
            width: style::FRAME * 1.3,
            dash: None,
        })
    }
    fn line(&mut self, pts: &[Point]) {
        self.prims.push(Primitive::Path(PathItem {
            shape: Shape::Polyline {
                points: pts.to_vec(),
                closed: false,
            },
            stroke: self.stroke(),
            fill: None,
        }));
    }
    fn text(&mut self, s: &str, p: Point, anchor: Anchor) {
        self.prims.push(Primitive::Text(TextRun {
            text: s.to_string(),
            position: p,
            anchor,
            size: style::TEXT_CARD,
            weight: Weight::Regular,
            colour: style::INK,
        }));
    }
    fn dot(&mut self, p: Point) {
        self.prims.push(Primitive::Path(PathItem {
            shape: Shape::Circle {
                center: p,
                radius: 0.14,
            },
            stroke: None,
            fill: Some(self.colour),
        }));
    }
    fn terminal(&mut self, p: Point, label: &str, anchor: Anchor) {
        self.prims.push(Primitive::Path(PathItem {
            shape: Shape::Circle {
                center: p,
                radius: 0.2,
            },
            stroke: self.stroke(),
            fill: Some(style::TAG_FILL),
        }));
        let dx = match anchor {
            Anchor::End => -0.35,
            Anchor::Middle => 0.0,
            Anchor::Start => 0.35,
        };
        self.text(label, [p[0] + dx, p[1] - 0.45], anchor);
    }
    fn ground(&mut self, p: Point) {
        self.line(&[p, [p[0], p[1] + 0.4]]);
        self.line(&[[p[0] - 0.5, p[1] + 0.4], [p[0] + 0.5, p[1] + 0.4]]);
        self.line(&[[p[0] - 0.3, p[1] + 0.6], [p[0] + 0.3, p[1] + 0.6]]);
        self.line(&[[p[0] - 0.1, p[1] + 0.8], [p[0] + 0.1, p[1] + 0.8]]);
    }
    /// Two text lines beside an element: name and value.
    fn label(&mut self, name: &str, value: &str, p: Point, vertical: bool) {
        if vertical {
            self.text(name, [p[0] + 0.75, p[1] - 0.1], Anchor::Start);
            self.text(value, [p[0] + 0.75, p[1] + 0.85], Anchor::Start);
        } else {
            let s = format!("{name} {value}");
            self.text(&s, [p[0], p[1] - 0.55], Anchor::Middle);
        }
    }
    /// A zigzag resistor from `a` to `b` (axis-aligned).
    fn resistor(&mut self, a: Point, b: Point) {
        let (len, ux, uy) = axis(a, b);
        let body = 1.6f64.min(len * 0.7);
        let s = (len - body) / 2.0;
        let mut pts = vec![a, [a[0] + ux * s, a[1] + uy * s]];
        for k in 0..6 {
            let t = s + body * (k as f64 + 0.5) / 6.0;
            let side = if k % 2 == 0 { 0.3 } else { -0.3 };
            pts.push([a[0] + ux * t - uy * side, a[1] + uy * t + ux * side]);
        }
        pts.push([a[0] + ux * (s + body), a[1] + uy * (s + body)]);
        pts.push(b);
        self.line(&pts);
    }
    /// A dependent current source: a circle with an arrow pointing toward `b`.
    fn current_source(&mut self, a: Point, b: Point) {
        let (len, ux, uy) = axis(a, b);
        let c = [(a[0] + b[0]) / 2.0, (a[1] + b[1]) / 2.0];
        let r = 0.55f64.min(len / 2.5);
        self.line(&[a, [c[0] - ux * r, c[1] - uy * r]]);
        self.line(&[[c[0] + ux * r, c[1] + uy * r], b]);
        self.prims.push(Primitive::Path(PathItem {
            shape: Shape::Circle {
                center: c,
                radius: r,
            },
            stroke: self.stroke(),
            fill: None,
        }));
        self.prims.push(Primitive::Arrow(Arrow {
            from: [c[0] - ux * r * 0.65, c[1] - uy * r * 0.65],
            to: [c[0] + ux * r * 0.65, c[1] + uy * r * 0.65],
            head: 0.3,
            stroke: Stroke {
                colour: self.colour,
                width: style::FRAME * 1.3,
                dash: None,
            },
        }));
    }
    /// A dependent voltage source (+ toward `a`).
    fn voltage_source(&mut self, a: Point, b: Point) {
        let (len, ux, uy) = axis(a, b);
        let c = [(a[0] + b[0]) / 2.0, (a[1] + b[1]) / 2.0];
        let r = 0.55f64.min(len / 2.5);
        self.line(&[a, [c[0] - ux * r, c[1] - uy * r]]);
        self.line(&[[c[0] + ux * r, c[1] + uy * r], b]);
        self.prims.push(Primitive::Path(PathItem {
            shape: Shape::Circle {
                center: c,
                radius: r,
            },
            stroke: self.stroke(),
            fill: None,
        }));
        let plus = [c[0] - ux * r * 0.45, c[1] - uy * r * 0.45];
        let minus = [c[0] + ux * r * 0.45, c[1] + uy * r * 0.45];
        let k = r * 0.25;
        self.line(&[[plus[0] - k, plus[1]], [plus[0] + k, plus[1]]]);
        self.line(&[[plus[0], plus[1] - k], [plus[0], plus[1] + k]]);
        self.line(&[[minus[0] - k, minus[1]], [minus[0] + k, minus[1]]]);
    }
}

fn axis(a: Point, b: Point) -> (f64, f64, f64) {
    let dx = b[0] - a[0];
    let dy = b[1] - a[1];
    let len = (dx * dx + dy * dy).sqrt().max(1e-9);
    (len, dx / len, dy / len)
}

fn value_text(q: Option<&Quantity>) -> String {
    q.map(|q| units::format(q.value, q.unit))
        .unwrap_or_else(|| "—".into())
}

fn find<'a>(m: Option<&'a ModelFigures>, name: &str) -> Option<&'a Quantity> {
    m?.values.iter().find(|q| q.name == name)
}

fn finite(q: Option<&Quantity>) -> bool {
    q.is_some_and(|q| q.value.is_finite() && q.value != 0.0)
}

/// The width an element column needs for its two-line label.
/// Width of a series element: at least `SERIES`, wide enough for "name value".
fn series_span(name: &str, value: &str) -> f64 {
    let w = text::measure(
        &format!("{name} {value}"),
        style::TEXT_CARD,
        Weight::Regular,
    )
    .width;
    SERIES.max(w + 0.4)
}

fn column_width(name: &str, value: &str) -> f64 {
    let w = text::measure(name, style::TEXT_CARD, Weight::Regular)
        .width
        .max(text::measure(value, style::TEXT_CARD, Weight::Regular).width);
    w + 1.35
}

/// Draw the equivalent; returns the primitives (origin at the top-left of
/// the drawing's box) and the box size.
pub fn draw(card: &StageCard, kind: ModelKind) -> (Vec<Primitive>, [f64; 2]) {
    let model = card.model(kind);
    let kind = model.map_or(kind, |m| m.kind);
    let topo = Common::of(&card.configuration);
    let mut pen = Pen {
        prims: Vec::new(),
        colour: style::INK,
    };
    let of = |role: EquivalentRole| {
        card.elements
            .iter()
            .filter(move |e| e.role == role)
            .collect::<Vec<_>>()
    };
    let y0 = 1.2; // signal rail (room above for series labels)
    let g = y0 + G; // AC ground rail
    let emitters = of(EquivalentRole::Emitter);
    let split = topo == Common::Emitter && !emitters.is_empty();
    let e_y = if split { y0 + E_SPLIT } else { g };

    let mut x = 0.6;
    pen.terminal([x, y0], "in", Anchor::Middle);
    let x_start = x;
    pen.line(&[[x, y0], [x + 0.9, y0]]);
    x += 0.9;
    // Input series elements along the signal rail.
    for e in of(EquivalentRole::InputSeries) {
        // The slot widens to its one-line label so a long name cannot reach
        // back over the terminal or forward over the next element.
        let value = units::format(e.value, e.unit);
        let span = series_span(&e.name, &value);
        pen.resistor([x, y0], [x + span, y0]);
        pen.label(&e.name, &value, [x + span / 2.0, y0], false);
        x += span;
    }
    let x_rail = x;
    // Shunts at the input node.
    let shunt = |pen: &mut Pen, x: &mut f64, name: &str, value: &str, top: f64, bottom: f64| {
        *x += 0.9;
        pen.resistor([*x, top], [*x, bottom]);
        pen.dot([*x, top]);
        pen.label(name, value, [*x, (top + bottom) / 2.0], true);
        *x += column_width(name, value) - 0.2;
    };
    for e in of(EquivalentRole::InputShunt) {
        shunt(
            &mut pen,
            &mut x,
            &e.name,
            &units::format(e.value, e.unit),
            y0,
            g,
        );
    }

    // The device, in its model; returns where the output node's rail starts.
    let re = find(model, "re");
    let alpha = find(model, "α");
    let ro = find(model, "ro");
    let rpi = find(model, "rπ");
    let hie = find(model, "hie");
    let hoe = find(model, "hoe");
    let hre = find(model, "hre");
    let c = card.configuration.to_lowercase();
    let fet = ["source", "drain", "gate"].iter().any(|w| c.contains(w));
    // The FET's gate draws no current: no input resistance in the hybrid-π.
    let open_gate = fet && kind != ModelKind::T;
    let (in_r_name, in_r) = match kind {
        ModelKind::T if fet => ("1/gm", find(model, "1/gm")),
        ModelKind::T => ("re", re),
        ModelKind::H => ("hie", hie),
        ModelKind::HybridPi => ("rπ", rpi),
    };
    let src_name = match kind {
        _ if fet => "gm·vgs",
        ModelKind::T => "α·ie",
        ModelKind::H => "hfe·ib",
        ModelKind::HybridPi => "gm·vπ",
    };
    let src_value = match kind {
        _ if fet => find(model, "gm").map(|q| format!("gm {}", units::format(q.value, q.unit))),
        ModelKind::T => alpha.map(|a| {
            format!(
                "α {}",
                super::annotations::format_value(a.value, Unit::None)
            )
        }),
        ModelKind::H => find(model, "hfe").map(|q| {
            format!(
                "hfe {}",
                super::annotations::format_value(q.value, Unit::None)
            )
        }),
        ModelKind::HybridPi => {
            find(model, "gm").map(|q| format!("gm {}", units::format(q.value, q.unit)))
        }
    }
    .unwrap_or_default();
    // Output resistance of the device: ro, or 1/hoe.
    let (out_name, out_value) = match kind {
        ModelKind::H if finite(hoe) => (
            "1/hoe",
            Some(units::format(1.0 / hoe.map_or(1.0, |q| q.value), Unit::Ohm)),
        ),
        ModelKind::H => ("1/hoe", None),
        _ if finite(ro) => ("ro", Some(value_text(ro))),
        _ => ("ro", None),
    };
    let x_out;
    match topo {
        Common::Emitter => {
            x += 0.9;
            let xb = x;
            pen.line(&[[x_rail, y0], [xb, y0]]);
            let mut xe_left = xb;
            let xc;
            match kind {
                ModelKind::T => {
                    // B ── X ──(α·ie ←)── C, re from X down to the emitter.
                    pen.resistor([xb, y0], [xb, e_y]);
                    pen.dot([xb, y0]);
                    pen.label(in_r_name, &value_text(in_r), [xb, (y0 + e_y) / 2.0], true);
                    xc = xb + column_width(in_r_name, &value_text(in_r)).max(3.4) + 0.4;
                    pen.current_source([xc, y0], [xb, y0]);
                    pen.text(src_name, [(xb + xc) / 2.0 + 0.3, y0 - 0.8], Anchor::Middle);
                }
                ModelKind::H => {
                    let xb2 = xb + SERIES;
                    pen.resistor([xb, y0], [xb2, y0]);
                    pen.label(in_r_name, &value_text(in_r), [(xb + xb2) / 2.0, y0], false);
                    xe_left = xb2;
                    if finite(hre) {
                        let hre_text = format!(
                            "hre {}",
                            super::annotations::format_value(
                                hre.map_or(0.0, |q| q.value),
                                Unit::None
                            )
                        );
                        pen.voltage_source([xb2, y0], [xb2, e_y]);
                        pen.label("hre·vce", &hre_text, [xb2, (y0 + e_y) / 2.0], true);
                        xc = xb2 + column_width("hre·vce", &hre_text) + 0.3;
                    } else {
                        pen.line(&[[xb2, y0], [xb2, e_y]]);
                        xc = xb2 + 1.5;
                    }
                }
                ModelKind::HybridPi if open_gate => {
                    // Gate to source open: only the controlling voltage is marked.
                    pen.text("vgs", [xb + 0.3, (y0 + e_y) / 2.0], Anchor::Start);
                    xc = xb + 2.9;
                }
                ModelKind::HybridPi => {
                    pen.resistor([xb, y0], [xb, e_y]);
                    pen.dot([xb, y0]);
                    pen.label(in_r_name, &value_text(in_r), [xb, (y0 + e_y) / 2.0], true);
                    xc = xb + column_width(in_r_name, &value_text(in_r)) + 0.4;
                }
            }
            let mut xr = xc;
            if kind != ModelKind::T {
                pen.current_source([xc, y0], [xc, e_y]);
                pen.label(src_name, &src_value, [xc, (y0 + e_y) / 2.0], true);
                xr = xc + column_width(src_name, &src_value);
            }
            if let Some(v) = &out_value {
                let xo = if kind == ModelKind::T { xc } else { xr };
                pen.resistor([xo, y0], [xo, e_y]);
                pen.label(out_name, v, [xo, (y0 + e_y) / 2.0], true);
                xr = xo + column_width(out_name, v);
            } else if kind == ModelKind::T {
                pen.line(&[[xc, y0], [xc, e_y]]);
                xr = xc + 1.0;
            }
            let xe_right = if kind == ModelKind::T { xc } else { xr - 1.0 };
            // Emitter rail, and the emitter element hanging from it.
            pen.line(&[[xe_left, e_y], [xe_right.max(xe_left), e_y]]);
            if split {
                let mut xe = xe_left + 0.0;
                for (k, e) in emitters.iter().enumerate() {
                    if k > 0 {
                        xe += column_width(&emitters[k - 1].name, "000 kΩ");
                        pen.line(&[[xe - 1.0, e_y], [xe, e_y]]);
                    }
                    pen.resistor([xe, e_y], [xe, g]);
                    pen.dot([xe, e_y]);
                    pen.label(
                        &e.name,
                        &units::format(e.value, e.unit),
                        [xe, (e_y + g) / 2.0],
                        true,
                    );
                }
            }
            x_out = xc;
            x = xr.max(xc + 1.0);
        }
        Common::Collector => {
            x += 0.9;
            let xb = x;
            pen.line(&[[x_rail, y0], [xb, y0]]);
            let xe;
            match kind {
                ModelKind::T => {
                    // X at the base; α·ie rises from the grounded collector; re to the emitter.
                    pen.current_source([xb, g], [xb, y0]);
                    pen.dot([xb, y0]);
                    pen.label(src_name, &src_value, [xb, (y0 + g) / 2.0], true);
                    let xs = xb + column_width(src_name, &src_value);
                    xe = xs + SERIES;
                    pen.line(&[[xb, y0], [xs, y0]]);
                    pen.resistor([xs, y0], [xe, y0]);
                    pen.label(in_r_name, &value_text(in_r), [(xs + xe) / 2.0, y0], false);
                    x = xe;
                }
                ModelKind::H | ModelKind::HybridPi => {
                    let xm = xb + SERIES;
                    if open_gate {
                        // Gate and source not joined: vgs between them.
                        pen.text("vgs", [(xb + xm) / 2.0, y0 - 0.5], Anchor::Middle);
                    } else {
                        pen.resistor([xb, y0], [xm, y0]);
                        pen.label(in_r_name, &value_text(in_r), [(xb + xm) / 2.0, y0], false);
                    }
                    xe = if kind == ModelKind::H && finite(hre) {
                        let xv = xm + 2.6;
                        pen.voltage_source([xm, y0], [xv, y0]);
                        pen.text(
                            &format!(
                                "hre·vce, hre {}",
                                super::annotations::format_value(
                                    hre.map_or(0.0, |q| q.value),
                                    Unit::None
                                )
                            ),
                            [(xm + xv) / 2.0, y0 + 1.3],
                            Anchor::Middle,
                        );
                        xv
                    } else {
                        xm
                    };
                    x = xe + 0.9;
                    pen.current_source([x, g], [x, y0]);
                    pen.dot([x, y0]);
                    pen.label(src_name, &src_value, [x, (y0 + g) / 2.0], true);
                    x += column_width(src_name, &src_value) - 0.9;
                }
            }
            if let Some(v) = &out_value {
                x += 0.9;
                pen.resistor([x, y0], [x, g]);
                pen.dot([x, y0]);
                pen.label(out_name, v, [x, (y0 + g) / 2.0], true);
                x += column_width(out_name, v) - 0.9;
            }
            for e in &emitters {
                shunt(
                    &mut pen,
                    &mut x,
                    &e.name,
                    &units::format(e.value, e.unit),
                    y0,
                    g,
                );
            }
            x_out = xe;
        }
        Common::Base => {
            // Input at the emitter; base at AC ground; ro (or 1/hoe) from E to C on top.
            // The emitter resistor hangs from the input node.
            for e in &emitters {
                shunt(
                    &mut pen,
                    &mut x,
                    &e.name,
                    &units::format(e.value, e.unit),
                    y0,
                    g,
                );
            }
            x += 0.9;
            let xe = x;
            pen.line(&[[x_rail, y0], [xe, y0]]);
            let (name, value) = match kind {
                ModelKind::T => (in_r_name, value_text(in_r)),
                _ => (in_r_name, value_text(in_r)),
            };
            if open_gate {
                pen.text("vgs", [xe + 0.3, (y0 + g) / 2.0], Anchor::Start);
            } else {
                pen.resistor([xe, y0], [xe, g]);
                pen.dot([xe, y0]);
                pen.label(name, &value, [xe, (y0 + g) / 2.0], true);
            }
            let xc = xe + column_width(name, &value).max(SERIES) + 0.6;
            if kind == ModelKind::T {
                pen.current_source([xc, y0], [xc, g]);
                pen.label(src_name, &src_value, [xc, (y0 + g) / 2.0], true);
                pen.line(&[[xe, y0], [xe + 0.4, y0]]);
                if let Some(v) = &out_value {
                    pen.resistor([xe + 0.4, y0], [xc, y0]);
                    pen.label(out_name, v, [(xe + xc) / 2.0 + 0.2, y0], false);
                } else {
                    pen.line(&[[xe, y0], [xc, y0]]);
                }
                pen.dot([xc, y0]);
                x = xc + column_width(src_name, &src_value) - 0.9;
            } else {
                // Source C → E along the top, the device resistance above it.
                pen.current_source([xc, y0], [xe, y0]);
                pen.text(src_name, [(xe + xc) / 2.0, y0 + 1.2], Anchor::Middle);
                if let Some(v) = &out_value {
                    // In parallel with the source, above the rail.
                    let yt = y0 - 1.6;
                    pen.line(&[[xe, y0], [xe, yt]]);
                    pen.resistor([xe, yt], [xc, yt]);
                    pen.line(&[[xc, yt], [xc, y0]]);
                    pen.dot([xe, y0]);
                    pen.label(out_name, v, [(xe + xc) / 2.0, yt], false);
                }
                pen.dot([xc, y0]);
                x = xc;
            }
            x_out = xc;
        }
    }
    // Output node: shunts and the load, then the output terminal.
    let out_start = x_out;
    for e in of(EquivalentRole::OutputShunt)
        .into_iter()
        .chain(of(EquivalentRole::Load))
    {
        shunt(
            &mut pen,
            &mut x,
            &e.name,
            &units::format(e.value, e.unit),
            y0,
            g,
        );
    }
    x += 0.9;
    pen.line(&[[out_start, y0], [x, y0]]);
    pen.terminal([x, y0], "out", Anchor::End);
    // AC ground rail along the bottom with its symbol.
    pen.line(&[[x_start, g], [x, g]]);
    pen.ground([x_start + 0.0, g]);
    let mut bounds = Rect::new([0.0, 0.0], [x + 0.6, g + 1.0]);
    for p in &pen.prims {
        if let Primitive::Text(t) = p {
            bounds = bounds.union(&t.bounds());
        }
    }
    // Shift so the box starts at the origin.
    let d = [-bounds.min[0].min(0.0), -bounds.min[1].min(0.0)];
    let prims = pen
        .prims
        .iter()
        .map(|p| super::build::translate(p, d))
        .collect();
    (prims, [bounds.width(), bounds.height()])
}
