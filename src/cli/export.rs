//! `biasline export FILE -o OUT.png|svg`, the CSV tables and the plots.

use super::*;

pub(super) fn export(command: &Command, out: &mut dyn Write) -> Result<i32, Failure> {
    use crate::render::{export, tables, Background};
    use crate::scene::{LayerSet, ModelKind};
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
        let nl = netlist::connect(&doc);
        let ann = crate::scene::annotations_for(&doc, &nl);
        let csv = match kind.as_str() {
            "bias" => tables::bias_csv(&doc, &nl, &ann),
            "stages" => tables::stages_csv(&ann),
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
        return Ok(state_code(&ann.title.state));
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
    if ![1.0, 2.0, 3.0].contains(scale) {
        return Err(Failure::cannot(format!("--scale {scale}: use 1, 2 or 3")));
    }
    let background_of = |w: &str| {
        Background::from_word(w).ok_or_else(|| {
            Failure::cannot(format!("--background {w}: use white, paper or transparent"))
        })
    };
    let plot = match (response, noise) {
        (Some(csv), _) => {
            let text = std::fs::read_to_string(csv)
                .map_err(|e| Failure::cannot(format!("cannot read {}: {e}", csv.display())))?;
            let data = crate::render::plot::ResponseData::from_csv(
                &format!("{} — frequency response", doc.title),
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
                crate::render::plot::response_scene(&data),
                data.title,
                what,
            ))
        }
        (None, Some(csv)) => {
            let text = std::fs::read_to_string(csv)
                .map_err(|e| Failure::cannot(format!("cannot read {}: {e}", csv.display())))?;
            let data = crate::render::noise_plot::NoiseData::from_csv(
                &format!("{} — noise density", doc.title),
                &text,
            )
            .map_err(|e| Failure::cannot(format!("{}: {e}", csv.display())))?;
            let what = format!("{} points", data.points.len());
            Some((
                csv,
                crate::render::noise_plot::noise_scene(&data),
                data.title,
                what,
            ))
        }
        (None, None) if *waveform => {
            let data = super::transient::waveform_data(file, &doc)?;
            let what = format!("THD {:.3} %", 100.0 * data.thd.unwrap_or(f64::NAN));
            Some((
                file,
                crate::render::wave_plot::wave_scene(&data),
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
            export::Format::Svg => crate::render::svg::render(
                &scene,
                all,
                &crate::render::svg::SvgOptions {
                    background,
                    outline_text: *outline_text,
                    title: title.clone(),
                    ..Default::default()
                },
            )
            .map(String::into_bytes),
            export::Format::Png => crate::render::png::render(
                &scene,
                all,
                &crate::render::png::PngOptions {
                    scale: *scale,
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
        scale: *scale,
        layers,
        model,
        background,
        outline_text: *outline_text,
        use_stored_layout: !fresh_layout,
    };
    let done = export::export(&doc, None, &opts).map_err(|e| Failure::cannot(e.to_string()))?;
    write_file(output, &done.bytes)?;
    writeln!(
        out,
        "{}: wrote {} ({})",
        file.display(),
        output.display(),
        done.state.text()
    )
    .map_err(io)?;
    Ok(state_code(&done.state))
}

pub(super) fn state_code(state: &crate::scene::ResultState) -> i32 {
    use crate::scene::ResultState;
    match state {
        ResultState::Solved | ResultState::NotRun => EXIT_CLEAN,
        ResultState::Warnings(_) => EXIT_FINDINGS,
        // The drawing is written, with the reason in its title block.
        ResultState::NotSolvable(_) => EXIT_CANNOT,
    }
}

/// Write a whole file, naming it in any message.
pub(super) fn write_file(path: &Path, bytes: &[u8]) -> Result<(), Failure> {
    std::fs::write(path, bytes)
        .map_err(|e| Failure::cannot(format!("cannot write {}: {e}", path.display())))
}
