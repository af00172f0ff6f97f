//! Pure edit operations on a [`Document`]: place, move (wires stay attached),
//! rotate, mirror, delete, copy/paste, wires, labels, values. Plain Rust, no
//! GUI types, so every operation is unit-tested without a window.

use crate::document::{Document, GridPoint, NetLabel, Part, PartKind, Wire};
use crate::symbols;
use std::collections::{BTreeMap, BTreeSet};

/// One thing on the sheet that can be selected.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Item {
    Part(usize),
    Wire(usize),
    Label(usize),
}

/// The designator prefix given to new parts of a kind.
pub fn prefix(kind: PartKind) -> &'static str {
    kind.info().prefix
}

/// The first free designator for a kind: R1, R2, …; rails VCC, VCC2, …;
/// grounds carry none.
pub fn next_designator(doc: &Document, kind: PartKind) -> String {
    let p = prefix(kind);
    if p.is_empty() {
        return String::new();
    }
    let taken: BTreeSet<&str> = doc.parts.iter().map(|q| q.designator.as_str()).collect();
    if kind == PartKind::Rail && !taken.contains(p) {
        return p.to_string();
    }
    let start = if kind == PartKind::Rail { 2 } else { 1 };
    (start..)
        .map(|n| format!("{p}{n}"))
        .find(|d| !taken.contains(d.as_str()))
        .expect("an unbounded range always has a free name")
}

/// A fresh part id (`p<n>`, one above the highest in use).
pub fn next_id(doc: &Document) -> String {
    let max = doc
        .parts
        .iter()
        .filter_map(|p| p.id.strip_prefix('p').and_then(|n| n.parse::<u64>().ok()))
        .max()
        .unwrap_or(0);
    format!("p{}", max + 1)
}

/// The values a newly placed part starts with.
pub fn default_part(kind: PartKind) -> Part {
    let info = kind.info();
    let mut parameters = BTreeMap::new();
    if let Some((key, _)) = info.value {
        parameters.insert(key.into(), info.new_value);
    }
    for (key, v) in info.new_extras {
        parameters.insert((*key).into(), *v);
    }
    let preset = info.new_preset.map(str::to_string);
    Part {
        id: String::new(),
        connect: Default::default(),
        designator: String::new(),
        kind,
        symbol: String::new(),
        position: [0, 0],
        rotation: 0,
        mirror: false,
        preset,
        parameters,
    }
}

/// Place a new part; returns its index.
pub fn place(
    doc: &mut Document,
    kind: PartKind,
    at: GridPoint,
    rotation: u16,
    mirror: bool,
) -> usize {
    let mut part = default_part(kind);
    part.id = next_id(doc);
    part.designator = next_designator(doc, kind);
    part.position = at;
    part.rotation = rotation % 360;
    part.mirror = mirror;
    doc.parts.push(part);
    doc.parts.len() - 1
}

/// Sheet positions of every pin of a part, in `pin_names` order.
pub fn pin_positions(part: &Part) -> Vec<GridPoint> {
    let lib = symbols::library();
    let symbol = lib.get(part.symbol_name());
    part.kind
        .pin_names()
        .iter()
        .map(|name| {
            symbol
                .and_then(|s| s.pin(name))
                .map(|p| symbols::pin_position(p, part.position, part.rotation, part.mirror))
                .unwrap_or(part.position)
        })
        .collect()
}

/// Move wire end points that sat on `old` pin positions to the matching `new`
/// ones, keeping every wire orthogonal (a bend is added where needed).
fn reattach(doc: &mut Document, moves: &[(GridPoint, GridPoint)], skip: &BTreeSet<usize>) {
    if moves.is_empty() {
        return;
    }
    for (wi, wire) in doc.wires.iter_mut().enumerate() {
        if skip.contains(&wi) || wire.points.len() < 2 {
            continue;
        }
        let n = wire.points.len();
        for end in [0, n - 1] {
            let p = wire.points[end];
            if let Some(&(_, to)) = moves.iter().find(|(from, _)| *from == p) {
                let inner = if end == 0 { 1 } else { n - 2 };
                let q = wire.points[inner];
                let was_horizontal = q[1] == p[1] && q[0] != p[0];
                wire.points[end] = to;
                // Keep the neighbouring segment's direction by sliding the neighbour.
                if wire.points.len() > 2 && inner != 0 && inner != n - 1 {
                    if was_horizontal {
                        wire.points[inner][1] = to[1];
                    } else {
                        wire.points[inner][0] = to[0];
                    }
                }
            }
        }
        wire.points = orthogonalise(&wire.points);
    }
    doc.wires.retain(|w| w.points.len() >= 2);
}

/// Insert a bend into any diagonal segment and drop repeated or collinear points.
pub fn orthogonalise(points: &[GridPoint]) -> Vec<GridPoint> {
    let mut out: Vec<GridPoint> = Vec::with_capacity(points.len() + 2);
    for &p in points {
        if let Some(&last) = out.last() {
            if last == p {
                continue;
            }
            if last[0] != p[0] && last[1] != p[1] {
                out.push([p[0], last[1]]);
            }
        }
        out.push(p);
    }
    // Drop middle points on a straight run.
    let mut i = 1;
    while i + 1 < out.len() {
        let (a, b, c) = (out[i - 1], out[i], out[i + 1]);
        let straight = (a[0] == b[0] && b[0] == c[0]) || (a[1] == b[1] && b[1] == c[1]);
        let doubles_back = straight
            && ((b[0] - a[0]).signum() != (c[0] - b[0]).signum()
                || (b[1] - a[1]).signum() != (c[1] - b[1]).signum());
        if straight && !doubles_back {
            out.remove(i);
        } else {
            i += 1;
        }
    }
    if out.len() == 1 {
        out.clear();
    }
    out
}

/// Move the given items by `(dx, dy)` grid steps. Wires attached to a moved
/// part's pins keep their end points on the pins.
pub fn move_items(doc: &mut Document, items: &BTreeSet<Item>, dx: i32, dy: i32) {
    if dx == 0 && dy == 0 {
        return;
    }
    let moved_wires: BTreeSet<usize> = items
        .iter()
        .filter_map(|i| match i {
            Item::Wire(w) => Some(*w),
            _ => None,
        })
        .collect();
    let mut moves = Vec::new();
    for item in items {
        match *item {
            Item::Part(i) if i < doc.parts.len() => {
                let before = pin_positions(&doc.parts[i]);
                doc.parts[i].position[0] += dx;
                doc.parts[i].position[1] += dy;
                let after = pin_positions(&doc.parts[i]);
                moves.extend(before.into_iter().zip(after));
            }
            Item::Label(i) if i < doc.labels.len() => {
                doc.labels[i].position[0] += dx;
                doc.labels[i].position[1] += dy;
            }
            _ => {}
        }
    }
    for &w in &moved_wires {
        if let Some(wire) = doc.wires.get_mut(w) {
            for p in &mut wire.points {
                p[0] += dx;
                p[1] += dy;
            }
        }
    }
    reattach(doc, &moves, &moved_wires);
}

/// Turn a part a quarter clockwise (`mirror == false`) or flip it left–right;
/// attached wires follow its pins.
pub fn turn(doc: &mut Document, part: usize, mirror: bool) {
    let Some(p) = doc.parts.get_mut(part) else {
        return;
    };
    let before = pin_positions(p);
    if mirror {
        p.mirror = !p.mirror;
    } else {
        p.rotation = (p.rotation + 90) % 360;
    }
    let after = pin_positions(&doc.parts[part]);
    let moves: Vec<_> = before.into_iter().zip(after).collect();
    reattach(doc, &moves, &BTreeSet::new());
}

/// Delete items. A deleted signal source or load is unmarked.
pub fn delete(doc: &mut Document, items: &BTreeSet<Item>) {
    let mut parts: Vec<usize> = Vec::new();
    let mut wires: Vec<usize> = Vec::new();
    let mut labels: Vec<usize> = Vec::new();
    for item in items {
        match *item {
            Item::Part(i) => parts.push(i),
            Item::Wire(i) => wires.push(i),
            Item::Label(i) => labels.push(i),
        }
    }
    for &i in parts.iter().rev() {
        if i < doc.parts.len() {
            let d = doc.parts.remove(i).designator;
            if doc.signal.source.as_deref() == Some(d.as_str()) {
                doc.signal.source = None;
            }
            if doc.signal.load.as_deref() == Some(d.as_str()) {
                doc.signal.load = None;
            }
            doc.stages.retain(|s| s.transistor != d);
        }
    }
    for &i in wires.iter().rev() {
        if i < doc.wires.len() {
            doc.wires.remove(i);
        }
    }
    for &i in labels.iter().rev() {
        if i < doc.labels.len() {
            doc.labels.remove(i);
        }
    }
}

/// What copy puts aside: items relative to their top-left grid point.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Clip {
    pub parts: Vec<Part>,
    pub wires: Vec<Wire>,
    pub labels: Vec<NetLabel>,
}

impl Clip {
    pub fn is_empty(&self) -> bool {
        self.parts.is_empty() && self.wires.is_empty() && self.labels.is_empty()
    }
}

/// Copy items, positions made relative to the top-left of the selection.
pub fn copy(doc: &Document, items: &BTreeSet<Item>) -> Clip {
    let mut clip = Clip::default();
    for item in items {
        match *item {
            Item::Part(i) => clip.parts.extend(doc.parts.get(i).cloned()),
            Item::Wire(i) => clip.wires.extend(doc.wires.get(i).cloned()),
            Item::Label(i) => clip.labels.extend(doc.labels.get(i).cloned()),
        }
    }
    let points = clip
        .parts
        .iter()
        .map(|p| p.position)
        .chain(clip.wires.iter().flat_map(|w| w.points.iter().copied()))
        .chain(clip.labels.iter().map(|l| l.position));
    let (mut mx, mut my) = (i32::MAX, i32::MAX);
    for p in points {
        mx = mx.min(p[0]);
        my = my.min(p[1]);
    }
    if mx == i32::MAX {
        return clip;
    }
    for p in &mut clip.parts {
        p.position = [p.position[0] - mx, p.position[1] - my];
    }
    for w in &mut clip.wires {
        for p in &mut w.points {
            *p = [p[0] - mx, p[1] - my];
        }
    }
    for l in &mut clip.labels {
        l.position = [l.position[0] - mx, l.position[1] - my];
    }
    clip
}

/// Paste a clip with its top-left at `at`; parts get fresh ids and
/// designators. Returns the pasted items (to select them).
pub fn paste(doc: &mut Document, clip: &Clip, at: GridPoint) -> BTreeSet<Item> {
    let mut out = BTreeSet::new();
    for p in &clip.parts {
        let mut part = p.clone();
        part.id = next_id(doc);
        part.designator = next_designator(doc, part.kind);
        part.position = [p.position[0] + at[0], p.position[1] + at[1]];
        doc.parts.push(part);
        out.insert(Item::Part(doc.parts.len() - 1));
    }
    for w in &clip.wires {
        doc.wires.push(Wire {
            points: w
                .points
                .iter()
                .map(|p| [p[0] + at[0], p[1] + at[1]])
                .collect(),
        });
        out.insert(Item::Wire(doc.wires.len() - 1));
    }
    for l in &clip.labels {
        doc.labels.push(NetLabel {
            name: l.name.clone(),
            position: [l.position[0] + at[0], l.position[1] + at[1]],
        });
        out.insert(Item::Label(doc.labels.len() - 1));
    }
    out
}

/// The orthogonal route of a wire being drawn from `from` to `to`, with one
/// bend; `horizontal_first` picks which leg comes first.
pub fn route(from: GridPoint, to: GridPoint, horizontal_first: bool) -> Vec<GridPoint> {
    let bend = if horizontal_first {
        [to[0], from[1]]
    } else {
        [from[0], to[1]]
    };
    orthogonalise(&[from, bend, to])
}

/// Add a wire along `points` (made orthogonal). Returns its index, or `None`
/// when it has no length.
pub fn add_wire(doc: &mut Document, points: &[GridPoint]) -> Option<usize> {
    let points = orthogonalise(points);
    if points.len() < 2 {
        return None;
    }
    doc.wires.push(Wire { points });
    Some(doc.wires.len() - 1)
}

/// Place a net label.
pub fn add_label(doc: &mut Document, name: &str, at: GridPoint) -> Result<usize, String> {
    let name = name.trim();
    if name.is_empty() {
        return Err("a net label needs a name, e.g. vout".into());
    }
    if name.chars().any(|c| c.is_whitespace() || c == '#') {
        return Err(format!("\"{name}\": a net name has no spaces and no '#'"));
    }
    doc.labels.push(NetLabel {
        name: name.to_string(),
        position: at,
    });
    Ok(doc.labels.len() - 1)
}

/// Rename a part. Designators are unique; only grounds may go without one.
pub fn set_designator(doc: &mut Document, part: usize, text: &str) -> Result<(), String> {
    let new = text.trim();
    let Some(p) = doc.parts.get(part) else {
        return Err("that part is no longer on the sheet".into());
    };
    if new.is_empty() && p.kind != PartKind::Ground {
        return Err(format!("{} needs a designator, e.g. R7", p.label()));
    }
    if new.chars().any(|c| c.is_whitespace() || c == '.') {
        return Err(format!("\"{new}\": a designator has no spaces and no '.'"));
    }
    if doc
        .parts
        .iter()
        .enumerate()
        .any(|(i, q)| i != part && !new.is_empty() && q.designator == new)
    {
        return Err(format!(
            "{new} is already used by another part; pick another name"
        ));
    }
    let old = p.designator.clone();
    doc.parts[part].designator = new.to_string();
    for slot in [&mut doc.signal.source, &mut doc.signal.load] {
        if slot.as_deref() == Some(old.as_str()) && !old.is_empty() {
            *slot = Some(new.to_string());
        }
    }
    for s in &mut doc.stages {
        if s.transistor == old {
            s.transistor = new.to_string();
        }
    }
    Ok(())
}

/// Set a parameter from typed text. Invalid text is refused with a message
/// and the document is left unchanged.
/// Fit transistor `part` to a datasheet line as `biasline fit` takes it
/// (`--idss 6m --vgs-off -2`); the keys written, or why not.
pub fn fit_to_datasheet(
    doc: &mut Document,
    part: usize,
    line: &str,
) -> Result<std::collections::BTreeMap<String, f64>, String> {
    use clap::Parser;
    #[derive(Debug, Parser)]
    #[command(name = "datasheet line", no_binary_name = true)]
    struct Line {
        #[command(flatten)]
        fit: crate::analysis::fit_line::FitLine,
    }
    let words: Vec<&str> = line.split_whitespace().collect();
    if words.is_empty() {
        return Err("type the datasheet's figures, e.g. --idss 6m --vgs-off -2".into());
    }
    let parsed = Line::try_parse_from(words).map_err(|e| {
        e.to_string()
            .lines()
            .next()
            .unwrap_or("cannot read the datasheet line")
            .trim_start_matches("error: ")
            .to_string()
    })?;
    let p = doc.parts.get_mut(part).ok_or("no such part")?;
    crate::analysis::fit_line::apply(p, &parsed.fit)
}

/// What a datasheet line for `kind` looks like (the inspector's hint).
pub fn datasheet_example(kind: PartKind) -> Option<&'static str> {
    match kind {
        PartKind::Npn | PartKind::Pnp => {
            Some("--vbe 0.65 --vbe-at 1m --hfe 200 --hfe-at 2m --early 100")
        }
        PartKind::NJfet => Some("--idss 6m --vgs-off -2 --vds 10"),
        PartKind::PJfet => Some("--idss 8m --vgs-off 2.5 --vds 10"),
        PartKind::NMosfet => Some("--vgs-th 2.1 --vgs-th-at 1m --id-on 0.5 --id-on-at 10"),
        PartKind::PMosfet => Some("--vgs-th -2 --vgs-th-at 1m --id-on 0.3 --id-on-at -10"),
        _ => None,
    }
}

pub fn set_parameter(
    doc: &mut Document,
    part: usize,
    key: &str,
    text: &str,
) -> Result<f64, String> {
    let Some(p) = doc.parts.get(part) else {
        return Err("that part is no longer on the sheet".into());
    };
    let label = p.label();
    let v = super::value::parse(text, super::value::unit_of(key))
        .map_err(|e| format!("{label} {}: {e}", key.replace('_', " ")))?;
    super::value::validate(key, v).map_err(|e| format!("{label}: {e}"))?;
    doc.parts[part].parameters.insert(key.to_string(), v);
    Ok(v)
}

/// Mark a part as the signal source (`source == true`) or the load, or
/// clear the mark when it already holds it.
pub fn toggle_signal_mark(doc: &mut Document, part: usize, source: bool) -> Result<(), String> {
    let Some(p) = doc.parts.get(part) else {
        return Err("that part is no longer on the sheet".into());
    };
    if p.designator.is_empty() {
        return Err("give the part a designator first".into());
    }
    if source && p.kind != PartKind::SignalSource {
        return Err(format!(
            "{} is not a signal source; place one from the shelf",
            p.label()
        ));
    }
    let d = p.designator.clone();
    let slot = if source {
        &mut doc.signal.source
    } else {
        &mut doc.signal.load
    };
    if slot.as_deref() == Some(d.as_str()) {
        *slot = None;
    } else {
        *slot = Some(d);
    }
    Ok(())
}

#[cfg(test)]
#[path = "edit_tests.rs"]
mod tests;

/// Place a designed stage (`biasline design`'s document) on the sheet: on an
/// empty sheet as it is (designators, signal path and spread limits kept);
/// otherwise pasted six grid steps to the right of everything, with fresh
/// designators, net labels renamed where the sheet already uses the name
/// (so the new stage joins no existing net), and the signal path taken only
/// when the sheet has none. One edit: the caller records it in the history.
pub fn place_design(doc: &mut Document, design: &Document) -> BTreeSet<Item> {
    let all = |d: &Document| -> BTreeSet<Item> {
        (0..d.parts.len())
            .map(Item::Part)
            .chain((0..d.wires.len()).map(Item::Wire))
            .chain((0..d.labels.len()).map(Item::Label))
            .collect()
    };
    if doc.parts.is_empty() && doc.wires.is_empty() && doc.labels.is_empty() {
        doc.parts = design.parts.clone();
        doc.wires = design.wires.clone();
        doc.labels = design.labels.clone();
        doc.signal = design.signal.clone();
        doc.spread.limits = design.spread.limits.clone();
        return all(doc);
    }
    let right = doc
        .parts
        .iter()
        .map(|p| p.position[0])
        .chain(doc.wires.iter().flat_map(|w| w.points.iter().map(|p| p[0])))
        .chain(doc.labels.iter().map(|l| l.position[0]))
        .max()
        .unwrap_or(0);
    let top = doc.parts.iter().map(|p| p.position[1]).min().unwrap_or(0);
    let mut clip = copy(design, &all(design));
    for l in &mut clip.labels {
        let mut name = l.name.clone();
        let mut k = 2;
        while doc.labels.iter().any(|x| x.name == name) {
            name = format!("{}_{k}", l.name);
            k += 1;
        }
        l.name = name;
    }
    let first_new = doc.parts.len();
    let placed = paste(doc, &clip, [right + 6, top]);
    let renamed = |old: &Option<String>| {
        let old = old.as_deref()?;
        let k = clip.parts.iter().position(|p| p.designator == old)?;
        Some(doc.parts[first_new + k].designator.clone())
    };
    if doc.signal.source.is_none() && doc.signal.load.is_none() {
        doc.signal.source = renamed(&design.signal.source);
        doc.signal.load = renamed(&design.signal.load);
    }
    placed
}
