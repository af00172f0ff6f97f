//! The symbol set: one JSON file per symbol in `symbols/`, built into the binary.
//!
//! Symbol coordinates are in grid units (one unit is one grid step of the
//! sheet), `y` down, origin at the part's position. Pins sit on whole grid
//! points; drawing primitives may use fractions of a unit.

use serde::{Deserialize, Serialize};
use std::sync::OnceLock;

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

/// Where a symbol wants its designator or value text.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TextSlot {
    /// `designator` or `value`.
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
                Primitive::Circle { center, radius, .. }
                | Primitive::Arc { center, radius, .. } => add(*center, *radius),
            }
        }
        if !b[0].is_finite() {
            return [0.0; 4];
        }
        b
    }
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

/// The symbol sources, compiled in so the program works from any folder.
pub const SOURCES: &[(&str, &str)] = &[
    ("resistor", include_str!("../symbols/resistor.json")),
    ("capacitor", include_str!("../symbols/capacitor.json")),
    (
        "polarised-capacitor",
        include_str!("../symbols/polarised-capacitor.json"),
    ),
    ("inductor", include_str!("../symbols/inductor.json")),
    (
        "dc-voltage-source",
        include_str!("../symbols/dc-voltage-source.json"),
    ),
    (
        "signal-source",
        include_str!("../symbols/signal-source.json"),
    ),
    (
        "current-source",
        include_str!("../symbols/current-source.json"),
    ),
    ("ground", include_str!("../symbols/ground.json")),
    ("supply-rail", include_str!("../symbols/supply-rail.json")),
    ("npn", include_str!("../symbols/npn.json")),
    ("pnp", include_str!("../symbols/pnp.json")),
    ("diode", include_str!("../symbols/diode.json")),
    ("net-label", include_str!("../symbols/net-label.json")),
    ("junction", include_str!("../symbols/junction.json")),
];

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
    }
    Ok(symbol)
}

/// The built-in symbol set (parsed once).
pub fn library() -> &'static SymbolLibrary {
    static LIB: OnceLock<SymbolLibrary> = OnceLock::new();
    LIB.get_or_init(|| SymbolLibrary {
        symbols: SOURCES
            .iter()
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
        assert_eq!(library().names().len(), SOURCES.len());
    }

    #[test]
    fn rotation_is_clockwise_on_screen() {
        // invariant: a pin above the origin moves to the right after a quarter turn clockwise (y down).
        assert_eq!(transform([0.0, -2.0], [10, 10], 90, false), [12.0, 10.0]);
        assert_eq!(transform([0.0, -2.0], [10, 10], 180, false), [10.0, 12.0]);
        assert_eq!(transform([0.0, -2.0], [10, 10], 270, false), [8.0, 10.0]);
        assert_eq!(transform([1.0, 0.0], [0, 0], 0, true), [-1.0, 0.0]);
    }
}
