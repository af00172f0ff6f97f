//! The cells of the placement's bucket grid: a box is filed under the
//! cells it touches, or, when it touches more than [`MAX_CELLS`], under the
//! one shared cell [`BIG`] that every test also reads.

use super::{floor_i32, Filed, FiledBuckets, CELL};
use crate::scene::geometry::Rect;

/// Most cells one box is filed under or one test walks; a larger box is
/// filed under the one cell [`BIG`] that every test also reads (a leader
/// or wire across a huge sheet, filed per cell, took gigabytes; issue 18).
const MAX_CELLS: i64 = 4096;
/// The cell of the boxes larger than [`MAX_CELLS`] cells.
const BIG: (i32, i32) = (i32::MIN, i32::MIN);

pub(super) fn is_big(r: &Rect) -> bool {
    let x0 = floor_i32(r.min[0] / CELL) as i64;
    let x1 = floor_i32(r.max[0] / CELL) as i64;
    let y0 = floor_i32(r.min[1] / CELL) as i64;
    let y1 = floor_i32(r.max[1] / CELL) as i64;
    (x1 - x0 + 1).saturating_mul(y1 - y0 + 1) > MAX_CELLS
}

/// The cells a box is filed under: its own, or [`BIG`] for a large one.
pub(super) fn cells(r: &Rect) -> impl Iterator<Item = (i32, i32)> {
    let big = is_big(r);
    let x0 = floor_i32(r.min[0] / CELL);
    let x1 = floor_i32(r.max[0] / CELL);
    let y0 = floor_i32(r.min[1] / CELL);
    let y1 = floor_i32(r.max[1] / CELL);
    let own = (!big).then(|| (x0..=x1).flat_map(move |x| (y0..=y1).map(move |y| (x, y))));
    own.into_iter().flatten().chain(big.then_some(BIG))
}

/// The bucket lists a test of `r` reads: those of its cells and [`BIG`],
/// or, for a large `r`, every list.
pub(in crate::scene) fn lists<'a>(
    b: &'a FiledBuckets,
    r: &Rect,
) -> Box<dyn Iterator<Item = &'a Vec<Filed>> + 'a> {
    if is_big(r) {
        Box::new(b.values())
    } else {
        Box::new(
            cells(r)
                .chain(std::iter::once(BIG))
                .filter_map(move |c| b.get(&c)),
        )
    }
}
