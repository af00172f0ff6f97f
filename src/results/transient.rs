//! The JSON of a steady-state run (`transient --json`; the design report
//! reads the same object).

use crate::analysis::transient::steady::Distortion;
use serde_json::json;

/// The JSON of a steady-state run, as `transient --json` prints it (the
/// design report reads the same object).
pub fn steady_json(d: &Distortion) -> serde_json::Value {
    json!({
        "distortion": d,
        "waveform": {
            "time": period_times(d),
            "input": d.input.samples,
            "output": d.output.samples,
        }
    })
}

pub fn period_times(d: &Distortion) -> Vec<f64> {
    let n = d.output.samples.len();
    (0..n)
        .map(|j| j as f64 / (n as f64 * d.frequency))
        .collect()
}
