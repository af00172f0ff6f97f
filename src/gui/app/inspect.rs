//! The inspector: edit buffers for the selected part, applying typed
//! values (refused text is kept with its message and changes nothing), and
//! jumping to a finding.

use super::*;

impl App {
    /// Fill the inspector's buffers from the selection.
    pub fn sync_inspector(&mut self) {
        let part = match self.sheet.selection.iter().collect::<Vec<_>>().as_slice() {
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

    /// Fit the selected transistor to the datasheet line: one undoable
    /// edit; a refused line stays in the box with its reason.
    pub(super) fn submit_fit(&mut self) -> Task<Message> {
        let Some(i) = self.inspector.part else {
            return Task::none();
        };
        let line = self.inspector.fit_line.clone();
        let what = format!("fit {} to its datasheet", self.doc.parts[i].label());
        match self.edit(&what, |d| edit::fit_to_datasheet(d, i, &line).map(|_| ())) {
            Ok(()) => {
                self.sync_inspector();
                self.inspector.fit_line = line;
                self.reanalyse()
            }
            Err(e) => {
                self.inspector.fit_error = Some(e);
                Task::none()
            }
        }
    }

    pub(super) fn submit_field(&mut self, key: &str) -> Task<Message> {
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
                let typed = self.doc.parts[i].parameter(key);
                if let Some(hint) = typed.and_then(|v| value::preferred_hint(key, v)) {
                    self.status = format!("{} {hint}", self.status);
                }
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

    pub(super) fn show_finding(&mut self, i: usize) {
        let Some(f) = self.derived.findings.get(i).cloned() else {
            return;
        };
        if let crate::netlist::Subject::Part(label) = &f.subject {
            if let Some(k) = self.doc.parts.iter().position(|p| &p.label() == label) {
                self.select([Item::Part(k)]);
            }
        }
        if let Some([x, y]) = f.position {
            let ctx = sheet::Context {
                doc: &self.doc,
                scene: &self.scene,
            };
            self.sheet.centre_on([x, y], &ctx);
        }
        self.status = f.to_string();
    }
}
