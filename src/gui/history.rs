//! Unlimited undo and redo of every edit. Each step keeps the whole document
//! as it was (documents are small), so undo restores it exactly; nothing is
//! ever dropped. Plain Rust, no GUI types.

use crate::document::Document;

#[derive(Debug, Clone, Default)]
pub struct History {
    undo: Vec<(String, Document)>,
    redo: Vec<(String, Document)>,
}

impl History {
    /// Record the document as it was before an edit named `what`.
    /// A new edit clears the redo list (the branch not taken).
    pub fn record(&mut self, what: &str, before: Document) {
        self.undo.push((what.to_string(), before));
        self.redo.clear();
    }

    /// Step back: returns the document to show, given the current one.
    pub fn undo(&mut self, current: Document) -> Result<(String, Document), Document> {
        match self.undo.pop() {
            Some((what, doc)) => {
                self.redo.push((what.clone(), current));
                Ok((what, doc))
            }
            None => Err(current),
        }
    }

    /// Step forward again after an undo.
    pub fn redo(&mut self, current: Document) -> Result<(String, Document), Document> {
        match self.redo.pop() {
            Some((what, doc)) => {
                self.undo.push((what.clone(), current));
                Ok((what, doc))
            }
            None => Err(current),
        }
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
            let (_, d) = h.undo(doc).unwrap();
            doc = d;
            assert_eq!(&doc, expect);
        }
        assert!(h.undo(doc.clone()).is_err());
        for expect in states.iter().skip(1) {
            let (_, d) = h.redo(doc).unwrap();
            doc = d;
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
        let (_, back) = h.undo(b).unwrap();
        assert_eq!(back, a);
        h.record("y", back.clone());
        assert_eq!(h.depth(), 1);
        assert!(!h.can_redo());
    }
}
