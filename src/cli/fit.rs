//! `biasline fit KIND --idss 6m --vgs-off -2 …`: a transistor's model
//! parameters from the figures its datasheet gives, printed as file keys,
//! or written into a part of a project (`--into FILE --part Q1`).

use super::*;
use biasline::analysis::fit_line::{self, FitLine};
use biasline::document::PartKind;

/// Arguments of `fit`.
#[derive(Debug, Clone, clap::Args)]
pub struct FitArgs {
    /// The part kind: npn, pnp, n_jfet, p_jfet, n_mosfet or p_mosfet
    /// (with --into and --part, the part's own kind).
    pub kind: Option<String>,
    #[command(flatten)]
    pub line: FitLine,
    /// The project to write the fitted parameters into (with --part); the
    /// file is rewritten only when the fit succeeds and the project reads back.
    #[arg(long, requires = "part")]
    pub into: Option<PathBuf>,
    /// The designator of the part in --into.
    #[arg(long, requires = "into")]
    pub part: Option<String>,
    /// Print the parameters as JSON.
    #[arg(long)]
    pub json: bool,
}

fn kind_of(word: &str) -> Result<PartKind, Failure> {
    PartKind::ALL
        .into_iter()
        .find(|k| k.word() == word && k.is_transistor())
        .ok_or_else(|| {
            Failure::cannot(format!(
                "unknown transistor kind \"{word}\": use npn, pnp, n_jfet, p_jfet, n_mosfet or p_mosfet"
            ))
        })
}

pub(super) fn run(a: &FitArgs, out: &mut dyn Write) -> Result<i32, Failure> {
    let (kind, params) = match (&a.into, &a.part) {
        (Some(file), Some(designator)) => {
            let mut doc = load(file)?;
            let part = doc
                .parts
                .iter_mut()
                .find(|p| p.designator == *designator)
                .ok_or_else(|| {
                    Failure::cannot(format!(
                        "{}: no part {designator}; nothing written",
                        file.display()
                    ))
                })?;
            if let Some(word) = &a.kind {
                let want = kind_of(word)?;
                if want != part.kind {
                    return Err(Failure::cannot(format!(
                        "{designator} is a {}, not a {}; nothing written",
                        part.kind.word(),
                        want.word()
                    )));
                }
            }
            let kind = part.kind;
            let params = fit_line::apply(part, &a.line)
                .map_err(|m| Failure::cannot(format!("{designator}: {m}; nothing written")))?;
            design::save_checked(&doc, file)?;
            (kind, params)
        }
        _ => {
            let word = a.kind.as_deref().ok_or_else(|| {
                Failure::cannot("fit needs the part kind (npn, n_jfet, …) or --into FILE --part Q1")
            })?;
            let kind = kind_of(word)?;
            let base = biasline::presets::effective_parameters(&biasline::document::Part {
                id: String::new(),
                designator: String::new(),
                kind,
                symbol: String::new(),
                position: [0, 0],
                rotation: 0,
                mirror: false,
                preset: None,
                parameters: Default::default(),
                connect: Default::default(),
            });
            let params = fit_line::fitted(kind, &a.line, &base).map_err(Failure::cannot)?;
            (kind, params)
        }
    };
    if a.json {
        let v = biasline::results::fit::json(kind, &params);
        writeln!(out, "{}", serde_json::to_string_pretty(&v).expect("json")).map_err(io)?;
    } else {
        writeln!(
            out,
            "{} parameters fitted to the datasheet figures:",
            kind.word()
        )
        .map_err(io)?;
        for (k, v) in &params {
            writeln!(out, "  {k:34} {v}").map_err(io)?;
        }
        match (&a.into, &a.part) {
            (Some(file), Some(p)) => {
                writeln!(out, "written into {p} of {}", file.display()).map_err(io)?
            }
            _ => writeln!(
                out,
                "(put them in a part's \"parameters\", or write them with --into FILE --part Q1)"
            )
            .map_err(io)?,
        }
    }
    Ok(EXIT_CLEAN)
}
