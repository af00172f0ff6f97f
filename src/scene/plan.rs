//! What the schematic alone decides for one annotation, worked out once.
//!
//! The repair passes (`build.rs`) place each annotation that needed a
//! leader again and again, with one neighbour or another taken away. Each
//! try walks the same candidates and the same rings of spots around the
//! same anchor, and most of those spots (measured on the generated chain:
//! about 85 %) are refused by a symbol body, a text or a wire, which never
//! move. A [`Plan`] keeps, per request, the candidates and ring spots that
//! the fixed obstacles ([`Placer::fix`]) leave open, so later tries test
//! only those, and only against what can move.
//!
//! The answer is the same as a walk over every spot: a spot refused by a
//! fixed obstacle stays refused, the open spots keep their order, and a
//! ring with no open spot changes nothing in the search (its cost bound is
//! implied by the next ring's). Building a plan costs one fixed-obstacle
//! test per spot: O(s) for s spots of the request (bounded by the leader
//! reach), so placing n annotations stays O(n), with a smaller constant for
//! every try after the first.

use super::geometry::Rect;
use super::place::{Candidate, Part, Placer, Request};
use super::style;

/// One request's spots left open by the fixed obstacles (built on first use).
#[derive(Debug, Clone, Default)]
pub struct Plan {
    /// The candidates not blocked by a fixed obstacle.
    candidates: Option<Vec<Open>>,
    /// The leader search's rings, innermost first, each with its open spots.
    rings: Option<Vec<Ring>>,
}

/// A candidate no fixed obstacle blocks: its index in the request, and
/// the obstacle that refused it last time, if any.
#[derive(Debug, Clone, Copy)]
struct Open {
    index: u32,
    blocker: Option<u32>,
}

#[derive(Debug, Clone)]
struct Ring {
    radius: f64,
    spots: Vec<Spot>,
}

/// A box position on a ring: its top-left corner, and the sine of its angle
/// (the search prefers spots above the anchor).
#[derive(Debug, Clone, Copy)]
struct Spot {
    min: [f64; 2],
    sin: f64,
    /// Boxes and lines of the fixed obstacles that the leader from this
    /// spot crosses (counted on first use; they never change).
    fixed_crossings: Option<(usize, usize)>,
    /// The obstacle that refused this spot last time, if any.
    blocker: Option<u32>,
}

impl Plan {
    /// The index of the request's first free candidate (they are sorted
    /// cheapest first), if any; those a fixed obstacle blocks are skipped.
    pub(super) fn first_free_candidate(
        &mut self,
        placer: &mut Placer,
        req: &Request,
    ) -> Option<usize> {
        let clear = style::CLEARANCE;
        let rect = |c: &Candidate| Rect::from_size(c.min, c.size[0], c.size[1]).inflate(clear);
        let open = self.candidates.get_or_insert_with(|| {
            (0..req.candidates.len() as u32)
                .filter(|&i| placer.is_fixed_free(&rect(&req.candidates[i as usize])))
                .map(|index| Open {
                    index,
                    blocker: None,
                })
                .collect()
        });
        for o in open.iter_mut() {
            let r = rect(&req.candidates[o.index as usize]);
            if placer.is_free_hinted(&r, &mut o.blocker) {
                return Some(o.index as usize);
            }
        }
        None
    }

    /// The spots of the leader search, ring by ring (see
    /// [`Plan::search_with_leader`]), keeping those no fixed obstacle blocks.
    fn rings(&mut self, placer: &mut Placer, req: &Request) -> &mut [Ring] {
        self.rings.get_or_insert_with(|| {
            let [w, h] = req.size;
            let clear = style::CLEARANCE;
            let a = req.anchor;
            let mut rings = Vec::new();
            let mut radius = 1.0 + (w.min(h)) / 2.0;
            while radius <= req.max_leader {
                let steps = ((radius * 3.0).ceil() as usize).clamp(12, 48);
                let mut spots = Vec::new();
                // Walk the ring by rotating a unit vector (one sin/cos per ring).
                let (ds, dc) = (std::f64::consts::TAU / steps as f64).sin_cos();
                let (mut sn, mut cs) = (0.0f64, 1.0f64);
                for _ in 0..steps {
                    let (t_sin, t_cos) = (sn, cs);
                    (sn, cs) = (sn * dc + cs * ds, cs * dc - sn * ds);
                    let c = [a[0] + radius * t_cos, a[1] + radius * t_sin];
                    let min = [c[0] - w / 2.0, c[1] - h / 2.0];
                    let r = Rect::from_size(min, w, h);
                    if !r.contains(a) && placer.is_fixed_free(&r.inflate(clear)) {
                        spots.push(Spot {
                            min,
                            sin: t_sin,
                            fixed_crossings: None,
                            blocker: None,
                        });
                    }
                }
                if !spots.is_empty() {
                    rings.push(Ring { radius, spots });
                }
                radius += 1.0;
            }
            rings
        })
    }

    /// A box for a request none of whose candidates is free: on rings of
    /// growing radius around the anchor, the free spot whose leader back
    /// crosses least (boxes and wires), nearer rings first; else the first
    /// free spot in rows below everything placed.
    pub(super) fn search_with_leader(
        &mut self,
        placer: &mut Placer,
        req: &Request,
    ) -> (Rect, Option<(usize, usize)>) {
        let [w, h] = req.size;
        let clear = style::CLEARANCE;
        let a = req.anchor;
        let mut overall: Option<(f64, Rect, (usize, usize))> = None;
        for ring in self.rings(placer, req).iter_mut() {
            let radius = ring.radius;
            // Every cost is ≥ 0, so a ring at this radius totals at least
            // radius·0.5: once that reaches the best total, no later ring
            // can win (the same answer, without walking the far rings).
            if overall.is_some_and(|(t, _, _)| radius * 0.5 >= t) {
                break;
            }
            let mut best: Option<(f64, Rect, (usize, usize))> = None;
            for spot in ring.spots.iter_mut() {
                let r = Rect::from_size(spot.min, w, h);
                if !placer.is_free_hinted(&r.inflate(clear), &mut spot.blocker) {
                    continue;
                }
                let from = r.nearest_point(a);
                // A leader should not run through a symbol, text or
                // annotation (or along a wire); crossing a wire costs less.
                let cost_of = |solids: usize, lines: usize| {
                    solids as f64 * 12.0 + lines as f64 * 2.5 + (spot.sin + 1.0) * 0.1
                };
                let fixed = *spot.fixed_crossings.get_or_insert_with(|| {
                    placer
                        .crossings_until(from, a, &[], Part::Fixed, (0, 0), |_, _| false)
                        .expect("never stopped early")
                });
                // Stop counting once the crossings so far make this spot
                // useless: as dear as the ring's best, or (past the first
                // ring with a free spot) too dear to better the overall
                // total and not clear enough to end the search. Counts only
                // grow and the cost grows with them, so a spot given up
                // could not have changed the outcome; any spot that could
                // is cheaper than every spot given up, so the same one wins.
                let useless = |c: f64| {
                    best.is_some_and(|(b, _, _)| c >= b)
                        || overall.is_some_and(|(t, _, _)| c + radius * 0.5 >= t && c >= 0.5)
                };
                let counts = placer.crossings_until(from, a, &[], Part::Moving, fixed, |s, l| {
                    useless(cost_of(s, l))
                });
                let Some((solids, lines)) = counts else {
                    continue;
                };
                let cost = cost_of(solids, lines);
                if best.is_none_or(|(b, _, _)| cost < b) {
                    best = Some((cost, r, fixed));
                }
            }
            if let Some((cost, r, fixed)) = best {
                let total = cost + radius * 0.5;
                if overall.is_none_or(|(b, _, _)| total < b) {
                    overall = Some((total, r, fixed));
                }
                if cost < 0.5 {
                    // Nothing crossed: a farther ring can only be worse.
                    break;
                }
            }
        }
        // The winner's leader comes with its count of fixed obstacles
        // crossed, for `Placer::badness`.
        if let Some((_, r, fixed)) = overall {
            return (r, Some(fixed));
        }
        // The sheet is full near the anchor: the first free spot in rows below.
        let live = placer.live_extent();
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
                if placer.is_free(&r.inflate(clear)) {
                    return (r, None);
                }
                x += 1.0;
            }
            y += 1.0;
            if y > ext.max[1] + 400.0 {
                return (Rect::from_size([ext.max[0] + 1.0, y], w, h), None);
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scene::place::Placed;
    use crate::scene::Point;

    /// The search as a walk over every spot, with nothing remembered: what
    /// a plan must reproduce.
    fn walk(placer: &mut Placer, req: &Request) -> Option<Rect> {
        let clear = style::CLEARANCE;
        let [w, h] = req.size;
        for c in &req.candidates {
            let r = Rect::from_size(c.min, c.size[0], c.size[1]);
            if placer.is_free(&r.inflate(clear)) {
                return Some(r);
            }
        }
        let a = req.anchor;
        let mut radius = 1.0 + (w.min(h)) / 2.0;
        let mut overall: Option<(f64, Rect)> = None;
        while radius <= req.max_leader {
            if overall.is_some_and(|(t, _)| radius * 0.5 >= t) {
                break;
            }
            let steps = ((radius * 3.0).ceil() as usize).clamp(12, 48);
            let mut best: Option<(f64, Rect)> = None;
            let (ds, dc) = (std::f64::consts::TAU / steps as f64).sin_cos();
            let (mut sn, mut cs) = (0.0f64, 1.0f64);
            for _ in 0..steps {
                let (t_sin, t_cos) = (sn, cs);
                (sn, cs) = (sn * dc + cs * ds, cs * dc - sn * ds);
                let c = [a[0] + radius * t_cos, a[1] + radius * t_sin];
                let r = Rect::from_size([c[0] - w / 2.0, c[1] - h / 2.0], w, h);
                if r.contains(a) || !placer.is_free(&r.inflate(clear)) {
                    continue;
                }
                let (solids, lines) = placer.crossings_split(r.nearest_point(a), a);
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
                    break;
                }
            }
            radius += 1.0;
        }
        // (None: the rows below the drawing, the same code either way.)
        overall.map(|(_, r)| r)
    }

    #[test]
    fn a_plan_kept_across_changes_places_as_a_walk_over_every_spot() {
        // invariant: remembering what the fixed obstacles block (and which
        // obstacle refused a spot last time) changes no placement, however
        // the moving obstacles change between tries.
        let mut seed = 0x2545_f491_4f6c_dd1du64;
        let mut next = move |lo: f64, hi: f64| {
            seed ^= seed << 13;
            seed ^= seed >> 7;
            seed ^= seed << 17;
            lo + (hi - lo) * (seed >> 11) as f64 / (1u64 << 53) as f64
        };
        let mut placer = Placer::new();
        for _ in 0..70 {
            let (x, y) = (next(0.0, 60.0), next(0.0, 30.0));
            match next(0.0, 3.0) as u32 {
                0 => placer.add_solid(Rect::from_size([x, y], next(1.0, 4.0), next(0.5, 3.0))),
                1 => placer.add_line([x, y], [x + next(-8.0, 8.0), y]),
                _ => placer.add_line([x, y], [x + next(-5.0, 5.0), y + next(-5.0, 5.0)]),
            };
        }
        placer.fix();
        let requests: Vec<Request> = (0..60)
            .map(|_| {
                let anchor: Point = [next(0.0, 60.0), next(0.0, 30.0)];
                let size = [next(1.5, 5.0), next(0.8, 2.0)];
                let mut req = Request {
                    size,
                    anchor,
                    candidates: (0..8)
                        .map(|k| Candidate {
                            min: [anchor[0] + next(-4.0, 1.0), anchor[1] + next(-2.0, 1.0)],
                            size,
                            cost: k as f64 * 0.5,
                            anchor,
                            variant: 0,
                        })
                        .collect(),
                    user: None,
                    max_leader: 10.0,
                    leader_variant: 0,
                };
                req.sort();
                req
            })
            .collect();
        let mut plans = vec![Plan::default(); requests.len()];
        let mut placed: Vec<Option<Placed>> = vec![None; requests.len()];
        let (mut searched, mut compared) = (0, 0);
        for round in 0..3 {
            for i in 0..requests.len() {
                // Take one away now and then, so later tries meet a changed sheet.
                if let Some(old) = placed[i].take() {
                    placer.remove(&old);
                    if round == 1 && i % 3 == 0 {
                        placer.discard(&old);
                        continue;
                    }
                    placer.discard(&old);
                }
                let expected = walk(&mut placer, &requests[i]);
                let got = placer.place_planned(&requests[i], &mut plans[i]);
                if let Some(r) = expected {
                    assert_eq!(got.rect, r, "request {i}, round {round}");
                    compared += 1;
                    searched += (got.placement == crate::scene::Placement::Leader) as usize;
                }
                placed[i] = Some(got);
            }
        }
        // The scenario exercises both paths (else the test proves little).
        assert!(
            compared > 120 && searched > 20,
            "{compared} compared, {searched} searched"
        );
    }
}
