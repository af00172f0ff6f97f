//! Annotation placement.
//!
//! Each annotation comes with a box size, an anchor (the point it describes)
//! and candidate positions next to the anchor, each with a cost (distance and
//! preference). Annotations are placed greedily in priority order; a
//! candidate is usable only if its box, grown by the clearance, touches no
//! symbol body, no schematic text, no earlier annotation, and crosses no wire
//! and no leader line. The cheapest usable candidate wins. When none is
//! usable the box is searched for on rings of growing radius around the
//! anchor and joined to it by a thin leader line; if the sheet is full there
//! too, it goes in a free row below the drawing. A position the user dragged
//! an annotation to (`doc.layout.annotations`) is taken as it is and becomes
//! an obstacle for the rest.
//!
//! Obstacles are kept in a uniform bucket grid so a test looks only at the
//! few obstacles near the box: with boxes and leaders of bounded size, a
//! test is O(1) and placing n annotations O(n) (each tries a bounded number
//! of candidates and rings). The sheet's live extent is kept up to date
//! instead of measured per call, and the repair passes in `build.rs` find
//! neighbours through `spatial::Grid`, so the whole placement stays O(n)
//! (measured: `benches/scene.rs`, a 10,000-part sheet).

use super::geometry::Rect;
use super::{style, Placement, Point};
use std::collections::HashMap;

const CELL: f64 = 4.0;

/// A fast hasher for bucket keys (two small integers); SipHash is slow here
/// and the keys are not attacker-chosen.
#[derive(Default, Clone, Copy)]
pub(super) struct CellHasher(u64);

impl std::hash::Hasher for CellHasher {
    fn finish(&self) -> u64 {
        self.0
    }
    fn write(&mut self, bytes: &[u8]) {
        for b in bytes {
            self.0 = (self.0.rotate_left(8) ^ *b as u64).wrapping_mul(0x9e37_79b9_7f4a_7c15);
        }
    }
    fn write_i32(&mut self, i: i32) {
        self.0 = (self.0.rotate_left(32) ^ i as u32 as u64).wrapping_mul(0x9e37_79b9_7f4a_7c15);
    }
}

pub(super) type Buckets = HashMap<(i32, i32), Vec<u32>, std::hash::BuildHasherDefault<CellHasher>>;

/// What may not be covered.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Obstacle {
    /// A box that nothing may overlap (bodies, text, placed annotations).
    Solid(Rect),
    /// A line that no annotation may cross (wires, leaders).
    Line(Point, Point),
    /// A leader line: crossed only at a higher price than a wire.
    Leader(Point, Point),
}

impl Obstacle {
    fn bounds(&self) -> Rect {
        match self {
            Obstacle::Solid(r) => *r,
            Obstacle::Line(a, b) | Obstacle::Leader(a, b) => Rect::new(*a, *b),
        }
    }
    fn blocks(&self, r: &Rect) -> bool {
        match self {
            Obstacle::Solid(o) => o.overlaps(r),
            Obstacle::Line(a, b) | Obstacle::Leader(a, b) => r.crosses_segment(*a, *b),
        }
    }
}

/// A candidate top-left corner with its cost.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Candidate {
    pub min: Point,
    /// The box size of this position's content variant.
    pub size: [f64; 2],
    pub cost: f64,
    /// The point on the sheet this position describes (a spot on the net's
    /// wire, the side of the part).
    pub anchor: Point,
    /// Which layout of the content this position uses (caller's meaning).
    pub variant: u8,
}

/// One annotation to place.
#[derive(Debug, Clone, PartialEq)]
pub struct Request {
    pub size: [f64; 2],
    pub anchor: Point,
    pub candidates: Vec<Candidate>,
    /// Top-left corner the user chose, if any.
    pub user: Option<Point>,
    /// How far from the anchor the leader search may go (grid units).
    pub max_leader: f64,
    /// The content variant used when the box is moved away with a leader.
    pub leader_variant: u8,
}

impl Request {
    /// Order the candidates cheapest first (stable: equal costs keep their order).
    pub fn sort(&mut self) {
        self.candidates.sort_by(|a, b| a.cost.total_cmp(&b.cost));
    }
}

/// Where a request went.
#[derive(Debug, Clone, PartialEq)]
pub struct Placed {
    pub rect: Rect,
    pub placement: Placement,
    /// The anchor it describes (the candidate's, or the request's).
    pub anchor: Point,
    pub variant: u8,
    /// The obstacles this placement added (its box, its leader).
    pub ids: Vec<usize>,
}

#[derive(Debug, Default)]
pub struct Placer {
    obstacles: Vec<Obstacle>,
    /// Obstacles taken away again (while trying a better arrangement).
    dead: Vec<bool>,
    buckets: Buckets,
    /// Everything placed or drawn so far.
    pub extent: Rect,
    stamp: Vec<u32>,
    epoch: u32,
    /// The edges of every live obstacle, counted per coordinate, so
    /// [`Placer::live_extent`] is O(log n) through removals and restores
    /// instead of a walk over every obstacle.
    edges: [std::collections::BTreeMap<u64, u32>; 4],
}

/// A key that sorts as the float does (IEEE 754 total order).
fn ordered(v: f64) -> u64 {
    let b = v.to_bits();
    if b >> 63 == 1 {
        !b
    } else {
        b | 1 << 63
    }
}

fn unordered(k: u64) -> f64 {
    f64::from_bits(if k >> 63 == 1 { k & !(1 << 63) } else { !k })
}

fn cells(r: &Rect) -> impl Iterator<Item = (i32, i32)> {
    let x0 = (r.min[0] / CELL).floor() as i32;
    let x1 = (r.max[0] / CELL).floor() as i32;
    let y0 = (r.min[1] / CELL).floor() as i32;
    let y1 = (r.max[1] / CELL).floor() as i32;
    (x0..=x1).flat_map(move |x| (y0..=y1).map(move |y| (x, y)))
}

impl Placer {
    pub fn new() -> Placer {
        Placer {
            extent: Rect::empty(),
            ..Placer::default()
        }
    }

    fn add(&mut self, o: Obstacle) -> usize {
        let i = self.obstacles.len();
        let b = o.bounds();
        self.extent = self.extent.union(&b);
        self.count_edges(&b, true);
        for c in cells(&b) {
            self.buckets.entry(c).or_default().push(i as u32);
        }
        self.obstacles.push(o);
        self.dead.push(false);
        self.stamp.push(0);
        i
    }

    /// A box nothing may overlap.
    pub fn add_solid(&mut self, r: Rect) -> usize {
        self.add(Obstacle::Solid(r))
    }

    /// A line nothing may cross.
    pub fn add_line(&mut self, a: Point, b: Point) -> usize {
        self.add(Obstacle::Line(a, b))
    }

    /// The box around every live obstacle (what is on the sheet now).
    pub fn live_extent(&self) -> Rect {
        let [lo_x, lo_y, hi_x, hi_y] = &self.edges;
        match (
            lo_x.keys().next(),
            lo_y.keys().next(),
            hi_x.keys().next_back(),
            hi_y.keys().next_back(),
        ) {
            (Some(&a), Some(&b), Some(&c), Some(&d)) => Rect {
                min: [unordered(a), unordered(b)],
                max: [unordered(c), unordered(d)],
            },
            _ => Rect::empty(),
        }
    }

    fn count_edges(&mut self, b: &Rect, live: bool) {
        for (map, v) in self
            .edges
            .iter_mut()
            .zip([b.min[0], b.min[1], b.max[0], b.max[1]])
        {
            let k = ordered(v);
            if live {
                *map.entry(k).or_insert(0) += 1;
            } else if let Some(n) = map.get_mut(&k) {
                *n -= 1;
                if *n == 0 {
                    map.remove(&k);
                }
            }
        }
    }

    /// Take a placement's obstacles away (see [`Placer::restore`]).
    pub fn remove(&mut self, p: &Placed) {
        for &i in &p.ids {
            if !self.dead[i] {
                self.dead[i] = true;
                self.count_edges(&self.obstacles[i].bounds(), false);
            }
        }
    }

    /// Put back what [`Placer::remove`] took away.
    pub fn restore(&mut self, p: &Placed) {
        for &i in &p.ids {
            if self.dead[i] {
                self.dead[i] = false;
                self.count_edges(&self.obstacles[i].bounds(), true);
            }
        }
    }

    /// How many of a request's candidates are free now (counted up to 16:
    /// enough to order annotations by how constrained they are).
    pub fn free_candidates(&mut self, req: &Request) -> usize {
        let clear = style::CLEARANCE;
        let mut n = 0;
        for c in &req.candidates {
            let r = Rect::from_size(c.min, c.size[0], c.size[1]);
            if self.is_free(&r.inflate(clear)) {
                n += 1;
                if n == 16 {
                    break;
                }
            }
        }
        n
    }

    /// Boxes of a request's candidates (for finding who is in the way).
    pub fn candidate_rects(req: &Request) -> impl Iterator<Item = Rect> + '_ {
        req.candidates
            .iter()
            .map(|c| Rect::from_size(c.min, c.size[0], c.size[1]))
    }

    /// True when `r` (already grown by the clearance) is clear of every obstacle.
    fn next_epoch(&mut self) {
        self.epoch = self.epoch.wrapping_add(1);
        if self.epoch == 0 {
            self.stamp.iter_mut().for_each(|s| *s = 0);
            self.epoch = 1;
        }
    }

    pub fn is_free(&mut self, r: &Rect) -> bool {
        self.next_epoch();
        for c in cells(r) {
            let Some(list) = self.buckets.get(&c) else {
                continue;
            };
            for &i in list {
                let i = i as usize;
                if self.stamp[i] == self.epoch || self.dead[i] {
                    continue;
                }
                self.stamp[i] = self.epoch;
                if self.obstacles[i].blocks(r) {
                    return false;
                }
            }
        }
        true
    }

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
        let span = Rect::new(a, b);
        self.next_epoch();
        let (mut solids, mut lines) = (0, 0);
        for c in cells(&span) {
            let Some(list) = self.buckets.get(&c) else {
                continue;
            };
            for &i in list {
                let k = i as usize;
                if self.stamp[k] == self.epoch || self.dead[k] || except.contains(&k) {
                    continue;
                }
                self.stamp[k] = self.epoch;
                match self.obstacles[i as usize] {
                    Obstacle::Solid(r) => solids += r.inflate(-0.05).crosses_segment(a, b) as usize,
                    // Running along a wire hides the wire: as bad as a box.
                    Obstacle::Line(p, q) | Obstacle::Leader(p, q)
                        if segments_overlap(a, b, p, q) =>
                    {
                        solids += 1
                    }
                    Obstacle::Line(p, q) => lines += segments_cross(a, b, p, q) as usize,
                    // Two leaders crossing read as one tangle: three wires' worth.
                    Obstacle::Leader(p, q) => lines += 3 * segments_cross(a, b, p, q) as usize,
                }
            }
        }
        (solids, lines)
    }

    /// How badly a placement reads: 0 beside its anchor; a leader costs 1
    /// plus what it runs through (boxes 3 each, wires 0.5 each). Its own
    /// obstacles do not count.
    pub fn badness(&mut self, p: &Placed) -> f64 {
        if p.placement != Placement::Leader {
            return 0.0;
        }
        let from = p.rect.nearest_point(p.anchor);
        let (solids, lines) = self.crossings_split_except(from, p.anchor, &p.ids);
        let len = ((from[0] - p.anchor[0]).powi(2) + (from[1] - p.anchor[1]).powi(2)).sqrt();
        1.0 + solids as f64 * 3.0 + lines as f64 * 0.5 + len * 0.02
    }

    /// Place one annotation; its box becomes an obstacle. The box goes at
    /// the user's position, else the cheapest free candidate, else away from
    /// the anchor with a leader line back (see the module notes).
    pub fn place(&mut self, req: &Request) -> Placed {
        let [w, h] = req.size;
        let clear = style::CLEARANCE;
        if let Some(min) = req.user {
            let r = Rect::from_size(min, w, h);
            let id = self.add_solid(r.inflate(clear / 2.0));
            return Placed {
                rect: r,
                placement: Placement::User,
                anchor: req.anchor,
                variant: req.leader_variant,
                ids: vec![id],
            };
        }
        if let Some(p) = self.place_beside(req) {
            return p;
        }
        let r = self.search_with_leader(req);
        let id = self.add_solid(r.inflate(clear / 2.0));
        let from = r.nearest_point(req.anchor);
        let line = self.add(Obstacle::Leader(from, req.anchor));
        Placed {
            rect: r,
            placement: Placement::Leader,
            anchor: req.anchor,
            variant: req.leader_variant,
            ids: vec![id, line],
        }
    }

    /// The cheapest free candidate, if any is free. Candidates are taken
    /// in order of cost (see [`Request::sort`]), so the first free one wins.
    pub fn place_beside(&mut self, req: &Request) -> Option<Placed> {
        let clear = style::CLEARANCE;
        let c = req.candidates.iter().find(|c| {
            let r = Rect::from_size(c.min, c.size[0], c.size[1]);
            self.is_free(&r.inflate(clear))
        })?;
        let r = Rect::from_size(c.min, c.size[0], c.size[1]);
        let id = self.add_solid(r.inflate(clear / 2.0));
        Some(Placed {
            rect: r,
            placement: Placement::Beside,
            anchor: c.anchor,
            variant: c.variant,
            ids: vec![id],
        })
    }

    /// Put a leadered annotation's box at `rect` (for swapping two boxes).
    pub fn place_leader_at(&mut self, rect: Rect, anchor: Point, variant: u8) -> Placed {
        let id = self.add_solid(rect.inflate(style::CLEARANCE / 2.0));
        let line = self.add(Obstacle::Leader(rect.nearest_point(anchor), anchor));
        Placed {
            rect,
            placement: Placement::Leader,
            anchor,
            variant,
            ids: vec![id, line],
        }
    }

    /// Add a line (a leader drawn later) to a placement's obstacles.
    pub fn add_leader(&mut self, p: &mut Placed, from: Point, to: Point) {
        let id = self.add(Obstacle::Leader(from, to));
        p.ids.push(id);
    }

    fn search_with_leader(&mut self, req: &Request) -> Rect {
        let [w, h] = req.size;
        let clear = style::CLEARANCE;
        let a = req.anchor;
        let mut radius = 1.0 + (w.min(h)) / 2.0;
        let mut overall: Option<(f64, Rect)> = None;
        while radius <= req.max_leader {
            // Every cost is ≥ 0, so a ring at this radius totals at least
            // radius·0.5: once that reaches the best total, no later ring
            // can win (the same answer, without walking the far rings).
            if overall.is_some_and(|(t, _)| radius * 0.5 >= t) {
                break;
            }
            let steps = ((radius * 3.0).ceil() as usize).clamp(12, 48);
            let mut best: Option<(f64, Rect)> = None;
            // Walk the ring by rotating a unit vector (one sin/cos per ring).
            let (ds, dc) = (std::f64::consts::TAU / steps as f64).sin_cos();
            let (mut sn, mut cs) = (0.0f64, 1.0f64);
            for _ in 0..steps {
                let (t_sin, t_cos) = (sn, cs);
                (sn, cs) = (sn * dc + cs * ds, cs * dc - sn * ds);
                let c = [a[0] + radius * t_cos, a[1] + radius * t_sin];
                let r = Rect::from_size([c[0] - w / 2.0, c[1] - h / 2.0], w, h);
                if r.contains(a) || !self.is_free(&r.inflate(clear)) {
                    continue;
                }
                let from = r.nearest_point(a);
                // A leader should not run through a symbol, text or
                // annotation (or along a wire); crossing a wire costs less.
                let (solids, lines) = self.crossings_split(from, a);
                let cost = solids as f64 * 12.0 + lines as f64 * 2.5 + (t_sin + 1.0) * 0.1;
                if best.is_none_or(|(b, _)| cost < b) {
                    best = Some((cost, r));
                }
            }
            if let Some((cost, r)) = best {
                let total = cost + radius * 0.5;
                if overall.is_none_or(|(b, _)| total < b) {
                    overall = Some((total, r));
                }
                if cost < 0.5 {
                    // Nothing crossed: a farther ring can only be worse.
                    break;
                }
            }
            radius += 1.0;
        }
        if let Some((_, r)) = overall {
            return r;
        }
        // The sheet is full near the anchor: the first free spot in rows below.
        let live = self.live_extent();
        let ext = if live.is_empty() {
            Rect::new(a, a)
        } else {
            live
        };
        let mut y = ext.max[1] + 1.0;
        loop {
            let mut x = (a[0] - w / 2.0).max(ext.min[0]);
            while x + w <= ext.max[0].max(a[0] + w) + 1e-9 {
                let r = Rect::from_size([x, y], w, h);
                if self.is_free(&r.inflate(clear)) {
                    return r;
                }
                x += 1.0;
            }
            y += 1.0;
            if y > ext.max[1] + 400.0 {
                return Rect::from_size([ext.max[0] + 1.0, y], w, h);
            }
        }
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

#[cfg(test)]
mod tests {
    use super::*;

    fn req(anchor: Point, min: Point) -> Request {
        Request {
            size: [2.0, 1.0],
            anchor,
            candidates: vec![Candidate {
                min,
                size: [2.0, 1.0],
                cost: 0.0,
                anchor,
                variant: 0,
            }],
            user: None,
            max_leader: 12.0,
            leader_variant: 0,
        }
    }

    #[test]
    fn second_annotation_on_the_same_spot_moves_away_with_a_leader() {
        // invariant: placed boxes never overlap; a blocked annotation gets a leader.
        let mut p = Placer::new();
        let a = p.place(&req([0.0, 0.0], [0.5, 0.5]));
        let b = p.place(&req([0.0, 0.0], [0.5, 0.5]));
        assert_eq!(a.placement, Placement::Beside);
        assert_eq!(b.placement, Placement::Leader);
        assert!(!a.rect.overlaps(&b.rect));
    }

    #[test]
    fn a_candidate_across_a_wire_is_refused() {
        // invariant: no annotation box crosses a wire.
        let mut p = Placer::new();
        p.add_line([-5.0, 1.0], [5.0, 1.0]);
        let got = p.place(&req([0.0, 0.0], [0.0, 0.5]));
        assert_eq!(got.placement, Placement::Leader);
        assert!(!got.rect.crosses_segment([-5.0, 1.0], [5.0, 1.0]));
    }
}
