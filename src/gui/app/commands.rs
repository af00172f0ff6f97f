//! Commands from the strip, the shelf and the keyboard.

use super::*;

impl App {
    pub(super) fn key(&mut self, event: keyboard::Event) -> Task<Message> {
        use keyboard::key::Named;
        match event {
            keyboard::Event::KeyPressed { key, modifiers, .. } => {
                if key == keyboard::Key::Named(Named::Space) {
                    self.sheet.hold_space(true);
                    return Task::none();
                }
                if let Some(c) = help::command_for(&key, modifiers) {
                    return self.command(c);
                }
            }
            keyboard::Event::KeyReleased { key, .. } => {
                if key == keyboard::Key::Named(Named::Space) {
                    self.sheet.hold_space(false);
                }
            }
            keyboard::Event::ModifiersChanged(_) => {}
        }
        Task::none()
    }

    /// Run a command (from a button or a key).
    pub fn command(&mut self, c: Command) -> Task<Message> {
        if self.dialog.is_some() && !matches!(c, Command::Escape) {
            return Task::none();
        }
        match c {
            Command::New => return self.guard(Pending::New),
            Command::Open => return self.guard(Pending::Open),
            Command::OpenPath(p) => return self.guard(Pending::OpenPath(p)),
            Command::Save => return self.save(None),
            Command::SaveAs => {
                self.dialog = Some(Dialog::SaveAs {
                    path: self
                        .path
                        .as_ref()
                        .map(|p| p.display().to_string())
                        .unwrap_or_else(|| "untitled.json".into()),
                    error: None,
                    then: None,
                })
            }
            Command::Undo => return self.undo(true),
            Command::Redo => return self.undo(false),
            Command::Delete => {
                let items = self.sheet.selection.clone();
                if !items.is_empty() {
                    let _ = self.edit("delete", |d| {
                        edit::delete(d, &items);
                        Ok(())
                    });
                    self.select([]);
                    return self.reanalyse();
                }
            }
            Command::Turn | Command::Flip => {
                let mirror = c == Command::Flip;
                if let Tool::Place {
                    rotation,
                    mirror: m,
                    ..
                } = &mut self.sheet.tool
                {
                    if mirror {
                        *m = !*m;
                    } else {
                        *rotation = (*rotation + 90) % 360;
                    }
                    self.sheet.caches.clear_overlay();
                    return Task::none();
                }
                let parts: Vec<usize> = self
                    .sheet
                    .selection
                    .iter()
                    .filter_map(|i| match i {
                        Item::Part(k) => Some(*k),
                        _ => None,
                    })
                    .collect();
                if !parts.is_empty() {
                    let what = if mirror { "flip" } else { "turn" };
                    let _ = self.edit(what, |d| {
                        for k in parts {
                            edit::turn(d, k, mirror);
                        }
                        Ok(())
                    });
                    return self.reanalyse();
                }
            }
            Command::Copy => {
                self.clip = edit::copy(&self.doc, &self.sheet.selection);
                self.status = format!("copied {} items", self.sheet.selection.len());
            }
            Command::Paste | Command::Duplicate => {
                let (clip, at) = if c == Command::Duplicate {
                    let clip = edit::copy(&self.doc, &self.sheet.selection);
                    let at =
                        top_left(&self.doc, &self.sheet.selection).map(|[x, y]| [x + 2, y + 2]);
                    (clip, at.unwrap_or([0, 0]))
                } else {
                    (self.clip.clone(), self.sheet.grid_at_pointer())
                };
                if !clip.is_empty() {
                    let what = if c == Command::Duplicate {
                        "duplicate"
                    } else {
                        "paste"
                    };
                    if let Ok(items) = self.edit(what, |d| Ok(edit::paste(d, &clip, at))) {
                        self.select(items);
                    }
                    return self.reanalyse();
                }
            }
            Command::Fit => self.sheet.fit(),
            Command::Tidy => {
                let tidied = self.edit("tidy the sheet", |d| {
                    *d = crate::layout::tidy(d);
                    Ok(())
                });
                if tidied.is_ok() {
                    self.sheet.selection.clear();
                    self.sheet.fit();
                }
                return self.reanalyse();
            }
            Command::ZoomIn | Command::ZoomOut => {
                let f = if c == Command::ZoomIn { 1.25 } else { 0.8 };
                let ctx = sheet::Context {
                    doc: &self.doc,
                    scene: &self.scene,
                };
                self.sheet.zoom_centre(f, &ctx);
            }
            Command::Select => self.set_tool(Tool::Select),
            Command::Wire => self.set_tool(Tool::Wire {
                points: Vec::new(),
                horizontal_first: true,
            }),
            Command::Label => self.set_tool(Tool::Label),
            Command::Place(kind) => self.set_tool(Tool::Place {
                kind,
                rotation: 0,
                mirror: false,
            }),
            Command::ToggleLayer(l) => {
                self.layers = if self.layers.contains(l) {
                    self.layers.without(l)
                } else {
                    self.layers.with(l)
                };
                if l == Layer::Distortion && self.layers.contains(l) {
                    // Its figures come from a time-domain run, made only
                    // while the layer is on.
                    return self.analyse_again();
                }
                self.rebuild_scene();
            }
            Command::Model(m) => {
                self.model = m;
                self.rebuild_scene();
            }
            Command::Help => self.help = !self.help,
            Command::Escape => {
                if self.help {
                    self.help = false;
                } else if self.dialog.is_some() {
                    return self.answer(Answer::Cancel);
                } else if let Tool::Wire { points, .. } = &self.sheet.tool {
                    let points = points.clone();
                    if points.len() >= 2 {
                        let _ = self.edit("draw a wire", |d| Ok(edit::add_wire(d, &points)));
                        self.set_tool(Tool::Select);
                        return self.reanalyse();
                    }
                    self.set_tool(Tool::Select);
                } else if self.sheet.tool != Tool::Select {
                    self.set_tool(Tool::Select);
                } else {
                    self.select([]);
                }
            }
            Command::ToggleBend => {
                if let Tool::Wire {
                    horizontal_first, ..
                } = &mut self.sheet.tool
                {
                    *horizontal_first = !*horizontal_first;
                    self.sheet.caches.clear_overlay();
                }
            }
            Command::MarkSource | Command::MarkLoad => {
                if let Some(i) = self.inspector.part {
                    let source = c == Command::MarkSource;
                    let what = if source {
                        "mark the signal source"
                    } else {
                        "mark the load"
                    };
                    let _ = self.edit(what, |d| edit::toggle_signal_mark(d, i, source));
                    return self.reanalyse();
                }
            }
            Command::Spread => {
                let (task, line) = self.drawer.start_spread(&self.doc, self.revision());
                return self.take_drawer_output(task, line);
            }
            Command::Waveform => {
                let (task, line) = self.drawer.start_waveform(&self.doc, self.revision());
                return self.take_drawer_output(task, line);
            }
            Command::DesignStage => {
                self.dialog = Some(Dialog::Design {
                    path: super::super::design_dialog::EXAMPLE.into(),
                    error: None,
                });
            }
            Command::ExportReport => {
                let stem = self
                    .path
                    .as_ref()
                    .map(|p| p.with_extension(""))
                    .unwrap_or_else(|| PathBuf::from("untitled"));
                self.dialog = Some(Dialog::Report {
                    path: format!("{}.html", stem.display()),
                    error: None,
                });
            }
            Command::ExportPng | Command::ExportSvg => {
                let svg = c == Command::ExportSvg;
                let stem = self
                    .path
                    .as_ref()
                    .map(|p| p.with_extension(""))
                    .unwrap_or_else(|| PathBuf::from("untitled"));
                let path = format!("{}.{}", stem.display(), if svg { "svg" } else { "png" });
                self.dialog = Some(Dialog::Export {
                    svg,
                    path,
                    error: None,
                });
            }
        }
        Task::none()
    }

    pub(super) fn set_tool(&mut self, tool: Tool) {
        self.status = match &tool {
            Tool::Select => {
                "select: click a part, drag to move, drag on paper to select an area".into()
            }
            Tool::Place { kind, .. } => {
                format!("place a {kind}: click on the sheet; t turns, f flips, Esc ends")
            }
            Tool::Wire { .. } => {
                "wire: click to start, click to bend, end on a pin or a wire; / swaps the bend"
                    .into()
            }
            Tool::Label => {
                "net label: type the name in the inspector, then click on a wire or pin".into()
            }
        };
        self.sheet.set_tool(tool);
        // A move cut short by the change is kept and recorded.
        self.end_move();
    }

    pub(super) fn undo(&mut self, back: bool) -> Task<Message> {
        // A move under way is recorded first: undo takes it back.
        self.end_move();
        let done = if back {
            self.history.undo(&mut self.doc)
        } else {
            self.history.redo(&mut self.doc)
        };
        match done {
            Some(what) => {
                self.status = format!("{} {what}", if back { "undid" } else { "redid" });
                self.changed();
                Task::none()
            }
            None => {
                self.status = if back {
                    "nothing to undo"
                } else {
                    "nothing to redo"
                }
                .into();
                Task::none()
            }
        }
    }
}
