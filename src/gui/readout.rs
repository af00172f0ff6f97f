//! Annotations on the sheet (the `voltages`, `currents` and `stages` layers)
//! and the readout shown on hover: a net's voltage and the current of every
//! pin on it (their sum visible), or a part's terminal currents, power and
//! region.

use super::annotate::Figures;
use super::app::{App, View};
use super::canvas::{text_size, value_text};
use super::edit::{pin_positions, Item};
use super::hit;
use super::message::Layer;
use super::palette;
use crate::document::PartKind;
use crate::netlist::NetId;
use crate::units::{format, Unit};
use iced::widget::canvas::{Frame, Path, Stroke, Text};
use iced::{alignment, Point, Size, Vector};

/// Lines of the readout for a net.
pub fn net_lines(app: &App, net: NetId) -> Vec<String> {
    let nl = &app.derived.netlist;
    let Some(n) = nl.nets.get(net) else {
        return Vec::new();
    };
    let figures = app.ok_figures();
    let mut out = Vec::new();
    match figures.and_then(|f| f.net_voltages.get(net)) {
        Some(v) => out.push(format!(
            "net {}: {}{}",
            n.name,
            format(*v, Unit::Volt),
            stale(app)
        )),
        None => out.push(format!("net {}", n.name)),
    }
    let mut sum = 0.0;
    for pin in &n.pins {
        let k = app.doc.parts[pin.part]
            .kind
            .pin_names()
            .iter()
            .position(|p| *p == pin.pin);
        let i = figures
            .and_then(|f| f.parts.get(pin.part))
            .and_then(|p| k.and_then(|k| p.pin_currents.get(k)))
            .copied();
        let who = if pin.designator.is_empty() {
            app.doc.parts[pin.part].label()
        } else {
            pin.label()
        };
        match i {
            Some(i) => {
                sum += i;
                out.push(format!("  {who}: {} into the pin", format(i, Unit::Ampere)));
            }
            None => out.push(format!("  {who}")),
        }
    }
    if figures.is_some() && !n.pins.is_empty() {
        out.push(format!(
            "  sum into the pins: {} (Kirchhoff: 0)",
            format(sum, Unit::Ampere)
        ));
    }
    if figures.is_none() {
        if let Some(Err(e)) = app.figures.as_deref() {
            out.push(format!("no DC figures: {e}"));
        }
    }
    out
}

fn stale(app: &App) -> &'static str {
    if app.stale {
        " (stale, recomputing)"
    } else {
        ""
    }
}

/// Lines of the readout for a part.
pub fn part_lines(app: &App, i: usize) -> Vec<String> {
    let Some(part) = app.doc.parts.get(i) else {
        return Vec::new();
    };
    let mut out = vec![format!(
        "{} ({}) {}",
        part.label(),
        part.kind,
        value_text(part)
    )];
    let Some(f) = app.ok_figures().and_then(|f| f.parts.get(i)) else {
        if let Some(Err(e)) = app.figures.as_deref() {
            out.push(format!("no DC figures: {e}"));
        }
        return out;
    };
    if let Some(r) = &f.region {
        out.push(format!("  region: {r}{}", stale(app)));
    }
    for (k, name) in part.kind.pin_names().iter().enumerate() {
        if let Some(c) = f.pin_currents.get(k) {
            let v = app
                .derived
                .netlist
                .part_nets
                .get(i)
                .and_then(|n| n.get(k))
                .and_then(|n| app.ok_figures()?.net_voltages.get(*n))
                .map(|v| format!(" at {}", format(*v, Unit::Volt)))
                .unwrap_or_default();
            out.push(format!("  {name}: {} in{v}", format(*c, Unit::Ampere)));
        }
    }
    out.push(format!("  power: {}", format(f.power, Unit::Watt)));
    if let Some(rating) = crate::presets::effective_parameters(part)
        .get(crate::presets::keys::POWER_RATING)
        .or(crate::presets::effective_parameters(part).get(crate::presets::keys::MAX_POWER))
    {
        if f.power > *rating {
            out.push(format!(
                "  ⚠ past its power rating of {}: use a larger part",
                format(*rating, Unit::Watt)
            ));
        }
    }
    out
}

/// The readout for whatever is under `at` (sheet units).
pub fn hover_lines(app: &App, at: [f64; 2]) -> Option<Vec<String>> {
    let view = app.view_for(app.canvas_size);
    let tol = (6.0 / view.scale as f64).max(0.25);
    if let Some(net) = hit::net_at(&app.doc, &app.derived.netlist, at) {
        return Some(net_lines(app, net));
    }
    match hit::item_at(&app.doc, at, tol) {
        Some(Item::Part(i)) => Some(part_lines(app, i)),
        _ => None,
    }
}

fn label(content: String, at: Point, size: f32, color: iced::Color) -> Text {
    Text {
        content,
        position: at,
        color,
        size: size.into(),
        align_y: alignment::Vertical::Center,
        ..Text::default()
    }
}

/// The hover readout box near the pointer.
pub fn draw_hover(f: &mut Frame, app: &App, view: &View, at: [f64; 2]) {
    let Some(lines) = hover_lines(app, at) else {
        return;
    };
    let size = 13.0;
    let line_h = size * 1.35;
    let width =
        lines.iter().map(|l| l.chars().count()).max().unwrap_or(0) as f32 * size * 0.56 + 16.0;
    let height = lines.len() as f32 * line_h + 10.0;
    let mut p = view.to_screen(at) + Vector::new(18.0, 14.0);
    if p.x + width > f.width() {
        p.x = (f.width() - width - 4.0).max(0.0);
    }
    if p.y + height > f.height() {
        p.y = (p.y - height - 28.0).max(0.0);
    }
    let rect = Path::rectangle(p, Size::new(width, height));
    f.fill(&rect, palette::PAPER);
    f.stroke(
        &rect,
        Stroke::default().with_color(palette::INK).with_width(1.0),
    );
    for (k, l) in lines.iter().enumerate() {
        let color = if k == 0 {
            palette::VOLTAGE
        } else {
            palette::INK
        };
        let color = if l.contains("into the pin") || l.contains(" in") && k > 0 {
            palette::CURRENT
        } else {
            color
        };
        f.fill_text(label(
            l.clone(),
            p + Vector::new(8.0, 5.0 + line_h * (k as f32 + 0.5)),
            size,
            color,
        ));
    }
}

/// The arrow for a current flowing from `a` to `b` on screen.
fn arrow(a: [i32; 2], b: [i32; 2]) -> &'static str {
    let (dx, dy) = (b[0] - a[0], b[1] - a[1]);
    if dx.abs() >= dy.abs() {
        if dx >= 0 {
            "→"
        } else {
            "←"
        }
    } else if dy >= 0 {
        "↓"
    } else {
        "↑"
    }
}

/// The `voltages`, `currents` and `stages` layers.
pub fn draw_annotations(f: &mut Frame, app: &App, view: &View) {
    let ts = text_size(view) * 0.85;
    let figures: Option<&Figures> = app.ok_figures();
    if app.layer(Layer::Voltages) {
        if let Some(fig) = figures {
            for (id, net) in app.derived.netlist.nets.iter().enumerate() {
                if Some(id) == app.derived.netlist.ground || net.pins.len() + net.wires.len() < 2 {
                    continue;
                }
                let Some(v) = fig.net_voltages.get(id) else {
                    continue;
                };
                let anchor = net
                    .wires
                    .first()
                    .and_then(|w| {
                        let pts = &app.doc.wires[*w].points;
                        let (a, b) = (pts[0], pts[1]);
                        Some([(a[0] + b[0]) as f64 / 2.0, (a[1] + b[1]) as f64 / 2.0])
                    })
                    .or_else(|| net.anchor(&app.doc).map(|p| [p[0] as f64, p[1] as f64]));
                let Some(p) = anchor else { continue };
                let q = view.to_screen(p) + Vector::new(4.0, -ts * 0.8);
                // A small diamond marks a voltage (shape as well as colour).
                let c = q + Vector::new(-2.0, 0.0);
                let d = Path::new(|b| {
                    b.move_to(c + Vector::new(0.0, -3.5));
                    b.line_to(c + Vector::new(3.5, 0.0));
                    b.line_to(c + Vector::new(0.0, 3.5));
                    b.line_to(c + Vector::new(-3.5, 0.0));
                    b.close();
                });
                f.fill(&d, palette::VOLTAGE);
                let mut t = format(*v, Unit::Volt);
                if app.stale {
                    t.push_str(" ?");
                }
                f.fill_text(label(t, q + Vector::new(5.0, 0.0), ts, palette::VOLTAGE));
            }
        }
    }
    if app.layer(Layer::Currents) {
        if let Some(fig) = figures {
            for (i, part) in app.doc.parts.iter().enumerate() {
                let Some(pf) = fig.parts.get(i) else { continue };
                let pins = pin_positions(part);
                let lines: Vec<String> = match part.kind {
                    PartKind::Ground | PartKind::Rail => continue,
                    PartKind::Npn | PartKind::Pnp => ["IC", "IB"]
                        .iter()
                        .zip(&pf.pin_currents)
                        .map(|(n, c)| format!("{n} {}", format(c.abs(), Unit::Ampere)))
                        .collect(),
                    _ => {
                        let Some(c) = pf.pin_currents.first() else {
                            continue;
                        };
                        if pins.len() < 2 {
                            continue;
                        }
                        let (a, b) = if *c >= 0.0 {
                            (pins[0], pins[1])
                        } else {
                            (pins[1], pins[0])
                        };
                        vec![format!("{} {}", arrow(a, b), format(c.abs(), Unit::Ampere))]
                    }
                };
                let Some((p, _)) = super::canvas::slot_position(part, "value") else {
                    continue;
                };
                let start = if part.rotation % 180 == 90 {
                    [p[0] - 1.5, p[1] + 1.3]
                } else {
                    [p[0], p[1] + 1.3]
                };
                for (k, l) in lines.into_iter().enumerate() {
                    let q = view.to_screen([start[0], start[1] + 1.1 * k as f64]);
                    f.fill_text(label(l, q, ts, palette::CURRENT));
                }
            }
        }
    }
    // The `stages` layer draws stage cards once the small-signal analysis
    // is part of the build; until then the stage table says so.
}
