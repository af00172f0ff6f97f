//! The editor's state and its update function (Elm style). All electrical
//! work is library calls; edits go through [`super::edit`] and are recorded
//! in [`super::history`].

use super::annotate::{self, Derived, Figures};
use super::edit::{self, Clip, Item};
use super::files;
use super::help;
use super::history::History;
use super::message::*;
use super::sheet::{self, Sheet};
use super::value;
use crate::document::{Document, GridPoint, PartKind};
use crate::presets;
use crate::scene::{self, LayerSet, Scene, SceneOptions};
use crate::units::{self, Unit};
use iced::{keyboard, Size, Task};
use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::{Duration, Instant};

mod commands;
mod files_ui;
mod inspect;
mod sheet_actions;
mod state;

pub use super::sheet::{Tool, View, MAX_SCALE, MIN_SCALE};
pub use state::{Dialog, Field, Inspector, Pending};

/// The whole editor.
pub struct App {
    pub doc: Document,
    pub history: History,
    pub path: Option<PathBuf>,
    saved: Document,
    pub dirty: bool,
    /// The drawing area: selection, tool, view, pointer (a component).
    pub sheet: Sheet,
    /// The document as it was when a move of the selection began.
    moving: Option<Box<Document>>,
    pub derived: Derived,
    pub figures: Option<Arc<Result<Figures, String>>>,
    /// The figures shown belong to an older version of the document.
    pub stale: bool,
    generation: u64,
    /// How long the last analysis took; slow ones run off the UI thread.
    pub solve_time: Duration,
    /// The layers shown (schematic and title block always).
    pub layers: LayerSet,
    pub model: scene::ModelKind,
    pub inspector: Inspector,
    pub label_name: String,
    pub dialog: Option<Dialog>,
    clip: Clip,
    pub status: String,
    pub recent: Vec<PathBuf>,
    pub help: bool,
    /// Autosave is active (off in tests that must not write files).
    pub autosave: bool,
    /// The annotated drawing, rebuilt after every change.
    pub scene: Scene,
    /// The stage cards behind the stage table (filled by the small-signal
    /// analysis).
    pub stages: Vec<scene::StageCard>,
    /// The block cards of the last analysis (a group of transistors read as one).
    pub blocks: Vec<scene::BlockCard>,
    /// The drawer's response, spread and waveform views (a component).
    pub drawer: super::drawer::Drawer,
    /// Counts document changes; the analysis runs once per revision.
    revision: u64,
    analysed_revision: u64,
    /// An analysis started by a change, returned by `update`.
    pending: Option<Task<Message>>,
}

impl App {
    /// An editor on `doc`, saved at `path` (if any).
    pub fn new(doc: Document, path: Option<PathBuf>) -> App {
        let derived = Derived::of(&doc);
        let mut app = App {
            saved: doc.clone(),
            doc,
            history: History::default(),
            path,
            dirty: false,
            sheet: Sheet::default(),
            moving: None,
            derived,
            figures: None,
            stale: false,
            generation: 0,
            solve_time: Duration::ZERO,
            layers: LayerSet::standard(),
            model: scene::ModelKind::default(),
            inspector: Inspector::default(),
            label_name: "n1".into(),
            dialog: None,
            clip: Clip::default(),
            status: String::new(),
            recent: Vec::new(),
            help: false,
            autosave: false,
            scene: Scene::default(),
            drawer: Default::default(),
            stages: Vec::new(),
            blocks: Vec::new(),
            revision: 1,
            analysed_revision: 0,
            pending: None,
        };
        let _ = app.reanalyse();
        app.rebuild_scene();
        app.status = format!(
            "{} parts, {} nets. Pick a part on the shelf or press h for the keys.",
            app.doc.parts.len(),
            app.derived.netlist.nets.len()
        );
        app
    }

    /// Open the editor on a file, offering recovery of autosaved work.
    pub fn open(path: Option<PathBuf>) -> Result<App, String> {
        let doc = match &path {
            Some(p) if p.exists() => files::load_for_editing(p).map_err(|e| e.to_string())?,
            Some(p) => Document::new(&files::display_name(Some(p))),
            None => Document::new("untitled"),
        };
        let mut app = App::new(doc, path.clone());
        app.autosave = true;
        app.recent = files::recent();
        if let Some(p) = &path {
            if p.exists() {
                files::push_recent(&mut app.recent, p);
                files::store_recent(&app.recent);
            }
        }
        if let Some(r) = files::find_recovery(path.as_deref(), &app.doc) {
            app.dialog = Some(Dialog::Recovery(Box::new(r)));
        }
        Ok(app)
    }

    pub fn title(&self) -> String {
        let name = files::display_name(self.path.as_deref());
        if self.dirty {
            format!("{name} • unsaved — Biasline")
        } else {
            format!("{name} — Biasline")
        }
    }

    pub fn layer(&self, l: Layer) -> bool {
        self.layers.contains(l)
    }

    /// The view in use for a canvas of `size`.
    pub fn view_for(&self, size: Size) -> View {
        self.sheet.view_for(size, &self.sheet_context())
    }

    /// What the sheet reads: the document and its drawing.
    pub fn sheet_context(&self) -> sheet::Context<'_> {
        sheet::Context {
            doc: &self.doc,
            scene: &self.scene,
        }
    }

    /// What the sheet shows.
    pub fn sheet_showing(&self) -> sheet::Showing<'_> {
        sheet::Showing {
            doc: &self.doc,
            scene: &self.scene,
            layers: self.layer_set(),
            label_name: &self.label_name,
        }
    }

    /// Apply an edit: on success it is recorded for undo; on failure the
    /// document is left exactly as it was and the message is returned.
    pub fn edit<R>(
        &mut self,
        what: &str,
        f: impl FnOnce(&mut Document) -> Result<R, String>,
    ) -> Result<R, String> {
        // A move under way is recorded first, as an edit of its own.
        self.end_move();
        let before = self.doc.clone();
        match f(&mut self.doc) {
            Ok(r) => {
                if self.doc != before {
                    self.history.record(what, before);
                    self.status = format!("{what}.");
                    self.changed();
                }
                Ok(r)
            }
            Err(e) => {
                self.doc = before;
                self.status = e.clone();
                Err(e)
            }
        }
    }

    /// Everything derived from the document is rebuilt after a change.
    fn changed(&mut self) {
        self.dirty = self.doc != self.saved;
        self.derived = Derived::of(&self.doc);
        self.sheet.keep_within(&self.doc);
        self.sheet.caches.clear_sheet();
        self.sync_inspector();
        self.revision += 1;
        let task = self.reanalyse();
        self.pending = Some(match self.pending.take() {
            Some(t) => Task::batch([t, task]),
            None => task,
        });
    }

    /// The layers the user has switched on (the schematic and the title
    /// block always show).
    pub fn layer_set(&self) -> LayerSet {
        self.layers
            .with(scene::Layer::Schematic)
            .with(scene::Layer::Title)
    }

    pub fn model_kind(&self) -> scene::ModelKind {
        self.model
    }

    /// Rebuild the scene from the document and the figures shown.
    pub fn rebuild_scene(&mut self) {
        let ann =
            annotate::scene_annotations(&self.doc, &self.derived.netlist, self.figures.as_deref());
        let mut ann = ann;
        ann.stages = self.stages.clone();
        if self.stale {
            ann.title
                .assumptions
                .push("figures are from before the last edit: recomputing".into());
        }
        let opts = SceneOptions {
            layers: self.layer_set(),
            model: self.model_kind(),
            use_stored_layout: true,
        };
        self.scene = scene::build(&self.doc, &self.derived.netlist, &ann, &opts);
        self.sheet.caches.clear_sheet();
    }

    /// Rerun the analysis: at once when it is quick, else off the UI thread
    /// (the old figures stay on screen, marked stale, until fresh ones arrive).
    /// Run the analysis again for the same document (a layer that needs
    /// more analysis was switched on).
    pub fn analyse_again(&mut self) -> Task<Message> {
        self.analysed_revision = self.revision.wrapping_sub(1);
        self.reanalyse()
    }

    pub fn reanalyse(&mut self) -> Task<Message> {
        if self.analysed_revision == self.revision {
            return Task::none();
        }
        self.analysed_revision = self.revision;
        self.generation += 1;
        let generation = self.generation;
        // Quick analyses run in place; slow ones, and always the
        // time-domain run of the distortion layer, off the UI thread.
        if self.solve_time < Duration::from_millis(12) && !self.layer(Layer::Distortion) {
            let t = Instant::now();
            let r = annotate::analyse(
                &self.doc,
                &self.derived.netlist,
                self.layer(Layer::Distortion),
            );
            self.solve_time = t.elapsed();
            self.set_figures(Arc::new(r));
            Task::none()
        } else {
            self.stale = self.figures.is_some();
            self.rebuild_scene();
            let doc = self.doc.clone();
            let nl = self.derived.netlist.clone();
            let distortion = self.layer(Layer::Distortion);
            Task::perform(
                async move {
                    let t = Instant::now();
                    let r = annotate::analyse(&doc, &nl, distortion);
                    (r, t.elapsed())
                },
                move |(r, took)| Message::Analysed(generation, Arc::new(r), took),
            )
        }
    }

    fn set_figures(&mut self, r: Arc<Result<Figures, String>>) {
        match r.as_ref() {
            Ok(f) => {
                self.stages = f.annotations.stages.clone();
                self.blocks = f.annotations.blocks.clone();
                self.drawer.response = f.response.clone();
            }
            Err(_) => {
                self.stages.clear();
                self.blocks.clear();
                self.drawer.response = None;
            }
        }
        self.figures = Some(r);
        self.stale = false;
        self.rebuild_scene();
    }

    /// Counts document changes (a spread run remembers the one it was made from).
    /// The number of the newest analysis asked for (its result message
    /// carries it; older results are dropped).
    pub fn generation(&self) -> u64 {
        self.generation
    }

    pub fn revision(&self) -> u64 {
        self.revision
    }

    /// The figures, when the last analysis succeeded.
    pub fn ok_figures(&self) -> Option<&Figures> {
        self.figures.as_deref().and_then(|r| r.as_ref().ok())
    }

    /// Select `items` on the sheet; the inspector follows.
    fn select(&mut self, items: impl IntoIterator<Item = Item>) {
        self.sheet.select(items);
        self.sync_inspector();
    }

    /// The update function.
    pub fn update(&mut self, message: Message) -> Task<Message> {
        let task = self.step(message);
        match self.pending.take() {
            Some(p) => Task::batch([task, p]),
            None => task,
        }
    }

    fn step(&mut self, message: Message) -> Task<Message> {
        match message {
            Message::Sheet(input) => {
                let ctx = sheet::Context {
                    doc: &self.doc,
                    scene: &self.scene,
                };
                let action = self.sheet.update(input, &ctx);
                let task = self.apply_sheet(action);
                if !self.sheet.is_moving() {
                    // A move the sheet dropped (a pan began) is kept.
                    self.end_move();
                }
                self.follow_pointer();
                return task;
            }
            Message::Drawer(m) => {
                // The drawer's buttons, like the strip's, wait while a dialog is open.
                if m.is_input() && self.dialog.is_some() {
                    return Task::none();
                }
                let (task, line) = self.drawer.update(m);
                return self.take_drawer_output(task, line);
            }
            Message::Key(event) => return self.key(event),
            Message::Command(c) => return self.command(c),
            Message::DesignatorEdited(t) => {
                self.inspector.designator = t;
                self.inspector.designator_error = None;
            }
            Message::DesignatorSubmitted => {
                if let Some(i) = self.inspector.part {
                    let text = self.inspector.designator.clone();
                    match self.edit("rename the part", |d| edit::set_designator(d, i, &text)) {
                        Ok(()) => return self.reanalyse(),
                        Err(e) => self.inspector.designator_error = Some(e),
                    }
                }
            }
            Message::FieldEdited(key, t) => {
                if let Some(f) = self.inspector.fields.iter_mut().find(|f| f.key == key) {
                    f.text = t;
                    f.error = None;
                }
            }
            Message::FieldSubmitted(key) => return self.submit_field(&key),
            Message::FitEdited(t) => {
                self.inspector.fit_line = t;
                self.inspector.fit_error = None;
            }
            Message::FitSubmitted => return self.submit_fit(),
            Message::LabelNameEdited(t) => self.label_name = t,
            Message::Dialog(m) => {
                if let Some(a) = self.dialog.as_mut().and_then(|d| d.update(m)) {
                    return self.answer(a);
                }
            }
            Message::FindingPressed(i) => self.show_finding(i),
            Message::Analysed(generation, r, took) => {
                self.solve_time = took;
                if generation == self.generation {
                    self.set_figures(r);
                }
            }
            Message::AutosaveTick => {
                if self.autosave && self.dirty {
                    match files::autosave(&self.doc, self.path.as_deref()) {
                        Ok(_) => {}
                        Err(e) => self.status = format!("autosave failed: {e}"),
                    }
                }
                if self.autosave {
                    return autosave_timer();
                }
            }
            Message::CloseRequested(id) => {
                if self.dirty {
                    self.dialog = Some(Dialog::Unsaved {
                        then: Pending::Close(id),
                    });
                } else {
                    return self.close(id);
                }
            }
        }
        Task::none()
    }

    /// Show the drawer's status line (if any) and map its task into the app's.
    fn take_drawer_output(
        &mut self,
        task: Task<super::drawer::Message>,
        line: Option<String>,
    ) -> Task<Message> {
        if let Some(line) = line {
            self.status = line;
        }
        task.map(Message::Drawer)
    }

    fn close(&mut self, id: iced::window::Id) -> Task<Message> {
        if self.autosave {
            files::discard_autosave(self.path.as_deref());
        }
        iced::window::close(id)
    }
}

fn top_left(doc: &Document, items: &BTreeSet<Item>) -> Option<GridPoint> {
    let clip = edit::copy(doc, items);
    let _ = clip;
    let mut best: Option<GridPoint> = None;
    let mut add = |p: GridPoint| {
        best = Some(match best {
            Some(b) => [b[0].min(p[0]), b[1].min(p[1])],
            None => p,
        })
    };
    for i in items {
        match *i {
            Item::Part(k) => doc.parts.get(k).iter().for_each(|p| add(p.position)),
            Item::Wire(k) => doc
                .wires
                .get(k)
                .iter()
                .for_each(|w| w.points.iter().for_each(|p| add(*p))),
            Item::Label(k) => doc.labels.get(k).iter().for_each(|l| add(l.position)),
        }
    }
    best
}

/// A task that wakes the editor once after [`files::AUTOSAVE_EVERY`] (no
/// polling: one sleeping thread, one message).
pub fn autosave_timer() -> Task<Message> {
    Task::perform(
        async {
            let (tx, rx) = iced::futures::channel::oneshot::channel::<()>();
            std::thread::spawn(move || {
                std::thread::sleep(files::AUTOSAVE_EVERY);
                let _ = tx.send(());
            });
            let _ = rx.await;
        },
        |_| Message::AutosaveTick,
    )
}
