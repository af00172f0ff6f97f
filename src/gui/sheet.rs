//! The sheet as a component: it owns what belongs to the drawing area
//! (the selection, the tool in hand, the view, the canvas's size and place,
//! the pointer, a drag under way and the drawing caches), its own message
//! (pointer input, [`Message`]), its update and its view. It never holds
//! or changes the document: [`Sheet::update`] reads it and returns an
//! [`Action`] — an edit for the app to apply and record for undo, or news
//! the app must follow (the selection changed, a move began or ended).

use super::canvas::{Caches, SheetCanvas};
use super::edit::Item;
use super::hit;
use crate::document::{Document, GridPoint, PartKind};
use crate::scene::{LayerSet, Scene};
use iced::widget::canvas;
use iced::{Element, Length, Point, Size, Vector};
use std::collections::BTreeSet;

mod input;
mod state;

pub(crate) use state::Drag;
pub use state::{Tool, View, MAX_SCALE, MIN_SCALE};

/// An input on the sheet, in canvas pixels, with the canvas size.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SheetInput {
    pub kind: SheetInputKind,
    pub position: Point,
    pub size: Size,
    /// The canvas's top-left corner in the window.
    pub origin: Point,
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SheetInputKind {
    Press(Button),
    Release(Button),
    Move,
    /// Wheel lines, positive away from the user (zoom in).
    Scroll(f32),
    Left,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Button {
    Left,
    Middle,
    Right,
}

/// What the sheet hears: pointer input.
pub type Message = SheetInput;

/// What the app must do after a sheet message.
#[derive(Debug, Clone, PartialEq)]
pub enum Action {
    None,
    /// As the Escape key (the right button; a wire clicked twice on its end).
    Escape,
    /// Place a part of `kind` at `at`.
    Place {
        kind: PartKind,
        at: GridPoint,
        rotation: u16,
        mirror: bool,
    },
    /// Attach a net label (the name typed in the inspector) at `at`.
    Label(GridPoint),
    /// Draw a wire through these points.
    Wire(Vec<GridPoint>),
    /// The selection changed (the inspector follows it).
    Selected,
    /// A move of the selection begins; `selected`: the grab selected a new item.
    Grab {
        selected: bool,
    },
    /// Move the selection by whole grid steps (while dragging).
    MoveBy(i32, i32),
    /// The move ended: record it for undo.
    MoveEnd,
}

/// What the sheet reads from the app: the document and its drawing.
#[derive(Clone, Copy)]
pub struct Context<'a> {
    pub doc: &'a Document,
    pub scene: &'a Scene,
}

/// What the sheet's view shows besides its own state.
#[derive(Clone, Copy)]
pub struct Showing<'a> {
    pub doc: &'a Document,
    pub scene: &'a Scene,
    /// The layers shown.
    pub layers: LayerSet,
    /// The name the label tool attaches.
    pub label_name: &'a str,
}

impl<'a> Showing<'a> {
    pub fn context(&self) -> Context<'a> {
        Context {
            doc: self.doc,
            scene: self.scene,
        }
    }
}

/// The sheet's state.
pub struct Sheet {
    pub selection: BTreeSet<Item>,
    pub tool: Tool,
    /// `None`: fit the drawing to the canvas.
    pub view: Option<View>,
    /// The canvas's size, pixels.
    pub size: Size,
    /// The canvas's top-left corner in the window.
    pub origin: Point,
    /// The pointer on the sheet, grid units.
    pub pointer: Option<[f64; 2]>,
    space_down: bool,
    drag: Option<Drag>,
    /// The drawing's layered caches.
    pub caches: Caches,
}

impl Default for Sheet {
    fn default() -> Self {
        Sheet {
            selection: BTreeSet::new(),
            tool: Tool::Select,
            view: None,
            size: Size::new(900.0, 600.0),
            origin: Point::ORIGIN,
            pointer: None,
            space_down: false,
            drag: None,
            caches: Caches::default(),
        }
    }
}

impl Sheet {
    /// The view in use for a canvas of `size`.
    pub fn view_for(&self, size: Size, ctx: &Context) -> View {
        self.view.unwrap_or_else(|| {
            if ctx.doc.parts.is_empty() && ctx.doc.wires.is_empty() {
                // An empty sheet opens at a comfortable working zoom.
                View {
                    origin: Vector::new(40.0, 40.0),
                    scale: 14.0,
                }
            } else {
                View::fit(ctx.scene, size)
            }
        })
    }

    /// Zoom by `factor` about `about` (canvas pixels).
    pub fn zoom(&mut self, about: Point, factor: f32, ctx: &Context) {
        let v = self.view_for(self.size, ctx);
        let scale = (v.scale * factor).clamp(MIN_SCALE, MAX_SCALE);
        let k = scale / v.scale;
        let origin = Vector::new(
            about.x - (about.x - v.origin.x) * k,
            about.y - (about.y - v.origin.y) * k,
        );
        self.view = Some(View { origin, scale });
        self.caches.clear_all();
    }

    /// Zoom about the canvas's centre.
    pub fn zoom_centre(&mut self, factor: f32, ctx: &Context) {
        let centre = Point::new(self.size.width / 2.0, self.size.height / 2.0);
        self.zoom(centre, factor, ctx);
    }

    /// Bring the grid point `at` to the canvas's centre (same zoom).
    pub fn centre_on(&mut self, at: GridPoint, ctx: &Context) {
        let v = self.view_for(self.size, ctx);
        let here = v.to_screen([at[0] as f64, at[1] as f64]);
        let centre = Point::new(self.size.width / 2.0, self.size.height / 2.0);
        self.view = Some(View {
            origin: v.origin + (centre - here),
            scale: v.scale,
        });
        self.caches.clear_all();
    }

    /// Fit the drawing to the canvas from now on.
    pub fn fit(&mut self) {
        self.view = None;
        self.caches.clear_all();
    }

    /// A fresh sheet for another document.
    pub fn reset(&mut self) {
        self.selection.clear();
        self.tool = Tool::Select;
        self.view = None;
        self.drag = None;
    }

    /// Select `items` (the app then follows with its inspector).
    pub fn select(&mut self, items: impl IntoIterator<Item = Item>) {
        self.selection = items.into_iter().collect();
        self.caches.clear_overlay();
    }

    /// Take up `tool`; a drag under way ends.
    pub fn set_tool(&mut self, tool: Tool) {
        self.tool = tool;
        self.drag = None;
        self.caches.clear_overlay();
    }

    /// The space bar is held (a left drag pans) or let go.
    pub fn hold_space(&mut self, down: bool) {
        self.space_down = down;
    }

    /// The grid point under the pointer (the origin when it is off the sheet).
    pub fn grid_at_pointer(&self) -> GridPoint {
        let p = self.pointer.unwrap_or([0.0, 0.0]);
        [p[0].round() as i32, p[1].round() as i32]
    }

    /// Drop selected items the document no longer has.
    pub fn keep_within(&mut self, doc: &Document) {
        self.selection.retain(|i| match *i {
            Item::Part(k) => k < doc.parts.len(),
            Item::Wire(k) => k < doc.wires.len(),
            Item::Label(k) => k < doc.labels.len(),
        });
    }

    /// The band being dragged, for drawing.
    pub fn band(&self) -> Option<([f64; 2], [f64; 2])> {
        match &self.drag {
            Some(Drag::Band { from, to }) => Some((*from, *to)),
            _ => None,
        }
    }

    /// The selection is being moved.
    pub fn is_moving(&self) -> bool {
        matches!(self.drag, Some(Drag::Move { .. }))
    }

    pub fn is_panning(&self) -> bool {
        matches!(self.drag, Some(Drag::Pan { .. })) || self.space_down
    }

    /// The hit tolerance at the view in use, grid units.
    pub fn tolerance(&self, ctx: &Context) -> f64 {
        (6.0 / self.view_for(self.size, ctx).scale as f64).max(0.25)
    }

    /// The canvas (clipping is the caller's).
    pub fn view<'a>(&'a self, showing: Showing<'a>) -> Element<'a, Message> {
        canvas(SheetCanvas {
            sheet: self,
            showing,
        })
        .width(Length::Fill)
        .height(Length::Fill)
        .into()
    }

    /// Handle pointer input; what the app must do.
    pub fn update(&mut self, input: Message, ctx: &Context) -> Action {
        self.input(input, ctx)
    }
}

/// Whether a wire ending at `target` (near `at`) ends on a pin or a wire.
fn ends_on_something(doc: &Document, at: [f64; 2], target: GridPoint) -> bool {
    hit::pin_at(doc, at, 0.7).is_some()
        || doc.wires.iter().any(|w| {
            w.points.windows(2).any(|s| {
                hit::segment_distance([target[0] as f64, target[1] as f64], s[0], s[1]) < 1e-9
            })
        })
}

#[cfg(test)]
mod tests;
