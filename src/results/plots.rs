//! The plain data of the noise and waveform plots, from the analyses'
//! results (the render layer draws it and reads no analysis type).

use crate::analysis::noise::NoiseReport;
use crate::analysis::transient::steady::Distortion;
use crate::render::noise_plot::NoiseData;
use crate::render::wave_plot::WaveData;

/// The densities of a noise report.
pub fn noise_data(title: &str, r: &NoiseReport) -> NoiseData {
    let points = r
        .frequencies
        .iter()
        .enumerate()
        .map(|(k, &f)| {
            (
                f,
                r.output_density.get(k).copied().unwrap_or(f64::NAN),
                r.input_density.get(k).copied().unwrap_or(f64::NAN),
            )
        })
        .collect();
    NoiseData {
        title: title.to_string(),
        points,
    }
}

/// The last period of a steady-state run: input and output.
pub fn wave_data(title: &str, d: &Distortion) -> WaveData {
    let n = d.output.samples.len();
    let times = (0..=n)
        .map(|j| j as f64 / (n as f64 * d.frequency))
        .collect();
    // Close the period: the first sample again at its end.
    let close = |s: &[f64]| {
        let mut v = s.to_vec();
        if let Some(&f) = s.first() {
            v.push(f);
        }
        v
    };
    WaveData {
        title: title.to_string(),
        times,
        traces: vec![
            (format!("input {}", d.input.net), close(&d.input.samples)),
            (format!("output {}", d.output.net), close(&d.output.samples)),
        ],
        harmonics_db: d.output.spectrum.relative_db.clone(),
        thd: Some(d.output.spectrum.thd),
    }
}
