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
//! Complexity. Obstacles are kept in uniform bucket grids so a test looks
//! only at the few obstacles near the box: with boxes and leaders of
//! bounded size, a test is O(1). Each annotation tries a bounded number of
//! candidates and ring spots (its leader reach bounds the rings), so one
//! placement is O(1) and placing n annotations O(n); the repair passes in
//! `build.rs` try each leadered annotation against at most ten neighbours
//! (found through `spatial::Grid`) in at most three rounds, so the whole
//! placement is O(n) with n the annotations (about two per part). The
//! sheet's live extent is kept up to date instead of measured per call.
//!
//! The constant matters as much: the repair passes place each leadered
//! annotation again a dozen times or more. The schematic's obstacles never
//! move, so they are filed apart from the annotations' ([`Placer::fix`]),
//! and each annotation's [`Plan`] (`plan.rs`) remembers which candidates
//! and ring spots they leave open and which of their lines each spot's
//! leader crosses: a retry tests only the open spots, against what moves,
//! first against the obstacle that refused the spot last time, and stops
//! counting a leader's crossings once the spot cannot win. None of this
//! changes a placement (`plan.rs` tests it against a walk over every spot).
//! Measured on generated chains of 2,500 / 5,003 / 10,001 parts
//! (`benches/scene.rs`; the README has the medians): about 4 times faster
//! than before the plans, and the time grows with the sheet about linearly.

mod cells;
mod crossings;

use super::geometry::Rect;
pub use super::plan::Plan;
use super::{style, Placement, Point};
use cells::{cells, lists};
pub use crossings::segments_cross;
use std::collections::HashMap;

const CELL: f64 = 8.0;

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

/// Which obstacles a count looks at (see [`Placer::fix`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Part {
    All,
    Fixed,
    Moving,
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
    /// Boxes and lines of the fixed obstacles its leader crosses, when the
    /// leader search counted them already (see [`Placer::badness`]).
    pub fixed_crossings: Option<(usize, usize)>,
}

/// An obstacle as filed in a bucket: a copy of its shape beside its id, so
/// a test reads the bucket alone and looks up the id only on a hit.
#[derive(Debug, Clone, Copy)]
pub(super) struct Filed {
    obstacle: Obstacle,
    id: u32,
}

pub(super) type FiledBuckets =
    HashMap<(i32, i32), Vec<Filed>, std::hash::BuildHasherDefault<CellHasher>>;

#[derive(Debug, Default)]
pub struct Placer {
    obstacles: Vec<Obstacle>,
    /// Obstacles taken away again (while trying a better arrangement).
    dead: Vec<bool>,
    /// Dead obstacles taken out of the buckets for good ([`Placer::discard`]).
    gone: Vec<bool>,
    /// The fixed obstacles' buckets, then the others' (see [`Placer::fix`]).
    buckets: [FiledBuckets; 2],
    /// Everything placed or drawn so far.
    pub extent: Rect,
    stamp: Vec<u32>,
    epoch: u32,
    /// The edges of every live obstacle, counted per coordinate, so
    /// [`Placer::live_extent`] is O(log n) through removals and restores
    /// instead of a walk over every obstacle.
    edges: [std::collections::BTreeMap<u64, u32>; 4],
    /// The obstacle that last refused a box: tried first by the next test,
    /// since neighbouring spots (one ring, one row) are mostly refused by
    /// the same obstacle.
    last_block: Option<usize>,
    /// The same for [`Placer::is_fixed_free`].
    last_fixed_block: Option<usize>,
    /// Obstacles numbered below this are fixed (see [`Placer::fix`]).
    fixed: usize,
    /// The box around the fixed obstacles (empty before [`Placer::fix`]).
    fixed_extent: Option<Rect>,
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

/// `v.floor() as i32` without the library call (the build target has no
/// rounding instruction, and this runs for every test): the same value for
/// every input, NaN and infinities included.
pub(super) fn floor_i32(v: f64) -> i32 {
    let t = v as i64;
    let t = if (t as f64) > v {
        t.saturating_sub(1)
    } else {
        t
    };
    t.clamp(i32::MIN as i64, i32::MAX as i64) as i32
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
        let filed = Filed {
            obstacle: o,
            id: i as u32,
        };
        for c in cells(&b) {
            self.buckets[1].entry(c).or_default().push(filed);
        }
        self.obstacles.push(o);
        self.dead.push(false);
        self.gone.push(false);
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
        // Before `fix`, nothing is inside (an empty box).
        let f = self.fixed_extent.unwrap_or(Rect::empty());
        for ((map, v), inside) in self
            .edges
            .iter_mut()
            .zip([b.min[0], b.min[1], b.max[0], b.max[1]])
            .zip([
                b.min[0] >= f.min[0],
                b.min[1] >= f.min[1],
                b.max[0] <= f.max[0],
                b.max[1] <= f.max[1],
            ])
        {
            // An edge inside the fixed obstacles' extent never decides the
            // live extent (those obstacles stay): it need not be counted.
            if inside {
                continue;
            }
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
            debug_assert!(i >= self.fixed, "a fixed obstacle is removed");
            if !self.dead[i] {
                self.dead[i] = true;
                self.count_edges(&self.obstacles[i].bounds(), false);
            }
        }
    }

    /// Forget a removed placement for good: its obstacles leave the
    /// buckets, so later tests do not step over them (they skip removed
    /// obstacles anyway; the repair passes try and drop many placements,
    /// and without this the buckets would fill with them). Obstacles still
    /// live are kept; a discarded placement cannot be restored.
    pub fn discard(&mut self, p: &Placed) {
        for &i in &p.ids {
            if !self.dead[i] || self.gone[i] {
                continue;
            }
            self.gone[i] = true;
            if self.last_block == Some(i) {
                self.last_block = None;
            }
            for c in cells(&self.obstacles[i].bounds()) {
                if let Some(list) = self.buckets[1].get_mut(&c) {
                    list.retain(|f| f.id as usize != i);
                }
            }
        }
    }

    /// Put back what [`Placer::remove`] took away.
    pub fn restore(&mut self, p: &Placed) {
        for &i in &p.ids {
            debug_assert!(!self.gone[i], "a discarded placement is restored");
            if self.dead[i] && !self.gone[i] {
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

    fn next_epoch(&mut self) {
        self.epoch = self.epoch.wrapping_add(1);
        if self.epoch == 0 {
            self.stamp.iter_mut().for_each(|s| *s = 0);
            self.epoch = 1;
        }
    }

    /// True when `r` (already grown by the clearance) is clear of every obstacle.
    pub fn is_free(&mut self, r: &Rect) -> bool {
        self.free_of(r, 0)
    }

    /// [`Placer::is_free`] for a box already known clear of the fixed
    /// obstacles ([`Placer::is_fixed_free`]), which are not looked at again,
    /// and tried again and again: `hint` is the obstacle that refused it
    /// last time, tested first (it has mostly not moved), and updated.
    pub(super) fn is_free_hinted(&mut self, r: &Rect, hint: &mut Option<u32>) -> bool {
        if let Some(k) = *hint {
            let k = k as usize;
            if !self.dead[k] && self.obstacles[k].blocks(r) {
                return false;
            }
        }
        if self.free_of(r, self.fixed) {
            return true;
        }
        *hint = self.last_block.map(|k| k as u32);
        false
    }

    /// True when `r` is clear of every live obstacle numbered `from` on
    /// (`from` is 0 or [`Placer::fixed`]).
    fn free_of(&mut self, r: &Rect, from: usize) -> bool {
        if let Some(k) = self.last_block {
            if k >= from && !self.dead[k] && self.obstacles[k].blocks(r) {
                return false;
            }
        }
        if from == 0 && !self.is_fixed_free(r) {
            return false;
        }
        // An obstacle filed under two cells is tested twice at worst: the
        // answer is the same, so no per-test marks are needed.
        for list in lists(&self.buckets[1], r) {
            for f in list {
                let k = f.id as usize;
                if f.obstacle.blocks(r) && !self.dead[k] {
                    self.last_block = Some(k);
                    return false;
                }
            }
        }
        true
    }

    /// Declare every obstacle added so far fixed: never removed (the
    /// schematic). [`Plan`]s remember which spots these block, and they
    /// are filed apart, so a test of what moves does not step over them.
    pub fn fix(&mut self) {
        debug_assert_eq!(self.fixed, 0, "fixed twice");
        self.fixed = self.obstacles.len();
        self.fixed_extent = Some(self.live_extent());
        self.buckets[0] = std::mem::take(&mut self.buckets[1]);
    }

    /// True when `r` is clear of the fixed obstacles (see [`Placer::fix`]).
    pub(super) fn is_fixed_free(&mut self, r: &Rect) -> bool {
        if let Some(k) = self.last_fixed_block {
            if self.obstacles[k].blocks(r) {
                return false;
            }
        }
        for list in lists(&self.buckets[0], r) {
            for f in list {
                if f.obstacle.blocks(r) {
                    self.last_fixed_block = Some(f.id as usize);
                    return false;
                }
            }
        }
        true
    }

    /// Place one annotation; its box becomes an obstacle. The box goes at
    /// the user's position, else the cheapest free candidate, else away from
    /// the anchor with a leader line back (see the module notes).
    pub fn place(&mut self, req: &Request) -> Placed {
        self.place_planned(req, &mut Plan::default())
    }

    /// [`Placer::place`] with the request's [`Plan`] (kept by the caller
    /// between calls for one request, so the spots the fixed obstacles
    /// block are found once, not on every try).
    pub fn place_planned(&mut self, req: &Request, plan: &mut Plan) -> Placed {
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
                fixed_crossings: None,
            };
        }
        if let Some(p) = self.place_beside_planned(req, plan) {
            return p;
        }
        let (r, fixed_crossings) = plan.search_with_leader(self, req);
        let id = self.add_solid(r.inflate(clear / 2.0));
        let from = r.nearest_point(req.anchor);
        let line = self.add(Obstacle::Leader(from, req.anchor));
        Placed {
            rect: r,
            placement: Placement::Leader,
            anchor: req.anchor,
            variant: req.leader_variant,
            ids: vec![id, line],
            fixed_crossings,
        }
    }

    /// The cheapest free candidate, if any is free. Candidates are taken
    /// in order of cost (see [`Request::sort`]), so the first free one wins;
    /// `plan` skips those the fixed obstacles block.
    pub fn place_beside_planned(&mut self, req: &Request, plan: &mut Plan) -> Option<Placed> {
        let clear = style::CLEARANCE;
        let c = &req.candidates[plan.first_free_candidate(self, req)?];
        let r = Rect::from_size(c.min, c.size[0], c.size[1]);
        let id = self.add_solid(r.inflate(clear / 2.0));
        Some(Placed {
            rect: r,
            placement: Placement::Beside,
            anchor: c.anchor,
            variant: c.variant,
            ids: vec![id],
            fixed_crossings: None,
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
            fixed_crossings: None,
        }
    }

    /// Add a line (a leader drawn later) to a placement's obstacles.
    pub fn add_leader(&mut self, p: &mut Placed, from: Point, to: Point) {
        let id = self.add(Obstacle::Leader(from, to));
        p.ids.push(id);
    }
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
