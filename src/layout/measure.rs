//! Figures of a drawing: wire crossings, total wire length, and the faults
//! a tidy sheet never has (parts on top of each other, a wire through a
//! part's drawing or through a pin it does not end on).

use crate::document::{Document, GridPoint};
use crate::symbols;

type Segment = (GridPoint, GridPoint);

fn segments(doc: &Document) -> Vec<(usize, Segment)> {
    doc.wires
        .iter()
        .enumerate()
        .flat_map(|(i, w)| w.points.windows(2).map(move |p| (i, (p[0], p[1]))))
        .filter(|(_, (a, b))| a != b)
        .collect()
}

/// Total length of every wire, grid units.
pub fn wire_length(doc: &Document) -> i64 {
    segments(doc)
        .iter()
        .map(|(_, (a, b))| ((a[0] - b[0]).abs() + (a[1] - b[1]).abs()) as i64)
        .sum()
}

fn horizontal(s: &Segment) -> bool {
    s.0[1] == s.1[1]
}

/// Places where a horizontal and a vertical segment cross inside both (no
/// joint there: two wires passing over each other).
pub fn crossings(doc: &Document) -> usize {
    let segs = segments(doc);
    let (h, v): (Vec<_>, Vec<_>) = segs.iter().partition(|(_, s)| horizontal(s));
    let mut n = 0;
    for (_, a) in &h {
        let (x0, x1) = (a.0[0].min(a.1[0]), a.0[0].max(a.1[0]));
        let y = a.0[1];
        for (_, b) in &v {
            let x = b.0[0];
            let (y0, y1) = (b.0[1].min(b.1[1]), b.0[1].max(b.1[1]));
            if x0 < x && x < x1 && y0 < y && y < y1 {
                n += 1;
            }
        }
    }
    n
}

/// A part's drawing on the sheet, `[min_x, min_y, max_x, max_y]`.
pub fn body_box(p: &crate::document::Part) -> Option<[f64; 4]> {
    let sym = symbols::library().get(p.symbol_name())?;
    let [x0, y0, x1, y1] = sym.body_bounds();
    let a = symbols::transform([x0, y0], p.position, p.rotation, p.mirror);
    let b = symbols::transform([x1, y1], p.position, p.rotation, p.mirror);
    Some([
        a[0].min(b[0]),
        a[1].min(b[1]),
        a[0].max(b[0]),
        a[1].max(b[1]),
    ])
}

fn pins(doc: &Document) -> Vec<(usize, &'static str, GridPoint)> {
    let lib = symbols::library();
    let mut out = Vec::new();
    for (i, p) in doc.parts.iter().enumerate() {
        let Some(sym) = lib.get(p.symbol_name()) else {
            continue;
        };
        for name in p.kind.pin_names() {
            if let Some(pin) = sym.pin(name) {
                out.push((
                    i,
                    *name,
                    symbols::pin_position(pin, p.position, p.rotation, p.mirror),
                ));
            }
        }
    }
    out
}

/// Does the open segment pass through the inside of the box?
fn through(b: &[f64; 4], s: &Segment) -> bool {
    const IN: f64 = 0.05;
    let (lo, hi) = ([b[0] + IN, b[1] + IN], [b[2] - IN, b[3] - IN]);
    if lo[0] >= hi[0] && lo[1] >= hi[1] {
        return false;
    }
    let (x0, x1) = (s.0[0].min(s.1[0]) as f64, s.0[0].max(s.1[0]) as f64);
    let (y0, y1) = (s.0[1].min(s.1[1]) as f64, s.0[1].max(s.1[1]) as f64);
    x0 <= hi[0] && x1 >= lo[0] && y0 <= hi[1] && y1 >= lo[1]
}

fn on_segment(p: GridPoint, s: &Segment) -> bool {
    let (x0, x1) = (s.0[0].min(s.1[0]), s.0[0].max(s.1[0]));
    let (y0, y1) = (s.0[1].min(s.1[1]), s.0[1].max(s.1[1]));
    x0 <= p[0] && p[0] <= x1 && y0 <= p[1] && p[1] <= y1
}

/// What is wrong with a drawing, in words (empty for a tidy sheet): two
/// parts' drawings overlapping, a wire crossing a part's drawing, a wire
/// running over a pin that is not one of its ends.
pub fn drawing_faults(doc: &Document) -> Vec<String> {
    let mut faults = Vec::new();
    let boxes: Vec<Option<[f64; 4]>> = doc.parts.iter().map(body_box).collect();
    // Sweep by left edge so large sheets stay quick.
    let mut order: Vec<usize> = (0..boxes.len()).filter(|i| boxes[*i].is_some()).collect();
    order.sort_by(|a, b| {
        let (a, b) = (boxes[*a].unwrap(), boxes[*b].unwrap());
        a[0].total_cmp(&b[0])
    });
    for (k, &i) in order.iter().enumerate() {
        let a = boxes[i].unwrap();
        for &j in &order[k + 1..] {
            let b = boxes[j].unwrap();
            if b[0] >= a[2] {
                break;
            }
            if a[0] < b[2] && b[0] < a[2] && a[1] < b[3] && b[1] < a[3] {
                faults.push(format!(
                    "{} overlaps {}",
                    doc.parts[i].label(),
                    doc.parts[j].label()
                ));
            }
        }
    }
    let segs = segments(doc);
    for (w, s) in &segs {
        for (i, b) in boxes.iter().enumerate() {
            if let Some(b) = b {
                if through(b, s) {
                    faults.push(format!(
                        "wire {} runs through {}",
                        w + 1,
                        doc.parts[i].label()
                    ));
                }
            }
        }
    }
    let all_pins = pins(doc);
    for (w, s) in &segs {
        let wire = &doc.wires[*w];
        let ends = [wire.points[0], *wire.points.last().unwrap()];
        for (i, name, at) in &all_pins {
            if on_segment(*at, s) && !ends.contains(at) {
                faults.push(format!(
                    "wire {} runs over pin {}.{}",
                    w + 1,
                    doc.parts[*i].label(),
                    name
                ));
            }
        }
    }
    faults.sort();
    faults.dedup();
    faults
}
