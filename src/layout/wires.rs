//! Wiring a placed plan: ground symbols at the feet of parts, a bus along
//! the top (or bottom) for each supply with its rail symbol at the left
//! end, and every other net routed by the maze router; two labels where no
//! route exists.

use super::classify::NetClass;
use super::place::Plan;
use super::route::{
    corners, footprint, route, Cell, CellSet, Scratch, RUN_HORIZONTAL, RUN_VERTICAL,
};
use crate::document::{Document, NetLabel, Part, PartKind, Wire};
use crate::netlist::{NetId, Netlist};
use std::collections::HashMap;

/// The router's state over the whole sheet.
struct Board {
    blocked: CellSet,
    crossable: CellSet,
    crossed: CellSet,
    scratch: Scratch,
    bounds: (i32, i32, i32, i32),
}

impl Board {
    /// Route each ray in `rest` to the tree grown from `seeds`; returns the
    /// rays that found no route.
    fn route_net(
        &mut self,
        wires: &mut Vec<Wire>,
        seeds: &[Vec<Cell>],
        rest: &[Vec<Cell>],
        seeds_drawn: bool,
    ) -> Vec<Vec<Cell>> {
        let mut failed = Vec::new();
        if seeds.is_empty() {
            return rest.to_vec();
        }
        let mut tree = CellSet::new(self.bounds);
        let mut tree_box = [i32::MAX, i32::MAX, i32::MIN, i32::MIN];
        let grow = |b: &mut [i32; 4], c: Cell| {
            *b = [b[0].min(c.0), b[1].min(c.1), b[2].max(c.0), b[3].max(c.1)];
        };
        let mut on_seed: HashMap<Cell, (usize, usize)> = HashMap::new();
        for (s, ray) in seeds.iter().enumerate() {
            for (k, c) in ray.iter().enumerate() {
                tree.insert(*c);
                grow(&mut tree_box, *c);
                on_seed.insert(*c, (s, k));
            }
        }
        // The net's own pins' ways out are open to its routes (a route may
        // pass the end of one on its way): closed again afterwards.
        let own: Vec<Cell> = seeds
            .iter()
            .chain(rest.iter())
            .flat_map(|r| r.iter().skip(1).copied())
            .collect();
        for c in &own {
            self.blocked.set(*c, 0);
        }
        let mut drawn: Vec<usize> = if seeds_drawn {
            seeds.iter().map(|s| s.len()).collect()
        } else {
            vec![0usize; seeds.len()]
        };
        for ray in rest {
            let end = *ray.last().expect("a ray holds its pin");
            let Some(path) = route(
                end,
                &tree,
                tree_box,
                &self.blocked,
                &self.crossable,
                &mut self.scratch,
            ) else {
                failed.push(ray.clone());
                continue;
            };
            let join = *path.last().expect("a path has an end");
            // A joint is never crossed: a wire over it would join it.
            self.crossable.set(join, 0);
            self.crossable.set(path[0], 0);
            if let Some(&(s, k)) = on_seed.get(&join) {
                if k + 1 > drawn[s].max(1) {
                    let from = drawn[s].saturating_sub(1);
                    wires.push(Wire {
                        points: corners(&seeds[s][from..=k]),
                    });
                    drawn[s] = k + 1;
                }
            }
            for (i, c) in path.iter().enumerate() {
                if i == 0 || i + 1 == path.len() {
                    continue;
                }
                if self.crossable.contains(c) {
                    self.crossable.set(*c, 0);
                    self.crossed.insert(*c);
                    continue;
                }
                let (a, b) = (path[i - 1], path[i + 1]);
                if a.1 == c.1 && b.1 == c.1 {
                    self.crossable.set(*c, RUN_HORIZONTAL);
                } else if a.0 == c.0 && b.0 == c.0 {
                    self.crossable.set(*c, RUN_VERTICAL);
                }
            }
            let mut cells: Vec<Cell> = ray.clone();
            cells.extend(path.into_iter().skip(1));
            self.blocked.extend(cells.iter().copied());
            for c in cells.iter().filter(|c| !self.crossed.contains(c)) {
                tree.insert(*c);
                grow(&mut tree_box, *c);
            }
            wires.push(Wire {
                points: corners(&cells),
            });
        }
        self.blocked.extend(own);
        failed
    }
}

fn new_ground(doc: &Document) -> Part {
    let mut n = doc.parts.len() + 1;
    while doc.parts.iter().any(|p| p.id == format!("p{n}")) {
        n += 1;
    }
    Part {
        id: format!("p{n}"),
        connect: Default::default(),
        designator: String::new(),
        kind: PartKind::Ground,
        symbol: String::new(),
        position: crate::document::UNPLACED,
        rotation: 0,
        mirror: false,
        preset: None,
        parameters: Default::default(),
    }
}

fn segment_cells(a: [i32; 2], b: [i32; 2]) -> Vec<Cell> {
    let mut out = Vec::new();
    let (dx, dy) = ((b[0] - a[0]).signum(), (b[1] - a[1]).signum());
    let mut c = (a[0], a[1]);
    out.push(c);
    while c != (b[0], b[1]) {
        c = (c.0 + dx, c.1 + dy);
        out.push(c);
    }
    out
}

pub(super) fn draw(orig: &Document, nl: &Netlist, classes: &[NetClass], plan: Plan) -> Document {
    let Plan {
        mut doc,
        fresh,
        anchors,
    } = plan;
    let original_count = orig.parts.len();
    let is_body = |p: &Part| !matches!(p.kind, PartKind::Ground | PartKind::Rail);

    // The extent of what the layout places, with room for buses above and
    // below (the router's grid covers only this: a file's own drawing far
    // away costs nothing).
    let mut ext = [i32::MAX, i32::MAX, i32::MIN, i32::MIN];
    for (i, p) in doc.parts.iter().enumerate() {
        if fresh[i] && p.is_placed() {
            let [x, y] = p.position;
            ext = [ext[0].min(x), ext[1].min(y), ext[2].max(x), ext[3].max(y)];
        }
    }
    if ext[0] > ext[2] {
        ext = [0, 0, 0, 0];
    }
    let tops: Vec<NetId> = (0..classes.len())
        .filter(|n| classes[*n] == NetClass::Top)
        .collect();
    let bottoms: Vec<NetId> = (0..classes.len())
        .filter(|n| classes[*n] == NetClass::Bottom)
        .collect();
    let fresh_top = doc
        .parts
        .iter()
        .enumerate()
        .filter(|(i, p)| fresh[*i] && p.is_placed() && is_body(p))
        .map(|(_, p)| p.position[1])
        .min()
        .unwrap_or(super::place::ROW);
    let fresh_bottom = doc
        .parts
        .iter()
        .enumerate()
        .filter(|(i, p)| fresh[*i] && p.is_placed() && is_body(p))
        .map(|(_, p)| p.position[1])
        .max()
        .unwrap_or(super::place::ROW);
    let top_y = fresh_top - 6;
    let bottom_y = fresh_bottom + 9;
    let bounds = (
        ext[0] - 10,
        ext[1].min(top_y - 3 * tops.len() as i32) - 8,
        ext[2] + 12,
        ext[3].max(bottom_y + 3 * bottoms.len() as i32) + 8,
    );
    let mut board = Board {
        blocked: CellSet::new(bounds),
        crossable: CellSet::new(bounds),
        crossed: CellSet::new(bounds),
        scratch: Scratch::new(bounds),
        bounds,
    };
    // What the file placed and wired stays out of the router's way.
    for (i, p) in doc.parts.iter().enumerate() {
        if !fresh[i] {
            let (area, rays) = footprint(p);
            board.blocked.extend(area);
            board.blocked.extend(rays.into_iter().flatten());
        }
    }
    for w in &doc.wires {
        for pair in w.points.windows(2) {
            board.blocked.extend(segment_cells(pair[0], pair[1]));
        }
    }

    // Every placed body: its drawing, and its pins' ways out.
    let mut rays: Vec<Vec<Vec<Cell>>> = vec![Vec::new(); doc.parts.len()];
    for (i, p) in doc.parts.iter().enumerate() {
        if fresh[i] && p.is_placed() && is_body(p) {
            let (area, r) = footprint(p);
            board.blocked.extend(area);
            for ray in &r {
                board.blocked.extend(ray.iter().copied());
            }
            rays[i] = r;
        }
    }
    // A pin's way out that runs into another net's (parts placed close)
    // stops short of it: that pin is joined by a label if no route fits.
    let mut claimed: HashMap<Cell, NetId> = HashMap::new();
    for (i, part_rays) in rays.iter_mut().enumerate() {
        for (k, ray) in part_rays.iter_mut().enumerate() {
            let net = nl.part_nets[i][k];
            if let Some(cut) = ray
                .iter()
                .position(|c| claimed.get(c).is_some_and(|n| *n != net))
            {
                ray.truncate(cut.max(1));
            }
            for c in ray.iter() {
                claimed.entry(*c).or_insert(net);
            }
        }
    }

    let mut wires: Vec<Wire> = Vec::new();
    let mut labels: Vec<NetLabel> = Vec::new();
    // Ground symbols: reuse the file's unplaced ones, then add more.
    let mut spare_grounds: Vec<usize> = (0..doc.parts.len())
        .filter(|&i| fresh[i] && doc.parts[i].kind == PartKind::Ground)
        .collect();
    spare_grounds.reverse();
    let mut ground_seeds: Vec<Vec<Cell>> = Vec::new();
    let mut ground_rest: Vec<Vec<Cell>> = Vec::new();
    let mut net_rays: HashMap<NetId, Vec<Vec<Cell>>> = HashMap::new();
    for (i, part_rays) in rays.iter().enumerate().take(original_count) {
        if part_rays.is_empty() {
            continue;
        }
        for (k, ray) in part_rays.iter().cloned().enumerate() {
            let net = nl.part_nets[i][k];
            if Some(net) != nl.ground {
                net_rays.entry(net).or_default().push(ray);
                continue;
            }
            let pin = ray[0];
            let dir = if ray.len() > 1 {
                (ray[1].0 - ray[0].0, ray[1].1 - ray[0].1)
            } else {
                (0, 1)
            };
            let at = [pin.0 + 2 * dir.0, pin.1 + 2 * dir.1];
            let mut g = new_ground(&doc);
            g.position = at;
            let (area, _) = footprint(&g);
            // The symbol's own cells (its drawing is 1.6 wide, 1.1 deep) must be
            // free; its margin may touch a neighbour's.
            let (own, _) = footprint(&doc.parts[i]);
            let core: Vec<Cell> = (-1..=1)
                .flat_map(|dx| (0..=2).map(move |dy| (at[0] + dx, at[1] + dy)))
                .collect();
            let free = dir.1 >= 0
                && core
                    .iter()
                    .all(|c| !board.blocked.contains(c) || ray.contains(c) || own.contains(c));
            if !free {
                ground_rest.push(ray);
                continue;
            }
            let stub = segment_cells([pin.0, pin.1], at);
            board.blocked.extend(area);
            board.blocked.extend(stub.iter().copied());
            wires.push(Wire {
                points: vec![[pin.0, pin.1], at],
            });
            ground_seeds.push(stub);
            match spare_grounds.pop() {
                Some(gi) => {
                    doc.parts[gi].position = at;
                    doc.parts[gi].rotation = 0;
                    doc.parts[gi].mirror = false;
                }
                None => doc.parts.push(g),
            }
        }
    }

    // Supply buses.
    let mut rails_used: Vec<usize> = Vec::new();
    let mut supply_seeds: HashMap<NetId, Vec<Vec<Cell>>> = HashMap::new();
    for (k, &net) in tops.iter().chain(bottoms.iter()).enumerate() {
        let below = classes[net] == NetClass::Bottom;
        let row = if below {
            bottom_y + 3 * (k - tops.len()) as i32
        } else {
            top_y - 3 * k as i32
        };
        let pins: Vec<Cell> = net_rays
            .get(&net)
            .into_iter()
            .flatten()
            .map(|r| r[0])
            .collect();
        let rail = (0..original_count).find(|&i| {
            fresh[i] && doc.parts[i].kind == PartKind::Rail && nl.part_nets[i][0] == net
        });
        if pins.is_empty() {
            if let Some(r) = rail {
                doc.parts[r].position = [ext[0], row];
                doc.parts[r].rotation = if below { 180 } else { 0 };
                rails_used.push(r);
            }
            continue;
        }
        let x1 = pins.iter().map(|c| c.0).max().unwrap_or(0);
        let mut x0 = pins.iter().map(|c| c.0).min().unwrap_or(0);
        if let Some(r) = rail {
            x0 -= 3;
            let p = &mut doc.parts[r];
            p.position = [x0, row];
            p.rotation = if below { 180 } else { 0 };
            let (area, _) = footprint(p);
            board.blocked.extend(area);
            rails_used.push(r);
        }
        let bus = segment_cells([x0, row], [x1.max(x0), row]);
        for (i, c) in bus.iter().enumerate() {
            board.blocked.insert(*c);
            if i > 0 && i + 1 < bus.len() {
                board.crossable.set(*c, RUN_HORIZONTAL);
            }
        }
        if x1 > x0 {
            wires.push(Wire {
                points: vec![[x0, row], [x1, row]],
            });
        }
        supply_seeds.insert(net, vec![bus]);
    }

    // Route: the supplies and ground, then the signal nets, shortest first.
    let mut order: Vec<NetId> = net_rays.keys().copied().collect();
    let span = |n: &NetId| {
        let r = &net_rays[n];
        let xs = r.iter().map(|r| r[0].0);
        let ys = r.iter().map(|r| r[0].1);
        let (a, b) = (xs.clone().min().unwrap_or(0), xs.max().unwrap_or(0));
        let (c, d) = (ys.clone().min().unwrap_or(0), ys.max().unwrap_or(0));
        (!classes[*n].is_fixed(), b - a + d - c, *n)
    };
    order.sort_by_key(span);
    let mut unrouted: Vec<(NetId, Vec<Vec<Cell>>, Cell)> = Vec::new();
    if !ground_rest.is_empty() {
        if let Some(g) = nl.ground {
            let seeds = ground_seeds.clone();
            let failed = if seeds.is_empty() {
                board.route_net(&mut wires, &ground_rest[..1], &ground_rest[1..], false)
            } else {
                board.route_net(&mut wires, &seeds, &ground_rest, true)
            };
            if !failed.is_empty() {
                let anchor = seeds.first().unwrap_or(&ground_rest[0])[0];
                unrouted.push((g, failed, anchor));
            }
        }
    }
    for net in order {
        let list = net_rays[&net].clone();
        let (seeds, rest, drawn): (Vec<Vec<Cell>>, Vec<Vec<Cell>>, bool) =
            match supply_seeds.get(&net) {
                Some(s) => (s.clone(), list, true),
                None => (list[..1].to_vec(), list[1..].to_vec(), false),
            };
        let failed = board.route_net(&mut wires, &seeds, &rest, drawn);
        if !failed.is_empty() {
            unrouted.push((net, failed, seeds[0][0]));
        }
    }
    for (net, failed, anchor) in unrouted {
        let name = nl.nets[net].name.clone();
        labels.push(NetLabel {
            name: name.clone(),
            position: [anchor.0, anchor.1],
        });
        for ray in failed {
            labels.push(NetLabel {
                name: name.clone(),
                position: [ray[0].0, ray[0].1],
            });
        }
    }
    // A net shared with parts the file placed meets them by name.
    for (id, net) in nl.nets.iter().enumerate() {
        let old = net.pins.iter().find(|p| !fresh[p.part]);
        let new = net
            .pins
            .iter()
            .find(|p| fresh[p.part] && !rays[p.part].is_empty());
        if let (Some(old), Some(new)) = (old, new) {
            if Some(id) == nl.ground {
                continue;
            }
            let k = doc.parts[new.part]
                .kind
                .pin_names()
                .iter()
                .position(|n| *n == new.pin)
                .unwrap_or(0);
            let at = rays[new.part][k][0];
            let _ = &anchors;
            for position in [old.position, [at.0, at.1]] {
                labels.push(NetLabel {
                    name: net.name.clone(),
                    position,
                });
            }
        }
    }
    doc.wires.extend(wires);
    doc.labels.extend(labels);
    // Ground symbols nobody needed go; a part the plan missed is parked.
    let unused: Vec<usize> = spare_grounds;
    let mut keep = vec![true; doc.parts.len()];
    for i in unused {
        keep[i] = false;
    }
    let mut x = bounds.0 + 2;
    for (i, p) in doc.parts.iter_mut().enumerate() {
        if keep[i] && !p.is_placed() {
            p.position = [x, bounds.3 + 4];
            x += 6;
        }
    }
    let mut k = 0;
    doc.parts.retain(|_| {
        k += 1;
        keep[k - 1]
    });
    let _ = rails_used;
    doc
}
