//! Renderers of the scene and the report pieces: SVG ([`svg`]), PNG
//! ([`png`]) through resvg with the embedded font, the frequency-response
//! plot ([`plot`]) and CSV tables ([`tables`]). The editor's canvas renderer
//! lives with the GUI.

/// The editor's canvas renderer (needs the `gui` feature).
#[cfg(feature = "gui")]
pub mod canvas;
pub mod export;
pub mod noise_plot;
pub mod plot;
pub mod png;
mod subset;
pub mod svg;
pub mod tables;
pub mod wave_plot;

/// Pixels per grid unit at 1× (96 px per inch, one grid unit = 0.1 in).
pub const PX_PER_GRID: f64 = 9.6;

/// What goes behind the drawing.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Background {
    /// Plain white, for documents.
    #[default]
    White,
    /// The palette's paper tone (#fbf9f4).
    Paper,
    /// Nothing (PNG alpha 0; SVG without a background rectangle).
    Transparent,
}

impl Background {
    pub fn from_word(w: &str) -> Option<Background> {
        match w {
            "white" => Some(Background::White),
            "paper" => Some(Background::Paper),
            "transparent" => Some(Background::Transparent),
            _ => None,
        }
    }
    pub fn colour(self) -> Option<crate::scene::Colour> {
        match self {
            Background::White => Some(crate::scene::Colour::rgb(0xffffff)),
            Background::Paper => Some(crate::scene::style::PAPER),
            Background::Transparent => None,
        }
    }
}

/// Why an export failed, in plain words.
#[derive(Debug, Clone, PartialEq)]
pub struct RenderError(pub String);

impl std::fmt::Display for RenderError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for RenderError {}

/// The font database every renderer uses: the embedded DejaVu Sans faces
/// only, never the machine's fonts, so output is the same everywhere.
pub fn fontdb() -> std::sync::Arc<resvg::usvg::fontdb::Database> {
    use std::sync::{Arc, OnceLock};
    static DB: OnceLock<Arc<resvg::usvg::fontdb::Database>> = OnceLock::new();
    DB.get_or_init(|| {
        let mut db = resvg::usvg::fontdb::Database::new();
        for w in [crate::scene::Weight::Regular, crate::scene::Weight::Bold] {
            db.load_font_data(crate::scene::text::font_data(w).to_vec());
        }
        db.set_sans_serif_family(crate::scene::text::FAMILY);
        Arc::new(db)
    })
    .clone()
}

/// usvg options that resolve text with the embedded font.
pub fn usvg_options() -> resvg::usvg::Options<'static> {
    let mut opt = resvg::usvg::Options {
        font_family: crate::scene::text::FAMILY.to_string(),
        ..resvg::usvg::Options::default()
    };
    opt.fontdb = fontdb();
    opt
}
