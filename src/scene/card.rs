//! The `stages` layer: a card beside each stage with its configuration, a
//! small drawn AC equivalent with a value on every element, the device model
//! values, Zin, Zout, Av and Ai (exact, hand estimate, difference) and any
//! warnings. Cards go in the margin around the schematic, nearest their
//! transistor; a leader joins them when the line crosses nothing.

use super::annotations::format_value;
use super::build::{translate, Content, Leader, Pending};
use super::geometry::Rect;
use super::place::{Candidate, Request};
use super::schematic::Obstacles;
use super::{
    equivalent, style, text, Anchor, Annotations, Colour, ItemRef, Layer, ModelKind, PathItem,
    Primitive, Shape, StageCard, StageDistortion, StageNoise, Stroke, TextRun, Weight,
};
use crate::document::Document;

pub(super) const PAD: f64 = 0.6;

pub(super) struct Writer {
    pub(super) prims: Vec<Primitive>,
    pub(super) y: f64,
    pub(super) width: f64,
}

impl Writer {
    pub(super) fn line_at(
        &mut self,
        s: &str,
        x: f64,
        anchor: Anchor,
        size: f64,
        weight: Weight,
        c: Colour,
    ) {
        self.prims.push(Primitive::Text(TextRun {
            text: s.to_string(),
            position: [x, self.y],
            anchor,
            size,
            weight,
            colour: c,
        }));
        let w = text::measure(s, size, weight).width;
        let right = match anchor {
            Anchor::Start => x + w,
            Anchor::Middle => x + w / 2.0,
            Anchor::End => x,
        };
        self.width = self.width.max(right);
    }
    pub(super) fn newline(&mut self, size: f64) {
        self.y += size * 1.25;
    }
    /// Words joined by `sep`, wrapped to `max` wide.
    pub(super) fn wrapped(&mut self, items: &[String], sep: &str, max: f64, c: Colour) {
        let size = style::TEXT_CARD;
        let mut line = String::new();
        for it in items {
            let candidate = if line.is_empty() {
                it.clone()
            } else {
                format!("{line}{sep}{it}")
            };
            if !line.is_empty() && text::measure(&candidate, size, Weight::Regular).width > max {
                self.newline(size);
                self.line_at(&line, PAD, Anchor::Start, size, Weight::Regular, c);
                line = it.clone();
            } else {
                line = candidate;
            }
        }
        if !line.is_empty() {
            self.newline(size);
            self.line_at(&line, PAD, Anchor::Start, size, Weight::Regular, c);
        }
    }
}

pub(super) fn signed_percent(p: f64) -> String {
    let s = if p.is_finite() && p.abs() >= 1e6 {
        // Never a row of hundreds of digits (an estimate off by 1e300 %).
        format!(
            "{}{} %",
            if p >= 0.0 { "+" } else { "-" },
            crate::units::fixed(p.abs(), 1)
        )
    } else {
        format!("{:+.1} %", p)
    };
    s.replace('-', "−")
}

/// The noise line of a card, in pieces the writer wraps: en and in at the
/// spot frequency, then (input stage only) the chain's noise figure.
pub fn noise_lines(n: &StageNoise) -> Vec<String> {
    use crate::units::{format, Unit};
    let mut out = vec![
        format!(
            "noise at {}: en = {}",
            format(n.frequency, Unit::Hertz),
            crate::units::format_density(n.voltage_density, Unit::Volt)
        ),
        format!(
            "in = {}",
            crate::units::format_density(n.current_density, Unit::Ampere)
        ),
    ];
    if let Some(c) = &n.chain_figure {
        out.push(format!(
            "chain NF = {:.1} dB at {}, source {} = {}",
            c.figure_db,
            format(n.frequency, Unit::Hertz),
            c.source_resistor,
            format(c.source_ohms, Unit::Ohm)
        ));
    }
    out
}

/// The `distortion` layer's line of one card, in parts to wrap.
pub fn distortion_lines(d: &StageDistortion) -> Vec<String> {
    use crate::units::{format, Unit};
    let mut out = vec![
        format!(
            "source {} peak at {}: THD {} at the output",
            format(d.source_amplitude, Unit::Volt),
            format(d.frequency, Unit::Hertz),
            percent(d.thd)
        ),
        format!("{} peak", format(d.output_peak, Unit::Volt)),
    ];
    if let Some(c) = &d.chain_clip {
        // The limit's words come as `head (detail; detail)`: one wrap item
        // each, so the card keeps the width of its drawing.
        let (head, details) = match c.limited_by.split_once(" (") {
            Some((h, rest)) => (h.to_string(), rest.trim_end_matches(')').to_string()),
            None => (c.limited_by.clone(), String::new()),
        };
        out.push(match c.amplitude {
            Some(a) => format!(
                "chain reaches THD {} at {} source: {}",
                percent(c.thd_limit),
                format(a, Unit::Volt),
                head
            ),
            None => format!("chain THD stays below {}: {}", percent(c.thd_limit), head),
        });
        out.extend(
            details
                .split("; ")
                .filter(|t| !t.is_empty())
                .map(str::to_string),
        );
    }
    out
}

/// A fraction as a percentage, written as `transient` writes it (`1.509 %`).
fn percent(f: f64) -> String {
    format!("{:.3} %", 100.0 * f)
}

/// The content of one card.
pub fn card_content(
    card: &StageCard,
    kind: ModelKind,
    noise: Option<&StageNoise>,
    distortion: Option<&StageDistortion>,
) -> Content {
    let mut w = Writer {
        prims: Vec::new(),
        y: PAD,
        width: 0.0,
    };
    // Heading.
    w.y += style::TEXT_HEADING * 0.8;
    w.line_at(
        &format!("Stage {} · {}", card.transistor, card.configuration),
        PAD,
        Anchor::Start,
        style::TEXT_HEADING,
        Weight::Bold,
        style::STAGE,
    );
    w.y += style::TEXT_HEADING * 0.35;
    let rule_y = w.y;
    w.y += 0.3;

    // The drawing.
    let (drawing, [dw, dh]) = equivalent::draw(card, kind);
    for p in &drawing {
        w.prims.push(translate(p, [PAD, w.y]));
    }
    w.width = w.width.max(PAD + dw);
    w.y += dh;
    let max = (dw).max(16.0);

    // Model values.
    if let Some(m) = card.model(kind) {
        let items: Vec<String> = m.values.iter().map(|q| q.text()).collect();
        w.newline(style::TEXT_CARD);
        // A FET's T model has 1/gm in the source lead, not re.
        let fet_t = m.kind == ModelKind::T && m.values.iter().any(|q| q.name == "1/gm");
        w.line_at(
            if fet_t {
                "T model (1/gm)"
            } else {
                m.kind.title()
            },
            PAD,
            Anchor::Start,
            style::TEXT_CARD,
            Weight::Bold,
            style::STAGE,
        );
        w.wrapped(&items, ",  ", max, style::INK);
    }
    // Where the combined elements came from.
    let legend: Vec<String> = card
        .elements
        .iter()
        .filter(|e| {
            let joined: String = e.from_parts.join("‖");
            e.name.replace(' ', "") != joined
        })
        .filter(|e| !e.from_parts.is_empty())
        .map(|e| format!("{} = {}", e.name, e.from_parts.join(" ‖ ")))
        .collect();
    if !legend.is_empty() {
        w.wrapped(&legend, ";  ", max, style::INK_SOFT);
    }

    // Figures table: name | exact | estimate | difference.
    if !card.figures.is_empty() {
        let size = style::TEXT_CARD;
        let cols = [PAD, PAD + 2.6, PAD + 8.0, PAD + 13.4];
        w.y += 0.25;
        w.newline(size);
        for (i, h) in ["", "exact", "estimate", "diff."].iter().enumerate() {
            w.line_at(
                h,
                cols[i],
                Anchor::Start,
                size,
                Weight::Bold,
                style::INK_SOFT,
            );
        }
        for f in &card.figures {
            w.newline(size);
            w.line_at(
                &f.name,
                cols[0],
                Anchor::Start,
                size,
                Weight::Bold,
                style::INK,
            );
            w.line_at(
                &format_value(f.exact, f.unit).replace('-', "−"),
                cols[1],
                Anchor::Start,
                size,
                Weight::Regular,
                style::INK,
            );
            let est = f
                .estimate
                .map(|e| format_value(e, f.unit).replace('-', "−"))
                .unwrap_or_else(|| "—".into());
            w.line_at(
                &est,
                cols[2],
                Anchor::Start,
                size,
                Weight::Regular,
                style::INK,
            );
            let diff = f
                .difference_percent()
                .map(signed_percent)
                .unwrap_or_else(|| "—".into());
            w.line_at(
                &diff,
                cols[3],
                Anchor::Start,
                size,
                Weight::Regular,
                style::INK,
            );
        }
    }
    // The `noise` layer's line.
    if let Some(n) = noise {
        w.y += 0.25;
        w.wrapped(&noise_lines(n), ",  ", max, style::INK);
    }
    // The `distortion` layer's line.
    if let Some(d) = distortion {
        w.y += 0.25;
        w.wrapped(&distortion_lines(d), ",  ", max, style::INK);
    }
    // Warnings, marked by shape (!) as well as colour.
    for warn in &card.warnings {
        w.wrapped(&[format!("! {warn}")], " ", max, style::WARNING);
    }
    framed(w, rule_y)
}

/// The card's frame and the rule under its heading around what `w` wrote.
pub(super) fn framed(mut w: Writer, rule_y: f64) -> Content {
    let width = w.width + PAD;
    let height = w.y + PAD;
    let mut prims = vec![
        Primitive::Path(PathItem {
            shape: Shape::Rect {
                rect: Rect::from_size([0.0, 0.0], width, height),
                corner: 0.35,
            },
            stroke: Some(Stroke {
                colour: style::STAGE,
                width: style::LINE,
                dash: None,
            }),
            fill: Some(style::TAG_FILL),
        }),
        Primitive::Path(PathItem {
            shape: Shape::Polyline {
                points: vec![[PAD * 0.5, rule_y], [width - PAD * 0.5, rule_y]],
                closed: false,
            },
            stroke: Some(Stroke {
                colour: style::STAGE,
                width: style::FRAME,
                dash: None,
            }),
            fill: None,
        }),
    ];
    prims.append(&mut w.prims);
    Content {
        size: [width, height],
        prims,
    }
}

/// One card per stage in the annotations whose transistor is on the sheet.
pub fn stage_cards(
    doc: &Document,
    ann: &Annotations,
    kind: ModelKind,
    obs: &Obstacles,
) -> Vec<Pending> {
    let mut out = Vec::new();
    for card in &ann.stages {
        let Some(index) = doc
            .parts
            .iter()
            .position(|p| p.designator == card.transistor)
        else {
            continue;
        };
        let body = obs
            .bodies
            .iter()
            .find(|(i, _)| matches!(i, ItemRef::Part { index: j, .. } if *j == index))
            .map(|(_, r)| *r);
        let anchor = body.map_or(
            [
                doc.parts[index].position[0] as f64,
                doc.parts[index].position[1] as f64,
            ],
            |b| b.center(),
        );
        let content = card_content(
            card,
            kind,
            ann.stage_noise.get(&card.transistor),
            ann.stage_distortion.get(&card.transistor),
        );
        out.push(margin_card(
            ItemRef::Stage(card.transistor.clone()),
            content,
            anchor,
            style::STAGE,
            body,
        ));
    }
    out
}

/// A card of the `stages` layer waiting for a spot in the margin near
/// `anchor` (stage, block and loop cards), with a leader to `target` when
/// the line crosses nothing.
pub(super) fn margin_card(
    item: ItemRef,
    content: Content,
    anchor: [f64; 2],
    colour: super::Colour,
    target: Option<Rect>,
) -> Pending {
    Pending {
        layer: Layer::Stages,
        item,
        request: Request {
            size: content.size,
            anchor,
            candidates: Vec::new(),
            user: None,
            max_leader: 60.0,
            leader_variant: 0,
        },
        variants: vec![content],
        colour,
        leader: Leader::WhenClear,
        target,
    }
}

/// The symbol body (with its leads) of the part named `designator`.
pub(super) fn part_body(doc: &Document, obs: &Obstacles, designator: &str) -> Option<Rect> {
    let index = doc.parts.iter().position(|p| p.designator == designator)?;
    obs.bodies
        .iter()
        .find(|(i, _)| matches!(i, ItemRef::Part { index: j, .. } if *j == index))
        .map(|(_, r)| *r)
}

/// How far along the sheet (grid units) a stage card may sit from its stage.
const MARGIN_REACH: f64 = 160.0;

/// Spots in the margin: in rows below the sheet, then above it, then in a
/// column to its right, nearest the transistor first.
pub fn margin_candidates(extent: &Rect, sheet: &Rect, req: &Request) -> Vec<Candidate> {
    let [w, h] = req.size;
    let a = req.anchor;
    let ext = if extent.is_empty() { *sheet } else { *extent };
    let mut out = Vec::new();
    // Spots within MARGIN_REACH of the anchor only: a card far along a wide
    // sheet needs no spot at the other end, and every spot is tried, so the
    // whole width made placing n cards O(n²).
    let lo = (ext.min[0] - w).max(a[0] - MARGIN_REACH - w);
    let hi = ext.max[0].min(a[0] + MARGIN_REACH);
    let span = lo.floor() as i64..=hi.ceil() as i64;
    for row in 0..3 {
        let y = sheet.max[1] + 1.5 + row as f64 * (h + 1.0);
        for x in span.clone() {
            let x = x as f64;
            out.push(Candidate {
                min: [x, y],
                size: [w, h],
                cost: (x + w / 2.0 - a[0]).abs() * 0.05 + row as f64 * 3.0,
                anchor: a,
                variant: 0,
            });
        }
    }
    for x in span {
        let x = x as f64;
        out.push(Candidate {
            min: [x, sheet.min[1] - 1.5 - h],
            size: [w, h],
            cost: (x + w / 2.0 - a[0]).abs() * 0.05 + 4.0,
            anchor: a,
            variant: 0,
        });
    }
    let right_in_reach = sheet.max[0] + 1.5 - a[0] <= MARGIN_REACH;
    for y in (sheet.min[1] - h).floor() as i64..=sheet.max[1].ceil() as i64 {
        if !right_in_reach {
            break;
        }
        let y = y as f64;
        out.push(Candidate {
            min: [sheet.max[0] + 1.5, y],
            size: [w, h],
            cost: (y + h / 2.0 - a[1]).abs() * 0.05 + 2.0,
            anchor: a,
            variant: 0,
        });
    }
    out
}
