//! What pointer input on the sheet does: select, move, band-select, place,
//! draw wires, attach labels, pan and zoom.

use super::*;

impl App {
    pub(super) fn zoom(&mut self, about: Point, factor: f32) {
        let v = self.view_for(self.canvas_size);
        let scale = (v.scale * factor).clamp(MIN_SCALE, MAX_SCALE);
        let k = scale / v.scale;
        let origin = Vector::new(
            about.x - (about.x - v.origin.x) * k,
            about.y - (about.y - v.origin.y) * k,
        );
        self.view = Some(View { origin, scale });
        self.caches.clear_all();
    }

    pub(super) fn sheet(&mut self, input: SheetInput) -> Task<Message> {
        self.canvas_origin = input.origin;
        if input.size != self.canvas_size {
            self.canvas_size = input.size;
            self.caches.clear_all();
        }
        let view = self.view_for(input.size);
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
                self.zoom(input.position, 1.15f32.powf(lines));
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
                    Some(Drag::Move { last, .. }) => {
                        let g = [at[0].round() as i32, at[1].round() as i32];
                        let (dx, dy) = (g[0] - last[0], g[1] - last[1]);
                        if dx != 0 || dy != 0 {
                            *last = g;
                            let items = self.selection.clone();
                            edit::move_items(&mut self.doc, &items, dx, dy);
                            self.derived = Derived::of(&self.doc);
                            let opts = SceneOptions {
                                layers: LayerSet::NONE.with(scene::Layer::Schematic),
                                model: self.model_kind(),
                                use_stored_layout: true,
                            };
                            self.scene = scene::build(
                                &self.doc,
                                &self.derived.netlist,
                                &scene::Annotations::default(),
                                &opts,
                            );
                            self.caches.clear_sheet();
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
            SheetInputKind::Press(Button::Right) => return self.command(Command::Escape),
            SheetInputKind::Press(Button::Left) => {
                self.pointer = Some(at);
                return self.click(at, tol);
            }
            SheetInputKind::Release(_) => return self.release(),
        }
        Task::none()
    }

    pub(super) fn click(&mut self, at: [f64; 2], tol: f64) -> Task<Message> {
        let g = [at[0].round() as i32, at[1].round() as i32];
        match self.tool.clone() {
            Tool::Place {
                kind,
                rotation,
                mirror,
            } => {
                if let Ok(i) = self.edit(&format!("place a {kind}"), |d| {
                    Ok(edit::place(d, kind, g, rotation, mirror))
                }) {
                    self.select([Item::Part(i)]);
                }
                self.reanalyse()
            }
            Tool::Label => {
                let name = self.label_name.clone();
                let target = hit::wire_target(&self.doc, at);
                match self.edit("attach a net label", |d| edit::add_label(d, &name, target)) {
                    Ok(_) => {
                        self.label_name = next_label_name(&self.doc, &name);
                        self.reanalyse()
                    }
                    Err(_) => Task::none(),
                }
            }
            Tool::Wire {
                mut points,
                horizontal_first,
            } => {
                let target = hit::wire_target(&self.doc, at);
                let Some(&last) = points.last() else {
                    self.tool = Tool::Wire {
                        points: vec![target],
                        horizontal_first,
                    };
                    return Task::none();
                };
                if target == last {
                    // A second click on the same point ends the wire.
                    return self.command(Command::Escape);
                }
                points.extend(
                    edit::route(last, target, horizontal_first)
                        .into_iter()
                        .skip(1),
                );
                let ends_on_something = hit::pin_at(&self.doc, at, 0.7).is_some()
                    || self.doc.wires.iter().any(|w| {
                        w.points.windows(2).any(|s| {
                            hit::segment_distance([target[0] as f64, target[1] as f64], s[0], s[1])
                                < 1e-9
                        })
                    });
                if ends_on_something {
                    let pts = points.clone();
                    let _ = self.edit("draw a wire", |d| Ok(edit::add_wire(d, &pts)));
                    self.tool = Tool::Wire {
                        points: Vec::new(),
                        horizontal_first,
                    };
                    return self.reanalyse();
                }
                self.tool = Tool::Wire {
                    points,
                    horizontal_first,
                };
                self.caches.clear_overlay();
                Task::none()
            }
            Tool::Select => {
                match hit::item_at(&self.doc, at, tol) {
                    Some(item) => {
                        if !self.selection.contains(&item) {
                            self.select([item]);
                        }
                        self.drag = Some(Drag::Move {
                            last: g,
                            before: Box::new(self.doc.clone()),
                        });
                    }
                    None => {
                        self.select([]);
                        self.drag = Some(Drag::Band { from: at, to: at });
                    }
                }
                Task::none()
            }
        }
    }

    pub(super) fn release(&mut self) -> Task<Message> {
        match self.drag.take() {
            Some(Drag::Move { before, .. }) => {
                if *before != self.doc {
                    self.history.record("move", *before);
                    self.status = "moved.".into();
                    self.changed();
                } else {
                    self.derived = Derived::of(&self.doc);
                    self.rebuild_scene();
                }
            }
            Some(Drag::Band { from, to }) => {
                let items = hit::items_in(&self.doc, from, to);
                self.select(items);
            }
            _ => {}
        }
        self.caches.clear_overlay();
        Task::none()
    }

    /// The band being dragged, for drawing.
    pub fn band(&self) -> Option<([f64; 2], [f64; 2])> {
        match &self.drag {
            Some(Drag::Band { from, to }) => Some((*from, *to)),
            _ => None,
        }
    }

    pub fn is_panning(&self) -> bool {
        matches!(self.drag, Some(Drag::Pan { .. })) || self.space_down
    }
}

/// The next free label name after `used` (n1 → n2, vout → vout2).
fn next_label_name(doc: &Document, used: &str) -> String {
    let head = used.trim_end_matches(|c: char| c.is_ascii_digit());
    (2..)
        .map(|n| format!("{head}{n}"))
        .find(|c| !doc.labels.iter().any(|l| &l.name == c))
        .unwrap_or_default()
}
