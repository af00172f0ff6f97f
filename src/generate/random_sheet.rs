//! Random valid sheets: mixed parts in a coarse grid of cells, nets chosen so
//! the rules check finds no errors, wires found by a maze router that keeps
//! nets apart (a net label joins a pin it cannot reach).

use super::part;
use crate::document::{Document, NetLabel, PartKind, Wire};
use crate::layout::route::{
    corners, footprint, route, Cell, CellSet, Scratch, RUN_HORIZONTAL, RUN_VERTICAL,
};
use std::collections::HashMap;

/// A small deterministic generator (SplitMix64), so a seed always gives the same sheet.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }
    fn chance(&mut self, percent: u64) -> bool {
        self.next() % 100 < percent
    }
}

/// Union–find over net indices that can grow.
#[derive(Clone, Default)]
struct Sets(Vec<usize>);

impl Sets {
    fn push(&mut self) {
        let n = self.0.len();
        self.0.push(n);
    }
    fn find(&mut self, mut a: usize) -> usize {
        while self.0[a] != a {
            self.0[a] = self.0[self.0[a]];
            a = self.0[a];
        }
        a
    }
    fn union(&mut self, a: usize, b: usize) {
        let (a, b) = (self.find(a), self.find(b));
        self.0[a] = b;
    }
}

/// The electrical plan before anything is placed.
struct Plan {
    /// Kind of each part and the net of each of its pins.
    parts: Vec<(PartKind, Vec<usize>)>,
    net_count: usize,
    /// Voltage-fixing branches (sources, inductors, rails to ground): no loops allowed.
    voltage: Sets,
    /// Nets joined by DC-conducting parts.
    dc: Sets,
    pins_on: Vec<usize>,
}

const GROUND: usize = 0;
/// Mixed into the seed so seed 0 does not start the generator at zero.
const SEED_MIX: u64 = 0x5eed_0fb1_a511_e5ed;

impl Plan {
    fn new() -> Self {
        let mut p = Plan {
            parts: Vec::new(),
            net_count: 0,
            voltage: Sets::default(),
            dc: Sets::default(),
            pins_on: Vec::new(),
        };
        p.new_net();
        p
    }
    fn new_net(&mut self) -> usize {
        self.voltage.push();
        self.dc.push();
        self.pins_on.push(0);
        self.net_count += 1;
        self.net_count - 1
    }
    /// Nets that still need a resistor to ground: fewer than two pins, or no DC path.
    fn pending(&self) -> usize {
        let mut dc = self.dc.clone();
        (1..self.net_count)
            .filter(|&n| self.pins_on[n] < 2 || dc.find(n) != dc.find(GROUND))
            .count()
    }
    /// Would a part of `kind` on `nets` keep the check clean (no source loop, no short)?
    fn allowed(&self, kind: PartKind, nets: &[usize]) -> bool {
        let mut v = self.voltage.clone();
        for (i, a) in nets.iter().enumerate() {
            if nets[..i].contains(a) {
                return false;
            }
        }
        match kind {
            PartKind::VoltageSource | PartKind::SignalSource | PartKind::Inductor => {
                v.find(nets[0]) != v.find(nets[1])
            }
            PartKind::Rail => nets[0] != GROUND && v.find(nets[0]) != v.find(GROUND),
            _ => true,
        }
    }
    fn add(&mut self, kind: PartKind, nets: Vec<usize>) {
        match kind {
            PartKind::VoltageSource | PartKind::SignalSource | PartKind::Inductor => {
                self.voltage.union(nets[0], nets[1])
            }
            PartKind::Rail => self.voltage.union(nets[0], GROUND),
            _ => {}
        }
        match kind {
            PartKind::Capacitor | PartKind::PolarisedCapacitor | PartKind::CurrentSource => {}
            PartKind::Rail => self.dc.union(nets[0], GROUND),
            _ => {
                for w in nets.windows(2) {
                    self.dc.union(w[0], w[1]);
                }
            }
        }
        for n in &nets {
            self.pins_on[*n] += 1;
        }
        self.parts.push((kind, nets));
    }
}

const KINDS: [PartKind; 11] = [
    PartKind::Resistor,
    PartKind::Resistor,
    PartKind::Capacitor,
    PartKind::PolarisedCapacitor,
    PartKind::Inductor,
    PartKind::VoltageSource,
    PartKind::SignalSource,
    PartKind::CurrentSource,
    PartKind::Rail,
    PartKind::Npn,
    PartKind::Pnp,
];

fn plan(rng: &mut Rng, target: usize, grounds: usize) -> Plan {
    let mut plan = Plan::new();
    let total = |p: &Plan, extra: usize| p.parts.len() + extra + p.pending() + grounds;
    let mut attempts = 0;
    while total(&plan, 0) < target && attempts < 10_000 {
        attempts += 1;
        let kind = if rng.chance(10) {
            PartKind::Diode
        } else {
            KINDS[rng.below(KINDS.len())]
        };
        let pins = kind.pin_names().len();
        let fresh_allowed = total(&plan, 1 + pins) <= target;
        let mut nets = Vec::new();
        for _ in 0..pins {
            let n = if fresh_allowed && rng.chance(35) {
                usize::MAX
            } else if rng.chance(30) {
                GROUND
            } else {
                rng.below(plan.net_count)
            };
            nets.push(n);
        }
        // Resolve fresh nets only once the part is accepted.
        let mut trial = Plan {
            parts: Vec::new(),
            net_count: plan.net_count,
            voltage: plan.voltage.clone(),
            dc: plan.dc.clone(),
            pins_on: plan.pins_on.clone(),
        };
        for n in nets.iter_mut() {
            if *n == usize::MAX {
                *n = trial.new_net();
            }
        }
        if !trial.allowed(kind, &nets) {
            continue;
        }
        trial.add(kind, nets.clone());
        if trial.parts.len() + plan.parts.len() + trial.pending() + grounds > target {
            continue;
        }
        for _ in plan.net_count..trial.net_count {
            plan.new_net();
        }
        plan.add(kind, nets);
    }
    // Fix-ups: a resistor to ground for every net that is short of pins or of a DC path.
    // Decided all at once, so the count is the one `pending` promised.
    let mut dc = plan.dc.clone();
    let needy: Vec<usize> = (1..plan.net_count)
        .filter(|&n| plan.pins_on[n] < 2 || dc.find(n) != dc.find(GROUND))
        .collect();
    for n in needy {
        plan.add(PartKind::Resistor, vec![n, GROUND]);
    }
    plan
}

fn values(rng: &mut Rng, kind: PartKind) -> Vec<(&'static str, f64)> {
    let decade = |rng: &mut Rng, lo: i32, hi: i32| {
        let e = lo + rng.below((hi - lo + 1) as usize) as i32;
        // Written as text and parsed, so the value is the nearest double to "4.7e-5".
        let m = ["1.0", "2.2", "4.7"][rng.below(3)];
        format!("{m}e{e}").parse::<f64>().expect("a number")
    };
    match kind {
        PartKind::Resistor => vec![("resistance", decade(rng, 1, 5))],
        PartKind::Capacitor | PartKind::PolarisedCapacitor => {
            vec![("capacitance", decade(rng, -11, -5))]
        }
        PartKind::Inductor => vec![("inductance", decade(rng, -6, -2))],
        PartKind::VoltageSource => vec![("voltage", 1.0 + rng.below(15) as f64)],
        PartKind::Rail => vec![("voltage", 3.0 + rng.below(13) as f64)],
        PartKind::SignalSource => vec![("amplitude", decade(rng, -3, -1)), ("frequency", 1e3)],
        PartKind::CurrentSource => vec![("current", decade(rng, -6, -3))],
        _ => vec![],
    }
}

/// A random valid sheet of 10 to 60 parts (`parts` is clamped to that range
/// and met exactly): mixed kinds on distinct cells of a ten-step grid, each
/// with a random rotation and mirror, so no two drawings overlap. Nets are
/// planned so the rules check finds no errors (no source loops, every net
/// has two pins and a DC path to ground), then drawn as orthogonal wires
/// that never touch another net; a pin the router cannot reach joins its net
/// through a pair of net labels. The same seed always gives the same sheet.
pub fn random_sheet(seed: u64, parts: usize) -> Document {
    let target = parts.clamp(10, 60);
    let mut rng = Rng(seed ^ SEED_MIX);
    let grounds = 1 + target / 15;
    let plan = plan(&mut rng, target, grounds);

    let mut doc = Document::new(&format!("Random sheet {seed}"));
    doc.notes = format!(
        "Generated by biasline::generate::random_sheet({seed}, {parts}) for scene tests; \
         the values are random, not a design."
    );
    let count = plan.parts.len() + grounds;
    let cols = ((2 * count) as f64).sqrt().ceil() as i32 + 1;
    let rows = (2 * count as i32 + cols - 1) / cols;
    let mut cells: Vec<(i32, i32)> = (0..rows)
        .flat_map(|r| (0..cols).map(move |c| (c, r)))
        .collect();
    for i in (1..cells.len()).rev() {
        let j = rng.below(i + 1);
        cells.swap(i, j);
    }
    let mut prefix_count: HashMap<&str, usize> = HashMap::new();
    // Each entry: the part and the nets of its pins.
    let mut placed: Vec<Vec<usize>> = Vec::new();
    let all = plan
        .parts
        .iter()
        .cloned()
        .chain((0..grounds).map(|_| (PartKind::Ground, vec![GROUND])));
    for (i, (kind, nets)) in all.enumerate() {
        let (cx, cy) = cells[i];
        let position = [10 * cx + 5, 10 * cy + 5];
        // The descriptor's prefix, but every source is a V and every rail a
        // VR here (a random sheet has several of each).
        let prefix = match kind {
            PartKind::SignalSource => "V",
            PartKind::Rail => "VR",
            k => k.info().prefix,
        };
        let designator = if prefix.is_empty() {
            String::new()
        } else {
            let n = prefix_count.entry(prefix).or_insert(0);
            *n += 1;
            format!("{prefix}{n}")
        };
        let rotation = [0, 90, 180, 270][rng.below(4)];
        let mirror = rng.chance(30);
        let v = values(&mut rng, kind);
        let p = part(&doc, &designator, kind, position, rotation, mirror, &v);
        doc.parts.push(p);
        placed.push(nets);
    }

    // Reserve drawings and pin exits.
    let bounds = (0, 0, 10 * cols, 10 * rows);
    let mut blocked = CellSet::new(bounds);
    let mut terminals: Vec<Vec<Vec<Cell>>> = vec![Vec::new(); plan.net_count];
    let mut ground_pins: Vec<Vec<Cell>> = Vec::new();
    for (p, nets) in doc.parts.iter().zip(&placed) {
        let (area, rays) = footprint(p);
        blocked.extend(area);
        for (ray, net) in rays.into_iter().zip(nets) {
            blocked.extend(ray.iter().copied());
            if p.kind == PartKind::Ground {
                ground_pins.push(ray);
            } else {
                terminals[*net].push(ray);
            }
        }
    }
    let mut crossable = CellSet::new(bounds);
    let mut scratch = Scratch::new(bounds);
    let mut crossed = CellSet::new(bounds);
    for (net, list) in terminals.iter().enumerate() {
        // Seed rays belong to the net before any wire is drawn: the ground
        // symbols' pins, or the net's first pin. A seed ray is drawn only as
        // far as some route joins it.
        let seeds: Vec<Vec<Cell>> = if net == GROUND {
            ground_pins.clone()
        } else {
            list.first().into_iter().cloned().collect()
        };
        let rest: &[Vec<Cell>] = if net == GROUND || list.is_empty() {
            list
        } else {
            &list[1..]
        };
        if seeds.is_empty() {
            continue;
        }
        let mut tree = CellSet::new(bounds);
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
        let mut drawn = vec![0usize; seeds.len()];
        let anchor = seeds[0][0];
        let mut labelled = false;
        for ray in rest {
            let end = *ray.last().expect("a ray holds its pin");
            match route(end, &tree, tree_box, &blocked, &crossable, &mut scratch) {
                Some(path) => {
                    let join = *path.last().expect("a path has an end");
                    if let Some(&(s, k)) = on_seed.get(&join) {
                        if k + 1 > drawn[s].max(1) {
                            let from = drawn[s].saturating_sub(1);
                            doc.wires.push(Wire {
                                points: corners(&seeds[s][from..=k]),
                            });
                            drawn[s] = k + 1;
                        }
                    }
                    // Cells where this path crosses another wire are closed
                    // to everyone; the rest of its straight runs may be crossed.
                    for (i, c) in path.iter().enumerate() {
                        if i == 0 || i + 1 == path.len() {
                            continue;
                        }
                        if crossable.contains(c) {
                            crossable.set(*c, 0);
                            crossed.insert(*c);
                            continue;
                        }
                        let (a, b) = (path[i - 1], path[i + 1]);
                        if a.1 == c.1 && b.1 == c.1 {
                            crossable.set(*c, RUN_HORIZONTAL);
                        } else if a.0 == c.0 && b.0 == c.0 {
                            crossable.set(*c, RUN_VERTICAL);
                        }
                    }
                    let mut cells: Vec<Cell> = ray.clone();
                    cells.extend(path.into_iter().skip(1));
                    blocked.extend(cells.iter().copied());
                    for c in cells.iter().filter(|c| !crossed.contains(c)) {
                        tree.insert(*c);
                        grow(&mut tree_box, *c);
                    }
                    doc.wires.push(Wire {
                        points: corners(&cells),
                    });
                }
                None => {
                    let name = if net == GROUND {
                        "ground".to_string()
                    } else {
                        format!("n{net}")
                    };
                    if !labelled {
                        doc.labels.push(NetLabel {
                            name: name.clone(),
                            position: [anchor.0, anchor.1],
                        });
                        labelled = true;
                    }
                    doc.labels.push(NetLabel {
                        name,
                        position: [ray[0].0, ray[0].1],
                    });
                }
            }
        }
    }
    doc
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::netlist::{self, Severity};
    use crate::symbols;
    use std::collections::HashSet;

    #[test]
    fn random_sheets_pass_the_rules_check() {
        // invariant: a generated project is a valid project, with the asked part count.
        for seed in 0..40 {
            let n = 10 + (seed as usize * 7) % 51;
            let doc = random_sheet(seed, n);
            assert_eq!(doc.parts.len(), n, "seed {seed}");
            let nl = netlist::connect(&doc);
            let errors: Vec<String> = netlist::check(&doc, &nl)
                .into_iter()
                .filter(|f| f.severity == Severity::Error)
                .map(|f| f.to_string())
                .collect();
            assert!(errors.is_empty(), "seed {seed}: {errors:#?}");
            let text = crate::document::to_json(&doc);
            assert_eq!(
                crate::document::load_str(&text).unwrap(),
                doc,
                "seed {seed}"
            );
        }
    }

    #[test]
    fn the_nets_drawn_are_the_nets_planned() {
        // invariant: routing joins exactly the planned pins: as many nets as planned, none merged.
        for seed in 0..20 {
            let target = 30;
            let mut rng = Rng(seed ^ SEED_MIX);
            let grounds = 1 + target / 15;
            let planned = plan(&mut rng, target, grounds);
            let doc = random_sheet(seed, target);
            let nl = netlist::connect(&doc);
            let used = (0..planned.net_count)
                .filter(|n| planned.pins_on[*n] > 0 || *n == GROUND)
                .count();
            assert_eq!(nl.nets.len(), used, "seed {seed}");
            // invariant: planned net ↔ drawn net is one-to-one, pin by pin.
            let mut forward: HashMap<usize, usize> = HashMap::new();
            let mut backward: HashMap<usize, usize> = HashMap::new();
            let grounds_placed = (0..grounds).map(|_| (PartKind::Ground, vec![GROUND]));
            for (i, (_, nets)) in planned
                .parts
                .iter()
                .cloned()
                .chain(grounds_placed)
                .enumerate()
            {
                for (k, planned_net) in nets.iter().enumerate() {
                    let drawn = nl.part_nets[i][k];
                    assert_eq!(
                        *forward.entry(*planned_net).or_insert(drawn),
                        drawn,
                        "seed {seed}"
                    );
                    assert_eq!(
                        *backward.entry(drawn).or_insert(*planned_net),
                        *planned_net,
                        "seed {seed}"
                    );
                }
            }
        }
    }

    #[test]
    fn drawings_do_not_overlap() {
        // invariant: no two parts' drawing areas share a cell.
        for seed in 0..20 {
            let doc = random_sheet(seed, 60);
            let mut seen: HashSet<Cell> = HashSet::new();
            for p in &doc.parts {
                let sym = symbols::library().get(p.symbol_name()).unwrap();
                let [x0, y0, x1, y1] = sym.body_bounds();
                let a = symbols::transform([x0, y0], p.position, p.rotation, p.mirror);
                let b = symbols::transform([x1, y1], p.position, p.rotation, p.mirror);
                let mut mine = HashSet::new();
                for x in a[0].min(b[0]).floor() as i32..=a[0].max(b[0]).ceil() as i32 {
                    for y in a[1].min(b[1]).floor() as i32..=a[1].max(b[1]).ceil() as i32 {
                        mine.insert((x, y));
                    }
                }
                assert!(seen.is_disjoint(&mine), "seed {seed}: {}", p.label());
                seen.extend(mine);
            }
        }
    }
}
