//! The noise keys of `analyze --json` (docs/analyze-json.md): the chain's
//! noise report over the audio band with spot figures at 1 kHz.

pub use crate::analysis::noise::NoiseReport;
use crate::analysis::noise::{self, BuildOptions};

/// The band the `analyze` noise keys, the `noise` layer and the report
/// integrate over, Hz.
pub const BAND_HZ: (f64, f64) = (20.0, 20e3);
/// The spot frequency of those figures, Hz.
pub const SPOT_HZ: f64 = 1e3;

/// The noise report `analyze`, the `noise` layer and the report show.
pub fn analyze_report(
    doc: &crate::document::Document,
) -> Result<NoiseReport, crate::analysis::AnalysisError> {
    noise::report_for_document(doc, BAND_HZ, SPOT_HZ, &BuildOptions::default())
}

/// The noise keys added to `analyze --json` (docs/analyze-json.md), or
/// `null` when no noise result can be had (with the reason).
pub fn analyze_json(doc: &crate::document::Document) -> serde_json::Value {
    json_of(&analyze_report(doc))
}

/// The noise keys of `analyze --json` from a report already computed (band
/// 20 Hz–20 kHz, spot 1 kHz, default options, as [`analyze_json`] runs it).
pub fn json_of(report: &Result<NoiseReport, crate::analysis::AnalysisError>) -> serde_json::Value {
    use serde_json::json;
    let fin = |v: f64| {
        if v.is_finite() {
            json!(v)
        } else {
            serde_json::Value::Null
        }
    };
    match report {
        Ok(r) => json!({
            "available": true,
            "kelvin": r.kelvin,
            "output": r.output,
            "band": [r.band.0, r.band.1],
            "source_resistance": r.source_resistance,
            "source_resistance_ohms": r.source_resistance_ohms,
            "band_output_rms": fin(r.band_output_rms),
            "band_input_rms": fin(r.band_input_rms),
            "band_noise_figure_db": r.band_figure_db.map(fin),
            "band_noise_factor": r.band_noise_factor.map(fin),
            "spot_frequency": r.spot_frequency,
            "spot_noise_figure_db": r.spot_figure_db.map(fin),
            "spot_output_density": fin(r.spot_output_density),
            "spot_input_density": fin(r.spot_input_density),
            "signal_to_noise_db": r.signal_to_noise.as_ref().map(|s| fin(s.snr_db)),
            "chain_input_noise": r.chain_input_noise.as_ref().map(|c| json!({
                "voltage_density": fin(c.voltage_density),
                "current_density": fin(c.current_density),
                "optimum_source_resistance": fin(c.optimum_source_resistance),
                "optimum_noise_figure_db": fin(c.optimum_figure_db),
            })),
            "stages": r.stages.iter().map(|s| json!({
                "transistor": s.transistor,
                "voltage_density": fin(s.voltage_density),
                "current_density": fin(s.current_density),
            })).collect::<Vec<_>>(),
            "top_contributors": r.ranked().iter().take(3).map(|&i| {
                let c = &r.contributors[i];
                json!({ "label": c.label, "designator": c.designator, "mechanism": c.mechanism,
                        "share": fin(c.share), "band_output_rms": fin(c.band_output_rms) })
            }).collect::<Vec<_>>(),
            "by_part": r.by_part.iter().map(|p| json!({
                "designator": p.designator, "share": fin(p.share),
            })).collect::<Vec<_>>(),
            "better_collector_current": r.current_hints.iter().map(|h| json!({
                "transistor": h.designator,
                "present_current": fin(h.present_current),
                "present_noise_figure_db": fin(h.present_figure_db),
                "better_current": fin(h.better_current),
                "better_noise_figure_db": fin(h.better_figure_db),
                "classic_current": fin(h.classic_current),
                "is_input": h.is_input,
            })).collect::<Vec<_>>(),
        }),
        Err(e) => json!({ "available": false, "reason": e.to_string().trim_end() }),
    }
}
