//! What pointer input on the sheet does: select, move, band-select, place,
//! draw wires, attach labels, pan and zoom — as actions for the app where
//! the document changes.

use super::*;

impl Sheet {
    pub(super) fn input(&mut self, input: SheetInput, ctx: &Context) -> Action {
        self.origin = input.origin;
        if input.size != self.size {
            self.size = input.size;
            self.caches.clear_all();
        }
        let view = self.view_for(input.size, ctx);
        if matches!(input.kind, SheetInputKind::Press(_)) && self.view.is_none() {
            // Work starts here: the view stays put from now on (no jump when
            // the fitted extent changes under the pointer).
            self.view = Some(view);
        }
        let at = view.to_sheet(input.position);
        let tol = (6.0 / view.scale as f64).max(0.25);
        match input.kind {
            SheetInputKind::Left => {
                self.pointer = None;
                self.caches.clear_overlay();
            }
            SheetInputKind::Scroll(lines) => {
                self.zoom(input.position, 1.15f32.powf(lines), ctx);
            }
            SheetInputKind::Move => {
                self.pointer = Some(at);
                self.caches.clear_overlay();
                match &mut self.drag {
                    Some(Drag::Pan { last }) => {
                        let d = input.position - *last;
                        *last = input.position;
                        self.view = Some(View {
                            origin: view.origin + d,
                            scale: view.scale,
                        });
                        self.caches.clear_all();
                    }
                    Some(Drag::Move { last }) => {
                        let g = [at[0].round() as i32, at[1].round() as i32];
                        let (dx, dy) = (g[0] - last[0], g[1] - last[1]);
                        if dx != 0 || dy != 0 {
                            *last = g;
                            return Action::MoveBy(dx, dy);
                        }
                    }
                    Some(Drag::Band { to, .. }) => *to = at,
                    None => {}
                }
            }
            SheetInputKind::Press(Button::Middle) => {
                self.drag = Some(Drag::Pan {
                    last: input.position,
                });
            }
            SheetInputKind::Press(Button::Left) if self.space_down => {
                self.drag = Some(Drag::Pan {
                    last: input.position,
                });
            }
            SheetInputKind::Press(Button::Right) => return Action::Escape,
            SheetInputKind::Press(Button::Left) => {
                self.pointer = Some(at);
                return self.click(at, tol, ctx);
            }
            SheetInputKind::Release(_) => return self.release(ctx),
        }
        Action::None
    }

    fn click(&mut self, at: [f64; 2], tol: f64, ctx: &Context) -> Action {
        let g = [at[0].round() as i32, at[1].round() as i32];
        match &mut self.tool {
            Tool::Place {
                kind,
                rotation,
                mirror,
            } => Action::Place {
                kind: *kind,
                at: g,
                rotation: *rotation,
                mirror: *mirror,
            },
            Tool::Label => Action::Label(hit::wire_target(ctx.doc, at)),
            Tool::Wire {
                points,
                horizontal_first,
            } => {
                let target = hit::wire_target(ctx.doc, at);
                let Some(&last) = points.last() else {
                    points.push(target);
                    return Action::None;
                };
                if target == last {
                    // A second click on the same point ends the wire.
                    return Action::Escape;
                }
                points.extend(
                    super::super::edit::route(last, target, *horizontal_first)
                        .into_iter()
                        .skip(1),
                );
                if ends_on_something(ctx.doc, at, target) {
                    return Action::Wire(std::mem::take(points));
                }
                self.caches.clear_overlay();
                Action::None
            }
            Tool::Select => match hit::item_at(ctx.doc, at, tol) {
                Some(item) => {
                    let selected = !self.selection.contains(&item);
                    if selected {
                        self.select([item]);
                    }
                    self.drag = Some(Drag::Move { last: g });
                    Action::Grab { selected }
                }
                None => {
                    self.select([]);
                    self.drag = Some(Drag::Band { from: at, to: at });
                    Action::Selected
                }
            },
        }
    }

    fn release(&mut self, ctx: &Context) -> Action {
        let action = match self.drag.take() {
            Some(Drag::Move { .. }) => Action::MoveEnd,
            Some(Drag::Band { from, to }) => {
                let items = hit::items_in(ctx.doc, from, to);
                self.select(items);
                Action::Selected
            }
            _ => Action::None,
        };
        self.caches.clear_overlay();
        action
    }
}
