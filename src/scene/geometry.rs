//! Small geometry helpers: boxes, segment distance, arc flattening, lyon paths.

use super::{Point, Shape};

/// An axis-aligned box in grid units.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Rect {
    pub min: Point,
    pub max: Point,
}

impl Rect {
    /// The box spanned by two corners (in any order).
    pub fn new(a: Point, b: Point) -> Rect {
        Rect {
            min: [a[0].min(b[0]), a[1].min(b[1])],
            max: [a[0].max(b[0]), a[1].max(b[1])],
        }
    }
    pub fn from_size(min: Point, w: f64, h: f64) -> Rect {
        Rect::new(min, [min[0] + w, min[1] + h])
    }
    /// An empty box that any [`Rect::union`] replaces.
    pub fn empty() -> Rect {
        Rect {
            min: [f64::INFINITY; 2],
            max: [f64::NEG_INFINITY; 2],
        }
    }
    pub fn is_empty(&self) -> bool {
        !(self.min[0] <= self.max[0] && self.min[1] <= self.max[1])
    }
    pub fn width(&self) -> f64 {
        self.max[0] - self.min[0]
    }
    pub fn height(&self) -> f64 {
        self.max[1] - self.min[1]
    }
    pub fn center(&self) -> Point {
        [
            (self.min[0] + self.max[0]) / 2.0,
            (self.min[1] + self.max[1]) / 2.0,
        ]
    }
    pub fn contains(&self, p: Point) -> bool {
        p[0] >= self.min[0] && p[0] <= self.max[0] && p[1] >= self.min[1] && p[1] <= self.max[1]
    }
    pub fn union(&self, o: &Rect) -> Rect {
        Rect {
            min: [self.min[0].min(o.min[0]), self.min[1].min(o.min[1])],
            max: [self.max[0].max(o.max[0]), self.max[1].max(o.max[1])],
        }
    }
    pub fn include(&mut self, p: Point) {
        self.min = [self.min[0].min(p[0]), self.min[1].min(p[1])];
        self.max = [self.max[0].max(p[0]), self.max[1].max(p[1])];
    }
    pub fn inflate(&self, d: f64) -> Rect {
        Rect {
            min: [self.min[0] - d, self.min[1] - d],
            max: [self.max[0] + d, self.max[1] + d],
        }
    }
    pub fn translate(&self, d: Point) -> Rect {
        Rect {
            min: [self.min[0] + d[0], self.min[1] + d[1]],
            max: [self.max[0] + d[0], self.max[1] + d[1]],
        }
    }
    /// True when the interiors overlap (touching edges do not count).
    pub fn overlaps(&self, o: &Rect) -> bool {
        self.min[0] < o.max[0]
            && o.min[0] < self.max[0]
            && self.min[1] < o.max[1]
            && o.min[1] < self.max[1]
    }
    /// Area of the intersection.
    pub fn overlap_area(&self, o: &Rect) -> f64 {
        let w = self.max[0].min(o.max[0]) - self.min[0].max(o.min[0]);
        let h = self.max[1].min(o.max[1]) - self.min[1].max(o.min[1]);
        if w > 0.0 && h > 0.0 {
            w * h
        } else {
            0.0
        }
    }
    /// True when the segment `a`–`b` passes through the interior.
    pub fn crosses_segment(&self, a: Point, b: Point) -> bool {
        // Liang–Barsky clipping against the open box.
        let (mut t0, mut t1) = (0.0f64, 1.0f64);
        let d = [b[0] - a[0], b[1] - a[1]];
        for (p, q) in [
            (-d[0], a[0] - self.min[0]),
            (d[0], self.max[0] - a[0]),
            (-d[1], a[1] - self.min[1]),
            (d[1], self.max[1] - a[1]),
        ] {
            if p == 0.0 {
                if q <= 0.0 {
                    return false;
                }
            } else {
                let r = q / p;
                if p < 0.0 {
                    t0 = t0.max(r);
                } else {
                    t1 = t1.min(r);
                }
            }
        }
        t1 - t0 > 1e-9
    }
    /// Distance from `p` to the box (0 inside).
    pub fn distance_to(&self, p: Point) -> f64 {
        let dx = (self.min[0] - p[0]).max(p[0] - self.max[0]).max(0.0);
        let dy = (self.min[1] - p[1]).max(p[1] - self.max[1]).max(0.0);
        (dx * dx + dy * dy).sqrt()
    }
    /// The point of the box's outline nearest to `p`.
    pub fn nearest_point(&self, p: Point) -> Point {
        [
            p[0].clamp(self.min[0], self.max[0]),
            p[1].clamp(self.min[1], self.max[1]),
        ]
    }
}

pub fn distance_to_segment(p: Point, a: Point, b: Point) -> f64 {
    let d = [b[0] - a[0], b[1] - a[1]];
    let len2 = d[0] * d[0] + d[1] * d[1];
    let t = if len2 == 0.0 {
        0.0
    } else {
        (((p[0] - a[0]) * d[0] + (p[1] - a[1]) * d[1]) / len2).clamp(0.0, 1.0)
    };
    let q = [a[0] + t * d[0], a[1] + t * d[1]];
    ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2)).sqrt()
}

/// Points along an arc (angles clockwise on screen, degrees), `steps` segments.
pub fn arc_points(center: Point, radius: f64, start: f64, sweep: f64) -> Vec<Point> {
    let steps = ((sweep.abs() / 10.0).ceil() as usize).max(2);
    (0..=steps)
        .map(|i| {
            let a = (start + sweep * i as f64 / steps as f64).to_radians();
            [center[0] + radius * a.cos(), center[1] + radius * a.sin()]
        })
        .collect()
}

/// The bounding box of a shape.
pub fn shape_bounds(shape: &Shape) -> Rect {
    match shape {
        Shape::Polyline { points, .. } => {
            let mut r = Rect::empty();
            points.iter().for_each(|p| r.include(*p));
            r
        }
        Shape::Circle { center, radius } => Rect::new(
            [center[0] - radius, center[1] - radius],
            [center[0] + radius, center[1] + radius],
        ),
        Shape::Arc {
            center,
            radius,
            start_degrees,
            sweep_degrees,
        } => {
            let mut r = Rect::empty();
            arc_points(*center, *radius, *start_degrees, *sweep_degrees)
                .into_iter()
                .for_each(|p| r.include(p));
            r
        }
        Shape::Rect { rect, .. } => *rect,
    }
}

pub fn shape_to_lyon(shape: &Shape) -> lyon::path::Path {
    use lyon::math::{point, vector, Angle, Box2D};
    use lyon::path::{builder::BorderRadii, Path, Winding};
    let pt = |p: &Point| point(p[0] as f32, p[1] as f32);
    let mut b = Path::builder();
    match shape {
        Shape::Polyline { points, closed } => {
            if let Some((first, rest)) = points.split_first() {
                b.begin(pt(first));
                for p in rest {
                    b.line_to(pt(p));
                }
                b.end(*closed);
            }
        }
        Shape::Circle { center, radius } => {
            b.add_circle(pt(center), *radius as f32, Winding::Positive);
        }
        Shape::Arc {
            center,
            radius,
            start_degrees,
            sweep_degrees,
        } => {
            let mut b = b.with_svg();
            let c = pt(center);
            let r = *radius as f32;
            let a0 = (*start_degrees as f32).to_radians();
            b.move_to(c + vector(r * a0.cos(), r * a0.sin()));
            // y is down, so a positive angle is clockwise on screen, as in the file.
            let arc = lyon::geom::Arc {
                center: c,
                radii: vector(r, r),
                start_angle: Angle::radians(a0),
                sweep_angle: Angle::radians((*sweep_degrees as f32).to_radians()),
                x_rotation: Angle::zero(),
            };
            arc.for_each_quadratic_bezier(&mut |q| {
                b.quadratic_bezier_to(q.ctrl, q.to);
            });
            return b.build();
        }
        Shape::Rect { rect, corner } => {
            let r = Box2D::new(pt(&rect.min), pt(&rect.max));
            if *corner > 0.0 {
                b.add_rounded_rectangle(&r, &BorderRadii::new(*corner as f32), Winding::Positive);
            } else {
                b.add_rectangle(&r, Winding::Positive);
            }
        }
    }
    b.build()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn segment_through_box_is_seen_and_one_beside_it_is_not() {
        // invariant: a segment crosses a box iff part of it lies strictly inside.
        let r = Rect::new([0.0, 0.0], [2.0, 1.0]);
        assert!(r.crosses_segment([-1.0, 0.5], [3.0, 0.5]));
        assert!(!r.crosses_segment([-1.0, 1.0], [3.0, 1.0]));
        assert!(!r.crosses_segment([-1.0, 2.0], [3.0, 2.0]));
        assert!(r.crosses_segment([1.0, 0.5], [1.0, 5.0]));
    }

    #[test]
    fn touching_boxes_do_not_overlap() {
        // invariant: boxes sharing only an edge have zero-area intersection.
        let a = Rect::new([0.0, 0.0], [1.0, 1.0]);
        let b = Rect::new([1.0, 0.0], [2.0, 1.0]);
        assert!(!a.overlaps(&b));
        assert!(a.overlaps(&b.translate([-0.1, 0.0])));
    }
}
