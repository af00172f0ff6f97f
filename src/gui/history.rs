//! Unlimited undo and redo of every edit. Each step keeps the whole document
//! as it was (documents are small), so undo restores it exactly; nothing is
//! ever dropped. Plain Rust, no GUI types.

use crate::document::Document;

#[derive(Debug, Clone, Default)]
pub struct History {
    undo: Vec<(String, Document)>,
    redo: Vec<(String, Document)>,
    /// Every record, undo and redo so far.
    steps: u64,
}

impl History {
    /// Record the document as it was before an edit named `what`.
    /// A new edit clears the redo list (the branch not taken).
    pub fn record(&mut self, what: &str, before: Document) {
        self.undo.push((what.to_string(), before));
        self.redo.clear();
        self.steps += 1;
    }

    /// Step back: `current` becomes the document before the last edit.
    /// Returns the name of the edit undone, or `None` (nothing changed).
    pub fn undo(&mut self, current: &mut Document) -> Option<String> {
        let (what, doc) = self.undo.pop()?;
        let now = std::mem::replace(current, doc);
        self.redo.push((what.clone(), now));
        self.steps += 1;
        Some(what)
    }

    /// Step forward again after an undo.
    pub fn redo(&mut self, current: &mut Document) -> Option<String> {
        let (what, doc) = self.redo.pop()?;
        let now = std::mem::replace(current, doc);
        self.undo.push((what.clone(), now));
        self.steps += 1;
        Some(what)
    }

    /// How many records, undos and redos there have been.
    pub fn steps(&self) -> u64 {
        self.steps
    }

    pub fn can_undo(&self) -> bool {
        !self.undo.is_empty()
    }
    pub fn can_redo(&self) -> bool {
        !self.redo.is_empty()
    }
    /// Name of the edit the next undo reverts.
    pub fn undo_name(&self) -> Option<&str> {
        self.undo.last().map(|(w, _)| w.as_str())
    }
    pub fn redo_name(&self) -> Option<&str> {
        self.redo.last().map(|(w, _)| w.as_str())
    }
    pub fn depth(&self) -> usize {
        self.undo.len()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn undo_then_redo_restores_exactly() {
        // invariant: undo(redo(x)) == x and redo(undo(x)) == x for every step, however many.
        let mut h = History::default();
        let mut doc = Document::new("t");
        let mut states = vec![doc.clone()];
        for i in 0..500 {
            h.record("rename", doc.clone());
            doc.title = format!("t{i}");
            states.push(doc.clone());
        }
        for expect in states.iter().rev().skip(1) {
            assert!(h.undo(&mut doc).is_some());
            assert_eq!(&doc, expect);
        }
        let first = doc.clone();
        assert!(h.undo(&mut doc).is_none());
        assert_eq!(doc, first, "an empty undo list changes nothing");
        for expect in states.iter().skip(1) {
            assert!(h.redo(&mut doc).is_some());
            assert_eq!(&doc, expect);
        }
        assert!(!h.can_redo());
    }

    #[test]
    fn a_new_edit_after_undo_keeps_the_undo_list() {
        // invariant: no recorded state is lost by editing after an undo; only the redo branch goes.
        let mut h = History::default();
        let a = Document::new("a");
        let mut b = a.clone();
        b.title = "b".into();
        h.record("x", a.clone());
        let mut back = b;
        assert!(h.undo(&mut back).is_some());
        assert_eq!(back, a);
        h.record("y", back.clone());
        assert_eq!(h.depth(), 1);
        assert!(!h.can_redo());
    }
}
