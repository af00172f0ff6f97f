//! File work of the editor: new, open, save, save as, export, the
//! unsaved-changes question and autosave recovery.

use super::*;

impl App {
    /// Ask about unsaved changes before `then`, or do it now.
    pub(super) fn guard(&mut self, then: Pending) -> Task<Message> {
        if self.dirty {
            self.dialog = Some(Dialog::Unsaved { then });
            Task::none()
        } else {
            self.proceed(then)
        }
    }

    pub(super) fn proceed(&mut self, then: Pending) -> Task<Message> {
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
        let doc = files::load_for_editing(p).map_err(|e| format!("{}: {e}", p.display()))?;
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

    pub(super) fn replace(&mut self, doc: Document, path: Option<PathBuf>) {
        self.saved = doc.clone();
        self.doc = doc;
        self.path = path;
        self.history = History::default();
        self.sheet.reset();
        self.moving = None;
        self.figures = None;
        self.drawer.spread = Default::default();
        self.changed();
        self.sheet.caches.clear_all();
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
        crate::document::write_atomic(path, &bytes)
            .map_err(|e| format!("{}: {e}; pick another folder or name", path.display()))
    }

    /// Write the design report of the document as it stands (the layers and
    /// card model shown now; the hash is of the document as it would be saved).
    pub fn write_report(&self, path: &Path) -> Result<String, String> {
        let is_html = path
            .extension()
            .and_then(|e| e.to_str())
            .is_some_and(|e| e.eq_ignore_ascii_case("html") || e.eq_ignore_ascii_case("htm"));
        if !is_html {
            return Err(format!(
                "{}: the report is an HTML file; end the name with .html",
                path.display()
            ));
        }
        let json = crate::document::to_json(&self.doc);
        let file = self
            .path
            .clone()
            .unwrap_or_else(|| PathBuf::from("untitled.json"));
        let opts = crate::report::Options {
            layers: self.layer_set(),
            model: self.model_kind(),
            ..crate::report::Options::default()
        };
        let rep = crate::report::build(&self.doc, &file, json.as_bytes(), &opts)?;
        crate::document::write_atomic(path, rep.html.as_bytes())
            .map_err(|e| format!("{}: {e}; pick another folder or name", path.display()))?;
        Ok(format!(
            "wrote the design report {} ({} kB{})",
            path.display(),
            rep.html.len().div_ceil(1024),
            if rep.solved {
                ""
            } else {
                "; not solvable: the reason is in the report"
            }
        ))
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

    pub(super) fn answer(&mut self, a: Answer) -> Task<Message> {
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
            (Dialog::Report { path, .. }, Answer::Confirm) => {
                match self.write_report(Path::new(path.trim())) {
                    Ok(summary) => self.status = summary,
                    Err(e) => {
                        self.dialog = Some(Dialog::Report {
                            path,
                            error: Some(e),
                        })
                    }
                }
                Task::none()
            }
            (Dialog::Design { path, .. }, Answer::Confirm) => {
                match super::super::design_dialog::design(&path) {
                    Ok((stage, summary)) => {
                        let mut placed = Default::default();
                        let _ = self.edit("place a designed stage", |d| {
                            placed = edit::place_design(d, &stage);
                            Ok(())
                        });
                        self.sheet.selection = placed;
                        self.sheet.fit();
                        self.status = format!("placed a designed stage: {summary}");
                        return self.reanalyse();
                    }
                    Err(e) => {
                        self.dialog = Some(Dialog::Design {
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
                self.sheet.caches.clear_all();
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
}
