//! Putting the scene together: the schematic, then every annotation placed
//! around it (user-dragged ones first, then voltages, currents, stage cards,
//! the title block), then the page bounds.

use super::geometry::{shape_bounds, Rect};
use super::place::{Placed, Placer, Plan, Request};
use super::{
    card, currents, labels, schematic, style, title, Annotations, Arrow, Colour, Element,
    HitRegion, HitShape, ItemRef, Layer, PathItem, PlacedAnnotation, Placement, Point, Primitive,
    Scene, SceneOptions, Shape, Stroke,
};
use crate::document::Document;
use crate::netlist::Netlist;

/// An annotation's drawing, relative to its top-left corner.
#[derive(Debug, Clone, Default)]
pub(super) struct Content {
    pub size: [f64; 2],
    pub prims: Vec<Primitive>,
}

/// When a line is drawn back from an annotation to what it describes.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Leader {
    /// Only when the placer had to move it away.
    WhenMoved,
    /// When the straight line crosses nothing (stage cards in the margin).
    WhenClear,
}

/// An annotation waiting for a place.
#[derive(Debug, Clone)]
pub(super) struct Pending {
    pub layer: Layer,
    pub item: ItemRef,
    /// Content per variant (see [`super::place::Candidate::variant`]).
    pub variants: Vec<Content>,
    pub request: Request,
    pub colour: Colour,
    pub leader: Leader,
    /// The box to aim a leader at (a part body), else the anchor point.
    pub target: Option<Rect>,
}

impl Pending {
    pub fn key(&self) -> String {
        format!("{}/{}", self.layer.word(), self.item.key_item())
    }
}

fn translate_point(p: Point, d: Point) -> Point {
    [p[0] + d[0], p[1] + d[1]]
}

pub(super) fn translate(p: &Primitive, d: Point) -> Primitive {
    let t = |q: &Point| translate_point(*q, d);
    match p {
        Primitive::Path(item) => {
            let shape = match &item.shape {
                Shape::Polyline { points, closed } => Shape::Polyline {
                    points: points.iter().map(t).collect(),
                    closed: *closed,
                },
                Shape::Circle { center, radius } => Shape::Circle {
                    center: t(center),
                    radius: *radius,
                },
                Shape::Arc {
                    center,
                    radius,
                    start_degrees,
                    sweep_degrees,
                } => Shape::Arc {
                    center: t(center),
                    radius: *radius,
                    start_degrees: *start_degrees,
                    sweep_degrees: *sweep_degrees,
                },
                Shape::Rect { rect, corner } => Shape::Rect {
                    rect: rect.translate(d),
                    corner: *corner,
                },
            };
            Primitive::Path(PathItem {
                shape,
                stroke: item.stroke,
                fill: item.fill,
            })
        }
        Primitive::Text(run) => {
            let mut run = run.clone();
            run.position = t(&run.position);
            Primitive::Text(run)
        }
        Primitive::Arrow(a) => Primitive::Arrow(Arrow {
            from: t(&a.from),
            to: t(&a.to),
            ..a.clone()
        }),
    }
}

fn primitive_bounds(p: &Primitive) -> Rect {
    match p {
        Primitive::Path(item) => {
            let w = item.stroke.map_or(0.0, |s| s.width / 2.0);
            shape_bounds(&item.shape).inflate(w)
        }
        Primitive::Text(t) => t.bounds(),
        Primitive::Arrow(a) => Rect::new(a.from, a.to).inflate(a.head * 0.5),
    }
}

mod emit;

struct Builder<'a> {
    doc: &'a Document,
    opts: &'a SceneOptions,
    placer: Placer,
    elements: Vec<Element>,
    annotations: Vec<PlacedAnnotation>,
    hits: Vec<HitRegion>,
}

impl Builder<'_> {
    fn user_position(&self, key: &str) -> Option<Point> {
        if !self.opts.use_stored_layout {
            return None;
        }
        self.doc
            .layout
            .annotations
            .get(key)
            .copied()
            .filter(|p| p[0].is_finite() && p[1].is_finite())
    }

    /// The point a leader from `rect` aims at.
    fn target(p: &Pending, placed: &Placed) -> Point {
        p.target
            .map(|t| t.nearest_point(placed.rect.center()))
            .unwrap_or(placed.anchor)
    }

    /// Place one annotation now and decide on its leader.
    fn place_now(&mut self, p: &mut Pending) -> (Placed, bool) {
        p.request.user = self.user_position(&p.key());
        p.request.sort();
        let mut placed = self.placer.place(&p.request);
        let leader = self.leader_after(p, &mut placed);
        (placed, leader)
    }

    /// Whether a leader is drawn; adds it as an obstacle when the placer did not.
    fn leader_after(&mut self, p: &Pending, placed: &mut Placed) -> bool {
        let target = Self::target(p, placed);
        let rect = placed.rect;
        let far = rect.distance_to(target) > 1.2;
        let from = rect.nearest_point(target);
        let draw = match (placed.placement, p.leader) {
            (Placement::Leader, _) => true,
            (Placement::User, _) => far,
            (Placement::Beside, Leader::WhenClear) => {
                far && self.placer.crossings(from, target) == 0
            }
            (Placement::Beside, Leader::WhenMoved) => false,
        };
        if draw && placed.placement != Placement::Leader {
            self.placer.add_leader(placed, from, target);
            if placed.placement == Placement::Beside {
                placed.placement = Placement::Leader;
            }
        }
        draw
    }

    /// Place many annotations: the most constrained first (fewest free
    /// candidates), then try to undo each leader by moving one neighbour
    /// that sits on its candidates.
    fn place_all(&mut self, mut pending: Vec<Pending>) -> Vec<(Pending, Placed, bool)> {
        for p in pending.iter_mut() {
            p.request.user = self.user_position(&p.key());
            p.request.sort();
        }
        let mut order: Vec<(usize, usize)> = pending
            .iter()
            .enumerate()
            .map(|(i, p)| {
                // Dragged ones first; then the most constrained; those with no
                // free spot at all last, so their leaders go where room is left.
                let freedom = if p.request.user.is_some() {
                    0
                } else {
                    match self.placer.free_candidates(&p.request) {
                        0 => usize::MAX,
                        n => n,
                    }
                };
                (freedom, i)
            })
            .collect();
        order.sort();
        // Each request's spots left open by the schematic, found on its
        // first placement and reused by every try below (see `plan.rs`).
        let mut plans: Vec<Plan> = vec![Plan::default(); pending.len()];
        let mut placed: Vec<Option<Placed>> = vec![None; pending.len()];
        for &(_, i) in &order {
            placed[i] = Some(
                self.placer
                    .place_planned(&pending[i].request, &mut plans[i]),
            );
        }
        let mut placed: Vec<Placed> = placed.into_iter().map(|p| p.expect("placed")).collect();
        // Repair: for each annotation that needed a leader, take away one
        // neighbour that sits on its spots or under its leader, place both
        // again (in either order) and keep the result if it reads better.
        // Neighbours come from a grid of the placed boxes and leaders
        // (`spatial::Grid`): O(1) per leader instead of a scan of all n.
        let clear = style::CLEARANCE;
        let reach = |p: &Placed| {
            let r = p.rect.inflate(clear);
            if p.placement == Placement::Leader {
                r.union(&Rect::new(p.rect.nearest_point(p.anchor), p.anchor))
            } else {
                r
            }
        };
        let mut near = super::spatial::Grid::new(8.0);
        for (j, p) in placed.iter().enumerate() {
            near.insert(j, &reach(p));
        }
        let mut found = Vec::new();
        for _round in 0..3 {
            let mut improved = false;
            for i in 0..pending.len() {
                if placed[i].placement != Placement::Leader {
                    continue;
                }
                let leader_i = (
                    placed[i].rect.nearest_point(placed[i].anchor),
                    placed[i].anchor,
                );
                found.clear();
                // One query over the box around i's spots finds a superset
                // of those on a spot (the count below is exact).
                let spots = Placer::candidate_rects(&pending[i].request)
                    .fold(Rect::empty(), |u, r| u.union(&r));
                near.begin();
                near.query(&spots, &mut found);
                near.query(&Rect::new(leader_i.0, leader_i.1), &mut found);
                // Who is in the way, most in the way first.
                let mut blockers: Vec<(usize, usize)> = found
                    .iter()
                    .copied()
                    .filter(|&j| j != i && placed[j].placement != Placement::User)
                    .filter(|&j| pending[j].request.user.is_none())
                    .map(|j| -> (usize, usize) {
                        let rj = placed[j].rect.inflate(clear);
                        let leaders_cross = placed[j].placement == Placement::Leader
                            && super::place::segments_cross(
                                leader_i.0,
                                leader_i.1,
                                placed[j].rect.nearest_point(placed[j].anchor),
                                placed[j].anchor,
                            );
                        let on_leader =
                            (rj.crosses_segment(leader_i.0, leader_i.1) || leaders_cross) as usize;
                        let on_spots = if rj.overlaps(&spots) {
                            Placer::candidate_rects(&pending[i].request)
                                .filter(|r| r.overlaps(&rj))
                                .count()
                        } else {
                            0
                        };
                        (on_leader * 1000 + on_spots, j)
                    })
                    .filter(|(n, _)| *n > 0)
                    .collect();
                blockers.sort_by(|a, b| b.cmp(a));
                let blockers: Vec<usize> = blockers.into_iter().take(10).map(|(_, j)| j).collect();
                // A try that loses puts everything back as it was, so i's
                // badness holds for every j until one wins (and ends the loop).
                let badness_i = if blockers.is_empty() {
                    0.0
                } else {
                    self.placer.badness(&placed[i])
                };
                for j in blockers {
                    let before = badness_i + self.placer.badness(&placed[j]);
                    self.placer.remove(&placed[i]);
                    self.placer.remove(&placed[j]);
                    // A: i first (beside if j was in the way, else a cleaner
                    // leader), then j wherever it can go.
                    let mut best: Option<(f64, Placed, Placed)> = {
                        let pi = self
                            .placer
                            .place_planned(&pending[i].request, &mut plans[i]);
                        let pj = self
                            .placer
                            .place_planned(&pending[j].request, &mut plans[j]);
                        let score = self.placer.badness(&pi) + self.placer.badness(&pj);
                        self.placer.remove(&pi);
                        self.placer.remove(&pj);
                        Some((score, pi, pj))
                    };
                    // B: j moves to another spot beside its own anchor and i looks
                    // again for a cleaner leader (only worth it when i's crosses things).
                    // The tries that lose are discarded (see `Placer::discard`).
                    let tangled = before > 1.5;
                    if tangled && best.as_ref().is_none_or(|(s, _, _)| *s > 0.0) {
                        let pj = self
                            .placer
                            .place_beside_planned(&pending[j].request, &mut plans[j]);
                        if let Some(pj) = pj {
                            let pi = self
                                .placer
                                .place_planned(&pending[i].request, &mut plans[i]);
                            let score = self.placer.badness(&pi) + self.placer.badness(&pj);
                            self.placer.remove(&pi);
                            self.placer.remove(&pj);
                            if best.as_ref().is_none_or(|(s, _, _)| score < *s) {
                                if let Some((_, a, b)) = best.replace((score, pi, pj)) {
                                    self.placer.discard(&a);
                                    self.placer.discard(&b);
                                }
                            } else {
                                self.placer.discard(&pi);
                                self.placer.discard(&pj);
                            }
                        }
                    }
                    match best {
                        Some((score, pi, pj)) if score + 1e-9 < before => {
                            self.placer.restore(&pi);
                            self.placer.restore(&pj);
                            self.placer.discard(&placed[i]);
                            self.placer.discard(&placed[j]);
                            near.insert(i, &reach(&pi));
                            near.insert(j, &reach(&pj));
                            placed[i] = pi;
                            placed[j] = pj;
                            improved = true;
                            break;
                        }
                        other => {
                            if let Some((_, pi, pj)) = other {
                                self.placer.discard(&pi);
                                self.placer.discard(&pj);
                            }
                            self.placer.restore(&placed[i]);
                            self.placer.restore(&placed[j]);
                        }
                    }
                }
            }
            if !improved {
                break;
            }
        }
        // Two leaders that cross usually uncross when their boxes swap.
        // Only leaders take part (a swap keeps both leaders), and only
        // pairs whose leaders' boxes meet can cross: the grid of leader
        // boxes finds them, in the order of a full pair scan (j ascending,
        // asked again after each swap, which moves i's leader).
        let leader_box = |p: &Placed| Rect::new(p.rect.nearest_point(p.anchor), p.anchor);
        let mut lines = super::spatial::Grid::new(8.0);
        for (j, p) in placed.iter().enumerate() {
            if p.placement == Placement::Leader {
                lines.insert(j, &leader_box(p));
            }
        }
        for i in 0..pending.len() {
            if placed[i].placement != Placement::Leader {
                continue;
            }
            let mut after_j = i;
            'again: loop {
                found.clear();
                lines.begin();
                lines.query(&leader_box(&placed[i]), &mut found);
                found.retain(|&j| j > after_j);
                found.sort_unstable();
                for &j in &found {
                    let (a, b) = (&placed[i], &placed[j]);
                    if b.placement != Placement::Leader {
                        continue;
                    }
                    let same_size = (a.rect.width() - b.rect.width()).abs() < 1e-6
                        && (a.rect.height() - b.rect.height()).abs() < 1e-6;
                    let crossing = super::place::segments_cross(
                        a.rect.nearest_point(a.anchor),
                        a.anchor,
                        b.rect.nearest_point(b.anchor),
                        b.anchor,
                    );
                    if !same_size || !crossing {
                        continue;
                    }
                    let before = self.placer.badness(&placed[i]) + self.placer.badness(&placed[j]);
                    self.placer.remove(&placed[i]);
                    self.placer.remove(&placed[j]);
                    let pi = self.placer.place_leader_at(
                        placed[j].rect,
                        placed[i].anchor,
                        placed[i].variant,
                    );
                    let pj = self.placer.place_leader_at(
                        placed[i].rect,
                        placed[j].anchor,
                        placed[j].variant,
                    );
                    let after = self.placer.badness(&pi) + self.placer.badness(&pj);
                    if after + 1e-9 < before {
                        self.placer.discard(&placed[i]);
                        self.placer.discard(&placed[j]);
                        lines.insert(i, &leader_box(&pi));
                        lines.insert(j, &leader_box(&pj));
                        placed[i] = pi;
                        placed[j] = pj;
                        after_j = j;
                        continue 'again;
                    } else {
                        self.placer.remove(&pi);
                        self.placer.remove(&pj);
                        self.placer.discard(&pi);
                        self.placer.discard(&pj);
                        self.placer.restore(&placed[i]);
                        self.placer.restore(&placed[j]);
                    }
                }
                break;
            }
        }
        pending
            .into_iter()
            .zip(placed)
            .map(|(p, mut pl)| {
                let leader = self.leader_after(&p, &mut pl);
                (p, pl, leader)
            })
            .collect()
    }
}

/// Build the display list of a document with its annotations.
///
/// The schematic is always laid out (annotations must avoid it) but only
/// the layers in `opts.layers` are kept in the scene.
pub fn build(doc: &Document, nl: &Netlist, ann: &Annotations, opts: &SceneOptions) -> Scene {
    // The optional layers draw inside the voltage tags and stage cards:
    // without them, their data is left out before anything is measured.
    let stripped;
    let ann = if (!opts.layers.contains(Layer::Spread) && !ann.voltage_ranges.is_empty())
        || (!opts.layers.contains(Layer::Noise) && !ann.stage_noise.is_empty())
        || (!opts.layers.contains(Layer::Distortion) && !ann.stage_distortion.is_empty())
    {
        let mut a = ann.clone();
        if !opts.layers.contains(Layer::Spread) {
            a.voltage_ranges.clear();
        }
        if !opts.layers.contains(Layer::Noise) {
            a.stage_noise.clear();
        }
        if !opts.layers.contains(Layer::Distortion) {
            a.stage_distortion.clear();
        }
        stripped = a;
        &stripped
    } else {
        ann
    };
    let mut schematic_elements = Vec::new();
    let mut schematic_hits = Vec::new();
    let obs = schematic::build(doc, nl, &mut schematic_elements, &mut schematic_hits);
    let mut placer = Placer::new();
    for (_, b) in &obs.bodies {
        placer.add_solid(*b);
    }
    for t in &obs.texts {
        placer.add_solid(*t);
    }
    for (_, a, b) in &obs.segments {
        placer.add_line(*a, *b);
    }
    // The schematic never moves: what it blocks is worked out once per
    // annotation (`plan.rs`).
    placer.fix();
    let sheet = placer.extent;
    let mut b = Builder {
        doc,
        opts,
        placer,
        elements: Vec::new(),
        annotations: Vec::new(),
        hits: Vec::new(),
    };
    if opts.layers.contains(Layer::Schematic) {
        b.elements.append(&mut schematic_elements);
    }

    let mut pending: Vec<Pending> = Vec::new();
    if opts.layers.contains(Layer::Voltages) {
        pending.extend(labels::voltage_tags(doc, nl, ann, &obs));
    }
    if opts.layers.contains(Layer::Currents) {
        pending.extend(currents::current_markers(doc, nl, ann, &obs));
    }
    let cards: Vec<Pending> = if opts.layers.contains(Layer::Stages) {
        let mut cards = card::stage_cards(doc, ann, opts.model, &obs);
        cards.extend(super::block_card::block_cards(doc, ann, opts.model, &obs));
        cards.extend(super::loop_tag::loop_tags(doc, ann, &obs));
        b.elements
            .extend(super::loop_tag::loop_outlines(doc, ann, &obs));
        cards
    } else {
        Vec::new()
    };

    // User-dragged positions win and go first: everything else avoids them.
    let (user_cards, cards): (Vec<Pending>, Vec<Pending>) = cards
        .into_iter()
        .partition(|p| b.user_position(&p.key()).is_some());
    let mut done = Vec::new();
    for mut p in user_cards {
        let (pl, leader) = b.place_now(&mut p);
        done.push((p, pl, leader));
    }
    done.extend(b.place_all(pending));
    for mut p in cards {
        p.request.candidates = card::margin_candidates(&b.placer.live_extent(), &sheet, &p.request);
        let (pl, leader) = b.place_now(&mut p);
        done.push((p, pl, leader));
    }
    if opts.layers.contains(Layer::Title) {
        let mut p = title::title_block(ann, doc);
        p.request.candidates = title::candidates(&b.placer.live_extent(), p.request.size);
        let (pl, leader) = b.place_now(&mut p);
        done.push((p, pl, leader));
    }
    for (p, pl, leader) in done {
        b.emit(p, pl, leader);
    }

    let mut bounds = Rect::empty();
    for e in &b.elements {
        bounds = bounds.union(&primitive_bounds(&e.primitive));
    }
    if bounds.is_empty() {
        bounds = Rect::new([0.0, 0.0], [10.0, 10.0]);
    }
    let mut hits = b.hits;
    hits.append(&mut schematic_hits);
    Scene {
        elements: b.elements,
        annotations: b.annotations,
        bodies: obs.bodies,
        hits,
        bounds: bounds.inflate(style::MARGIN),
    }
}
