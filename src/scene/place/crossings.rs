//! Counting what a segment (a leader) runs through: the placer's cost of
//! a leader, split from `place.rs` (same `Placer`, its private state).

use super::cells::lists;
use super::{Obstacle, Part, Placed, Placer};
use crate::scene::geometry::Rect;
use crate::scene::{Placement, Point};

impl Placer {
    /// How many solid boxes and lines the segment `a`–`b` passes through.
    pub fn crossings(&mut self, a: Point, b: Point) -> usize {
        let (s, l) = self.crossings_split(a, b);
        s + l
    }

    /// Boxes and lines crossed by the segment `a`–`b`, counted apart.
    pub fn crossings_split(&mut self, a: Point, b: Point) -> (usize, usize) {
        self.crossings_split_except(a, b, &[])
    }

    fn crossings_split_except(&mut self, a: Point, b: Point, except: &[usize]) -> (usize, usize) {
        self.crossings_until(a, b, except, Part::All, (0, 0), |_, _| false)
            .expect("never stopped early")
    }

    /// [`Placer::crossings_split`] over `part` of the obstacles, without
    /// those in `except`, added to `start`; given up (`None`) as soon as
    /// `enough(solids, lines)` holds for the counts so far: for a caller
    /// that only needs to know whether the full counts stay under a bound
    /// (counts only grow).
    pub(in crate::scene) fn crossings_until(
        &mut self,
        a: Point,
        b: Point,
        except: &[usize],
        part: Part,
        start: (usize, usize),
        enough: impl Fn(usize, usize) -> bool,
    ) -> Option<(usize, usize)> {
        if enough(start.0, start.1) {
            return None;
        }
        let maps: &[usize] = match part {
            Part::All => &[0, 1],
            Part::Fixed => &[0],
            Part::Moving => &[1],
        };
        let span = Rect::new(a, b);
        // Whatever counts meets this box: a box or line crossing the
        // segment meets the segment's box, and a line running along it lies
        // within 0.05 of it (see `segments_overlap`).
        let near = span.inflate(0.1);
        self.next_epoch();
        let (mut solids, mut lines) = start;
        for list in maps.iter().flat_map(|&w| lists(&self.buckets[w], &near)) {
            for f in list {
                let ob = f.obstacle.bounds();
                if ob.max[0] < near.min[0]
                    || ob.min[0] > near.max[0]
                    || ob.max[1] < near.min[1]
                    || ob.min[1] > near.max[1]
                {
                    continue;
                }
                let (s, l) = match f.obstacle {
                    Obstacle::Solid(r) => (r.inflate(-0.05).crosses_segment(a, b) as usize, 0),
                    // Running along a wire hides the wire: as bad as a box.
                    Obstacle::Line(p, q) | Obstacle::Leader(p, q)
                        if segments_overlap(a, b, p, q) =>
                    {
                        (1, 0)
                    }
                    Obstacle::Line(p, q) => (0, segments_cross(a, b, p, q) as usize),
                    // Two leaders crossing read as one tangle: three wires' worth.
                    Obstacle::Leader(p, q) => (0, 3 * segments_cross(a, b, p, q) as usize),
                };
                // Only what is crossed needs the id: count each live one once.
                let k = f.id as usize;
                if s + l == 0 || self.stamp[k] == self.epoch || self.dead[k] || except.contains(&k)
                {
                    continue;
                }
                self.stamp[k] = self.epoch;
                solids += s;
                lines += l;
                if enough(solids, lines) {
                    return None;
                }
            }
        }
        Some((solids, lines))
    }

    /// How badly a placement reads: 0 beside its anchor; a leader costs 1
    /// plus what it runs through (boxes 3 each, wires 0.5 each). Its own
    /// obstacles do not count.
    pub fn badness(&mut self, p: &Placed) -> f64 {
        if p.placement != Placement::Leader {
            return 0.0;
        }
        let from = p.rect.nearest_point(p.anchor);
        // The fixed obstacles' part is known when the search counted it
        // (its own obstacles are never fixed).
        let (solids, lines) = match p.fixed_crossings {
            Some(fixed) => self
                .crossings_until(from, p.anchor, &p.ids, Part::Moving, fixed, |_, _| false)
                .expect("never stopped early"),
            None => self.crossings_split_except(from, p.anchor, &p.ids),
        };
        let len = ((from[0] - p.anchor[0]).powi(2) + (from[1] - p.anchor[1]).powi(2)).sqrt();
        1.0 + solids as f64 * 3.0 + lines as f64 * 0.5 + len * 0.02
    }
}

/// True when segments `a`–`b` and `p`–`q` properly intersect.
pub fn segments_cross(a: Point, b: Point, p: Point, q: Point) -> bool {
    let orient = |o: Point, s: Point, t: Point| {
        (s[0] - o[0]) * (t[1] - o[1]) - (s[1] - o[1]) * (t[0] - o[0])
    };
    let d1 = orient(p, q, a);
    let d2 = orient(p, q, b);
    let d3 = orient(a, b, p);
    let d4 = orient(a, b, q);
    (d1 * d2 < 0.0) && (d3 * d4 < 0.0)
}

/// True when two segments lie on one line and share a stretch of it.
pub fn segments_overlap(a: Point, b: Point, p: Point, q: Point) -> bool {
    let d = [b[0] - a[0], b[1] - a[1]];
    let len = (d[0] * d[0] + d[1] * d[1]).sqrt();
    if len < 1e-9 {
        return false;
    }
    let off = |o: Point| ((o[0] - a[0]) * d[1] - (o[1] - a[1]) * d[0]).abs() / len;
    if off(p) > 0.05 || off(q) > 0.05 {
        return false;
    }
    let t = |o: Point| ((o[0] - a[0]) * d[0] + (o[1] - a[1]) * d[1]) / (len * len);
    let (t0, t1) = (t(p).min(t(q)), t(p).max(t(q)));
    t1.min(1.0) - t0.max(0.0) > 0.05 / len
}
