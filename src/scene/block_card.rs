//! The `stages` layer's card for a block (a group of transistors read as
//! one: a differential pair, a push-pull output, a current mirror, …): what
//! it is, its figures exact beside the estimate and the difference, why an
//! estimate is absent, and its warnings. It sits in the margin nearest the
//! middle of its transistors, as a stage card does.

use super::annotations::format_value;
use super::build::{Content, Pending};
use super::card::{framed, margin_card, part_body, signed_percent, Writer, PAD};
use super::schematic::Obstacles;
use super::{style, Anchor, Annotations, BlockCard, ItemRef, ModelKind, Weight};
use crate::document::Document;

/// Widest a card's wrapped lines run, grid units.
const WRAP: f64 = 18.0;

/// The content of one block card.
pub fn block_card_content(card: &BlockCard, kind: ModelKind) -> Content {
    let mut w = Writer {
        prims: Vec::new(),
        y: PAD,
        width: 0.0,
    };
    w.y += style::TEXT_HEADING * 0.8;
    w.line_at(
        &format!("Block {} · {}", card.transistors.join(", "), card.words),
        PAD,
        Anchor::Start,
        style::TEXT_HEADING,
        Weight::Bold,
        style::STAGE,
    );
    w.y += style::TEXT_HEADING * 0.35;
    let rule_y = w.y;
    w.y += 0.3;
    let size = style::TEXT_CARD;
    // The AC equivalent (a pair's half-circuit) under its caption.
    if let Some((stage, caption)) = &card.drawing {
        w.newline(size);
        w.line_at(
            caption,
            PAD,
            Anchor::Start,
            size,
            Weight::Regular,
            style::INK_SOFT,
        );
        w.y += 0.2;
        let (drawing, [dw, dh]) = super::equivalent::draw(stage, kind);
        for p in &drawing {
            w.prims.push(super::build::translate(p, [PAD, w.y]));
        }
        w.width = w.width.max(PAD + dw);
        w.y += dh;
    }
    let label_width = card
        .figures
        .iter()
        .map(|f| super::text::measure(&f.label, size, Weight::Bold).width)
        .fold(2.0_f64, f64::max);
    let cols = [
        PAD,
        PAD + label_width + 0.6,
        PAD + label_width + 6.0,
        PAD + label_width + 11.4,
    ];
    if !card.figures.is_empty() {
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
    }
    let text = |v: Option<f64>, u| {
        v.filter(|x| x.is_finite())
            .map_or("—".to_string(), |x| format_value(x, u).replace('-', "−"))
    };
    for f in &card.figures {
        w.newline(size);
        w.line_at(
            &f.label,
            cols[0],
            Anchor::Start,
            size,
            Weight::Bold,
            style::INK,
        );
        let cells = [
            text(f.exact, f.unit),
            text(f.estimate, f.unit),
            f.difference_percent
                .map(signed_percent)
                .unwrap_or_else(|| "—".into()),
        ];
        for (i, c) in cells.iter().enumerate() {
            w.line_at(
                c,
                cols[i + 1],
                Anchor::Start,
                size,
                Weight::Regular,
                style::INK,
            );
        }
    }
    let max = (w.width - PAD).max(WRAP);
    for n in &card.no_estimate {
        w.wrapped(
            &n.split(' ').map(str::to_string).collect::<Vec<_>>(),
            " ",
            max,
            style::INK_SOFT,
        );
    }
    for warn in &card.warnings {
        w.wrapped(
            &format!("! {warn}")
                .split(' ')
                .map(str::to_string)
                .collect::<Vec<_>>(),
            " ",
            max,
            style::WARNING,
        );
    }
    framed(w, rule_y)
}

/// One card per block whose transistors are on the sheet.
pub fn block_cards(
    doc: &Document,
    ann: &Annotations,
    kind: ModelKind,
    obs: &Obstacles,
) -> Vec<Pending> {
    let mut out = Vec::new();
    for card in &ann.blocks {
        let bodies: Vec<_> = card
            .transistors
            .iter()
            .filter_map(|d| {
                let p = doc.parts.iter().find(|p| &p.designator == d)?;
                Some(
                    part_body(doc, obs, d)
                        .map_or([p.position[0] as f64, p.position[1] as f64], |r| r.center()),
                )
            })
            .collect();
        if bodies.is_empty() {
            continue;
        }
        let n = bodies.len() as f64;
        let anchor = [
            bodies.iter().map(|b| b[0]).sum::<f64>() / n,
            bodies.iter().map(|b| b[1]).sum::<f64>() / n,
        ];
        let content = block_card_content(card, kind);
        out.push(margin_card(
            ItemRef::Stage(card.key_item()),
            content,
            anchor,
            style::STAGE,
            None,
        ));
    }
    out
}
