//! Run the analyses a report shows, once each, and gather their JSON.

use super::{Context, Options, SpreadChoice};
use crate::document::Document;
use crate::scene::Layer;
use serde_json::{json, Value};
use std::path::Path;

/// The noise band and spot frequency of the report: those of `analyze`
/// (its `noise` keys), so the figures are the same.
pub use crate::results::noise::{BAND_HZ as NOISE_BAND, SPOT_HZ as NOISE_SPOT};

/// SHA-256 of `bytes` in lower-case hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::Digest;
    let d = sha2::Sha256::digest(bytes);
    d.iter().map(|b| format!("{b:02x}")).collect()
}

/// Whether the spread section is computed for `doc`.
pub fn wants_spread(doc: &Document, choice: SpreadChoice) -> bool {
    match choice {
        SpreadChoice::Always => true,
        SpreadChoice::Never => false,
        SpreadChoice::WhenSet => !doc.spread.is_default(),
    }
}

/// The spread options of a report (the project's, overridden by `opts`).
pub fn spread_options(doc: &Document, opts: &Options) -> crate::results::spread::Options {
    let mut o = crate::results::spread::Options::from_document(doc);
    if let Some(r) = opts.runs {
        o.runs = r;
    }
    if let Some(s) = opts.seed {
        o.seed = s;
    }
    o.threads = opts.threads;
    o
}

/// Run everything and gather the report's inputs.
pub fn gather<'a>(
    doc: &'a Document,
    file: &Path,
    bytes: &[u8],
    opts: &'a Options,
) -> Result<Context<'a>, String> {
    // One session: the one assessment every command reports (rules,
    // operating point, designer warnings, safety caution), the small-signal
    // results and the noise report, each computed once.
    let session = crate::results::Session::new(doc);
    let project = serde_json::to_value(doc).map_err(|e| format!("cannot read the project: {e}"))?;
    let analyze = session.analyze_json(file);
    let mut annotations = session.annotations();
    let (noise, not_solvable) = match session.operating_point() {
        Ok(_) => (session.noise().as_ref().ok().cloned(), None),
        Err(e) => (None, Some(e.to_string().trim_end().to_string())),
    };
    crate::results::layers::add_optional(
        doc,
        &mut annotations,
        opts.layers.contains(Layer::Spread),
        opts.layers.contains(Layer::Noise),
        opts.layers.contains(Layer::Distortion),
    );
    let mut spread = Value::Null;
    let mut samples = Vec::new();
    let mut spread_error = None;
    if not_solvable.is_none() && wants_spread(doc, opts.spread) {
        match session.spread_with_samples(&spread_options(doc, opts)) {
            Ok((rep, xs)) => {
                spread = serde_json::to_value(&rep).expect("spread report serialises");
                samples = xs;
            }
            Err(e) => spread_error = Some(e),
        }
    }
    // The stability section: its JSON, or why there is none.
    let stability = match &not_solvable {
        Some(_) => Value::Null,
        None => match crate::results::stability::stability(&session, None) {
            Ok(st) => crate::results::stability::json(&st),
            Err(e) => json!({ "error": e }),
        },
    };
    Ok(Context {
        doc,
        opts,
        root: json!({
            "analyze": analyze,
            "spread": spread,
            "project": project,
            "transient": session.steady_json(),
            "stability": stability,
        }),
        file: file.display().to_string(),
        sha256: sha256_hex(bytes),
        not_solvable,
        annotations,
        noise,
        samples,
        spread_error,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sha256_of_the_standard_vectors() {
        // source: FIPS 180-4 examples (NIST CSRC "SHA256.pdf"): "abc" and the empty message.
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        assert_eq!(
            sha256_hex(b""),
            "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"
        );
    }
}
