//! The maze router behind random sheets: cells a part covers, and cheapest
//! orthogonal paths that keep nets apart.

use crate::document::Part;
use crate::symbols;
use std::cmp::Reverse;
use std::collections::BinaryHeap;

pub(crate) type Cell = (i32, i32);

/// A set of cells inside the sheet's bounds, stored densely (routing asks a lot).
#[derive(Clone)]
pub(crate) struct CellSet {
    bounds: (i32, i32, i32, i32),
    width: usize,
    marks: Vec<u8>,
}

impl CellSet {
    pub(crate) fn new(bounds: (i32, i32, i32, i32)) -> Self {
        let width = (bounds.2 - bounds.0 + 1) as usize;
        let height = (bounds.3 - bounds.1 + 1) as usize;
        CellSet {
            bounds,
            width,
            marks: vec![0; width * height],
        }
    }
    fn index(&self, c: Cell) -> Option<usize> {
        let b = self.bounds;
        (c.0 >= b.0 && c.0 <= b.2 && c.1 >= b.1 && c.1 <= b.3)
            .then(|| (c.1 - b.1) as usize * self.width + (c.0 - b.0) as usize)
    }
    /// The mark of a cell (0 when absent).
    pub(crate) fn get(&self, c: Cell) -> u8 {
        self.index(c).map_or(0, |i| self.marks[i])
    }
    pub(crate) fn contains(&self, c: &Cell) -> bool {
        self.get(*c) != 0
    }
    pub(crate) fn set(&mut self, c: Cell, mark: u8) {
        if let Some(i) = self.index(c) {
            self.marks[i] = mark;
        }
    }
    pub(crate) fn insert(&mut self, c: Cell) {
        self.set(c, 1);
    }
    pub(crate) fn extend(&mut self, cells: impl IntoIterator<Item = Cell>) {
        for c in cells {
            self.insert(c);
        }
    }
}

/// Marks in the crossing map: a straight run of some wire, by direction.
pub(crate) const RUN_VERTICAL: u8 = 1;
pub(crate) const RUN_HORIZONTAL: u8 = 2;

/// Cells a placed part covers (its drawing plus a margin of one step) and its
/// pins with the cells leading straight out of that area.
pub(crate) fn footprint(p: &Part) -> (Vec<Cell>, Vec<Vec<Cell>>) {
    let sym = symbols::library()
        .get(p.symbol_name())
        .expect("generated parts use built-in symbols");
    let [x0, y0, x1, y1] = sym.body_bounds();
    let corners = [[x0, y0], [x1, y0], [x0, y1], [x1, y1]];
    let t: Vec<[f64; 2]> = corners
        .iter()
        .map(|c| symbols::transform(*c, p.position, p.rotation, p.mirror))
        .collect();
    let min_x = t.iter().map(|c| c[0]).fold(f64::INFINITY, f64::min);
    let max_x = t.iter().map(|c| c[0]).fold(f64::NEG_INFINITY, f64::max);
    let min_y = t.iter().map(|c| c[1]).fold(f64::INFINITY, f64::min);
    let max_y = t.iter().map(|c| c[1]).fold(f64::NEG_INFINITY, f64::max);
    let (ax, bx) = ((min_x - 0.5).floor() as i32, (max_x + 0.5).ceil() as i32);
    let (ay, by) = ((min_y - 0.5).floor() as i32, (max_y + 0.5).ceil() as i32);
    let mut area = Vec::new();
    for x in ax..=bx {
        for y in ay..=by {
            area.push((x, y));
        }
    }
    let inside = |c: Cell| c.0 >= ax && c.0 <= bx && c.1 >= ay && c.1 <= by;
    let centre = [(x0 + x1) / 2.0, (y0 + y1) / 2.0];
    let mut rays = Vec::new();
    for name in p.kind.pin_names() {
        let pin = sym.pin(name).expect("kind pins exist");
        let at = symbols::pin_position(pin, p.position, p.rotation, p.mirror);
        // Leave along the axis on which the pin is farthest from the drawing's centre.
        let (dx, dy) = (
            pin.position[0] as f64 - centre[0],
            pin.position[1] as f64 - centre[1],
        );
        let local = if dx.abs() > dy.abs() {
            [dx.signum(), 0.0]
        } else {
            [0.0, if dy == 0.0 { -1.0 } else { dy.signum() }]
        };
        let o = symbols::transform([0.0, 0.0], [0, 0], p.rotation, p.mirror);
        let d = symbols::transform(local, [0, 0], p.rotation, p.mirror);
        let step = ((d[0] - o[0]).round() as i32, (d[1] - o[1]).round() as i32);
        let mut ray = vec![(at[0], at[1])];
        let mut c = (at[0], at[1]);
        while inside(c) {
            c = (c.0 + step.0, c.1 + step.1);
            ray.push(c);
        }
        rays.push(ray);
    }
    (area, rays)
}

/// Buffers the router reuses from one route to the next.
pub(crate) struct Scratch {
    best: Vec<u32>,
    came: Vec<u32>,
    stamp: Vec<u32>,
    round: u32,
}

impl Scratch {
    pub(crate) fn new(bounds: (i32, i32, i32, i32)) -> Self {
        let n = ((bounds.2 - bounds.0 + 1) * (bounds.3 - bounds.1 + 1) * 4) as usize;
        Scratch {
            best: vec![u32::MAX; n],
            came: vec![u32::MAX; n],
            stamp: vec![0; n],
            round: 0,
        }
    }
}

/// Cheapest path from `start` to any cell in `goal` (whose cells all lie in
/// `goal_box`, `[min_x, min_y, max_x, max_y]`), through free cells; a bend
/// costs extra. The path may cross another net's straight wire at a right
/// angle (`crossable` marks such cells with the run's direction), going
/// straight on, so neither wire has a vertex there. A* search: the distance
/// to `goal_box` never overestimates the cost left, so the path found is a
/// cheapest one.
pub(crate) fn route(
    start: Cell,
    goal: &CellSet,
    goal_box: [i32; 4],
    blocked: &CellSet,
    crossable: &CellSet,
    scratch: &mut Scratch,
) -> Option<Vec<Cell>> {
    const DIRS: [Cell; 4] = [(1, 0), (-1, 0), (0, 1), (0, -1)];
    let bounds = blocked.bounds;
    let width = blocked.width;
    let index = |c: Cell, d: usize| {
        (((c.1 - bounds.1) as usize * width + (c.0 - bounds.0) as usize) << 2) | d
    };
    let cell_of = |k: usize| {
        let cell = k >> 2;
        (
            (cell % width) as i32 + bounds.0,
            (cell / width) as i32 + bounds.1,
        )
    };
    let h = |c: Cell| {
        let dx = (goal_box[0] - c.0).max(c.0 - goal_box[2]).max(0);
        let dy = (goal_box[1] - c.1).max(c.1 - goal_box[3]).max(0);
        (dx + dy) as u32
    };
    scratch.round += 1;
    let round = scratch.round;
    let Scratch {
        best, came, stamp, ..
    } = scratch;
    let mut get = |k: usize, best: &mut Vec<u32>, came: &mut Vec<u32>| {
        if stamp[k] != round {
            stamp[k] = round;
            best[k] = u32::MAX;
            came[k] = u32::MAX;
        }
        best[k]
    };
    let mut heap = BinaryHeap::new();
    for d in 0..4 {
        let k = index(start, d);
        get(k, best, came);
        best[k] = 0;
        heap.push(Reverse((h(start), 0u32, k)));
    }
    while let Some(Reverse((_, cost, k))) = heap.pop() {
        if get(k, best, came) < cost {
            continue;
        }
        let (c, d) = (cell_of(k), k & 3);
        if goal.contains(&c) && c != start {
            let mut path = vec![c];
            let mut k = k;
            while came[k] != u32::MAX {
                k = came[k] as usize;
                path.push(cell_of(k));
            }
            path.reverse();
            return Some(path);
        }
        let crossing_here = c != start && crossable.contains(&c) && !goal.contains(&c);
        for (nd, step) in DIRS.iter().enumerate() {
            if crossing_here && nd != d {
                continue;
            }
            let n = (c.0 + step.0, c.1 + step.1);
            if n.0 < bounds.0 || n.0 > bounds.2 || n.1 < bounds.1 || n.1 > bounds.3 {
                continue;
            }
            let mut extra = 0;
            if blocked.contains(&n) && !goal.contains(&n) {
                // Moves 0 and 1 are horizontal; cross a horizontal run only vertically.
                match crossable.get(n) {
                    RUN_HORIZONTAL if nd >= 2 => extra = 6,
                    RUN_VERTICAL if nd < 2 => extra = 6,
                    _ => continue,
                }
            }
            let nc = cost + 1 + extra + if nd == d { 0 } else { 4 };
            let nk = index(n, nd);
            if nc < get(nk, best, came) {
                best[nk] = nc;
                came[nk] = k as u32;
                heap.push(Reverse((nc + h(n), nc, nk)));
            }
        }
    }
    None
}

/// Keep only the ends and the corners of a path of neighbouring cells.
pub(crate) fn corners(path: &[Cell]) -> Vec<[i32; 2]> {
    let mut out: Vec<[i32; 2]> = Vec::new();
    for (i, c) in path.iter().enumerate() {
        if i > 0 && i + 1 < path.len() {
            let (a, b) = (path[i - 1], path[i + 1]);
            if (a.0 == c.0 && c.0 == b.0) || (a.1 == c.1 && c.1 == b.1) {
                continue;
            }
        }
        out.push([c.0, c.1]);
    }
    out
}
