//! Harmonics of a periodic waveform from whole periods sampled uniformly
//! (no window needed: the DFT of an integer number of periods has no leakage): a direct DFT of the few
//! harmonics wanted, THD = √(Σ_{n≥2} Vn²)/V1 (IEC 60268-3's ratio).

use serde::Serialize;
use std::f64::consts::TAU;

/// Harmonics counted in THD and reported: the fundamental and 2…10.
pub const HARMONICS: usize = 10;

/// The spectrum of one waveform.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Spectrum {
    /// Mean value over the periods, V.
    pub mean: f64,
    /// Peak amplitude of harmonic n at index n − 1 (n = 1…10), V.
    pub amplitude: Vec<f64>,
    /// Phase of harmonic n (cosine reference), degrees.
    pub phase_degrees: Vec<f64>,
    /// Harmonics 2…10 in dB relative to the fundamental (negative: below).
    pub relative_db: Vec<f64>,
    /// Total harmonic distortion as a fraction (0.01 = 1 %).
    pub thd: f64,
}

/// Spectrum of `samples`: `periods` whole periods, uniformly sampled, the
/// sample at the end of the last period left out.
pub fn spectrum(samples: &[f64], periods: usize) -> Spectrum {
    let n = samples.len().max(1);
    let mean = samples.iter().sum::<f64>() / n as f64;
    let mut amplitude = Vec::with_capacity(HARMONICS);
    let mut phase = Vec::with_capacity(HARMONICS);
    for h in 1..=HARMONICS {
        let k = (h * periods.max(1)) as f64;
        let (mut re, mut im) = (0.0, 0.0);
        for (j, v) in samples.iter().enumerate() {
            let a = TAU * k * j as f64 / n as f64;
            re += v * a.cos();
            im -= v * a.sin();
        }
        re *= 2.0 / n as f64;
        im *= 2.0 / n as f64;
        amplitude.push(re.hypot(im));
        phase.push(im.atan2(re).to_degrees());
    }
    let v1 = amplitude[0];
    let thd = if v1 > 0.0 {
        amplitude[1..].iter().map(|a| a * a).sum::<f64>().sqrt() / v1
    } else {
        0.0
    };
    // Without a fundamental there is nothing to be below: no relative levels
    // (never NaN).
    let relative_db = if v1 > 0.0 {
        amplitude[1..]
            .iter()
            .map(|a| 20.0 * (a / v1).log10())
            .collect()
    } else {
        Vec::new()
    };
    Spectrum {
        mean,
        amplitude,
        phase_degrees: phase,
        relative_db,
        thd,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_known_mixture_comes_back() {
        // invariant: the DFT of whole periods separates harmonics exactly.
        let n = 128;
        let s: Vec<f64> = (0..n)
            .map(|j| {
                let a = TAU * j as f64 / n as f64;
                0.5 + 2.0 * a.cos() + 0.02 * (3.0 * a).sin()
            })
            .collect();
        let sp = spectrum(&s, 1);
        assert!((sp.mean - 0.5).abs() < 1e-12);
        assert!((sp.amplitude[0] - 2.0).abs() < 1e-12);
        assert!((sp.amplitude[2] - 0.02).abs() < 1e-12);
        assert!(sp.amplitude[1].abs() < 1e-12);
        assert!((sp.thd - 0.01).abs() < 1e-12);
        assert!((sp.phase_degrees[0]).abs() < 1e-9);
    }
}
