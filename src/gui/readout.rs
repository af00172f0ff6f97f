//! The readout shown on hover: a net's voltage and the current of every pin
//! on it (their sum visible), or a part's terminal currents, power and
//! region. Plain text lines; the panels draw them beside the pointer.

use super::app::App;
use super::canvas::value_text;
use super::edit::Item;
use super::hit;
use crate::netlist::NetId;
use crate::units::{format, Unit};

/// The largest pin current of the circuit shown (for the ≈ 0 A floor).
fn circuit_largest(app: &App) -> f64 {
    app.ok_figures().map_or(0.0, |f| {
        crate::units::largest_current(f.parts.iter().flat_map(|p| &p.pin_currents))
    })
}

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
    let mut largest: f64 = 0.0;
    for pin in &n.pins {
        if app.doc.parts[pin.part].kind == crate::document::PartKind::Ground {
            continue; // a ground symbol carries no current of its own
        }
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
                largest = largest.max(i.abs());
                out.push(format!(
                    "  {who}: {} into the pin",
                    crate::units::format_current(i, circuit_largest(app))
                ));
            }
            None => out.push(format!("  {who}")),
        }
    }
    // A rail is a source to ground: its current comes back through the
    // ground net, which the sum must include to show the law.
    if Some(net) == nl.ground {
        if let Some(f) = figures {
            for (i, part) in app.doc.parts.iter().enumerate() {
                if part.kind != crate::document::PartKind::Rail {
                    continue;
                }
                if let Some(c) = f.parts.get(i).and_then(|p| p.pin_currents.first()) {
                    sum -= c;
                    largest = largest.max(c.abs());
                    out.push(format!(
                        "  {} return through ground: {} into the net",
                        part.label(),
                        format(-c, Unit::Ampere)
                    ));
                }
            }
        }
    }
    if figures.is_some() && !n.pins.is_empty() {
        // Below a millionth of the largest pin current the sum is rounding.
        let shown = if sum.abs() <= 1e-6 * largest {
            0.0
        } else {
            sum
        };
        out.push(format!(
            "  sum into the pins: {} (Kirchhoff: 0)",
            format(shown, Unit::Ampere)
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
    out.extend(f.details.iter().map(|d| format!("  {d}")));
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
            out.push(format!(
                "  {name}: {} in{v}",
                crate::units::format_current(*c, circuit_largest(app))
            ));
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
    let view = app.view_for(app.sheet.size);
    let tol = (6.0 / view.scale as f64).max(0.25);
    if let Some(net) = hit::net_at(&app.doc, &app.derived.netlist, at) {
        return Some(net_lines(app, net));
    }
    // Annotations on the sheet (voltage tags, current markers) say what they describe.
    match app
        .scene
        .hit_in(at, app.layer_set().without(crate::scene::Layer::Schematic))
    {
        Some(crate::scene::ItemRef::Net(name)) => {
            if let Some(net) = app.derived.netlist.net_by_name(&name) {
                return Some(net_lines(app, net));
            }
        }
        Some(crate::scene::ItemRef::Part { index, .. })
        | Some(crate::scene::ItemRef::Current { index, .. }) => {
            return Some(part_lines(app, index))
        }
        _ => {}
    }
    match hit::item_at(&app.doc, at, tol) {
        Some(Item::Part(i)) => Some(part_lines(app, i)),
        _ => None,
    }
}
