//! A placed symbol as lyon paths, and its bounds on the sheet.

use super::{transform, Primitive, Symbol};
use lyon::math::{point, vector, Angle, Point};
use lyon::path::{Path, Winding};

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

#[cfg(test)]
pub(super) mod tests {
    use super::super::{library, pin_position};
    use super::*;

    pub const TURNS: [(u16, bool); 8] = [
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
}
