//! Fill the data of the optional `spread`, `noise` and `distortion` layers
//! from the spread, noise and time-domain analyses. Like `annotations.rs`,
//! the drawing gets plain numbers; the scene runs none of these analyses.

use crate::analysis::noise::NoiseReport;
use crate::document::Document;
use crate::scene::{Annotations, ChainClip, ChainFigure, StageDistortion, StageNoise};
use std::collections::BTreeMap;

/// Worst-case (min, max) of every net's DC voltage over part tolerances,
/// β spread and temperature: the spread run's corners only (no Monte
/// Carlo, no small-signal figures). Keyed by net name.
pub fn voltage_ranges(doc: &Document) -> Result<BTreeMap<String, (f64, f64)>, String> {
    let mut board = crate::spread::evaluate::Board::new(doc);
    board.small_signal = false;
    let mut opts = crate::spread::Options::from_document(doc);
    opts.runs = 0;
    opts.worst_case = true;
    opts.sensitivities = false;
    let rep = crate::spread::run(doc, &board, &opts)?;
    Ok(rep
        .quantities
        .iter()
        .filter_map(|q| {
            let net = q.name.strip_prefix("V(")?.strip_suffix(')')?;
            let wc = q.worst_case.as_ref()?;
            // A range that prints as one value (a rail, an AC-coupled node
            // at 0 V) says nothing: left out, so its tag stays one line.
            let same = crate::units::format(wc.min, crate::units::Unit::Volt)
                == crate::units::format(wc.max, crate::units::Unit::Volt);
            (wc.min.is_finite() && wc.max.is_finite() && !same)
                .then(|| (net.to_string(), (wc.min, wc.max)))
        })
        .collect())
}

/// The noise report the `noise` layer and the noise plot read: the
/// project's own sweep, the audio band, spot figures at 1 kHz (the same
/// settings as `analyze --json`).
pub fn noise_report(doc: &Document) -> Result<NoiseReport, crate::analysis::AnalysisError> {
    super::noise::analyze_report(doc)
}

/// The noise line of each stage card from a noise report: en and in of each
/// stage, and on the first (input) stage the chain's spot noise figure at
/// the real source resistance when there is one.
pub fn stage_noise_from_report(r: &NoiseReport) -> BTreeMap<String, StageNoise> {
    let mut out = BTreeMap::new();
    for (k, s) in r.stages.iter().enumerate() {
        if !(s.voltage_density.is_finite() && s.current_density.is_finite()) {
            continue;
        }
        let chain_figure = match (k, r.spot_figure_db, &r.source_resistance) {
            (0, Some(nf), Some(name)) if nf.is_finite() => Some(ChainFigure {
                figure_db: nf,
                source_resistor: name.clone(),
                source_ohms: r.source_resistance_ohms.unwrap_or(f64::NAN),
            }),
            _ => None,
        };
        out.insert(
            s.transistor.clone(),
            StageNoise {
                frequency: r.spot_frequency,
                voltage_density: s.voltage_density,
                current_density: s.current_density,
                chain_figure,
            },
        );
    }
    out
}

/// The distortion line of each stage card: the steady-state run of the
/// project's own sine (the same run as `transient`), THD at each stage's
/// output; on the first stage's card the clip search of `transient --clip`
/// at its default limit (1 % THD at the output).
pub fn stage_distortion(doc: &Document) -> Result<BTreeMap<String, StageDistortion>, String> {
    use crate::analysis::transient::{clip, steady};
    let nl = crate::netlist::connect(doc);
    let c = crate::analysis::circuit::build(doc, &nl).map_err(|e| e.to_string())?;
    let d = steady::distortion(doc, &nl, &c, &steady::SteadyOptions::default(), &mut |_| {
        true
    })
    .map_err(|e| e.to_string())?;
    let chain = clip::search(doc, &nl, &c, clip::DEFAULT_THD_LIMIT, &mut |_| true)
        .ok()
        .map(|k| ChainClip {
            thd_limit: k.thd_limit,
            amplitude: k.amplitude,
            limited_by: k.limited_by,
        });
    let mut out = BTreeMap::new();
    for (k, s) in d.stages.iter().enumerate() {
        let Some(t) = &s.transistor else { continue };
        let output_peak = s.spectrum.amplitude.first().copied().unwrap_or(f64::NAN);
        if !(s.spectrum.thd.is_finite() && output_peak.is_finite()) {
            continue;
        }
        out.insert(
            t.clone(),
            StageDistortion {
                source_amplitude: d.amplitude,
                frequency: d.frequency,
                thd: s.spectrum.thd,
                output_peak,
                chain_clip: if k == 0 { chain.clone() } else { None },
            },
        );
    }
    Ok(out)
}

/// Add the optional layers' data to annotations already made by
/// `annotations_for`: each only when asked for, each left empty (the layer
/// draws nothing extra) when its analysis cannot be had. Returns the
/// reasons, in plain words, for what was left out.
pub fn add_optional(
    doc: &Document,
    ann: &mut Annotations,
    spread: bool,
    noise: bool,
    distortion: bool,
) -> Vec<String> {
    let mut why = Vec::new();
    if spread {
        match voltage_ranges(doc) {
            Ok(r) => {
                if !r.is_empty() {
                    ann.title.assumptions.push(
                        "voltage ranges: worst case over part tolerances, β spread and temperature"
                            .into(),
                    );
                }
                ann.voltage_ranges = r;
            }
            Err(e) => why.push(format!("no voltage ranges: {e}")),
        }
    }
    if noise {
        match noise_report(doc) {
            Ok(r) => {
                ann.stage_noise = stage_noise_from_report(&r);
                if !ann.stage_noise.is_empty() {
                    ann.title.assumptions.push(format!(
                        "stage noise: en, in at {} referred to each stage's input; NF against the real source resistance",
                        crate::units::format(r.spot_frequency, crate::units::Unit::Hertz)
                    ));
                }
            }
            Err(e) => why.push(format!("no noise figures: {}", e.to_string().trim_end())),
        }
    }
    if distortion {
        match stage_distortion(doc) {
            Ok(d) => {
                if let Some(first) = d.values().next() {
                    ann.title.assumptions.push(format!(
                        "stage distortion: THD at each stage's output at steady state, source sine {} peak at {}",
                        crate::units::format(first.source_amplitude, crate::units::Unit::Volt),
                        crate::units::format(first.frequency, crate::units::Unit::Hertz)
                    ));
                }
                ann.stage_distortion = d;
            }
            Err(e) => why.push(format!("no distortion figures: {}", e.trim_end())),
        }
    }
    ann.title.assumptions.extend(why.iter().cloned());
    why
}
