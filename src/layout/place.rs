//! Where each unplaced part goes: the stages left to right in signal order,
//! each transistor with its bias network around it, shunt parts hanging
//! from their net toward the rail or ground they go to, series parts lying
//! horizontal between the nets they join.

use super::classify::NetClass;
use crate::analysis::stages::Chain;
use crate::document::{Document, PartKind};
use crate::netlist::{NetId, Netlist};
use std::collections::{BTreeMap, HashMap, VecDeque};

/// The row of the transistors' centres and of the signal path.
pub(super) const ROW: i32 = 14;
/// Horizontal room one horizontal part takes in the signal path.
const LINK_STEP: i32 = 6;
/// Horizontal pitch of side-by-side vertical parts.
const PITCH: i32 = 6;

/// The placed sheet and what the wiring needs to know.
pub(super) struct Plan {
    pub doc: Document,
    /// Parts the layout placed (the rest were placed in the file).
    pub fresh: Vec<bool>,
    /// Where each signal net's drawing centres, for its labels.
    pub anchors: HashMap<NetId, [i32; 2]>,
}

#[derive(Clone, Copy, PartialEq, Eq, Debug)]
enum Role {
    Base,
    Upper,
    Lower,
    /// A net hanging in series below (above) the lower (upper) pin.
    Tail,
}

struct Cluster {
    part: usize,
    flip: bool,
    /// Nets of the base, the upper pin and the lower pin.
    nets: [NetId; 3],
}

/// A vertical part hanging from a signal net toward a fixed one.
#[derive(Clone, Copy)]
struct Shunt {
    part: usize,
    /// Index of the pin on the fixed (rail or ground) side.
    fixed_pin: usize,
    up: bool,
}

enum Item {
    Free(NetId),
    Cluster(usize),
}

fn two_pin(kind: PartKind) -> bool {
    kind.pin_names().len() == 2
}

/// Rotation of a vertical two-pin part so that pin `top` is at the top.
fn vertical(top: usize) -> u16 {
    if top == 0 {
        0
    } else {
        180
    }
}

/// Rotation of a horizontal two-pin part so that pin `left` is on the left.
fn horizontal(left: usize) -> u16 {
    if left == 0 {
        270
    } else {
        90
    }
}

pub(super) fn place(doc: &Document, nl: &Netlist, chain: &Chain, classes: &[NetClass]) -> Plan {
    let mut out = doc.clone();
    let fresh: Vec<bool> = doc.parts.iter().map(|p| !p.is_placed()).collect();
    // Beside whatever the file placed already.
    let origin_x = doc
        .parts
        .iter()
        .filter(|p| p.is_placed())
        .map(|p| p.position[0])
        .max()
        .map_or(0, |x| x + 14);

    // Transistors in signal order, then the rest in file order.
    let mut order: Vec<usize> = chain.stages.iter().map(|s| s.part).collect();
    for (i, p) in doc.parts.iter().enumerate() {
        if p.kind.is_transistor() && !order.contains(&i) {
            order.push(i);
        }
    }
    order.retain(|&i| fresh[i]);
    let clusters: Vec<Cluster> = order
        .iter()
        .map(|&t| {
            let n = &nl.part_nets[t];
            let flip = doc.parts[t].kind == PartKind::Pnp;
            let (upper, lower) = if flip { (n[2], n[0]) } else { (n[0], n[2]) };
            Cluster {
                part: t,
                flip,
                nets: [n[1], upper, lower],
            }
        })
        .collect();
    let mut owner: HashMap<NetId, (usize, Role)> = HashMap::new();
    for (ci, c) in clusters.iter().enumerate() {
        for (role, net) in [Role::Upper, Role::Lower, Role::Base].iter().zip([1, 2, 0]) {
            let net = c.nets[net];
            if classes[net] == NetClass::Signal {
                owner.entry(net).or_insert((ci, *role));
            }
        }
    }

    // Sort the two-pin parts: shunts, series links, and parts between two
    // fixed nets (batteries, supply capacitors) drawn at the far left.
    let mut shunts: BTreeMap<NetId, Vec<Shunt>> = BTreeMap::new();
    let mut links: Vec<(usize, NetId, NetId)> = Vec::new();
    let mut power: Vec<usize> = Vec::new();
    let mut lead: Vec<(usize, usize, bool)> = Vec::new();
    for (i, p) in doc.parts.iter().enumerate() {
        if !fresh[i] || !two_pin(p.kind) {
            continue;
        }
        let (a, b) = (nl.part_nets[i][0], nl.part_nets[i][1]);
        match (classes[a].is_fixed(), classes[b].is_fixed()) {
            (true, true) => power.push(i),
            (false, false) => links.push((i, a, b)),
            (fa, _) => {
                let (net, fixed_pin, fixed) = if fa { (b, 0, a) } else { (a, 1, b) };
                // The signal source stands on its own at the far left, even
                // when it drives a base directly.
                if chain.source.as_ref().is_some_and(|s| s.part == i) && owner.contains_key(&net) {
                    lead.push((i, fixed_pin, !classes[fixed].is_below()));
                    continue;
                }
                shunts.entry(net).or_default().push(Shunt {
                    part: i,
                    fixed_pin,
                    up: !classes[fixed].is_below(),
                });
            }
        }
    }

    // Emitter (or collector) networks in series, such as RE1 then RE2 ‖ CE:
    // a part from a transistor's upper or lower net to a net that only hangs
    // parts toward the same side stands in line with the pin.
    let source_net = chain.source.as_ref().map(|s| nl.part_nets[s.part][0]);
    let link_count = |n: NetId| links.iter().filter(|l| l.1 == n || l.2 == n).count();
    let load_net = chain.load.as_ref().map(|l| l.net);
    let mut tails: HashMap<NetId, (usize, NetId)> = HashMap::new();
    for (li, &(part, a, b)) in links.iter().enumerate() {
        // A resistor in series with the emitter (collector), never the
        // coupling to the load.
        if doc.parts[part].kind != PartKind::Resistor {
            continue;
        }
        for (l, m) in [(a, b), (b, a)] {
            let Some(&(ci, role)) = owner.get(&l) else {
                continue;
            };
            if !matches!(role, Role::Upper | Role::Lower)
                || a == b
                || owner.contains_key(&m)
                || Some(m) == source_net
                || Some(m) == load_net
                || tails.contains_key(&l)
                || clusters.iter().any(|c| c.nets.contains(&m))
            {
                continue;
            }
            let down = role == Role::Lower;
            let hangs_same_way = shunts
                .get(&m)
                .is_some_and(|v| !v.is_empty() && v.iter().all(|s| s.up != down));
            if link_count(m) == 1 && hangs_same_way {
                tails.insert(l, (li, m));
                owner.insert(m, (ci, Role::Tail));
                break;
            }
        }
    }

    // Rank the signal nets by their distance from the signal source.
    let mut adj: HashMap<NetId, Vec<NetId>> = HashMap::new();
    let mut join = |a: NetId, b: NetId| {
        adj.entry(a).or_default().push(b);
        adj.entry(b).or_default().push(a);
    };
    for &(_, a, b) in &links {
        join(a, b);
    }
    for c in &clusters {
        join(c.nets[0], c.nets[1]);
        join(c.nets[0], c.nets[2]);
    }
    let mut rank: HashMap<NetId, usize> = HashMap::new();
    let mut starts: Vec<NetId> = chain
        .source
        .iter()
        .map(|s| nl.part_nets[s.part][0])
        .collect();
    starts.extend(shunts.keys().copied());
    starts.extend(clusters.iter().map(|c| c.nets[0]));
    starts.extend(links.iter().map(|l| l.1));
    let mut next_rank = 0;
    for s in starts {
        if rank.contains_key(&s) || classes[s] != NetClass::Signal {
            continue;
        }
        let base = next_rank;
        let mut queue = VecDeque::from([(s, base)]);
        rank.insert(s, base);
        while let Some((n, r)) = queue.pop_front() {
            next_rank = next_rank.max(r + 1);
            for &m in adj.get(&n).into_iter().flatten() {
                if classes[m] == NetClass::Signal && !rank.contains_key(&m) {
                    rank.insert(m, r + 1);
                    queue.push_back((m, r + 1));
                }
            }
        }
    }

    let mut items: Vec<(usize, usize, Item)> = Vec::new();
    for (ci, c) in clusters.iter().enumerate() {
        let key = [0, 2, 1]
            .iter()
            .filter_map(|&k| rank.get(&c.nets[k]))
            .next()
            .copied()
            .unwrap_or(usize::MAX);
        items.push((key, 1, Item::Cluster(ci)));
    }
    for (&net, &r) in &rank {
        if !owner.contains_key(&net) {
            items.push((r, 0, Item::Free(net)));
        }
    }
    items.sort_by_key(|(r, kind, item)| {
        let tie = match item {
            Item::Free(n) => *n,
            Item::Cluster(c) => *c,
        };
        (*r, *kind, tie)
    });

    let mut anchors: HashMap<NetId, [i32; 2]> = HashMap::new();
    let mut net_item: HashMap<NetId, usize> = HashMap::new();
    let mut link_done = vec![false; links.len()];
    for (li, _) in tails.values() {
        link_done[*li] = true;
    }
    let mut feedback: Vec<usize> = Vec::new();
    let mut cursor = origin_x;
    let set = |doc: &mut Document, i: usize, at: [i32; 2], rotation: u16, mirror: bool| {
        let p = &mut doc.parts[i];
        p.position = at;
        p.rotation = rotation;
        p.mirror = mirror;
    };

    // Batteries and supply capacitors first, at the far left.
    for &i in &power {
        let (a, b) = (nl.part_nets[i][0], nl.part_nets[i][1]);
        let top = if classes[b].is_below() && !classes[a].is_below() {
            0
        } else if classes[a].is_below() {
            1
        } else {
            0
        };
        set(&mut out, i, [cursor, ROW - 4], vertical(top), false);
        cursor += PITCH + 1;
    }
    if !power.is_empty() {
        cursor += 2;
    }
    for &(i, fixed_pin, up) in &lead {
        let (y, top) = if up {
            (ROW - 4, fixed_pin)
        } else {
            (ROW + 4, 1 - fixed_pin)
        };
        set(&mut out, i, [cursor + 1, y], vertical(top), false);
        // Room for a source's longer text (amplitude and frequency).
        cursor += 2 * PITCH;
    }

    // Hang a net's shunts from the anchor at `x`, `pin_y` (the net's own
    // point) going right (`step` > 0) or left.
    let hang = |doc: &mut Document, list: &[Shunt], x: i32, step: i32, up_y: i32, down_y: i32| {
        let (mut nu, mut nd) = (0, 0);
        for s in list {
            let other = 1 - s.fixed_pin;
            if s.up {
                let at = [x + step * nu, up_y - 4];
                nu += 1;
                doc.parts[s.part].position = at;
                doc.parts[s.part].rotation = vertical(s.fixed_pin);
            } else {
                let at = [x + step * nd, down_y + 4];
                nd += 1;
                doc.parts[s.part].position = at;
                doc.parts[s.part].rotation = vertical(other);
            }
        }
        nu.max(nd)
    };

    // Clusters already drawn, and the second halves of pairs drawn with their first.
    let mut drawn: Vec<usize> = Vec::new();
    let mut paired: Vec<usize> = Vec::new();
    for (idx, (_, _, item)) in items.iter().enumerate() {
        if let Item::Cluster(cj) = item {
            if paired.contains(cj) {
                continue;
            }
        }
        let nets: Vec<NetId> = match item {
            Item::Free(n) => vec![*n],
            Item::Cluster(ci) => clusters[*ci].nets.to_vec(),
        };
        // Series parts from the item just placed lie in the path before this one.
        for (li, &(part, a, b)) in links.iter().enumerate() {
            if link_done[li] {
                continue;
            }
            let (here, there, left_pin) = if nets.contains(&b) && net_item.contains_key(&a) {
                (b, a, 0)
            } else if nets.contains(&a) && net_item.contains_key(&b) {
                (a, b, 1)
            } else {
                continue;
            };
            let _ = here;
            link_done[li] = true;
            if idx > 0 && net_item[&there] + 1 == idx && a != b {
                let y = anchors.get(&there).map_or(ROW, |p| p[1]);
                set(&mut out, part, [cursor + 3, y], horizontal(left_pin), false);
                cursor += LINK_STEP + 4;
            } else {
                feedback.push(li);
            }
        }
        match item {
            Item::Free(n) => {
                let list = shunts.get(n).cloned().unwrap_or_default();
                let x = cursor + 1;
                let used = hang(&mut out, &list, x, PITCH, ROW, ROW);
                anchors.insert(*n, [x, ROW]);
                net_item.insert(*n, idx);
                // Room for the last part's value text.
                cursor = x + PITCH * (used.max(1) - 1) + if used > 0 { 4 } else { 2 };
            }
            Item::Cluster(ci) => {
                let c = &clusters[*ci];
                let mine = |n: NetId, role: Role| owner.get(&n) == Some(&(*ci, role));
                drawn.push(*ci);
                // A differential pair: another transistor on the same lower
                // (emitter) net is drawn mirrored beside this one, the shared
                // net's parts hanging between them.
                let partner = (0..clusters.len()).find(|&j| {
                    j != *ci
                        && !drawn.contains(&j)
                        && clusters[j].nets[2] == c.nets[2]
                        && clusters[j].flip == c.flip
                        && clusters[j].nets[0] != c.nets[0]
                        && mine(c.nets[2], Role::Lower)
                });
                let base_list = if mine(c.nets[0], Role::Base) {
                    shunts.get(&c.nets[0]).cloned().unwrap_or_default()
                } else {
                    Vec::new()
                };
                let kb = base_list
                    .iter()
                    .filter(|s| s.up)
                    .count()
                    .max(base_list.iter().filter(|s| !s.up).count())
                    as i32;
                let xb = cursor + 1 + PITCH * (kb - 1).max(0);
                hang(&mut out, &base_list, xb, -PITCH, ROW, ROW);
                let xt = xb + 4;
                let (rotation, mirror) = if c.flip { (180, true) } else { (0, false) };
                set(&mut out, c.part, [xt, ROW], rotation, mirror);
                let xr = xt + 1;
                let mut width = 1;
                for (k, role) in [(1, Role::Upper), (2, Role::Lower)] {
                    let net = c.nets[k];
                    if !mine(net, role) {
                        continue;
                    }
                    let list = shunts.get(&net).cloned().unwrap_or_default();
                    // Toward its own side from the pin; the other way beside the transistor.
                    let (along, across): (Vec<Shunt>, Vec<Shunt>) = list
                        .into_iter()
                        .partition(|s| s.up == (role == Role::Upper));
                    // Two steps clear of the transistor, so a wire can pass between.
                    let pin_y = if role == Role::Upper {
                        ROW - 4
                    } else {
                        ROW + 4
                    };
                    let shared = partner.is_some() && role == Role::Lower;
                    let mut start = if shared { xr + PITCH } else { xr };
                    let mut k = 0;
                    if let Some(&(li, m)) = tails.get(&net).filter(|_| !shared) {
                        let (part, a, _) = links[li];
                        let l_pin = if a == net { 0 } else { 1 };
                        let down = role == Role::Lower;
                        let (centre, top, m_y) = if down {
                            (pin_y + 4, l_pin, pin_y + 8)
                        } else {
                            (pin_y - 4, 1 - l_pin, pin_y - 8)
                        };
                        set(&mut out, part, [xr, centre], vertical(top), false);
                        let list = shunts.get(&m).cloned().unwrap_or_default();
                        k = hang(&mut out, &list, xr, PITCH, m_y, m_y);
                        anchors.insert(m, [xr, m_y]);
                        net_item.insert(m, idx);
                        start = xr + PITCH * k;
                    }
                    let n = k + hang(&mut out, &along, start, PITCH, pin_y, pin_y);
                    width = width.max(n);
                    let _ = across;
                }
                // Shunts that go the other way from their pin stand to the right.
                let mut extra = 0;
                for (k, role) in [(1, Role::Upper), (2, Role::Lower)] {
                    let net = c.nets[k];
                    if !mine(net, role) {
                        continue;
                    }
                    let list = shunts.get(&net).cloned().unwrap_or_default();
                    let across: Vec<Shunt> = list
                        .into_iter()
                        .filter(|s| s.up != (role == Role::Upper))
                        .collect();
                    for s in across {
                        let x = xr + PITCH * (width + extra) + 1;
                        let rot = if s.up {
                            vertical(s.fixed_pin)
                        } else {
                            vertical(1 - s.fixed_pin)
                        };
                        set(&mut out, s.part, [x, ROW], rot, false);
                        extra += 1;
                    }
                }
                anchors.insert(c.nets[0], [xb, ROW]);
                // Series parts leave the upper and lower nets on the free rows
                // between the transistor and its collector and emitter parts.
                anchors.entry(c.nets[1]).or_insert([xr, ROW - 4]);
                anchors.entry(c.nets[2]).or_insert([xr, ROW + 4]);
                for n in &c.nets {
                    net_item.entry(*n).or_insert(idx);
                }
                cursor = xr + PITCH * (width + extra - 1) + 4;
                if let Some(j) = partner {
                    paired.push(j);
                    drawn.push(j);
                    let p = &clusters[j];
                    let theirs = |n: NetId, role: Role| owner.get(&n) == Some(&(j, role));
                    anchors.insert(c.nets[2], [xr + PITCH, ROW + 4]);
                    let xl = xr + 2 * PITCH;
                    let xt = xl + 1;
                    let (rotation, mirror) = if p.flip { (180, false) } else { (0, true) };
                    set(&mut out, p.part, [xt, ROW], rotation, mirror);
                    // Its base network to the right of its base, then any part
                    // hanging the other way from its upper net.
                    let xb = xt + 4;
                    let mut kb = 1;
                    if theirs(p.nets[0], Role::Base) {
                        let list = shunts.get(&p.nets[0]).cloned().unwrap_or_default();
                        kb = hang(&mut out, &list, xb, PITCH, ROW, ROW).max(1);
                        anchors.insert(p.nets[0], [xb, ROW]);
                    }
                    let mut right = xb + PITCH * (kb - 1);
                    if theirs(p.nets[1], Role::Upper) {
                        let list = shunts.get(&p.nets[1]).cloned().unwrap_or_default();
                        let (along, across): (Vec<Shunt>, Vec<Shunt>) =
                            list.into_iter().partition(|s| s.up);
                        hang(&mut out, &along, xl, -PITCH, ROW - 4, ROW - 4);
                        anchors.entry(p.nets[1]).or_insert([xl, ROW - 4]);
                        for s in across {
                            right += PITCH;
                            let rot = if s.up {
                                vertical(s.fixed_pin)
                            } else {
                                vertical(1 - s.fixed_pin)
                            };
                            set(&mut out, s.part, [right, ROW], rot, false);
                        }
                    }
                    let kb = 1 + (right - xb) / PITCH;
                    for n in &p.nets {
                        net_item.entry(*n).or_insert(idx);
                    }
                    cursor = cursor.max(xb + PITCH * (kb - 1) + 4);
                }
            }
        }
        cursor += 1;
    }
    // Links whose nets were never both reached (and parallel ones) join the
    // feedback row too.
    for (li, done) in link_done.iter().enumerate() {
        if !done {
            feedback.push(li);
        }
    }
    // Feedback parts: horizontal on rows below the chain, each under the
    // span it bridges.
    let mut rows: Vec<i32> = Vec::new();
    let below = out
        .parts
        .iter()
        .enumerate()
        .filter(|(i, _)| fresh[*i])
        .filter(|(_, p)| p.is_placed())
        .map(|(_, p)| p.position[1])
        .max()
        .unwrap_or(ROW)
        .max(ROW + 6);
    for li in feedback {
        let (part, a, b) = links[li];
        let xa = anchors.get(&a).map_or(cursor, |p| p[0]);
        let xb = anchors.get(&b).map_or(cursor, |p| p[0]);
        let (lo, hi) = (xa.min(xb), xa.max(xb));
        let mid = (lo + hi) / 2;
        let left_pin = if xa <= xb { 0 } else { 1 };
        // The first row whose parts are all clear of this one.
        let mut r = 0;
        while rows.get(r).is_some_and(|&end| end >= mid - 3) {
            r += 1;
        }
        if r == rows.len() {
            rows.push(i32::MIN);
        }
        rows[r] = mid + 3;
        let y = below + 8 + 4 * r as i32;
        set(&mut out, part, [mid, y], horizontal(left_pin), false);
    }
    // Anything still unplaced (a part of a kind with no place above, such
    // as a lone transistor pin net) goes on a row at the bottom.
    let mut x = origin_x;
    let last = out
        .parts
        .iter()
        .filter(|p| p.is_placed())
        .map(|p| p.position[1])
        .max()
        .unwrap_or(ROW);
    for (i, p) in out.parts.iter_mut().enumerate() {
        if fresh[i] && !p.is_placed() && !matches!(p.kind, PartKind::Ground | PartKind::Rail) {
            p.position = [x, last + 10];
            x += 6;
        }
    }
    Plan {
        doc: out,
        fresh,
        anchors,
    }
}
