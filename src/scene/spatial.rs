//! A uniform grid of buckets for finding what lies near a box, so that the
//! placement's repair passes look at neighbours instead of every annotation.
//!
//! Each id is filed under every cell its box touches. A query returns each
//! id filed under a cell the query box touches, once: a superset of the ids
//! whose boxes overlap it (callers test exactly). With boxes of bounded size,
//! insert and query cost O(1) cells each, plus the ids found: a pass over n
//! annotations is O(n) instead of the O(n²) of comparing every pair.
//! Re-filing an id after it moved leaves its old entries behind; they are
//! harmless (callers test exactly) and few (one per move).

use super::geometry::Rect;
use super::place::{floor_i32, Buckets};

pub(super) struct Grid {
    cell: f64,
    buckets: Buckets,
    seen: Vec<u32>,
    epoch: u32,
    /// Ids whose box covers more than [`MAX_CELLS`] cells: kept in one list
    /// that every query returns, instead of under each cell (a wire or a
    /// leader across a huge sheet filed under every cell of its box took
    /// gigabytes; issue 18).
    big: Vec<u32>,
    /// Every id inserted, for a query whose own box is that large.
    all: Vec<u32>,
}

/// Most cells one box is filed under (or one query walks).
const MAX_CELLS: f64 = 4096.0;

impl Grid {
    pub fn new(cell: f64) -> Grid {
        Grid {
            cell,
            buckets: Buckets::default(),
            seen: Vec::new(),
            epoch: 0,
            big: Vec::new(),
            all: Vec::new(),
        }
    }

    /// How many cells `r` touches.
    fn cell_count(&self, r: &Rect) -> f64 {
        let f = |v: f64| (v / self.cell).clamp(-1e9, 1e9).floor();
        (f(r.max[0]) - f(r.min[0]) + 1.0) * (f(r.max[1]) - f(r.min[1]) + 1.0)
    }

    fn report(seen: &mut [u32], epoch: u32, id: u32, out: &mut Vec<usize>) {
        let k = id as usize;
        if seen[k] != epoch {
            seen[k] = epoch;
            out.push(k);
        }
    }

    /// The cells of `r` (a plain value: the caller may change the grid
    /// while walking them).
    fn cells(&self, r: &Rect) -> impl Iterator<Item = (i32, i32)> + 'static {
        let c = self.cell;
        let f = |v: f64| floor_i32((v / c).clamp(-1e9, 1e9));
        let (x0, x1, y0, y1) = (f(r.min[0]), f(r.max[0]), f(r.min[1]), f(r.max[1]));
        (x0..=x1).flat_map(move |x| (y0..=y1).map(move |y| (x, y)))
    }

    /// File `id` under the cells of `r`.
    pub fn insert(&mut self, id: usize, r: &Rect) {
        if r.is_empty() {
            return;
        }
        if self.seen.len() <= id {
            self.seen.resize(id + 1, 0);
        }
        self.all.push(id as u32);
        if self.cell_count(r) > MAX_CELLS {
            self.big.push(id as u32);
            return;
        }
        for c in self.cells(r) {
            self.buckets.entry(c).or_default().push(id as u32);
        }
    }

    /// Start a query: ids found from here on are reported once.
    pub fn begin(&mut self) {
        self.epoch = self.epoch.wrapping_add(1);
        if self.epoch == 0 {
            self.seen.iter_mut().for_each(|s| *s = 0);
            self.epoch = 1;
        }
    }

    /// Add to `out` the ids near `r` not yet reported since [`Grid::begin`].
    pub fn query(&mut self, r: &Rect, out: &mut Vec<usize>) {
        if r.is_empty() {
            return;
        }
        if self.cell_count(r) > MAX_CELLS {
            // A box this large: every id is a candidate (callers test exactly).
            for &id in &self.all {
                Self::report(&mut self.seen, self.epoch, id, out);
            }
            return;
        }
        for c in self.cells(r) {
            let Some(list) = self.buckets.get(&c) else {
                continue;
            };
            for &id in list {
                Self::report(&mut self.seen, self.epoch, id, out);
            }
        }
        for &id in &self.big {
            Self::report(&mut self.seen, self.epoch, id, out);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_query_finds_every_overlapping_box_once() {
        // invariant: the grid returns a superset of the true overlaps, without repeats.
        let mut g = Grid::new(4.0);
        let boxes: Vec<Rect> = (0..200)
            .map(|i| {
                let (x, y) = ((i * 37 % 101) as f64, (i * 53 % 89) as f64);
                Rect::from_size([x, y], 1.0 + (i % 7) as f64, 1.0 + (i % 5) as f64)
            })
            .collect();
        for (i, b) in boxes.iter().enumerate() {
            g.insert(i, b);
        }
        let q = Rect::from_size([30.0, 30.0], 12.0, 9.0);
        g.begin();
        let mut found = Vec::new();
        g.query(&q, &mut found);
        g.query(&q, &mut found);
        let mut unique = found.clone();
        unique.sort();
        unique.dedup();
        assert_eq!(unique.len(), found.len());
        for (i, b) in boxes.iter().enumerate() {
            if b.overlaps(&q) {
                assert!(found.contains(&i), "box {i} missed");
            }
        }
    }

    #[test]
    fn a_huge_box_is_found_without_filing_it_under_every_cell() {
        // invariant: still a superset of the overlaps, for boxes and queries
        // across a million grid units (filed per cell they took gigabytes).
        let mut g = Grid::new(8.0);
        let huge = Rect::from_size([-1e6, -1e6], 2e6, 2e6);
        let small = Rect::from_size([5.0, 5.0], 2.0, 2.0);
        g.insert(0, &huge);
        g.insert(1, &small);
        assert!(g.buckets.len() <= 1, "{} cells filed", g.buckets.len());
        for (q, want) in [(small, vec![0, 1]), (huge, vec![0, 1])] {
            g.begin();
            let mut found = Vec::new();
            g.query(&q, &mut found);
            found.sort();
            assert_eq!(found, want);
        }
    }
}
