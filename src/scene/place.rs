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
//! few obstacles near the box.

use super::geometry::Rect;
use super::{style, Placement, Point};
use std::collections::HashMap;

const CELL: f64 = 4.0;

/// What may not be covered.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Obstacle {
    /// A box that nothing may overlap (bodies, text, placed annotations).
    Solid(Rect),
    /// A line that no annotation may cross (wires, leaders).
    Line(Point, Point),
}

impl Obstacle {
    fn bounds(&self) -> Rect {
        match self {
            Obstacle::Solid(r) => *r,
            Obstacle::Line(a, b) => Rect::new(*a, *b),
        }
    }
    fn blocks(&self, r: &Rect) -> bool {
        match self {
            Obstacle::Solid(o) => o.overlaps(r),
            Obstacle::Line(a, b) => r.crosses_segment(*a, *b),
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

/// Where a request went.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Placed {
    pub rect: Rect,
    pub placement: Placement,
    /// The anchor it describes (the candidate's, or the request's).
    pub anchor: Point,
    pub variant: u8,
}

#[derive(Debug, Default)]
pub struct Placer {
    obstacles: Vec<Obstacle>,
    buckets: HashMap<(i32, i32), Vec<u32>>,
    /// Everything placed or drawn so far.
    pub extent: Rect,
    stamp: Vec<u32>,
    epoch: u32,
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

    fn add(&mut self, o: Obstacle) {
        let i = self.obstacles.len() as u32;
        let b = o.bounds();
        self.extent = self.extent.union(&b);
        for c in cells(&b) {
            self.buckets.entry(c).or_default().push(i);
        }
        self.obstacles.push(o);
        self.stamp.push(0);
    }

    /// A box nothing may overlap.
    pub fn add_solid(&mut self, r: Rect) {
        self.add(Obstacle::Solid(r));
    }

    /// A line nothing may cross.
    pub fn add_line(&mut self, a: Point, b: Point) {
        self.add(Obstacle::Line(a, b));
    }

    /// True when `r` (already grown by the clearance) is clear of every obstacle.
    pub fn is_free(&mut self, r: &Rect) -> bool {
        self.epoch = self.epoch.wrapping_add(1);
        if self.epoch == 0 {
            self.stamp.iter_mut().for_each(|s| *s = 0);
            self.epoch = 1;
        }
        for c in cells(r) {
            let Some(list) = self.buckets.get(&c) else {
                continue;
            };
            for &i in list {
                let i = i as usize;
                if self.stamp[i] == self.epoch {
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
    pub fn crossings(&self, a: Point, b: Point) -> usize {
        let span = Rect::new(a, b);
        let mut seen = std::collections::HashSet::new();
        let mut n = 0;
        for c in cells(&span) {
            let Some(list) = self.buckets.get(&c) else {
                continue;
            };
            for &i in list {
                if !seen.insert(i) {
                    continue;
                }
                n += match self.obstacles[i as usize] {
                    Obstacle::Solid(r) => r.inflate(-0.05).crosses_segment(a, b) as usize,
                    Obstacle::Line(p, q) => segments_cross(a, b, p, q) as usize,
                };
            }
        }
        n
    }

    /// Place one annotation; its box becomes an obstacle. Returns the box and
    /// how it was placed (a leader runs from the box to `req.anchor`).
    pub fn place(&mut self, req: &Request) -> Placed {
        let [w, h] = req.size;
        let clear = style::CLEARANCE;
        if let Some(min) = req.user {
            let r = Rect::from_size(min, w, h);
            self.add_solid(r.inflate(clear / 2.0));
            return Placed {
                rect: r,
                placement: Placement::User,
                anchor: req.anchor,
                variant: req.leader_variant,
            };
        }
        let mut best: Option<(f64, Rect, &Candidate)> = None;
        for c in &req.candidates {
            if best.is_some_and(|(b, _, _)| b <= c.cost) {
                continue;
            }
            let r = Rect::from_size(c.min, c.size[0], c.size[1]);
            if self.is_free(&r.inflate(clear)) {
                best = Some((c.cost, r, c));
            }
        }
        if let Some((_, r, c)) = best {
            self.add_solid(r.inflate(clear / 2.0));
            return Placed {
                rect: r,
                placement: Placement::Beside,
                anchor: c.anchor,
                variant: c.variant,
            };
        }
        let r = self.search_with_leader(req);
        self.add_solid(r.inflate(clear / 2.0));
        let from = r.nearest_point(req.anchor);
        self.add_line(from, req.anchor);
        Placed {
            rect: r,
            placement: Placement::Leader,
            anchor: req.anchor,
            variant: req.leader_variant,
        }
    }

    fn search_with_leader(&mut self, req: &Request) -> Rect {
        let [w, h] = req.size;
        let clear = style::CLEARANCE;
        let a = req.anchor;
        let mut radius = 1.5;
        while radius <= req.max_leader {
            let steps = ((radius * 3.0).ceil() as usize).clamp(12, 48);
            let mut best: Option<(f64, Rect)> = None;
            for k in 0..steps {
                let t = std::f64::consts::TAU * k as f64 / steps as f64;
                let c = [a[0] + radius * t.cos(), a[1] + radius * t.sin()];
                let r = Rect::from_size([c[0] - w / 2.0, c[1] - h / 2.0], w, h);
                if r.contains(a) || !self.is_free(&r.inflate(clear)) {
                    continue;
                }
                let from = r.nearest_point(a);
                let cost = self.crossings(from, a) as f64 * 4.0 + (t.sin() + 1.0) * 0.1;
                if best.is_none_or(|(b, _)| cost < b) {
                    best = Some((cost, r));
                }
            }
            if let Some((cost, r)) = best {
                if cost < 8.0 || radius + 1.0 > req.max_leader {
                    return r;
                }
            }
            radius += 1.0;
        }
        // The sheet is full near the anchor: the first free spot in rows below.
        let ext = if self.extent.is_empty() {
            Rect::new(a, a)
        } else {
            self.extent
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
