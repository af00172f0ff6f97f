//! What is under the pointer: parts, pins, wires, labels. Sheet coordinates
//! are grid units as `f64`. Plain Rust, no GUI types.

use super::edit::{pin_positions, Item};
use crate::document::{Document, GridPoint, Part};
use crate::netlist::{NetId, Netlist};
use crate::symbols;

/// The body rectangle of a part on the sheet, `[min_x, min_y, max_x, max_y]`.
pub fn part_bounds(part: &Part) -> [f64; 4] {
    let lib = symbols::library();
    let Some(symbol) = lib.get(part.symbol_name()) else {
        let [x, y] = part.position;
        return [
            x as f64 - 1.0,
            y as f64 - 1.0,
            x as f64 + 1.0,
            y as f64 + 1.0,
        ];
    };
    let b = symbol.body_bounds();
    let corners = [[b[0], b[1]], [b[2], b[1]], [b[0], b[3]], [b[2], b[3]]];
    let mut out = [
        f64::INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::NEG_INFINITY,
    ];
    for c in corners {
        let p = symbols::transform(c, part.position, part.rotation, part.mirror);
        out[0] = out[0].min(p[0]);
        out[1] = out[1].min(p[1]);
        out[2] = out[2].max(p[0]);
        out[3] = out[3].max(p[1]);
    }
    // Thin symbols (a resistor is one unit wide) get a margin to be easy to hit.
    let grow = |lo: &mut f64, hi: &mut f64| {
        if *hi - *lo < 1.2 {
            let mid = (*lo + *hi) / 2.0;
            *lo = mid - 0.6;
            *hi = mid + 0.6;
        }
    };
    let (mut a, mut c) = (out[0], out[2]);
    grow(&mut a, &mut c);
    let (mut b2, mut d) = (out[1], out[3]);
    grow(&mut b2, &mut d);
    [a, b2, c, d]
}

fn inside(b: [f64; 4], p: [f64; 2]) -> bool {
    p[0] >= b[0] && p[0] <= b[2] && p[1] >= b[1] && p[1] <= b[3]
}

/// Distance from `p` to the segment `a`–`b`.
pub fn segment_distance(p: [f64; 2], a: GridPoint, b: GridPoint) -> f64 {
    let (ax, ay, bx, by) = (a[0] as f64, a[1] as f64, b[0] as f64, b[1] as f64);
    let (dx, dy) = (bx - ax, by - ay);
    let len2 = dx * dx + dy * dy;
    let t = if len2 == 0.0 {
        0.0
    } else {
        (((p[0] - ax) * dx + (p[1] - ay) * dy) / len2).clamp(0.0, 1.0)
    };
    let (cx, cy) = (ax + t * dx, ay + t * dy);
    ((p[0] - cx).powi(2) + (p[1] - cy).powi(2)).sqrt()
}

/// The topmost item under `p` (parts, then labels, then wires).
pub fn item_at(doc: &Document, p: [f64; 2], tolerance: f64) -> Option<Item> {
    if let Some(i) = doc
        .parts
        .iter()
        .rposition(|part| inside(part_bounds(part), p))
    {
        return Some(Item::Part(i));
    }
    if let Some(i) = doc.labels.iter().rposition(|l| {
        let [x, y] = l.position;
        let w = 0.6 * l.name.chars().count() as f64 + 0.6;
        p[0] >= x as f64 - tolerance && p[0] <= x as f64 + w && (p[1] - y as f64).abs() <= 0.8
    }) {
        return Some(Item::Label(i));
    }
    doc.wires
        .iter()
        .rposition(|w| {
            w.points
                .windows(2)
                .any(|s| segment_distance(p, s[0], s[1]) <= tolerance)
        })
        .map(Item::Wire)
}

/// The pin nearest to `p` within `tolerance`: (part, pin index, position).
pub fn pin_at(doc: &Document, p: [f64; 2], tolerance: f64) -> Option<(usize, usize, GridPoint)> {
    let mut best: Option<(f64, (usize, usize, GridPoint))> = None;
    for (pi, part) in doc.parts.iter().enumerate() {
        for (k, q) in pin_positions(part).into_iter().enumerate() {
            let d = ((p[0] - q[0] as f64).powi(2) + (p[1] - q[1] as f64).powi(2)).sqrt();
            if d <= tolerance && best.is_none_or(|(bd, _)| d < bd) {
                best = Some((d, (pi, k, q)));
            }
        }
    }
    best.map(|(_, x)| x)
}

/// Where a wire being drawn should end: a pin nearby, else a point on a
/// wire nearby, else the nearest grid point.
pub fn wire_target(doc: &Document, p: [f64; 2]) -> GridPoint {
    if let Some((_, _, q)) = pin_at(doc, p, 0.7) {
        return q;
    }
    [p[0].round() as i32, p[1].round() as i32]
}

/// Items wholly inside the rectangle between two sheet points.
pub fn items_in(doc: &Document, a: [f64; 2], b: [f64; 2]) -> Vec<Item> {
    let r = [
        a[0].min(b[0]),
        a[1].min(b[1]),
        a[0].max(b[0]),
        a[1].max(b[1]),
    ];
    let pt = |q: GridPoint| inside(r, [q[0] as f64, q[1] as f64]);
    let mut out = Vec::new();
    for (i, part) in doc.parts.iter().enumerate() {
        let pb = part_bounds(part);
        if inside(r, [pb[0], pb[1]]) && inside(r, [pb[2], pb[3]]) {
            out.push(Item::Part(i));
        }
    }
    for (i, w) in doc.wires.iter().enumerate() {
        if w.points.iter().all(|q| pt(*q)) {
            out.push(Item::Wire(i));
        }
    }
    for (i, l) in doc.labels.iter().enumerate() {
        if pt(l.position) {
            out.push(Item::Label(i));
        }
    }
    out
}

/// The net under `p`: a pin's or a wire's.
pub fn net_at(doc: &Document, nl: &Netlist, p: [f64; 2]) -> Option<NetId> {
    if let Some((part, k, _)) = pin_at(doc, p, 0.5) {
        return nl.part_nets.get(part).and_then(|v| v.get(k)).copied();
    }
    let wire = doc.wires.iter().rposition(|w| {
        w.points
            .windows(2)
            .any(|s| segment_distance(p, s[0], s[1]) <= 0.35)
    })?;
    nl.nets.iter().position(|n| n.wires.contains(&wire))
}

/// The rectangle holding everything on the sheet, or `None` when empty.
pub fn sheet_bounds(doc: &Document) -> Option<[f64; 4]> {
    let mut b = [
        f64::INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::NEG_INFINITY,
    ];
    let mut add = |x: f64, y: f64| {
        b[0] = b[0].min(x);
        b[1] = b[1].min(y);
        b[2] = b[2].max(x);
        b[3] = b[3].max(y);
    };
    for part in &doc.parts {
        let pb = part_bounds(part);
        add(pb[0], pb[1]);
        add(pb[2] + 4.0, pb[3]); // room for the designator and value text
    }
    for w in &doc.wires {
        for q in &w.points {
            add(q[0] as f64, q[1] as f64);
        }
    }
    for l in &doc.labels {
        add(l.position[0] as f64, l.position[1] as f64);
    }
    b[0].is_finite().then_some(b)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::document::PartKind;
    use crate::gui::edit;

    #[test]
    fn a_click_on_a_resistor_body_selects_it_and_a_wire_is_found_near_its_line() {
        // invariant: the item under a point is the one drawn there.
        let mut d = Document::new("t");
        let r = edit::place(&mut d, PartKind::Resistor, [5, 5], 0, false);
        edit::add_wire(&mut d, &[[5, 7], [12, 7]]).unwrap();
        assert_eq!(item_at(&d, [5.1, 5.2], 0.3), Some(Item::Part(r)));
        assert_eq!(item_at(&d, [9.0, 7.2], 0.3), Some(Item::Wire(0)));
        assert_eq!(item_at(&d, [20.0, 20.0], 0.3), None);
        assert_eq!(pin_at(&d, [5.2, 6.8], 0.7).map(|x| x.2), Some([5, 7]));
        assert_eq!(wire_target(&d, [5.3, 3.2]), [5, 3]);
        let nl = crate::netlist::connect(&d);
        let n = net_at(&d, &nl, [9.0, 7.1]).unwrap();
        assert_eq!(Some(n), nl.pin_net(&d, r, "b"));
    }

    #[test]
    fn rubber_band_takes_only_whole_items() {
        // invariant: an item partly outside the rectangle is not selected.
        let mut d = Document::new("t");
        edit::place(&mut d, PartKind::Resistor, [5, 5], 0, false);
        edit::add_wire(&mut d, &[[5, 7], [30, 7]]).unwrap();
        let got = items_in(&d, [0.0, 0.0], [10.0, 10.0]);
        assert_eq!(got, vec![Item::Part(0)]);
    }
}
