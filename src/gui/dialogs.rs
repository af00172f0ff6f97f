//! The dialogs over the sheet (unsaved changes, file paths, export, report,
//! design a stage, recovery) as one component: the open dialog's state
//! ([`Dialog`]), its messages, its update (typing stays inside; an answer
//! goes to the app, which does the file work) and its view.

use super::files::Recovery;
use super::palette;
use iced::widget::{button, column, row, text, text_input};
use iced::Element;
use std::path::PathBuf;

/// Work that waits for an answer about unsaved changes.
#[derive(Debug, Clone, PartialEq)]
pub enum Pending {
    New,
    Open,
    OpenPath(PathBuf),
    Close(iced::window::Id),
}

/// What the user answered in a dialog.
#[derive(Debug, Clone, PartialEq)]
pub enum Answer {
    /// Save first, then go on.
    Save,
    /// Go on without saving.
    Discard,
    Cancel,
    /// Confirm the path typed into a file dialog.
    Confirm,
    Recover,
    DiscardRecovery,
}

/// The dialog open over the sheet, with its edit buffer.
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
    Recovery(Box<Recovery>),
    Export {
        svg: bool,
        path: String,
        error: Option<String>,
    },
    /// Where to write the design report (HTML).
    Report {
        path: String,
        error: Option<String>,
    },
    /// "Design a stage": the target line, as `biasline design` takes it.
    Design {
        path: String,
        error: Option<String>,
    },
}

/// What can happen in a dialog.
#[derive(Debug, Clone, PartialEq)]
pub enum Message {
    /// The path (or target line) field was edited.
    PathEdited(String),
    /// A button (or Enter in the field).
    Answer(Answer),
    /// A recent file was picked in the open dialog.
    OpenRecent(PathBuf),
}

impl Dialog {
    /// Handle a message; the answer for the app to carry out, if any.
    pub fn update(&mut self, message: Message) -> Option<Answer> {
        match message {
            Message::PathEdited(t) => {
                if let Some((path, error)) = self.field() {
                    *path = t;
                    *error = None;
                }
                None
            }
            Message::Answer(a) => Some(a),
            Message::OpenRecent(p) => match self {
                Dialog::Open { path, error } => {
                    *path = p.display().to_string();
                    *error = None;
                    Some(Answer::Confirm)
                }
                _ => None,
            },
        }
    }

    /// The path field and its error, for the dialogs that have one.
    fn field(&mut self) -> Option<(&mut String, &mut Option<String>)> {
        match self {
            Dialog::Open { path, error }
            | Dialog::SaveAs { path, error, .. }
            | Dialog::Export { path, error, .. }
            | Dialog::Report { path, error }
            | Dialog::Design { path, error } => Some((path, error)),
            Dialog::Unsaved { .. } | Dialog::Recovery(_) => None,
        }
    }

    /// The dialog's body; `recent` is listed under the open dialog's field.
    pub fn view<'a>(&'a self, recent: &'a [PathBuf]) -> Element<'a, Message> {
        match self {
            Dialog::Unsaved { .. } => column![
                text("This sheet has unsaved changes.").size(16),
                small("Save them first, or go on and lose them?"),
                row![
                    button(small("save")).on_press(Message::Answer(Answer::Save)),
                    button(small("discard changes"))
                        .style(button::danger)
                        .on_press(Message::Answer(Answer::Discard)),
                    button(small("cancel"))
                        .style(button::secondary)
                        .on_press(Message::Answer(Answer::Cancel)),
                ]
                .spacing(8)
            ]
            .spacing(10)
            .into(),
            Dialog::Open { path, error } | Dialog::SaveAs { path, error, .. } => {
                let open = matches!(self, Dialog::Open { .. });
                path_dialog(
                    if open {
                        "Open a project"
                    } else {
                        "Save the project as"
                    },
                    "path of the project file (.json)",
                    "projects/amp.json",
                    if open {
                        "open this file"
                    } else {
                        "save to this path"
                    },
                    path,
                    error.as_deref(),
                    (open && !recent.is_empty()).then(|| recent_list(recent)),
                )
            }
            Dialog::Export { svg, path, error } => path_dialog(
                if *svg {
                    "Export the sheet as SVG"
                } else {
                    "Export the sheet as PNG"
                },
                "the layers shown now are exported, exactly as drawn",
                "amp.svg",
                "export to this path",
                path,
                error.as_deref(),
                None,
            ),
            Dialog::Report { path, error } => path_dialog(
                "Write the design report (HTML)",
                "one self-contained page: drawing with the layers shown now, operating point, stages, response, noise, spread when set, time domain, parts; print it from a browser",
                "amp.html",
                "write the report",
                path,
                error.as_deref(),
                None,
            ),
            Dialog::Design { path, error } => super::design_dialog::view(path, error.as_deref()),
            Dialog::Recovery(r) => column![
                text("Unsaved work was found from a session that did not close cleanly.")
                    .size(16),
                small(format!("autosave: {}", r.side_file.display())),
                row![
                    button(small("recover it")).on_press(Message::Answer(Answer::Recover)),
                    button(small("discard it"))
                        .style(button::danger)
                        .on_press(Message::Answer(Answer::DiscardRecovery)),
                ]
                .spacing(8)
            ]
            .spacing(10)
            .into(),
        }
    }
}

fn small<'a>(s: impl ToString) -> iced::widget::Text<'a> {
    text(s.to_string()).size(13)
}

/// A dialog that asks for one path: a title, a line on what is written, the
/// path field, the error of the last try, anything `extra` (the recent
/// files when opening), and confirm / cancel.
fn path_dialog<'a>(
    title: &'a str,
    hint: &'a str,
    placeholder: &'a str,
    confirm: &'a str,
    path: &'a str,
    error: Option<&'a str>,
    extra: Option<Element<'a, Message>>,
) -> Element<'a, Message> {
    let mut c = column![
        text(title).size(16),
        small(hint),
        text_input(placeholder, path)
            .on_input(Message::PathEdited)
            .on_submit(Message::Answer(Answer::Confirm))
            .size(13)
            .width(420),
    ]
    .spacing(8);
    if let Some(e) = error {
        c = c.push(small(e).color(palette::WARNING));
    }
    if let Some(x) = extra {
        c = c.push(x);
    }
    c.push(
        row![
            button(small(confirm)).on_press(Message::Answer(Answer::Confirm)),
            button(small("cancel"))
                .style(button::secondary)
                .on_press(Message::Answer(Answer::Cancel)),
        ]
        .spacing(8),
    )
    .into()
}

/// The open dialog's list of recent files (shown under the path field).
pub fn recent_list(recent: &[PathBuf]) -> Element<'_, Message> {
    let mut c = column![text("recent").size(14).color(palette::INK_SOFT)].spacing(2);
    for p in recent {
        c = c.push(
            button(small(p.display().to_string()))
                .style(button::text)
                .on_press(Message::OpenRecent(p.clone())),
        );
    }
    c.into()
}
