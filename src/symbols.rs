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

use lyon::math::{point, vector, Angle, Point};
use lyon::path::{Path, Winding};
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

/// An arc's start and sweep after the part's mirror and rotation (degrees,
/// clockwise on screen): a mirror maps an angle `a` to `180° − a` and reverses
/// the sweep; a clockwise rotation adds to every angle.
pub fn transform_arc(
    start_degrees: f64,
    sweep_degrees: f64,
    rotation: u16,
    mirror: bool,
) -> (f64, f64) {
    let (mut start, mut sweep) = (start_degrees, sweep_degrees);
    if mirror {
        start = 180.0 - start;
        sweep = -sweep;
    }
    ((start + (rotation % 360) as f64).rem_euclid(360.0), sweep)
}

fn lyon_point(p: [f64; 2], scale: f64) -> Point {
    point((p[0] * scale) as f32, (p[1] * scale) as f32)
}

/// Which primitives a path takes.
#[derive(Clone, Copy, PartialEq)]
enum Want {
    Stroke,
    Fill,
}

fn build_path(
    symbol: &Symbol,
    origin: [i32; 2],
    rotation: u16,
    mirror: bool,
    scale: f64,
    want: Want,
) -> Path {
    let t = |p: &[f64; 2]| lyon_point(transform(*p, origin, rotation, mirror), scale);
    let mut b = Path::builder();
    for prim in &symbol.primitives {
        match prim {
            Primitive::Line { points } if want == Want::Stroke => {
                b.begin(t(&points[0]));
                for p in &points[1..] {
                    b.line_to(t(p));
                }
                b.end(false);
            }
            Primitive::Polygon { points, filled } if want == Want::Stroke || *filled => {
                b.begin(t(&points[0]));
                for p in &points[1..] {
                    b.line_to(t(p));
                }
                b.end(true);
            }
            Primitive::Circle {
                center,
                radius,
                filled,
            } if want == Want::Stroke || *filled => {
                b.add_circle(t(center), (*radius * scale) as f32, Winding::Positive);
            }
            Primitive::Arc {
                center,
                radius,
                start_degrees,
                sweep_degrees,
            } if want == Want::Stroke => {
                let (start, sweep) =
                    transform_arc(*start_degrees, *sweep_degrees, rotation, mirror);
                let r = (*radius * scale) as f32;
                let arc = lyon::geom::Arc {
                    center: t(center),
                    radii: vector(r, r),
                    start_angle: Angle::degrees(start as f32),
                    sweep_angle: Angle::degrees(sweep as f32),
                    x_rotation: Angle::zero(),
                };
                b.begin(arc.from());
                arc.for_each_cubic_bezier(&mut |c| {
                    b.cubic_bezier_to(c.ctrl1, c.ctrl2, c.to);
                });
                b.end(false);
            }
            _ => {}
        }
    }
    b.build()
}

/// The outline of a placed symbol as a lyon path, in sheet grid units times
/// `scale` (pixels per grid step, say): every line, arc, circle and polygon,
/// filled ones included so they get the same crisp edge. Arcs become
/// cubic Béziers (lyon's arc approximation, within 0.2 % of the radius).
pub fn stroke_path(
    symbol: &Symbol,
    origin: [i32; 2],
    rotation: u16,
    mirror: bool,
    scale: f64,
) -> Path {
    build_path(symbol, origin, rotation, mirror, scale, Want::Stroke)
}

/// The filled parts of a placed symbol (arrowheads, dots, the diode
/// triangle) as a lyon path, in the same units as [`stroke_path`].
pub fn fill_path(
    symbol: &Symbol,
    origin: [i32; 2],
    rotation: u16,
    mirror: bool,
    scale: f64,
) -> Path {
    build_path(symbol, origin, rotation, mirror, scale, Want::Fill)
}

/// The drawing's bounds on the sheet, `[min_x, min_y, max_x, max_y]`, for a
/// part at `origin` with `rotation` and `mirror`.
pub fn placed_bounds(symbol: &Symbol, origin: [i32; 2], rotation: u16, mirror: bool) -> [f64; 4] {
    let [x0, y0, x1, y1] = symbol.body_bounds();
    let c: Vec<[f64; 2]> = [[x0, y0], [x1, y0], [x0, y1], [x1, y1]]
        .iter()
        .map(|p| transform(*p, origin, rotation, mirror))
        .collect();
    [
        c.iter().map(|p| p[0]).fold(f64::INFINITY, f64::min),
        c.iter().map(|p| p[1]).fold(f64::INFINITY, f64::min),
        c.iter().map(|p| p[0]).fold(f64::NEG_INFINITY, f64::max),
        c.iter().map(|p| p[1]).fold(f64::NEG_INFINITY, f64::max),
    ]
}

/// Horizontal anchor of upright text.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TextAnchor {
    /// The text starts at the point and runs right.
    Start,
    /// The text is centred on the point.
    Middle,
    /// The text ends at the point.
    End,
}

/// Where one text slot lands for a placed part.
#[derive(Debug, Clone, PartialEq)]
pub struct PlacedText {
    pub slot: String,
    /// The anchor point, at the vertical middle of the line, in sheet units.
    pub position: [f64; 2],
    pub anchor: TextAnchor,
}

/// Space between a drawing and its text, grid units.
pub const TEXT_GAP: f64 = 0.3;

/// Place a symbol's designator and value upright beside the placed drawing.
///
/// The slot positions in the file say, for rotation 0, on which side of the
/// drawing each text sits and in what order. The part's mirror and rotation
/// carry that side round (a slot right of a vertical resistor ends up below
/// it after a quarter turn clockwise); the texts on one side are then
/// stacked `line_height` apart in file order, just outside the drawing's
/// bounds: left-aligned on the right, right-aligned on the left, centred
/// above and below. So no text overlaps the drawing in any rotation,
/// whatever its width. A `name` slot (the net label) stays where it is drawn.
pub fn place_text(
    symbol: &Symbol,
    origin: [i32; 2],
    rotation: u16,
    mirror: bool,
    line_height: f64,
) -> Vec<PlacedText> {
    let [min_x, min_y, max_x, max_y] = placed_bounds(symbol, origin, rotation, mirror);
    let centre = [(min_x + max_x) / 2.0, (min_y + max_y) / 2.0];
    // 0 right, 1 left, 2 below, 3 above.
    let side_of = |slot: &TextSlot| {
        let p = transform(slot.position, origin, rotation, mirror);
        let (dx, dy) = (p[0] - centre[0], p[1] - centre[1]);
        if dx.abs() >= dy.abs() {
            if dx >= 0.0 {
                0
            } else {
                1
            }
        } else if dy > 0.0 {
            2
        } else {
            3
        }
    };
    let mut out = Vec::new();
    for side in 0..4 {
        let slots: Vec<&TextSlot> = symbol
            .text_slots
            .iter()
            .filter(|s| s.slot != "name" && side_of(s) == side)
            .collect();
        let n = slots.len() as f64;
        for (k, slot) in slots.iter().enumerate() {
            let k = k as f64;
            let (position, anchor) = match side {
                0 => (
                    [
                        max_x + TEXT_GAP,
                        centre[1] + (k - (n - 1.0) / 2.0) * line_height,
                    ],
                    TextAnchor::Start,
                ),
                1 => (
                    [
                        min_x - TEXT_GAP,
                        centre[1] + (k - (n - 1.0) / 2.0) * line_height,
                    ],
                    TextAnchor::End,
                ),
                2 => (
                    [centre[0], max_y + TEXT_GAP + (k + 0.5) * line_height],
                    TextAnchor::Middle,
                ),
                _ => (
                    [centre[0], min_y - TEXT_GAP - (n - k - 0.5) * line_height],
                    TextAnchor::Middle,
                ),
            };
            out.push(PlacedText {
                slot: slot.slot.clone(),
                position,
                anchor,
            });
        }
    }
    for slot in symbol.text_slots.iter().filter(|s| s.slot == "name") {
        let position = transform(slot.position, origin, rotation, mirror);
        let anchor = if position[0] >= origin[0] as f64 {
            TextAnchor::Start
        } else {
            TextAnchor::End
        };
        out.push(PlacedText {
            slot: slot.slot.clone(),
            position,
            anchor,
        });
    }
    out
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

    const TURNS: [(u16, bool); 8] = [
        (0, false),
        (90, false),
        (180, false),
        (270, false),
        (0, true),
        (90, true),
        (180, true),
        (270, true),
    ];

    fn path_points(path: &Path) -> Vec<[f32; 2]> {
        use lyon::path::iterator::PathIterator;
        let mut pts = Vec::new();
        for e in path.iter().flattened(0.001) {
            match e {
                lyon::path::Event::Begin { at } => pts.push([at.x, at.y]),
                lyon::path::Event::Line { to, .. } => pts.push([to.x, to.y]),
                _ => {}
            }
        }
        pts
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
    fn every_pin_ends_a_lead_in_the_built_in_set() {
        // invariant: pins of every built-in symbol touch its drawing (checked at load, and here
        // against the placed stroke path for every rotation and mirror).
        for sym in library().iter() {
            for (rot, mirror) in TURNS {
                let pts = path_points(&stroke_path(sym, [5, 7], rot, mirror, 1.0));
                for pin in &sym.pins {
                    let at = pin_position(pin, [5, 7], rot, mirror);
                    let hit = pts.iter().any(|p| {
                        (p[0] - at[0] as f32).abs() < 1e-4 && (p[1] - at[1] as f32).abs() < 1e-4
                    }) || sym
                        .primitives
                        .iter()
                        .any(|p| matches!(p, Primitive::Circle { filled: true, .. }));
                    assert!(
                        hit,
                        "{} pin {} at {rot}° mirror {mirror}",
                        sym.name, pin.name
                    );
                }
            }
        }
    }

    #[test]
    fn stroke_path_follows_the_part_transform_and_scale() {
        // invariant: the path is the symbol under the same transform as the pins, times the scale.
        let r = library().get("resistor").unwrap();
        let pts = path_points(&stroke_path(r, [10, 10], 90, false, 2.0));
        assert_eq!(pts.first().copied(), Some([24.0, 20.0]));
        assert_eq!(pts.last().copied(), Some([16.0, 20.0]));
        // invariant: a fill path holds only filled shapes.
        assert_eq!(path_points(&fill_path(r, [0, 0], 0, false, 1.0)).len(), 0);
        let npn = library().get("npn").unwrap();
        assert_eq!(path_points(&fill_path(npn, [0, 0], 0, false, 1.0)).len(), 3);
    }

    #[test]
    fn arcs_stay_on_their_circle_and_inside_the_bounds() {
        // invariant: every flattened point of an arc lies on its circle (within the
        // cubic approximation) and inside the placed bounds.
        for name in ["inductor", "polarised-capacitor"] {
            let sym = library().get(name).unwrap();
            for (rot, mirror) in TURNS {
                let b = placed_bounds(sym, [0, 0], rot, mirror);
                for p in path_points(&stroke_path(sym, [0, 0], rot, mirror, 1.0)) {
                    let (x, y) = (p[0] as f64, p[1] as f64);
                    assert!(
                        x >= b[0] - 1e-3
                            && x <= b[2] + 1e-3
                            && y >= b[1] - 1e-3
                            && y <= b[3] + 1e-3,
                        "{name} {rot} {mirror}: {p:?} outside {b:?}"
                    );
                }
                let only_arcs = Symbol {
                    primitives: sym
                        .primitives
                        .iter()
                        .filter(|p| matches!(p, Primitive::Arc { .. }))
                        .cloned()
                        .collect(),
                    ..sym.clone()
                };
                let arcs: Vec<([f64; 2], f64)> = sym
                    .primitives
                    .iter()
                    .filter_map(|p| match p {
                        Primitive::Arc { center, radius, .. } => {
                            Some((transform(*center, [0, 0], rot, mirror), *radius))
                        }
                        _ => None,
                    })
                    .collect();
                for p in path_points(&stroke_path(&only_arcs, [0, 0], rot, mirror, 1.0)) {
                    let d = arcs
                        .iter()
                        .map(|(c, r)| ((p[0] as f64 - c[0]).hypot(p[1] as f64 - c[1]) - r).abs())
                        .fold(f64::INFINITY, f64::min);
                    // lyon approximates arcs by Béziers; 0.2 % of the radius is far below a line width.
                    assert!(d < 2e-3 * 1.2, "{name}: {p:?} is {d} off its circle");
                }
            }
        }
        // invariant: the inductor's half-loops bulge to +x at rotation 0 (start 270°, sweep 180°).
        let l = library().get("inductor").unwrap();
        assert!((l.body_bounds()[2] - 0.3).abs() < 1e-9);
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

    #[test]
    fn text_never_overlaps_the_drawing() {
        // invariant: placed text boxes (any width) stay outside the drawing's bounds and
        // apart from each other, for every symbol, rotation and mirror.
        let (h, w) = (1.0, 6.0);
        for sym in library().iter() {
            for (rot, mirror) in TURNS {
                let b = placed_bounds(sym, [0, 0], rot, mirror);
                let placed = place_text(sym, [0, 0], rot, mirror, h);
                let boxes: Vec<[f64; 4]> = placed
                    .iter()
                    .filter(|t| t.slot != "name")
                    .map(|t| {
                        let [x, y] = t.position;
                        let (x0, x1) = match t.anchor {
                            TextAnchor::Start => (x, x + w),
                            TextAnchor::Middle => (x - w / 2.0, x + w / 2.0),
                            TextAnchor::End => (x - w, x),
                        };
                        [x0, y - h / 2.0, x1, y + h / 2.0]
                    })
                    .collect();
                let overlap = |a: &[f64; 4], c: &[f64; 4]| {
                    a[0] < c[2] - 1e-9
                        && c[0] < a[2] - 1e-9
                        && a[1] < c[3] - 1e-9
                        && c[1] < a[3] - 1e-9
                };
                for (i, a) in boxes.iter().enumerate() {
                    assert!(
                        !overlap(a, &b),
                        "{} {rot} {mirror}: text over drawing",
                        sym.name
                    );
                    for c in &boxes[..i] {
                        assert!(!overlap(a, c), "{} {rot} {mirror}: texts overlap", sym.name);
                    }
                }
                assert_eq!(
                    boxes.len(),
                    sym.text_slots.iter().filter(|t| t.slot != "name").count()
                );
            }
        }
        // invariant: a slot right of a vertical part goes below it after a quarter turn clockwise.
        let r = library().get("resistor").unwrap();
        let t = place_text(r, [0, 0], 90, false, 1.0);
        assert!(t
            .iter()
            .all(|t| t.anchor == TextAnchor::Middle && t.position[1] > 0.0));
        assert_eq!(t[0].slot, "designator");
    }
}
