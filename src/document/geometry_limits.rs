//! Stated limits on the sheet's coordinates, checked when the file is read.
//! The drawing files every wire segment under each bucket it crosses and
//! the renderers size pictures by the sheet's extent, so an unchecked
//! coordinate sized memory: one wire across the i32 range, or an annotation
//! at 1e9, took 8–14 GB before the process was killed.

use super::Document;

/// Largest |x| or |y| of any point of the sheet, grid units (1 grid unit =
/// 2.54 mm, so ±2.54 km: far past any real sheet; a generated chain of
/// 40,000 stages is 240,000 units wide).
pub const MAX_COORDINATE: i32 = 1_000_000;
/// Most wire length on one sheet, grid units (the sum of every segment's
/// length): the drawing looks for tag spots along the wires, so this bounds
/// its work and memory (a generated chain of 10,000 stages stays within it;
/// see the test).
pub const MAX_WIRE_LENGTH: u64 = 2_000_000;

fn point_ok(p: [i32; 2]) -> bool {
    p.iter().all(|c| c.unsigned_abs() <= MAX_COORDINATE as u32)
}

fn out_of_range(what: &str, x: impl std::fmt::Display, y: impl std::fmt::Display) -> String {
    format!(
        "{what} ({x}, {y}) lies outside the sheet's limit of ±{MAX_COORDINATE} grid units: \
         move it nearer the origin"
    )
}

/// Every coordinate of the sheet: `Err((item, message))` for the first one
/// out of range, naming the part, wire, label or annotation.
pub fn check_geometry(doc: &Document) -> Result<(), (String, String)> {
    for (i, p) in doc.parts.iter().enumerate() {
        if p.is_placed() && !point_ok(p.position) {
            let name = if p.designator.is_empty() {
                format!("part {}", i + 1)
            } else {
                format!("part {} ({})", i + 1, p.designator)
            };
            let [x, y] = p.position;
            return Err((name, out_of_range("its position", x, y)));
        }
    }
    let mut length: u64 = 0;
    for (i, w) in doc.wires.iter().enumerate() {
        for p in &w.points {
            if !point_ok(*p) {
                let [x, y] = *p;
                return Err((format!("wire {}", i + 1), out_of_range("point", x, y)));
            }
        }
        for s in w.points.windows(2) {
            // Within the coordinate limit these differences cannot overflow.
            length += u64::from(s[0][0].abs_diff(s[1][0])) + u64::from(s[0][1].abs_diff(s[1][1]));
        }
        if length > MAX_WIRE_LENGTH {
            return Err((
                format!("wire {}", i + 1),
                format!(
                    "the wires up to this one are {length} grid units long in all, above the \
                     limit of {MAX_WIRE_LENGTH}"
                ),
            ));
        }
    }
    for (i, l) in doc.labels.iter().enumerate() {
        if !point_ok(l.position) {
            let [x, y] = l.position;
            return Err((
                format!("label {} ({})", i + 1, l.name),
                out_of_range("its position", x, y),
            ));
        }
    }
    let limit = f64::from(MAX_COORDINATE);
    for (key, [x, y]) in &doc.layout.annotations {
        if !(x.is_finite() && y.is_finite() && x.abs() <= limit && y.abs() <= limit) {
            return Err((
                format!("layout annotation \"{key}\""),
                out_of_range("its position", x, y),
            ));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn large_generated_sheets_stay_within_the_limits() {
        // invariant: the limits refuse only what no real sheet needs: a
        // generated chain of 10,000 stages and a mesh of 40,000 parts read.
        for doc in [
            crate::generate::transistor_chain(10_000),
            crate::generate::resistor_grid(40_000),
        ] {
            assert_eq!(check_geometry(&doc), Ok(()), "{}", doc.title);
        }
        let mut doc = crate::generate::transistor_chain(3);
        doc.wires[0].points = vec![[0, 0], [MAX_COORDINATE, 0], [-MAX_COORDINATE, 0]];
        let (item, message) = check_geometry(&doc).unwrap_err();
        assert_eq!(item, "wire 1");
        assert!(message.contains("limit of 2000000"), "{message}");
    }
}
