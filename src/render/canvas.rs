//! The editor's renderer: a [`Scene`] drawn into an iced canvas `Frame`, so
//! the screen shows exactly what the SVG and PNG exports show. Sheet grid
//! units map to pixels by one origin and one scale.

use crate::scene::{self, Anchor, Colour, LayerSet, Primitive, Scene, Shape, Weight};
use iced::widget::canvas::{Frame, LineCap, LineDash, LineJoin, Path, Stroke, Text};
use iced::{alignment, Color, Font, Point, Size, Vector};

/// Where the sheet sits on screen: pixel position of grid point (0, 0) and
/// pixels per grid unit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Transform {
    pub origin: Vector,
    pub scale: f32,
}

impl Transform {
    pub fn point(&self, p: scene::Point) -> Point {
        Point::new(
            self.origin.x + p[0] as f32 * self.scale,
            self.origin.y + p[1] as f32 * self.scale,
        )
    }
    fn len(&self, l: f64) -> f32 {
        l as f32 * self.scale
    }
}

/// The iced colour of a scene colour.
pub fn colour(c: Colour) -> Color {
    Color::from_rgba8(c.r, c.g, c.b, c.a as f32 / 255.0)
}

/// The font of a weight (DejaVu Sans, loaded by the editor at start).
pub fn font(w: Weight) -> Font {
    Font {
        weight: match w {
            Weight::Regular => iced::font::Weight::Normal,
            Weight::Bold => iced::font::Weight::Bold,
        },
        ..Font::with_name(scene::text::FAMILY)
    }
}

fn shape_path(shape: &Shape, t: &Transform) -> Path {
    match shape {
        Shape::Polyline { points, closed } => Path::new(|b| {
            for (i, p) in points.iter().enumerate() {
                if i == 0 {
                    b.move_to(t.point(*p));
                } else {
                    b.line_to(t.point(*p));
                }
            }
            if *closed {
                b.close();
            }
        }),
        Shape::Circle { center, radius } => Path::circle(t.point(*center), t.len(*radius)),
        Shape::Arc {
            center,
            radius,
            start_degrees,
            sweep_degrees,
        } => {
            let n = ((sweep_degrees.abs() / 10.0).ceil() as usize).max(4);
            Path::new(|b| {
                for k in 0..=n {
                    let a = (start_degrees + sweep_degrees * k as f64 / n as f64).to_radians();
                    let p = t.point([center[0] + radius * a.cos(), center[1] + radius * a.sin()]);
                    if k == 0 {
                        b.move_to(p);
                    } else {
                        b.line_to(p);
                    }
                }
            })
        }
        Shape::Rect { rect, corner } => {
            let top_left = t.point(rect.min);
            let size = Size::new(t.len(rect.width()), t.len(rect.height()));
            if *corner > 0.0 {
                Path::rounded_rectangle(top_left, size, t.len(*corner).into())
            } else {
                Path::rectangle(top_left, size)
            }
        }
    }
}

fn stroke_of<'a>(s: &scene::Stroke, t: &Transform, dash: &'a [f32]) -> Stroke<'a> {
    Stroke {
        line_cap: LineCap::Round,
        line_join: LineJoin::Round,
        line_dash: LineDash {
            segments: dash,
            offset: 0,
        },
        ..Stroke::default()
            .with_color(colour(s.colour))
            .with_width(t.len(s.width).max(1.0))
    }
}

/// Draw the elements of `scene` on the given layers.
pub fn draw(frame: &mut Frame, scene: &Scene, layers: LayerSet, t: &Transform) {
    for e in scene.elements_in(layers) {
        draw_primitive(frame, &e.primitive, t);
    }
}

/// Draw one primitive.
pub fn draw_primitive(frame: &mut Frame, p: &Primitive, t: &Transform) {
    match p {
        Primitive::Path(item) => {
            let path = shape_path(&item.shape, t);
            if let Some(f) = item.fill {
                frame.fill(&path, colour(f));
            }
            if let Some(s) = &item.stroke {
                let dash: Vec<f32> = s
                    .dash
                    .map(|[d, g]| vec![t.len(d).max(1.0), t.len(g).max(1.0)])
                    .unwrap_or_default();
                frame.stroke(&path, stroke_of(s, t, &dash));
            }
        }
        Primitive::Arrow(a) => {
            let head = a.head_points();
            let base = [
                (head[1][0] + head[2][0]) / 2.0,
                (head[1][1] + head[2][1]) / 2.0,
            ];
            let shaft = Path::line(t.point(a.from), t.point(base));
            frame.stroke(&shaft, stroke_of(&a.stroke, t, &[]));
            let tip = Path::new(|b| {
                b.move_to(t.point(head[0]));
                b.line_to(t.point(head[1]));
                b.line_to(t.point(head[2]));
                b.close();
            });
            frame.fill(&tip, colour(a.stroke.colour));
        }
        Primitive::Text(run) => {
            let size = t.len(run.size);
            if size < 3.0 {
                return; // too small to read at this zoom
            }
            // The scene gives the baseline; iced places the top of the line box.
            let m = scene::text::measure(&run.text, run.size, run.weight);
            let top = t.point([run.position[0], run.position[1] - m.ascent]);
            let line = t.len(m.ascent + m.descent);
            // Text is not clipped to the canvas by the renderer: a run that
            // would cross the canvas edge is left out, so a zoomed sheet
            // never writes over the drawer, the shelf or the inspector.
            let width = t.len(m.width);
            let left = match run.anchor {
                Anchor::Start => top.x,
                Anchor::Middle => top.x - width / 2.0,
                Anchor::End => top.x - width,
            };
            if !text_fits(left, top.y, width, line, frame.size()) {
                return;
            }
            frame.fill_text(Text {
                content: run.text.clone(),
                position: top,
                color: colour(run.colour),
                size: size.into(),
                line_height: iced::widget::text::LineHeight::Absolute(line.max(1.0).into()),
                font: font(run.weight),
                align_x: match run.anchor {
                    Anchor::Start => alignment::Horizontal::Left.into(),
                    Anchor::Middle => alignment::Horizontal::Center.into(),
                    Anchor::End => alignment::Horizontal::Right.into(),
                },
                align_y: alignment::Vertical::Top,
                ..Text::default()
            });
        }
    }
}

/// Whether a text box (left, top, width, height in pixels) lies inside a
/// frame of `size`.
pub fn text_fits(left: f32, top: f32, width: f32, height: f32, size: Size) -> bool {
    left >= 0.0 && top >= 0.0 && left + width <= size.width && top + height <= size.height
}

#[cfg(test)]
mod clip_tests {
    use super::*;

    #[test]
    fn text_crossing_the_canvas_edge_is_left_out() {
        // invariant: a run is drawn only when its whole box is on the canvas.
        let s = Size::new(100.0, 50.0);
        assert!(text_fits(10.0, 10.0, 50.0, 12.0, s));
        assert!(!text_fits(60.0, 10.0, 50.0, 12.0, s));
        assert!(!text_fits(-1.0, 10.0, 20.0, 12.0, s));
        assert!(!text_fits(10.0, 45.0, 20.0, 12.0, s));
    }
}
