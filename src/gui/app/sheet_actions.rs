//! What the app does with the sheet's actions: edits of the document
//! (recorded for undo), the inspector following the selection, and a move
//! of the selection shown live and recorded once when it ends.

use super::sheet::Action;
use super::*;

impl App {
    pub(super) fn apply_sheet(&mut self, action: Action) -> Task<Message> {
        match action {
            Action::None => Task::none(),
            Action::Escape => self.command(Command::Escape),
            Action::Place {
                kind,
                at,
                rotation,
                mirror,
            } => {
                if let Ok(i) = self.edit(&format!("place a {kind}"), |d| {
                    Ok(edit::place(d, kind, at, rotation, mirror))
                }) {
                    self.select([Item::Part(i)]);
                }
                self.reanalyse()
            }
            Action::Label(target) => {
                let name = self.label_name.clone();
                match self.edit("attach a net label", |d| edit::add_label(d, &name, target)) {
                    Ok(_) => {
                        self.label_name = next_label_name(&self.doc, &name);
                        self.reanalyse()
                    }
                    Err(_) => Task::none(),
                }
            }
            Action::Wire(points) => {
                let _ = self.edit("draw a wire", |d| Ok(edit::add_wire(d, &points)));
                self.reanalyse()
            }
            Action::Selected => {
                self.sync_inspector();
                Task::none()
            }
            Action::Grab { selected } => {
                // A press while a move is under way (a release missed)
                // ends that move first.
                self.end_move();
                if selected {
                    self.sync_inspector();
                }
                self.moving = Some(Box::new(self.doc.clone()));
                Task::none()
            }
            Action::MoveBy(dx, dy) => {
                if self.moving.is_some() {
                    self.move_live(dx, dy);
                }
                Task::none()
            }
            Action::MoveEnd => {
                self.end_move();
                Task::none()
            }
        }
    }

    /// Move the selection while dragging: the drawing follows at once, the
    /// analysis waits for the release.
    fn move_live(&mut self, dx: i32, dy: i32) {
        let items = self.sheet.selection.clone();
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
        self.sheet.caches.clear_sheet();
    }

    /// A move of the selection ended (released, or cut short by a change of
    /// tool): record it for undo and analyse; nothing moved, redraw.
    pub(super) fn end_move(&mut self) {
        let Some(before) = self.moving.take() else {
            return;
        };
        if *before != self.doc {
            self.history.record("move", *before);
            self.status = "moved.".into();
            self.changed();
        } else {
            self.derived = Derived::of(&self.doc);
            self.rebuild_scene();
        }
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
