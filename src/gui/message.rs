//! Everything that can happen in the editor window.

use super::annotate::Figures;
use crate::document::PartKind;
pub use crate::scene::{Layer, ModelKind};
use iced::keyboard;
use std::path::PathBuf;
use std::sync::Arc;

pub use super::sheet::{Button, SheetInput, SheetInputKind};

/// The layers the editor's strip toggles (the schematic and the title
/// block always show): the drawing's own layers, one enum everywhere.
pub const TOGGLED_LAYERS: [Layer; 4] = [
    Layer::Voltages,
    Layer::Currents,
    Layer::Stages,
    Layer::Distortion,
];

/// A command, from a button or a key.
#[derive(Debug, Clone, PartialEq)]
pub enum Command {
    New,
    Open,
    OpenPath(PathBuf),
    Save,
    SaveAs,
    Undo,
    Redo,
    Delete,
    Turn,
    Flip,
    Copy,
    Paste,
    Duplicate,
    Fit,
    ZoomIn,
    ZoomOut,
    Select,
    Wire,
    Label,
    Place(PartKind),
    ToggleLayer(Layer),
    Model(ModelKind),
    Help,
    Escape,
    ToggleBend,
    MarkSource,
    MarkLoad,
    ExportPng,
    ExportSvg,
    /// The design report (HTML), as `biasline report` writes it.
    ExportReport,
    /// Open the "design a stage" dialog.
    DesignStage,
    /// Lay the whole sheet out afresh (undoable).
    Tidy,
    /// Run the Monte Carlo spread of the document (off the UI thread).
    Spread,
    /// Run the source's sine to steady state (off the UI thread).
    Waveform,
}

pub use super::dialogs::Answer;

#[derive(Debug, Clone)]
pub enum Message {
    /// From the sheet (pointer input).
    Sheet(super::sheet::Message),
    Key(keyboard::Event),
    Command(Command),
    DesignatorEdited(String),
    DesignatorSubmitted,
    FieldEdited(String, String),
    FieldSubmitted(String),
    /// The inspector's datasheet line of a transistor, typed and applied.
    FitEdited(String),
    FitSubmitted,
    LabelNameEdited(String),
    FindingPressed(usize),
    /// From the dialog open over the sheet.
    Dialog(super::dialogs::Message),
    /// From the drawer's response, spread and waveform views.
    Drawer(super::drawer::Message),
    /// Analysis results for a document generation.
    Analysed(u64, Arc<Result<Figures, String>>, std::time::Duration),
    AutosaveTick,
    CloseRequested(iced::window::Id),
}
