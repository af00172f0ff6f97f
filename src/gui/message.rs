//! Everything that can happen in the editor window.

use super::annotate::Figures;
use crate::document::PartKind;
pub use crate::scene::{Layer, ModelKind};
use iced::keyboard;
use iced::{Point, Size};
use std::path::PathBuf;
use std::sync::Arc;

/// An input on the sheet, in canvas pixels, with the canvas size.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SheetInput {
    pub kind: SheetInputKind,
    pub position: Point,
    pub size: Size,
    /// The canvas's top-left corner in the window.
    pub origin: Point,
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SheetInputKind {
    Press(Button),
    Release(Button),
    Move,
    /// Wheel lines, positive away from the user (zoom in).
    Scroll(f32),
    Left,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Button {
    Left,
    Middle,
    Right,
}

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
    Sheet(SheetInput),
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
