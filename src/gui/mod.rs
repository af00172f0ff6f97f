//! The editor window (iced). Placeholder until the editor lands: it opens the
//! project and lists its nets and findings.

use crate::document::{self, Document};
use crate::netlist;
use iced::widget::{column, scrollable, text};
use iced::{Element, Task};
use std::path::PathBuf;

struct App {
    title: String,
    lines: Vec<String>,
}

#[derive(Debug, Clone)]
enum Message {}

/// Open the editor, optionally on a project file.
pub fn run(file: Option<PathBuf>) -> Result<(), String> {
    let doc = match &file {
        Some(path) => document::load_file(path).map_err(|e| e.to_string())?,
        None => Document::new("untitled"),
    };
    let name = file
        .as_ref()
        .and_then(|p| p.file_name())
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "untitled".into());
    let nl = netlist::connect(&doc);
    let mut lines: Vec<String> = nl
        .nets
        .iter()
        .map(|n| {
            let pins: Vec<String> = n.pins.iter().map(|p| p.label()).collect();
            format!("{}: {}", n.name, pins.join(" "))
        })
        .collect();
    lines.extend(netlist::check(&doc, &nl).iter().map(|f| f.to_string()));
    let title = format!("{name} — Biasline");
    iced::application(
        move || {
            (
                App {
                    title: title.clone(),
                    lines: lines.clone(),
                },
                Task::none(),
            )
        },
        update,
        view,
    )
    .title(|app: &App| app.title.clone())
    .run()
    .map_err(|e| e.to_string())
}

fn update(_app: &mut App, message: Message) {
    match message {}
}

fn view(app: &App) -> Element<'_, Message> {
    scrollable(column(app.lines.iter().map(|l| text(l.clone()).into())).spacing(4)).into()
}
