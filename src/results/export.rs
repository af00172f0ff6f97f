//! The analysis half of an export: a document's annotations for the layers
//! asked for (optional layers included), then the render layer draws them.

use super::Session;
use crate::document::Document;
use crate::render::export::{self as draw, ExportOptions, Exported};
use crate::render::RenderError;
use crate::scene::{Annotations, Layer, LayerSet, Scene};

/// The annotations of a session for the given layers: voltages, currents,
/// stage cards and title block, plus the optional layers' data.
pub fn annotations(s: &Session, layers: LayerSet) -> Annotations {
    let mut a = s.annotations();
    super::layers::add_optional(
        s.doc,
        &mut a,
        layers.contains(Layer::Spread),
        layers.contains(Layer::Noise),
        layers.contains(Layer::Distortion),
    );
    a
}

/// Analyse a document (unless `ann` gives the annotations already) and
/// build its scene.
pub fn scene_of(
    doc: &Document,
    ann: Option<&Annotations>,
    opts: &ExportOptions,
) -> (Scene, Annotations) {
    match ann {
        Some(a) => (draw::scene_of(doc, a, opts), a.clone()),
        None => {
            let s = Session::new(doc);
            let a = annotations(&s, opts.layers);
            (draw::scene_with(doc, &s.netlist, &a, opts), a)
        }
    }
}

/// Export a document. `ann` overrides the analysis (the editor passes what
/// it already has; `None` runs the analyses here).
pub fn export(
    doc: &Document,
    ann: Option<&Annotations>,
    opts: &ExportOptions,
) -> Result<Exported, RenderError> {
    let (scene, ann) = scene_of(doc, ann, opts);
    let bytes = draw::render_scene(&doc.title, &scene, opts)?;
    Ok(Exported {
        bytes,
        state: ann.title.state.clone(),
        scene,
    })
}
