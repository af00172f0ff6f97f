//! The drawing half of the export the command line and the editor share:
//! document + annotations → scene → SVG or PNG bytes. The analysis half
//! (document → annotations) is the results layer's (`results::export`).

use super::png::PngOptions;
use super::svg::SvgOptions;
use super::{Background, RenderError};
use crate::document::Document;
use crate::netlist;
use crate::scene::{self, Annotations, LayerSet, ModelKind, ResultState, Scene, SceneOptions};

/// The file formats a drawing exports to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    Svg,
    Png,
}

impl Format {
    /// From an output file name's extension.
    pub fn of_path(path: &std::path::Path) -> Option<Format> {
        match path.extension()?.to_str()?.to_ascii_lowercase().as_str() {
            "svg" => Some(Format::Svg),
            "png" => Some(Format::Png),
            _ => None,
        }
    }
}

#[derive(Debug, Clone, PartialEq)]
pub struct ExportOptions {
    pub format: Format,
    pub scale: f64,
    pub layers: LayerSet,
    pub model: ModelKind,
    pub background: Background,
    /// SVG only: text as outlines.
    pub outline_text: bool,
    /// Use the annotation positions stored in the document.
    pub use_stored_layout: bool,
}

impl Default for ExportOptions {
    fn default() -> Self {
        ExportOptions {
            format: Format::Png,
            scale: 1.0,
            layers: LayerSet::standard(),
            model: ModelKind::T,
            background: Background::White,
            outline_text: false,
            use_stored_layout: true,
        }
    }
}

/// What an export produced.
#[derive(Debug, Clone)]
pub struct Exported {
    pub bytes: Vec<u8>,
    pub state: ResultState,
    pub scene: Scene,
}

/// Build the scene of a document from its annotations (the results layer
/// makes them: `results::export` runs the analyses, this only draws).
pub fn scene_of(doc: &Document, ann: &Annotations, opts: &ExportOptions) -> Scene {
    scene_with(doc, &netlist::connect(doc), ann, opts)
}

/// [`scene_of`] with the document's netlist already connected.
pub fn scene_with(
    doc: &Document,
    nl: &netlist::Netlist,
    ann: &Annotations,
    opts: &ExportOptions,
) -> Scene {
    scene::build(
        doc,
        nl,
        ann,
        &SceneOptions {
            layers: opts.layers,
            model: opts.model,
            use_stored_layout: opts.use_stored_layout,
        },
    )
}

/// Draw a built scene as SVG or PNG bytes (the title goes into the metadata).
pub fn render_scene(
    title: &str,
    scene: &Scene,
    opts: &ExportOptions,
) -> Result<Vec<u8>, RenderError> {
    Ok(match opts.format {
        Format::Svg => super::svg::render(
            scene,
            opts.layers,
            &SvgOptions {
                background: opts.background,
                embed_font: true,
                outline_text: opts.outline_text,
                title: title.to_string(),
            },
        )?
        .into_bytes(),
        Format::Png => super::png::render(
            scene,
            opts.layers,
            &PngOptions {
                scale: opts.scale,
                background: opts.background,
                title: title.to_string(),
            },
        )?,
    })
}

/// Draw a document with the given annotations as SVG or PNG bytes.
pub fn export(
    doc: &Document,
    ann: &Annotations,
    opts: &ExportOptions,
) -> Result<Exported, RenderError> {
    let scene = scene_of(doc, ann, opts);
    let bytes = render_scene(&doc.title, &scene, opts)?;
    Ok(Exported {
        bytes,
        state: ann.title.state.clone(),
        scene,
    })
}
