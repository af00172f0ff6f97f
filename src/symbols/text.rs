//! Designator and value text beside a placed symbol, upright, clear of the
//! drawing in every rotation.

use super::{placed_bounds, transform, Symbol, TextSlot};

/// Horizontal anchor of upright text.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TextAnchor {
    /// The text starts at the point and runs right.
    Start,
    /// The text is centred on the point.
    Middle,
    /// The text ends at the point.
    End,
}

/// Where one text slot lands for a placed part.
#[derive(Debug, Clone, PartialEq)]
pub struct PlacedText {
    pub slot: String,
    /// The anchor point, at the vertical middle of the line, in sheet units.
    pub position: [f64; 2],
    pub anchor: TextAnchor,
}

/// Space between a drawing and its text, grid units.
pub const TEXT_GAP: f64 = 0.3;

/// Place a symbol's designator and value upright beside the placed drawing.
///
/// The slot positions in the file say, for rotation 0, on which side of the
/// drawing each text sits and in what order. The part's mirror and rotation
/// carry that side round (a slot right of a vertical resistor ends up below
/// it after a quarter turn clockwise); the texts on one side are then
/// stacked `line_height` apart in file order, just outside the drawing's
/// bounds: left-aligned on the right, right-aligned on the left, centred
/// above and below. So no text overlaps the drawing in any rotation,
/// whatever its width. A `name` slot (the net label) stays where it is drawn.
pub fn place_text(
    symbol: &Symbol,
    origin: [i32; 2],
    rotation: u16,
    mirror: bool,
    line_height: f64,
) -> Vec<PlacedText> {
    let [min_x, min_y, max_x, max_y] = placed_bounds(symbol, origin, rotation, mirror);
    let centre = [(min_x + max_x) / 2.0, (min_y + max_y) / 2.0];
    // 0 right, 1 left, 2 below, 3 above.
    let side_of = |slot: &TextSlot| {
        let p = transform(slot.position, origin, rotation, mirror);
        let (dx, dy) = (p[0] - centre[0], p[1] - centre[1]);
        if dx.abs() >= dy.abs() {
            if dx >= 0.0 {
                0
            } else {
                1
            }
        } else if dy > 0.0 {
            2
        } else {
            3
        }
    };
    let mut out = Vec::new();
    for side in 0..4 {
        let slots: Vec<&TextSlot> = symbol
            .text_slots
            .iter()
            .filter(|s| s.slot != "name" && side_of(s) == side)
            .collect();
        let n = slots.len() as f64;
        for (k, slot) in slots.iter().enumerate() {
            let k = k as f64;
            let (position, anchor) = match side {
                0 => (
                    [
                        max_x + TEXT_GAP,
                        centre[1] + (k - (n - 1.0) / 2.0) * line_height,
                    ],
                    TextAnchor::Start,
                ),
                1 => (
                    [
                        min_x - TEXT_GAP,
                        centre[1] + (k - (n - 1.0) / 2.0) * line_height,
                    ],
                    TextAnchor::End,
                ),
                2 => (
                    [centre[0], max_y + TEXT_GAP + (k + 0.5) * line_height],
                    TextAnchor::Middle,
                ),
                _ => (
                    [centre[0], min_y - TEXT_GAP - (n - k - 0.5) * line_height],
                    TextAnchor::Middle,
                ),
            };
            out.push(PlacedText {
                slot: slot.slot.clone(),
                position,
                anchor,
            });
        }
    }
    for slot in symbol.text_slots.iter().filter(|s| s.slot == "name") {
        let position = transform(slot.position, origin, rotation, mirror);
        let anchor = if position[0] >= origin[0] as f64 {
            TextAnchor::Start
        } else {
            TextAnchor::End
        };
        out.push(PlacedText {
            slot: slot.slot.clone(),
            position,
            anchor,
        });
    }
    out
}

#[cfg(test)]
mod tests {
    use super::super::library;
    use super::super::paths::tests::TURNS;
    use super::*;

    #[test]
    fn text_never_overlaps_the_drawing() {
        // invariant: placed text boxes (any width) stay outside the drawing's bounds and
        // apart from each other, for every symbol, rotation and mirror.
        let (h, w) = (1.0, 6.0);
        for sym in library().iter() {
            for (rot, mirror) in TURNS {
                let b = placed_bounds(sym, [0, 0], rot, mirror);
                let placed = place_text(sym, [0, 0], rot, mirror, h);
                let boxes: Vec<[f64; 4]> = placed
                    .iter()
                    .filter(|t| t.slot != "name")
                    .map(|t| {
                        let [x, y] = t.position;
                        let (x0, x1) = match t.anchor {
                            TextAnchor::Start => (x, x + w),
                            TextAnchor::Middle => (x - w / 2.0, x + w / 2.0),
                            TextAnchor::End => (x - w, x),
                        };
                        [x0, y - h / 2.0, x1, y + h / 2.0]
                    })
                    .collect();
                let overlap = |a: &[f64; 4], c: &[f64; 4]| {
                    a[0] < c[2] - 1e-9
                        && c[0] < a[2] - 1e-9
                        && a[1] < c[3] - 1e-9
                        && c[1] < a[3] - 1e-9
                };
                for (i, a) in boxes.iter().enumerate() {
                    assert!(
                        !overlap(a, &b),
                        "{} {rot} {mirror}: text over drawing",
                        sym.name
                    );
                    for c in &boxes[..i] {
                        assert!(!overlap(a, c), "{} {rot} {mirror}: texts overlap", sym.name);
                    }
                }
                assert_eq!(
                    boxes.len(),
                    sym.text_slots.iter().filter(|t| t.slot != "name").count()
                );
            }
        }
        // invariant: a slot right of a vertical part goes below it after a quarter turn clockwise.
        let r = library().get("resistor").unwrap();
        let t = place_text(r, [0, 0], 90, false, 1.0);
        assert!(t
            .iter()
            .all(|t| t.anchor == TextAnchor::Middle && t.position[1] > 0.0));
        assert_eq!(t[0].slot, "designator");
    }
}
