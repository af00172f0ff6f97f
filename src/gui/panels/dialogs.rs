//! The dialogs over the sheet (file paths, export, report, design a stage,
//! recovery) and the help overlay.

use super::*;
use crate::gui::app::Dialog;
use iced::widget::column;

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
    extra: Option<El<'a>>,
) -> El<'a> {
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

pub(super) fn dialog<'a>(app: &'a App, d: &'a Dialog) -> El<'a> {
    let body: El = match d {
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
            let open = matches!(d, Dialog::Open { .. });
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
                (open && !app.recent.is_empty()).then(|| recent_list(app)),
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
        Dialog::Design { path, error } => crate::gui::design_dialog::view(path, error.as_deref()),
        Dialog::Recovery(r) => column![
            text("Unsaved work was found from a session that did not close cleanly.").size(16),
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
    };
    panel(body).padding(18).max_width(560).into()
}

/// The open-dialog list of recent files (shown under the path field).
pub fn recent_list(app: &App) -> El<'_> {
    let mut c = column![heading("recent")].spacing(2);
    for p in &app.recent {
        c = c.push(
            button(small(p.display().to_string()))
                .style(button::text)
                .on_press(Message::Command(Command::OpenPath(p.clone()))),
        );
    }
    c.into()
}

pub(super) fn help_overlay() -> El<'static> {
    let mut c = column![text("Keys").size(18)].spacing(3);
    for (keys, what) in help::SHORTCUTS {
        c = c.push(row![text(*keys).size(13).width(190), small(*what)].spacing(8));
    }
    c = c.push(space::vertical().height(8));
    c = c.push(button(small("close (h or Esc)")).on_press(Message::Command(Command::Help)));
    panel(scrollable(c)).padding(18).max_width(640).into()
}
