//! The editor's state types: the inspector's fields, the dialogs (the
//! sheet's own state is in [`crate::gui::sheet`]).

use super::*;

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
    /// The datasheet line of a transistor (`--idss 6m --vgs-off -2`) and
    /// why it was refused.
    pub fit_line: String,
    pub fit_error: Option<String>,
}

pub use crate::gui::dialogs::{Dialog, Pending};
