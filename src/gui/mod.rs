//! The editor. `edit`, `history`, `histogram`, `value`, `files`, `hit` and `annotate` are
//! plain Rust (they build and test without iced); the window (`app`,
//! `canvas`, `panels`, `readout`, `help`, `message`, `spread_view`) needs the
//! `gui` feature.

pub mod annotate;
pub mod design_dialog;
pub mod edit;
pub mod files;
pub mod histogram;
pub mod history;
pub mod hit;
pub mod response;
pub mod value;

#[cfg(feature = "gui")]
pub mod app;
#[cfg(feature = "gui")]
pub mod background;
#[cfg(feature = "gui")]
pub mod canvas;
#[cfg(feature = "gui")]
pub mod dialogs;
#[cfg(feature = "gui")]
pub mod drawer;
#[cfg(feature = "gui")]
pub mod help;
#[cfg(feature = "gui")]
pub mod message;
#[cfg(feature = "gui")]
pub mod palette;
#[cfg(feature = "gui")]
pub mod panels;
#[cfg(feature = "gui")]
pub mod pointer_plot;
#[cfg(feature = "gui")]
pub mod readout;
#[cfg(feature = "gui")]
pub mod sheet;
#[cfg(feature = "gui")]
pub mod spread_view;
#[cfg(feature = "gui")]
pub mod wave_view;

#[cfg(feature = "gui")]
pub use app::App;
#[cfg(feature = "gui")]
pub use message::Message;

#[cfg(feature = "gui")]
use std::path::PathBuf;

/// The editor's theme: the project palette on paper.
#[cfg(feature = "gui")]
pub fn theme() -> iced::Theme {
    iced::Theme::custom(
        "Biasline paper",
        iced::theme::Palette {
            background: palette::PAPER,
            text: palette::INK,
            primary: palette::VOLTAGE,
            success: palette::VOLTAGE,
            warning: palette::CURRENT,
            danger: palette::WARNING,
        },
    )
}

/// The subscriptions: keys not taken by a text field, and close requests.
#[cfg(feature = "gui")]
pub fn subscription(_app: &App) -> iced::Subscription<Message> {
    iced::Subscription::batch([
        iced::keyboard::listen().map(Message::Key),
        iced::window::close_requests().map(Message::CloseRequested),
    ])
}

/// Open the editor, optionally on a project file.
#[cfg(feature = "gui")]
pub fn run(file: Option<PathBuf>) -> Result<(), String> {
    // Fail before opening a window when the file cannot be read.
    let first = App::open(file.clone())?;
    let slot = std::sync::Mutex::new(Some(first));
    iced::application(
        move || {
            let app = slot
                .lock()
                .ok()
                .and_then(|mut s| s.take())
                .unwrap_or_else(|| {
                    App::open(file.clone()).unwrap_or_else(|_| {
                        App::new(crate::document::Document::new("untitled"), None)
                    })
                });
            (app, app::autosave_timer())
        },
        App::update,
        panels::view,
    )
    .title(App::title)
    .subscription(subscription)
    .theme(|_: &App| theme())
    .font(dejavu::sans::regular())
    .font(dejavu::sans::bold())
    .default_font(iced::Font::with_name("DejaVu Sans"))
    .window_size((1400.0, 860.0))
    .exit_on_close_request(false)
    .antialiasing(true)
    .run()
    .map_err(|e| e.to_string())
}
