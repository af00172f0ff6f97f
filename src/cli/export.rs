//! `biasline export FILE -o OUT.png|svg`, the CSV tables and the plots.

use super::*;

pub(super) fn export(command: &Command, out: &mut dyn Write) -> Result<i32, Failure> {
    use biasline::render::{export, tables, Background};
    use biasline::scene::{LayerSet, ModelKind};
    let Command::Export {
        file,
        output,
        scale,
        layers,
        model,
        background,
        outline_text,
        fresh_layout,
        table,
        response,
        noise,
        waveform,
    } = command
    else {
        return Err(Failure::cannot(
            "internal: export called for another command",
        ));
    };
    let doc = load(file)?;
    if let Some(kind) = table {
        let session = biasline::results::Session::new(&doc);
        let nl = &session.netlist;
        let ann = session.annotations();
        let csv = match kind.as_str() {
            "bias" => {
                refuse_unsolved(file, &ann.title)?;
                tables::bias_csv(&doc, nl, &ann)
            }
            "stages" => {
                refuse_unsolved(file, &ann.title)?;
                tables::stages_csv(&ann)
            }
            "parts" => tables::parts_csv(&doc),
            other => {
                return Err(Failure::cannot(format!(
                    "unknown table \"{other}\": use --table bias, stages or parts"
                )))
            }
        };
        match output {
            Some(path) => write_file(path, csv.as_bytes())?,
            None => out.write_all(csv.as_bytes()).map_err(io)?,
        }
        // Only the parts table can get here unsolved: written, with findings.
        return Ok(state_code(&ann.title.state).min(EXIT_FINDINGS));
    }
    let Some(output) = output else {
        return Err(Failure::cannot(
            "export needs -o OUT.png or -o OUT.svg (or --table bias|stages|parts)",
        ));
    };
    let format = export::Format::of_path(output).ok_or_else(|| {
        Failure::cannot(format!(
            "{}: the output must end in .png or .svg",
            output.display()
        ))
    })?;
    if let Some(scale) = scale.filter(|s| ![1.0, 2.0, 3.0].contains(s)) {
        return Err(Failure::cannot(format!("--scale {scale}: use 1, 2 or 3")));
    }
    let scale_for = |scene: &biasline::scene::Scene| {
        scale.unwrap_or_else(|| biasline::render::png::default_scale(scene))
    };
    let background_of = |w: &str| {
        Background::from_word(w).ok_or_else(|| {
            Failure::cannot(format!("--background {w}: use white, paper or transparent"))
        })
    };
    let short_title =
        biasline::scene::text::shorten(&doc.title, biasline::scene::text::TITLE_DRAWN_MAX);
    let plot = match (response, noise) {
        (Some(csv), _) => {
            let text = std::fs::read_to_string(csv)
                .map_err(|e| Failure::cannot(format!("cannot read {}: {e}", csv.display())))?;
            let data = biasline::render::plot::ResponseData::from_csv(
                &format!("{} — frequency response", short_title),
                &text,
            )
            .map_err(|e| Failure::cannot(format!("{}: {e}", csv.display())))?;
            let what = format!(
                "{} points, {} corner(s)",
                data.points.len(),
                data.corners.len()
            );
            Some((
                csv,
                biasline::render::plot::response_scene(&data),
                data.title,
                what,
            ))
        }
        (None, Some(csv)) => {
            let text = std::fs::read_to_string(csv)
                .map_err(|e| Failure::cannot(format!("cannot read {}: {e}", csv.display())))?;
            let data = biasline::render::noise_plot::NoiseData::from_csv(
                &format!("{} — noise density", short_title),
                &text,
            )
            .map_err(|e| Failure::cannot(format!("{}: {e}", csv.display())))?;
            let what = format!("{} points", data.points.len());
            Some((
                csv,
                biasline::render::noise_plot::noise_scene(&data),
                data.title,
                what,
            ))
        }
        (None, None) if *waveform => {
            let data = super::transient::waveform_data(file, &doc)?;
            let what = format!("THD {:.3} %", 100.0 * data.thd.unwrap_or(f64::NAN));
            Some((
                file,
                biasline::render::wave_plot::wave_scene(&data),
                data.title,
                what,
            ))
        }
        (None, None) => None,
    };
    if let Some((csv, scene, title, what)) = plot {
        let background = background_of(background)?;
        let all = LayerSet::all();
        let bytes = match format {
            export::Format::Svg => biasline::render::svg::render(
                &scene,
                all,
                &biasline::render::svg::SvgOptions {
                    background,
                    outline_text: *outline_text,
                    title: title.clone(),
                    ..Default::default()
                },
            )
            .map(String::into_bytes),
            export::Format::Png => biasline::render::png::render(
                &scene,
                all,
                &biasline::render::png::PngOptions {
                    scale: scale_for(&scene),
                    background,
                    title,
                },
            ),
        }
        .map_err(|e| Failure::cannot(e.to_string()))?;
        write_file(output, &bytes)?;
        writeln!(
            out,
            "{}: wrote {} ({what})",
            csv.display(),
            output.display(),
        )
        .map_err(io)?;
        return Ok(EXIT_CLEAN);
    }
    let layers = LayerSet::parse(layers).map_err(Failure::cannot)?;
    let model = ModelKind::from_word(model)
        .ok_or_else(|| Failure::cannot(format!("--model {model}: use t, h or hybrid-pi")))?;
    let background = background_of(background)?;
    let opts = export::ExportOptions {
        format,
        scale: scale.unwrap_or(1.0),
        layers,
        model,
        background,
        outline_text: *outline_text,
        use_stored_layout: !fresh_layout,
    };
    // A progress line for large sheets; Ctrl-C ends the program as usual
    // (the atomic write leaves any old file whole).
    let progress = biasline::progress::Progress::new();
    let watch = super::watch::watch(&progress, false);
    progress.stage("analysing and placing annotations", 0);
    let (scene, ann) = biasline::results::export::scene_of(&doc, None, &opts);
    refuse_unsolved(file, &ann.title)?;
    let opts = export::ExportOptions {
        scale: scale_for(&scene),
        ..opts
    };
    progress.stage("drawing", 0);
    let bytes = export::render_scene(&doc.title, &scene, &opts)
        .map_err(|e| Failure::cannot(e.to_string()))?;
    progress.stage("writing", 0);
    write_file(output, &bytes)?;
    drop(watch);
    writeln!(
        out,
        "{}: wrote {} ({})",
        file.display(),
        output.display(),
        ann.title.state.text()
    )
    .map_err(io)?;
    Ok(state_code(&ann.title.state))
}

/// The one rule of every writing command: exit 2 means nothing was written
/// (an old file at the output path is left as it was). A drawing or table
/// that needs the operating point is refused when the circuit cannot be
/// solved, with the reason.
fn refuse_unsolved(file: &Path, title: &biasline::scene::TitleInfo) -> Result<(), Failure> {
    match &title.state {
        biasline::scene::ResultState::NotSolvable(why) => Err(Failure::cannot(format!(
            "{}: not solvable: {why}; nothing written{}",
            file.display(),
            title
                .warnings
                .iter()
                .map(|w| format!("\n  {w}"))
                .collect::<String>()
        ))),
        _ => Ok(()),
    }
}

pub(super) fn state_code(state: &biasline::scene::ResultState) -> i32 {
    use biasline::scene::ResultState;
    match state {
        ResultState::Solved | ResultState::NotRun => EXIT_CLEAN,
        ResultState::Warnings(_) => EXIT_FINDINGS,
        // Refused before writing (see `refuse_unsolved`).
        ResultState::NotSolvable(_) => EXIT_CANNOT,
    }
}

/// Write a whole file atomically (temporary file beside it, then rename),
/// naming it in any message.
pub(super) fn write_file(path: &Path, bytes: &[u8]) -> Result<(), Failure> {
    biasline::document::write_atomic(path, bytes)
        .map_err(|e| Failure::cannot(format!("cannot write {}: {e}", path.display())))
}
