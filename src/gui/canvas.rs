//! The sheet on screen: an iced canvas `Program` over the sheet's state
//! ([`super::sheet`]).
//! Drawing is layered: grid, the drawing itself, annotations and the
//! overlay (selection, pointer, tools) each have their own cache, so a hover
//! redraws only the overlay and a value change redraws only what changed.

use super::edit::{self, Item};
use super::hit;
use super::palette;
use super::sheet::{Button, Message, SheetInput, SheetInputKind, Showing};
use super::sheet::{Sheet, Tool, View};
use crate::document::Part;
use crate::scene::{Layer, LayerSet};
use crate::symbols::{self, Primitive};
use crate::units;
use iced::mouse;
use iced::widget::canvas::{self, Cache, Frame, Geometry, Path, Stroke, Text};
use iced::{alignment, Color, Point, Rectangle, Renderer, Size, Theme};

/// The layered caches of the sheet.
#[derive(Default)]
pub struct Caches {
    pub grid: Cache,
    pub drawing: Cache,
    pub annotations: Cache,
    pub overlay: Cache,
}

impl Caches {
    pub fn clear_all(&self) {
        self.grid.clear();
        self.clear_sheet();
    }
    pub fn clear_sheet(&self) {
        self.drawing.clear();
        self.clear_annotations();
    }
    pub fn clear_annotations(&self) {
        self.annotations.clear();
        self.overlay.clear();
    }
    pub fn clear_overlay(&self) {
        self.overlay.clear();
    }
}

/// The canvas program: a view of the sheet and what it shows.
pub struct SheetCanvas<'a> {
    pub sheet: &'a Sheet,
    pub showing: Showing<'a>,
}

impl<'a> canvas::Program<Message> for SheetCanvas<'a> {
    type State = ();

    fn update(
        &self,
        _state: &mut (),
        event: &canvas::Event,
        bounds: Rectangle,
        cursor: mouse::Cursor,
    ) -> Option<canvas::Action<Message>> {
        let size = bounds.size();
        let at = |p: Point| Point::new(p.x - bounds.x, p.y - bounds.y);
        let input = |kind, position| {
            canvas::Action::publish(SheetInput {
                kind,
                position,
                size,
                origin: bounds.position(),
            })
        };
        let button = |b: &mouse::Button| match b {
            mouse::Button::Left => Some(Button::Left),
            mouse::Button::Middle => Some(Button::Middle),
            mouse::Button::Right => Some(Button::Right),
            _ => None,
        };
        match event {
            canvas::Event::Mouse(mouse::Event::CursorMoved { position }) => {
                if bounds.contains(*position) {
                    Some(input(SheetInputKind::Move, at(*position)))
                } else if self.sheet.pointer.is_some() {
                    Some(input(SheetInputKind::Left, at(*position)))
                } else {
                    None
                }
            }
            canvas::Event::Mouse(mouse::Event::ButtonPressed(b)) => {
                let p = cursor.position_in(bounds)?;
                Some(input(SheetInputKind::Press(button(b)?), p).and_capture())
            }
            canvas::Event::Mouse(mouse::Event::ButtonReleased(b)) => {
                let p = cursor.position().map(at).unwrap_or(Point::ORIGIN);
                Some(input(SheetInputKind::Release(button(b)?), p))
            }
            canvas::Event::Mouse(mouse::Event::WheelScrolled { delta }) => {
                let p = cursor.position_in(bounds)?;
                let lines = match delta {
                    mouse::ScrollDelta::Lines { y, .. } => *y,
                    mouse::ScrollDelta::Pixels { y, .. } => *y / 40.0,
                };
                Some(input(SheetInputKind::Scroll(lines), p).and_capture())
            }
            _ => None,
        }
    }

    fn draw(
        &self,
        _state: &(),
        renderer: &Renderer,
        _theme: &Theme,
        bounds: Rectangle,
        _cursor: mouse::Cursor,
    ) -> Vec<Geometry> {
        let (sheet, showing) = (self.sheet, &self.showing);
        let size = bounds.size();
        let view = sheet.view_for(size, &showing.context());
        let grid = sheet
            .caches
            .grid
            .draw(renderer, size, |f| draw_grid(f, &view, size));
        let t = crate::render::canvas::Transform {
            origin: view.origin,
            scale: view.scale,
        };
        let drawing = sheet.caches.drawing.draw(renderer, size, |f| {
            let set = LayerSet::NONE.with(Layer::Schematic);
            crate::render::canvas::draw(f, showing.scene, set, &t)
        });
        let notes = sheet.caches.annotations.draw(renderer, size, |f| {
            let set = showing.layers.without(Layer::Schematic);
            crate::render::canvas::draw(f, showing.scene, set, &t)
        });
        let overlay = sheet
            .caches
            .overlay
            .draw(renderer, size, |f| draw_overlay(f, sheet, showing, &view));
        vec![grid, drawing, notes, overlay]
    }

    fn mouse_interaction(
        &self,
        _state: &(),
        bounds: Rectangle,
        cursor: mouse::Cursor,
    ) -> mouse::Interaction {
        if !cursor.is_over(bounds) {
            return mouse::Interaction::default();
        }
        if self.sheet.is_panning() {
            return mouse::Interaction::Grab;
        }
        match self.sheet.tool {
            Tool::Select => mouse::Interaction::default(),
            _ => mouse::Interaction::Crosshair,
        }
    }
}

fn draw_grid(f: &mut Frame, view: &View, size: Size) {
    f.fill_rectangle(Point::ORIGIN, size, palette::PAPER);
    let step = if view.scale >= 8.0 { 1 } else { 5 };
    let s = view.scale * step as f32;
    let path = Path::new(|b| {
        let x0 = view.origin.x.rem_euclid(s);
        let mut x = x0;
        while x < size.width {
            b.move_to(Point::new(x, 0.0));
            b.line_to(Point::new(x, size.height));
            x += s;
        }
        let mut y = view.origin.y.rem_euclid(s);
        while y < size.height {
            b.move_to(Point::new(0.0, y));
            b.line_to(Point::new(size.width, y));
            y += s;
        }
    });
    f.stroke(
        &path,
        Stroke::default().with_color(palette::GRID).with_width(1.0),
    );
}

/// Stroke width of the drawing at this zoom.
pub fn ink_width(view: &View) -> f32 {
    (view.scale * 0.12).clamp(1.0, 3.0)
}

/// Text size of designators and values at this zoom.
pub fn text_size(view: &View) -> f32 {
    (view.scale * 0.9).clamp(9.0, 22.0)
}

/// Draw one symbol for a part (or a ghost of one) in `color`.
pub fn draw_symbol(f: &mut Frame, part: &Part, view: &View, color: Color, width: f32) {
    let Some(symbol) = symbols::library().get(part.symbol_name()) else {
        return;
    };
    let tr = |p: [f64; 2]| {
        view.to_screen(symbols::transform(
            p,
            part.position,
            part.rotation,
            part.mirror,
        ))
    };
    let stroke = Stroke::default().with_color(color).with_width(width);
    for prim in &symbol.primitives {
        match prim {
            Primitive::Line { points } => {
                let path = Path::new(|b| {
                    for (i, p) in points.iter().enumerate() {
                        if i == 0 {
                            b.move_to(tr(*p));
                        } else {
                            b.line_to(tr(*p));
                        }
                    }
                });
                f.stroke(&path, stroke);
            }
            Primitive::Polygon { points, filled } => {
                let path = Path::new(|b| {
                    for (i, p) in points.iter().enumerate() {
                        if i == 0 {
                            b.move_to(tr(*p));
                        } else {
                            b.line_to(tr(*p));
                        }
                    }
                    b.close();
                });
                if *filled {
                    f.fill(&path, color);
                }
                f.stroke(&path, stroke);
            }
            Primitive::Circle {
                center,
                radius,
                filled,
            } => {
                let path = Path::circle(tr(*center), *radius as f32 * view.scale);
                if *filled {
                    f.fill(&path, color);
                } else {
                    f.stroke(&path, stroke);
                }
            }
            Primitive::Arc {
                center,
                radius,
                start_degrees,
                sweep_degrees,
            } => {
                // Sample the arc in symbol space so mirroring and rotation apply.
                let n = 16;
                let path = Path::new(|b| {
                    for k in 0..=n {
                        let a = (start_degrees + sweep_degrees * k as f64 / n as f64).to_radians();
                        let p = [center[0] + radius * a.cos(), center[1] + radius * a.sin()];
                        if k == 0 {
                            b.move_to(tr(p));
                        } else {
                            b.line_to(tr(p));
                        }
                    }
                });
                f.stroke(&path, stroke);
            }
        }
    }
}

/// The value text of a part ("4.7 kΩ", "9 V", preset name).
pub fn value_text(part: &Part) -> String {
    let main = part.kind.main_parameter().and_then(|k| {
        let unit = super::value::unit_of(k);
        part.parameter(k).map(|v| units::format(v, unit))
    });
    match (main, &part.preset) {
        (Some(m), _) => m,
        (None, Some(p)) => p.clone(),
        (None, None) => String::new(),
    }
}

fn text(content: String, at: Point, size: f32, color: Color, anchor: &str) -> Text {
    Text {
        content,
        position: at,
        color,
        size: size.into(),
        align_x: match anchor {
            "middle" => alignment::Horizontal::Center.into(),
            "end" => alignment::Horizontal::Right.into(),
            _ => alignment::Horizontal::Left.into(),
        },
        align_y: alignment::Vertical::Center,
        ..Text::default()
    }
}

/// Sheet position and anchor of a symbol text slot for a part. Text stays
/// upright: beside an upright body, above and below a lying one.
pub fn slot_position(part: &Part, slot: &str) -> Option<([f64; 2], String)> {
    let symbol = symbols::library().get(part.symbol_name())?;
    let s = symbol.text_slots.iter().find(|s| s.slot == slot)?;
    let [ox, oy] = [part.position[0] as f64, part.position[1] as f64];
    if part.rotation % 180 == 90 {
        let dy = if s.position[1] < 0.0 { -1.5 } else { 1.5 };
        return Some(([ox, oy + dy], "middle".into()));
    }
    let left = part.mirror ^ (part.rotation % 360 == 180);
    let (x, anchor) = if left {
        (-s.position[0], "end")
    } else {
        (s.position[0], "start")
    };
    Some(([ox + x, oy + s.position[1]], anchor.into()))
}

fn dashed(color: Color, width: f32) -> Stroke<'static> {
    Stroke {
        line_dash: canvas::LineDash {
            segments: &[5.0, 3.0],
            offset: 0,
        },
        ..Stroke::default().with_color(color).with_width(width)
    }
}

fn draw_overlay(f: &mut Frame, sheet: &Sheet, showing: &Showing, view: &View) {
    let doc = showing.doc;
    let sel = Stroke::default()
        .with_color(palette::SELECT)
        .with_width(ink_width(view) + 1.5);
    for item in &sheet.selection {
        match *item {
            Item::Part(i) => {
                if let Some(p) = doc.parts.get(i) {
                    let b = hit::part_bounds(p);
                    let a = view.to_screen([b[0] - 0.3, b[1] - 0.3]);
                    let c = view.to_screen([b[2] + 0.3, b[3] + 0.3]);
                    f.stroke(
                        &Path::rectangle(a, Size::new(c.x - a.x, c.y - a.y)),
                        dashed(palette::SELECT, 1.5),
                    );
                }
            }
            Item::Wire(i) => {
                if let Some(w) = doc.wires.get(i) {
                    let path = Path::new(|b| {
                        for (k, p) in w.points.iter().enumerate() {
                            let q = view.to_screen([p[0] as f64, p[1] as f64]);
                            if k == 0 {
                                b.move_to(q)
                            } else {
                                b.line_to(q)
                            }
                        }
                    });
                    f.stroke(&path, sel);
                }
            }
            Item::Label(i) => {
                if let Some(l) = doc.labels.get(i) {
                    let c = view.to_screen([l.position[0] as f64, l.position[1] as f64]);
                    f.stroke(
                        &Path::circle(c, view.scale * 0.6),
                        dashed(palette::SELECT, 1.5),
                    );
                }
            }
        }
    }
    if let Some((a, b)) = sheet.band() {
        let p = view.to_screen([a[0].min(b[0]), a[1].min(b[1])]);
        let q = view.to_screen([a[0].max(b[0]), a[1].max(b[1])]);
        f.stroke(
            &Path::rectangle(p, Size::new(q.x - p.x, q.y - p.y)),
            dashed(palette::SELECT, 1.0),
        );
    }
    let Some(at) = sheet.pointer else { return };
    let g = [at[0].round() as i32, at[1].round() as i32];
    match &sheet.tool {
        Tool::Place {
            kind,
            rotation,
            mirror,
        } => {
            let mut ghost = edit::default_part(*kind);
            ghost.position = g;
            ghost.rotation = *rotation;
            ghost.mirror = *mirror;
            draw_symbol(f, &ghost, view, palette::GHOST, ink_width(view));
        }
        Tool::Wire {
            points,
            horizontal_first,
        } => {
            let target = hit::wire_target(doc, at);
            let mut pts = points.clone();
            if let Some(&last) = points.last() {
                pts.extend(
                    edit::route(last, target, *horizontal_first)
                        .into_iter()
                        .skip(1),
                );
            }
            if pts.len() >= 2 {
                let path = Path::new(|b| {
                    for (k, p) in pts.iter().enumerate() {
                        let q = view.to_screen([p[0] as f64, p[1] as f64]);
                        if k == 0 {
                            b.move_to(q)
                        } else {
                            b.line_to(q)
                        }
                    }
                });
                f.stroke(&path, dashed(palette::INK, ink_width(view)));
            }
            let c = view.to_screen([target[0] as f64, target[1] as f64]);
            let on_pin = hit::pin_at(doc, at, 0.7).is_some();
            let r = view.scale * if on_pin { 0.45 } else { 0.25 };
            f.stroke(
                &Path::circle(c, r),
                Stroke::default()
                    .with_color(palette::SELECT)
                    .with_width(1.5),
            );
        }
        Tool::Label => {
            let c = view.to_screen([g[0] as f64, g[1] as f64]);
            f.fill_text(text(
                format!("⚑ {}", showing.label_name),
                c,
                text_size(view),
                palette::GHOST,
                "start",
            ));
        }
        Tool::Select => {}
    }
}
