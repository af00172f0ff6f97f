//! The symbol set: one JSON file per symbol in `symbols/`, built into the binary.
//!
//! Symbol coordinates are in grid units (one unit is one grid step of the
//! sheet, [`crate::document::GRID_PITCH_MM`] on paper), `y` down, origin at
//! the part's position. Pins sit on whole grid points, each on the drawing
//! (an end of a line, a corner of a polygon or the centre of a filled dot);
//! drawing primitives may use fractions of a unit. The file schema is in
//! `docs/symbols.md`. [`stroke_path`] and [`fill_path`] turn a placed symbol
//! into lyon paths; [`place_text`] puts designator and value beside it,
//! upright, clear of the drawing in every rotation.

use serde::{Deserialize, Serialize};
use std::sync::OnceLock;

mod paths;
mod text;

pub use paths::{fill_path, placed_bounds, stroke_path, transform_arc};
pub use text::{place_text, PlacedText, TextAnchor, TEXT_GAP};

/// A drawing primitive of a symbol.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum Primitive {
    /// An open polyline.
    Line { points: Vec<[f64; 2]> },
    /// A closed polygon, filled or outlined.
    Polygon {
        points: Vec<[f64; 2]>,
        #[serde(default)]
        filled: bool,
    },
    Circle {
        center: [f64; 2],
        radius: f64,
        #[serde(default)]
        filled: bool,
    },
    /// An arc, angles in degrees clockwise on screen from the +x axis.
    Arc {
        center: [f64; 2],
        radius: f64,
        start_degrees: f64,
        sweep_degrees: f64,
    },
}

/// Where a symbol wants its designator or value text, at rotation 0.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TextSlot {
    /// `designator`, `value`, or `name` (a net label's name, inside its flag).
    pub slot: String,
    pub position: [f64; 2],
    /// `start`, `middle` or `end` (horizontal anchor of the text).
    #[serde(default = "default_anchor")]
    pub anchor: String,
}

fn default_anchor() -> String {
    "start".into()
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SymbolPin {
    pub name: String,
    pub position: [i32; 2],
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Symbol {
    pub name: String,
    #[serde(default)]
    pub description: String,
    pub pins: Vec<SymbolPin>,
    pub primitives: Vec<Primitive>,
    #[serde(default)]
    pub text_slots: Vec<TextSlot>,
}

impl Symbol {
    pub fn pin(&self, name: &str) -> Option<&SymbolPin> {
        self.pins.iter().find(|p| p.name == name)
    }

    /// Bounding box of the drawing in symbol coordinates: `[min_x, min_y, max_x, max_y]`.
    pub fn body_bounds(&self) -> [f64; 4] {
        let mut b = [
            f64::INFINITY,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::NEG_INFINITY,
        ];
        let mut add = |p: [f64; 2], r: f64| {
            b[0] = b[0].min(p[0] - r);
            b[1] = b[1].min(p[1] - r);
            b[2] = b[2].max(p[0] + r);
            b[3] = b[3].max(p[1] + r);
        };
        for prim in &self.primitives {
            match prim {
                Primitive::Line { points } | Primitive::Polygon { points, .. } => {
                    points.iter().for_each(|p| add(*p, 0.0))
                }
                Primitive::Circle { center, radius, .. } => add(*center, *radius),
                Primitive::Arc {
                    center,
                    radius,
                    start_degrees,
                    sweep_degrees,
                } => arc_extremes(*center, *radius, *start_degrees, *sweep_degrees)
                    .into_iter()
                    .for_each(|p| add(p, 0.0)),
            }
        }
        if !b[0].is_finite() {
            return [0.0; 4];
        }
        b
    }
}

/// The ends of an arc and every point where it reaches furthest along ±x or ±y.
fn arc_extremes(center: [f64; 2], radius: f64, start: f64, sweep: f64) -> Vec<[f64; 2]> {
    let at = |deg: f64| {
        let a = deg.to_radians();
        [center[0] + radius * a.cos(), center[1] + radius * a.sin()]
    };
    let (lo, hi) = if sweep >= 0.0 {
        (start, start + sweep)
    } else {
        (start + sweep, start)
    };
    let mut pts = vec![at(lo), at(hi)];
    let mut k = (lo / 90.0).ceil() * 90.0;
    while k < hi {
        pts.push(at(k));
        k += 90.0;
    }
    pts
}

/// The loaded symbol set.
#[derive(Debug)]
pub struct SymbolLibrary {
    symbols: Vec<Symbol>,
}

impl SymbolLibrary {
    pub fn get(&self, name: &str) -> Option<&Symbol> {
        self.symbols.iter().find(|s| s.name == name)
    }
    pub fn names(&self) -> Vec<&str> {
        self.symbols.iter().map(|s| s.name.as_str()).collect()
    }
    pub fn iter(&self) -> impl Iterator<Item = &Symbol> {
        self.symbols.iter()
    }
}

/// The symbols that belong to no part kind, compiled in (each part kind's
/// own symbol file is compiled in by its row in [`crate::document::kinds`]).
const OTHER_SOURCES: &[(&str, &str)] = &[
    ("net-label", include_str!("../symbols/net-label.json")),
    ("junction", include_str!("../symbols/junction.json")),
];

/// Every symbol source, (name, text): the part kinds' in their table's
/// order, then the others; compiled in so the program works from any folder.
pub fn sources() -> Vec<(&'static str, &'static str)> {
    crate::document::kinds::KINDS
        .iter()
        .map(|k| (k.symbol, k.symbol_file))
        .chain(OTHER_SOURCES.iter().copied())
        .collect()
}

/// Parse one symbol file and check it: the name matches, pins are unique.
pub fn parse_symbol(file_name: &str, text: &str) -> Result<Symbol, String> {
    let symbol: Symbol =
        serde_json::from_str(text).map_err(|e| format!("symbols/{file_name}.json: {e}"))?;
    if symbol.name != file_name {
        return Err(format!(
            "symbols/{file_name}.json: the symbol is named \"{}\", not \"{file_name}\"",
            symbol.name
        ));
    }
    for (i, p) in symbol.pins.iter().enumerate() {
        if symbol.pins[..i].iter().any(|q| q.name == p.name) {
            return Err(format!(
                "symbols/{file_name}.json: pin \"{}\" appears twice",
                p.name
            ));
        }
        // Pins are whole grid points by type; each must also touch the drawing.
        if !pin_on_drawing(&symbol, p.position) {
            return Err(format!(
                "symbols/{file_name}.json: pin \"{}\" at {:?} touches no line end, polygon \
                 corner or dot centre; move the drawing so a lead ends on the pin",
                p.name, p.position
            ));
        }
    }
    for prim in &symbol.primitives {
        let ok = match prim {
            Primitive::Line { points } => points.len() >= 2,
            Primitive::Polygon { points, .. } => points.len() >= 3,
            Primitive::Circle { radius, .. } | Primitive::Arc { radius, .. } => *radius > 0.0,
        };
        if !ok {
            return Err(format!(
                "symbols/{file_name}.json: a line needs two points, a polygon three, \
                 a circle or arc a radius above zero"
            ));
        }
    }
    Ok(symbol)
}

/// Does a pin at `at` coincide with a line end, a polygon corner or a dot centre?
fn pin_on_drawing(symbol: &Symbol, at: [i32; 2]) -> bool {
    let same =
        |p: &[f64; 2]| (p[0] - at[0] as f64).abs() < 1e-9 && (p[1] - at[1] as f64).abs() < 1e-9;
    symbol.primitives.iter().any(|prim| match prim {
        Primitive::Line { points } => {
            points.first().is_some_and(same) || points.last().is_some_and(same)
        }
        Primitive::Polygon { points, .. } => points.iter().any(same),
        Primitive::Circle { center, filled, .. } => *filled && same(center),
        Primitive::Arc { .. } => false,
    })
}

/// The built-in symbol set (parsed once).
pub fn library() -> &'static SymbolLibrary {
    static LIB: OnceLock<SymbolLibrary> = OnceLock::new();
    LIB.get_or_init(|| SymbolLibrary {
        symbols: sources()
            .into_iter()
            .map(|(name, text)| {
                // The sources are part of the program and tested; a broken one is a build bug.
                parse_symbol(name, text).unwrap_or_else(|e| panic!("built-in symbol set: {e}"))
            })
            .collect(),
    })
}

/// Map a symbol-space point to sheet space for a part at `origin` with
/// `rotation` (clockwise, degrees) after an optional left–right `mirror`.
pub fn transform(point: [f64; 2], origin: [i32; 2], rotation: u16, mirror: bool) -> [f64; 2] {
    let [mut x, y] = point;
    if mirror {
        x = -x;
    }
    let (rx, ry) = match rotation % 360 {
        90 => (-y, x),
        180 => (-x, -y),
        270 => (y, -x),
        _ => (x, y),
    };
    [origin[0] as f64 + rx, origin[1] as f64 + ry]
}

/// The sheet position of a part's pin.
pub fn pin_position(pin: &SymbolPin, origin: [i32; 2], rotation: u16, mirror: bool) -> [i32; 2] {
    let p = transform(
        [pin.position[0] as f64, pin.position[1] as f64],
        origin,
        rotation,
        mirror,
    );
    [p[0].round() as i32, p[1].round() as i32]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_builtin_symbol_loads() {
        // invariant: every compiled-in symbol parses and carries its file name.
        assert_eq!(library().names().len(), sources().len());
        // invariant: each name once, and every file in symbols/ compiled in
        // (a kind's row or the others' list names it).
        let mut names = library().names();
        names.sort_unstable();
        names.dedup();
        assert_eq!(names.len(), sources().len(), "a symbol named twice");
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("symbols");
        let mut files: Vec<String> = std::fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .filter_map(|f| f.strip_suffix(".json").map(str::to_string))
            .collect();
        files.sort();
        assert_eq!(files, names);
    }

    #[test]
    fn rotation_is_clockwise_on_screen() {
        // invariant: a pin above the origin moves to the right after a quarter turn clockwise (y down).
        assert_eq!(transform([0.0, -2.0], [10, 10], 90, false), [12.0, 10.0]);
        assert_eq!(transform([0.0, -2.0], [10, 10], 180, false), [10.0, 12.0]);
        assert_eq!(transform([0.0, -2.0], [10, 10], 270, false), [8.0, 10.0]);
        assert_eq!(transform([1.0, 0.0], [0, 0], 0, true), [-1.0, 0.0]);
    }

    #[test]
    fn a_pin_off_the_drawing_is_refused() {
        // invariant: a pin a wire can reach must end a lead of the drawing.
        let text = r#"{"name":"stub","pins":[{"name":"a","position":[0,-2]}],
            "primitives":[{"line":{"points":[[0,-1],[0,1]]}}]}"#;
        let e = parse_symbol("stub", text).unwrap_err();
        assert!(
            e.contains("pin \"a\" at [0, -2] touches no line end"),
            "{e}"
        );
        let ok = r#"{"name":"stub","pins":[{"name":"a","position":[0,-2]}],
            "primitives":[{"line":{"points":[[0,1],[0,-2]]}}]}"#;
        assert!(parse_symbol("stub", ok).is_ok());
        let bad = r#"{"name":"stub","pins":[{"name":"a","position":[0.5,-2]}],"primitives":[]}"#;
        assert!(parse_symbol("stub", bad).is_err(), "a pin off the grid");
    }

    #[test]
    fn transistor_arrows_point_the_right_way() {
        // source: IEEE 315 — the emitter arrow points out of an NPN and into a PNP.
        for (name, outward) in [("npn", true), ("pnp", false)] {
            let sym = library().get(name).unwrap();
            let tri = sym
                .primitives
                .iter()
                .find_map(|p| match p {
                    Primitive::Polygon {
                        points,
                        filled: true,
                    } => Some(points.clone()),
                    _ => None,
                })
                .unwrap();
            // The tip is the corner farthest from the other two.
            let tip = tri[0];
            let base = [(tri[1][0] + tri[2][0]) / 2.0, (tri[1][1] + tri[2][1]) / 2.0];
            let emitter = sym.pin("emitter").unwrap().position;
            let dir = [tip[0] - base[0], tip[1] - base[1]];
            let to_emitter = [emitter[0] as f64 - base[0], emitter[1] as f64 - base[1]];
            let towards = dir[0] * to_emitter[0] + dir[1] * to_emitter[1] > 0.0;
            assert_eq!(towards, outward, "{name}");
        }
    }
}
