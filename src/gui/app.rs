//! The editor's state and its update function (Elm style). All electrical
//! work is library calls; edits go through [`super::edit`] and are recorded
//! in [`super::history`].

use super::annotate::{self, Derived, Figures};
use super::canvas::Caches;
use super::edit::{self, Clip, Item};
use super::files::{self, Recovery};
use super::help;
use super::history::History;
use super::hit;
use super::message::*;
use super::value;
use crate::document::{self, Document, GridPoint, PartKind};
use crate::presets;
use crate::scene::{self, LayerSet, Scene, SceneOptions};
use crate::units::{self, Unit};
use iced::{keyboard, Point, Size, Task, Vector};
use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::{Duration, Instant};

/// What a click on the sheet does.
#[derive(Debug, Clone, PartialEq)]
pub enum Tool {
    Select,
    Place {
        kind: PartKind,
        rotation: u16,
        mirror: bool,
    },
    Wire {
        /// Points fixed so far (empty before the first click).
        points: Vec<GridPoint>,
        horizontal_first: bool,
    },
    Label,
}

/// Screen placement of the sheet: pixel position of grid point (0, 0) and
/// pixels per grid step.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct View {
    pub origin: Vector,
    pub scale: f32,
}

impl View {
    pub fn to_screen(&self, p: [f64; 2]) -> Point {
        Point::new(
            self.origin.x + p[0] as f32 * self.scale,
            self.origin.y + p[1] as f32 * self.scale,
        )
    }
    pub fn to_sheet(&self, p: Point) -> [f64; 2] {
        [
            ((p.x - self.origin.x) / self.scale) as f64,
            ((p.y - self.origin.y) / self.scale) as f64,
        ]
    }
    /// A view showing the whole of `scene` in a canvas of `size`.
    pub fn fit(scene: &Scene, size: Size) -> View {
        let r = scene.bounds;
        let b = if r.is_empty() || r.width() < 1.0 {
            [0.0, 0.0, 40.0, 30.0]
        } else {
            [r.min[0], r.min[1], r.max[0], r.max[1]]
        };
        let margin = 1.0;
        let (w, h) = (
            (b[2] - b[0] + 2.0 * margin) as f32,
            (b[3] - b[1] + 2.0 * margin) as f32,
        );
        let scale = (size.width / w).min(size.height / h).clamp(MIN_SCALE, 40.0);
        let cx = ((b[0] + b[2]) / 2.0) as f32;
        let cy = ((b[1] + b[3]) / 2.0) as f32;
        View {
            origin: Vector::new(
                size.width / 2.0 - cx * scale,
                size.height / 2.0 - cy * scale,
            ),
            scale,
        }
    }
}

pub const MIN_SCALE: f32 = 4.0;
pub const MAX_SCALE: f32 = 80.0;

#[derive(Debug, Clone)]
enum Drag {
    Pan {
        last: Point,
    },
    Move {
        last: GridPoint,
        before: Box<Document>,
    },
    Band {
        from: [f64; 2],
        to: [f64; 2],
    },
}

/// One editable number of the selected part.
#[derive(Debug, Clone, PartialEq)]
pub struct Field {
    pub key: String,
    pub text: String,
    pub unit: Unit,
    /// Written on the part (else it comes from the preset or the defaults).
    pub own: bool,
    /// Why the typed text was refused, shown under the field.
    pub error: Option<String>,
}

/// The inspector's edit buffers for the selection.
#[derive(Debug, Clone, Default)]
pub struct Inspector {
    pub part: Option<usize>,
    pub designator: String,
    pub designator_error: Option<String>,
    pub fields: Vec<Field>,
}

/// Work that waits for an answer about unsaved changes.
#[derive(Debug, Clone, PartialEq)]
pub enum Pending {
    New,
    Open,
    OpenPath(PathBuf),
    Close(iced::window::Id),
}

#[derive(Debug, Clone)]
pub enum Dialog {
    Unsaved {
        then: Pending,
    },
    Open {
        path: String,
        error: Option<String>,
    },
    SaveAs {
        path: String,
        error: Option<String>,
        then: Option<Pending>,
    },
    Recovery(Recovery),
    Export {
        svg: bool,
        path: String,
        error: Option<String>,
    },
}

/// The whole editor.
pub struct App {
    pub doc: Document,
    pub history: History,
    pub path: Option<PathBuf>,
    saved: Document,
    pub dirty: bool,
    pub selection: BTreeSet<Item>,
    pub tool: Tool,
    /// `None`: fit the sheet to the canvas.
    pub view: Option<View>,
    pub canvas_size: Size,
    /// The canvas's top-left corner in the window.
    pub canvas_origin: Point,
    pub derived: Derived,
    pub figures: Option<Arc<Result<Figures, String>>>,
    /// The figures shown belong to an older version of the document.
    pub stale: bool,
    generation: u64,
    /// How long the last analysis took; slow ones run off the UI thread.
    pub solve_time: Duration,
    pub layers: [bool; 3],
    pub model: ModelChoice,
    pub inspector: Inspector,
    pub label_name: String,
    pub dialog: Option<Dialog>,
    clip: Clip,
    /// The pointer on the sheet, grid units.
    pub pointer: Option<[f64; 2]>,
    space_down: bool,
    drag: Option<Drag>,
    pub status: String,
    pub recent: Vec<PathBuf>,
    pub help: bool,
    pub caches: Caches,
    /// Autosave is active (off in tests that must not write files).
    pub autosave: bool,
    /// The annotated drawing, rebuilt after every change.
    pub scene: Scene,
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
            selection: BTreeSet::new(),
            tool: Tool::Select,
            view: None,
            canvas_size: Size::new(900.0, 600.0),
            canvas_origin: Point::ORIGIN,
            derived,
            figures: None,
            stale: false,
            generation: 0,
            solve_time: Duration::ZERO,
            layers: [true, true, true],
            model: ModelChoice::default(),
            inspector: Inspector::default(),
            label_name: "n1".into(),
            dialog: None,
            clip: Clip::default(),
            pointer: None,
            space_down: false,
            drag: None,
            status: String::new(),
            recent: Vec::new(),
            help: false,
            caches: Caches::default(),
            autosave: false,
            scene: Scene::default(),
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
            Some(p) if p.exists() => document::load_file(p).map_err(|e| e.to_string())?,
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
            app.dialog = Some(Dialog::Recovery(r));
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
        self.layers[l as usize]
    }

    /// The view in use for a canvas of `size`.
    pub fn view_for(&self, size: Size) -> View {
        self.view.unwrap_or_else(|| View::fit(&self.scene, size))
    }

    /// Apply an edit: on success it is recorded for undo; on failure the
    /// document is left exactly as it was and the message is returned.
    pub fn edit<R>(
        &mut self,
        what: &str,
        f: impl FnOnce(&mut Document) -> Result<R, String>,
    ) -> Result<R, String> {
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
        self.selection.retain(|i| match *i {
            Item::Part(k) => k < self.doc.parts.len(),
            Item::Wire(k) => k < self.doc.wires.len(),
            Item::Label(k) => k < self.doc.labels.len(),
        });
        self.caches.clear_sheet();
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
        let mut set = LayerSet::NONE
            .with(scene::Layer::Schematic)
            .with(scene::Layer::Title);
        for (on, l) in self.layers.iter().zip([
            scene::Layer::Voltages,
            scene::Layer::Currents,
            scene::Layer::Stages,
        ]) {
            if *on {
                set = set.with(l);
            }
        }
        set
    }

    pub fn model_kind(&self) -> scene::ModelKind {
        match self.model {
            ModelChoice::ReModel => scene::ModelKind::T,
            ModelChoice::HParameters => scene::ModelKind::H,
            ModelChoice::HybridPi => scene::ModelKind::HybridPi,
        }
    }

    /// Rebuild the scene from the document and the figures shown.
    pub fn rebuild_scene(&mut self) {
        let ann =
            annotate::scene_annotations(&self.doc, &self.derived.netlist, self.figures.as_deref());
        let opts = SceneOptions {
            layers: self.layer_set(),
            model: self.model_kind(),
            use_stored_layout: true,
        };
        self.scene = scene::build(&self.doc, &self.derived.netlist, &ann, &opts);
        self.caches.clear_sheet();
    }

    /// Rerun the analysis: at once when it is quick, else off the UI thread
    /// (the old figures stay on screen, marked stale, until fresh ones arrive).
    pub fn reanalyse(&mut self) -> Task<Message> {
        if self.analysed_revision == self.revision {
            return Task::none();
        }
        self.analysed_revision = self.revision;
        self.generation += 1;
        let generation = self.generation;
        if self.solve_time < Duration::from_millis(12) {
            let t = Instant::now();
            let r = annotate::analyse(&self.doc, &self.derived.netlist);
            self.solve_time = t.elapsed();
            self.set_figures(Arc::new(r));
            Task::none()
        } else {
            self.stale = self.figures.is_some();
            self.rebuild_scene();
            let doc = self.doc.clone();
            let nl = self.derived.netlist.clone();
            Task::perform(
                async move {
                    let t = Instant::now();
                    let r = annotate::analyse(&doc, &nl);
                    (r, t.elapsed())
                },
                move |(r, took)| Message::Analysed(generation, Arc::new(r), took),
            )
        }
    }

    fn set_figures(&mut self, r: Arc<Result<Figures, String>>) {
        self.figures = Some(r);
        self.stale = false;
        self.rebuild_scene();
    }

    /// The figures, when the last analysis succeeded.
    pub fn ok_figures(&self) -> Option<&Figures> {
        self.figures.as_deref().and_then(|r| r.as_ref().ok())
    }

    /// Fill the inspector's buffers from the selection.
    pub fn sync_inspector(&mut self) {
        let part = match self.selection.iter().collect::<Vec<_>>().as_slice() {
            [Item::Part(i)] => Some(*i),
            _ => None,
        };
        let keep_errors = self.inspector.part == part;
        let old = std::mem::take(&mut self.inspector);
        self.inspector.part = part;
        let Some(i) = part else { return };
        let p = &self.doc.parts[i];
        self.inspector.designator = p.designator.clone();
        if keep_errors {
            self.inspector.designator_error = old.designator_error.clone();
        }
        let mut keys: Vec<String> = Vec::new();
        if let Some(k) = p.kind.main_parameter() {
            keys.push(k.into());
        }
        match p.kind {
            PartKind::Resistor => keys.push(presets::keys::POWER_RATING.into()),
            PartKind::SignalSource => {
                keys.push(presets::keys::DC_OFFSET.into());
                keys.push(presets::keys::FREQUENCY.into());
            }
            _ => {}
        }
        for k in presets::effective_parameters(p).keys() {
            if !keys.contains(k) {
                keys.push(k.clone());
            }
        }
        for k in p.parameters.keys() {
            if !keys.contains(k) {
                keys.push(k.clone());
            }
        }
        let eff = presets::effective_parameters(p);
        for key in keys {
            let unit = value::unit_of(&key);
            let text = eff
                .get(&key)
                .map(|v| units::format(*v, unit))
                .unwrap_or_default();
            let previous = old.fields.iter().find(|f| f.key == key && keep_errors);
            let (text, error) = match previous {
                Some(f) if f.error.is_some() => (f.text.clone(), f.error.clone()),
                _ => (text, None),
            };
            self.inspector.fields.push(Field {
                own: p.parameters.contains_key(&key),
                key,
                text,
                unit,
                error,
            });
        }
    }

    fn select(&mut self, items: impl IntoIterator<Item = Item>) {
        self.selection = items.into_iter().collect();
        self.caches.clear_overlay();
        self.sync_inspector();
    }

    fn grid_at_pointer(&self) -> GridPoint {
        let p = self.pointer.unwrap_or([0.0, 0.0]);
        [p[0].round() as i32, p[1].round() as i32]
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
            Message::Sheet(input) => return self.sheet(input),
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
            Message::LabelNameEdited(t) => self.label_name = t,
            Message::PathEdited(t) => match &mut self.dialog {
                Some(Dialog::Open { path, error })
                | Some(Dialog::SaveAs { path, error, .. })
                | Some(Dialog::Export { path, error, .. }) => {
                    *path = t;
                    *error = None;
                }
                _ => {}
            },
            Message::FindingPressed(i) => self.show_finding(i),
            Message::Answer(a) => return self.answer(a),
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

    fn close(&mut self, id: iced::window::Id) -> Task<Message> {
        if self.autosave {
            files::discard_autosave(self.path.as_deref());
        }
        iced::window::close(id)
    }

    fn submit_field(&mut self, key: &str) -> Task<Message> {
        let Some(i) = self.inspector.part else {
            return Task::none();
        };
        let Some(text) = self
            .inspector
            .fields
            .iter()
            .find(|f| f.key == key)
            .map(|f| f.text.clone())
        else {
            return Task::none();
        };
        let what = format!(
            "set {} {}",
            self.doc.parts[i].label(),
            key.replace('_', " ")
        );
        match self.edit(&what, |d| edit::set_parameter(d, i, key, &text).map(|_| ())) {
            Ok(()) => {
                self.sync_inspector();
                self.reanalyse()
            }
            Err(e) => {
                if let Some(f) = self.inspector.fields.iter_mut().find(|f| f.key == key) {
                    f.error = Some(e);
                }
                Task::none()
            }
        }
    }

    fn show_finding(&mut self, i: usize) {
        let Some(f) = self.derived.findings.get(i).cloned() else {
            return;
        };
        if let crate::netlist::Subject::Part(label) = &f.subject {
            if let Some(k) = self.doc.parts.iter().position(|p| &p.label() == label) {
                self.select([Item::Part(k)]);
            }
        }
        if let Some([x, y]) = f.position {
            let v = self.view_for(self.canvas_size);
            let here = v.to_screen([x as f64, y as f64]);
            let centre = Point::new(self.canvas_size.width / 2.0, self.canvas_size.height / 2.0);
            self.view = Some(View {
                origin: v.origin + (centre - here),
                scale: v.scale,
            });
            self.caches.clear_all();
        }
        self.status = f.to_string();
    }

    fn key(&mut self, event: keyboard::Event) -> Task<Message> {
        use keyboard::key::Named;
        match event {
            keyboard::Event::KeyPressed { key, modifiers, .. } => {
                if key == keyboard::Key::Named(Named::Space) {
                    self.space_down = true;
                    return Task::none();
                }
                if let Some(c) = help::command_for(&key, modifiers) {
                    return self.command(c);
                }
            }
            keyboard::Event::KeyReleased { key, .. } => {
                if key == keyboard::Key::Named(Named::Space) {
                    self.space_down = false;
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
                let items = self.selection.clone();
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
                } = &mut self.tool
                {
                    if mirror {
                        *m = !*m;
                    } else {
                        *rotation = (*rotation + 90) % 360;
                    }
                    self.caches.clear_overlay();
                    return Task::none();
                }
                let parts: Vec<usize> = self
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
                self.clip = edit::copy(&self.doc, &self.selection);
                self.status = format!("copied {} items", self.selection.len());
            }
            Command::Paste | Command::Duplicate => {
                let (clip, at) = if c == Command::Duplicate {
                    let clip = edit::copy(&self.doc, &self.selection);
                    let at = top_left(&self.doc, &self.selection).map(|[x, y]| [x + 2, y + 2]);
                    (clip, at.unwrap_or([0, 0]))
                } else {
                    (self.clip.clone(), self.grid_at_pointer())
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
            Command::Fit => {
                self.view = None;
                self.caches.clear_all();
            }
            Command::ZoomIn | Command::ZoomOut => {
                let f = if c == Command::ZoomIn { 1.25 } else { 0.8 };
                let centre =
                    Point::new(self.canvas_size.width / 2.0, self.canvas_size.height / 2.0);
                self.zoom(centre, f);
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
                self.layers[l as usize] = !self.layers[l as usize];
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
                } else if let Tool::Wire { points, .. } = &self.tool {
                    let points = points.clone();
                    if points.len() >= 2 {
                        let _ = self.edit("draw a wire", |d| Ok(edit::add_wire(d, &points)));
                        self.set_tool(Tool::Select);
                        return self.reanalyse();
                    }
                    self.set_tool(Tool::Select);
                } else if self.tool != Tool::Select {
                    self.set_tool(Tool::Select);
                } else {
                    self.select([]);
                }
            }
            Command::ToggleBend => {
                if let Tool::Wire {
                    horizontal_first, ..
                } = &mut self.tool
                {
                    *horizontal_first = !*horizontal_first;
                    self.caches.clear_overlay();
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

    fn set_tool(&mut self, tool: Tool) {
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
        self.tool = tool;
        self.drag = None;
        self.caches.clear_overlay();
    }

    fn undo(&mut self, back: bool) -> Task<Message> {
        let current = self.doc.clone();
        let r = if back {
            self.history.undo(current)
        } else {
            self.history.redo(current)
        };
        match r {
            Ok((what, doc)) => {
                self.doc = doc;
                self.status = format!("{} {what}", if back { "undid" } else { "redid" });
                self.changed();
                self.reanalyse()
            }
            Err(doc) => {
                self.doc = doc;
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

    fn zoom(&mut self, about: Point, factor: f32) {
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

    /// Ask about unsaved changes before `then`, or do it now.
    fn guard(&mut self, then: Pending) -> Task<Message> {
        if self.dirty {
            self.dialog = Some(Dialog::Unsaved { then });
            Task::none()
        } else {
            self.proceed(then)
        }
    }

    fn proceed(&mut self, then: Pending) -> Task<Message> {
        match then {
            Pending::New => {
                if self.autosave {
                    files::discard_autosave(self.path.as_deref());
                }
                self.replace(Document::new("untitled"), None);
                Task::none()
            }
            Pending::Open => {
                self.dialog = Some(Dialog::Open {
                    path: self
                        .path
                        .as_ref()
                        .and_then(|p| p.parent())
                        .map(|p| format!("{}/", p.display()))
                        .unwrap_or_default(),
                    error: None,
                });
                Task::none()
            }
            Pending::OpenPath(p) => {
                match self.open_file(&p) {
                    Ok(()) => self.dialog = None,
                    Err(e) => {
                        self.dialog = Some(Dialog::Open {
                            path: p.display().to_string(),
                            error: Some(e),
                        })
                    }
                }
                self.reanalyse()
            }
            Pending::Close(id) => self.close(id),
        }
    }

    /// Open a project file in place of the current one.
    pub fn open_file(&mut self, p: &Path) -> Result<(), String> {
        let doc = document::load_file(p).map_err(|e| format!("{}: {e}", p.display()))?;
        if self.autosave {
            files::discard_autosave(self.path.as_deref());
        }
        self.replace(doc, Some(p.to_path_buf()));
        files::push_recent(&mut self.recent, p);
        if self.autosave {
            files::store_recent(&self.recent);
        }
        self.status = format!("opened {}", p.display());
        Ok(())
    }

    fn replace(&mut self, doc: Document, path: Option<PathBuf>) {
        self.saved = doc.clone();
        self.doc = doc;
        self.path = path;
        self.history = History::default();
        self.selection.clear();
        self.tool = Tool::Select;
        self.view = None;
        self.figures = None;
        self.changed();
        self.caches.clear_all();
        let _ = self.reanalyse();
    }

    /// Export the scene as shown (same layers) through the scene renderers.
    pub fn export(&self, svg: bool, path: &Path) -> Result<(), String> {
        use crate::render::{png, svg as svgr, Background};
        let layers = self.layer_set();
        let bytes = if svg {
            let opts = svgr::SvgOptions {
                background: Background::White,
                title: self.doc.title.clone(),
                ..svgr::SvgOptions::default()
            };
            svgr::render(&self.scene, layers, &opts)
                .map_err(|e| e.to_string())?
                .into_bytes()
        } else {
            let opts = png::PngOptions {
                scale: 2.0,
                background: Background::White,
                title: self.doc.title.clone(),
            };
            png::render(&self.scene, layers, &opts).map_err(|e| e.to_string())?
        };
        std::fs::write(path, bytes)
            .map_err(|e| format!("{}: {e}; pick another folder or name", path.display()))
    }

    /// Save to `to`, else to the current path, else ask for one.
    pub fn save(&mut self, to: Option<PathBuf>) -> Task<Message> {
        let Some(path) = to.or_else(|| self.path.clone()) else {
            self.dialog = Some(Dialog::SaveAs {
                path: "untitled.json".into(),
                error: None,
                then: None,
            });
            return Task::none();
        };
        match files::save(&self.doc, &path) {
            Ok(()) => {
                if self.path.as_ref() != Some(&path) && self.autosave {
                    files::discard_autosave(self.path.as_deref());
                }
                self.path = Some(path.clone());
                self.saved = self.doc.clone();
                self.dirty = false;
                files::push_recent(&mut self.recent, &path);
                if self.autosave {
                    files::store_recent(&self.recent);
                }
                self.status = format!("saved {}", path.display());
            }
            Err(e) => {
                self.status = format!("could not save: {e}");
                self.dialog = Some(Dialog::SaveAs {
                    path: path.display().to_string(),
                    error: Some(format!("could not save: {e}; pick another folder or name")),
                    then: None,
                });
            }
        }
        Task::none()
    }

    fn answer(&mut self, a: Answer) -> Task<Message> {
        let Some(dialog) = self.dialog.take() else {
            return Task::none();
        };
        match (dialog, a) {
            (_, Answer::Cancel) => Task::none(),
            (Dialog::Unsaved { then }, Answer::Discard) => {
                self.dirty = false;
                self.proceed(then)
            }
            (Dialog::Unsaved { then }, Answer::Save) => {
                if self.path.is_none() {
                    self.dialog = Some(Dialog::SaveAs {
                        path: "untitled.json".into(),
                        error: None,
                        then: Some(then),
                    });
                    return Task::none();
                }
                let _ = self.save(None);
                if self.dirty {
                    return Task::none();
                }
                self.proceed(then)
            }
            (Dialog::Open { path, .. }, Answer::Confirm) => {
                self.proceed(Pending::OpenPath(PathBuf::from(path.trim())))
            }
            (Dialog::SaveAs { path, then, .. }, Answer::Confirm) => {
                let mut p = PathBuf::from(path.trim());
                if p.extension().is_none() {
                    p.set_extension("json");
                }
                let _ = self.save(Some(p));
                match (self.dirty, then) {
                    (false, Some(then)) => self.proceed(then),
                    _ => Task::none(),
                }
            }
            (Dialog::Export { svg, path, .. }, Answer::Confirm) => {
                match self.export(svg, Path::new(path.trim())) {
                    Ok(()) => self.status = format!("exported {}", path.trim()),
                    Err(e) => {
                        self.dialog = Some(Dialog::Export {
                            svg,
                            path,
                            error: Some(e),
                        })
                    }
                }
                Task::none()
            }
            (Dialog::Recovery(r), Answer::Recover) => {
                let before = self.doc.clone();
                self.doc = r.document;
                self.history.record("recover autosaved work", before);
                self.changed();
                self.caches.clear_all();
                self.status = format!("recovered unsaved work from {}", r.side_file.display());
                self.reanalyse()
            }
            (Dialog::Recovery(r), Answer::DiscardRecovery) => {
                let _ = std::fs::remove_file(&r.side_file);
                Task::none()
            }
            (d, _) => {
                self.dialog = Some(d);
                Task::none()
            }
        }
    }

    fn sheet(&mut self, input: SheetInput) -> Task<Message> {
        self.canvas_origin = input.origin;
        if input.size != self.canvas_size {
            self.canvas_size = input.size;
            self.caches.clear_all();
        }
        let view = self.view_for(input.size);
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

    fn click(&mut self, at: [f64; 2], tol: f64) -> Task<Message> {
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

    fn release(&mut self) -> Task<Message> {
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

/// The next free label name after `used` (n1 → n2, vout → vout2).
fn next_label_name(doc: &Document, used: &str) -> String {
    let head = used.trim_end_matches(|c: char| c.is_ascii_digit());
    (2..)
        .map(|n| format!("{head}{n}"))
        .find(|c| !doc.labels.iter().any(|l| &l.name == c))
        .unwrap_or_default()
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
