//! Crossover frequency, phase margin and gain margin of a loop gain T(f)
//! (Bode 1945): PM = 180° + ∠T(f_c) where |T(f_c)| = 1, GM = −20·log10|T(f_180)|
//! where ∠T(f_180) = −180°. The sweep samples bracket each crossing; the
//! crossing itself is then found by bisection on log f with `eval`, the
//! exact loop gain at any frequency, so the figures do not depend on the
//! sweep's spacing.

use crate::analysis::linear::C64;

/// Margins of one loop.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Margins {
    /// Frequency where |T| falls through 1 (the highest such), Hz.
    pub crossover_hz: Option<f64>,
    /// 180° + ∠T at the crossover, degrees.
    pub phase_margin_deg: Option<f64>,
    /// Frequency where the phase reaches −180° above the loop's peak, Hz.
    pub phase_crossover_hz: Option<f64>,
    /// −20·log10|T| there, dB.
    pub gain_margin_db: Option<f64>,
}

/// Phases in degrees, unwrapped along the sweep and shifted by whole turns
/// so that the phase where |T| is largest lies in (−180°, 180°].
pub fn unwrapped_phase(samples: &[C64]) -> Vec<f64> {
    let mut out: Vec<f64> = Vec::with_capacity(samples.len());
    for t in samples {
        let p = t.arg().to_degrees();
        let q = match out.last() {
            Some(&prev) => p + 360.0 * ((prev - p) / 360.0).round(),
            None => p,
        };
        out.push(q);
    }
    if let Some(peak) =
        (0..samples.len()).max_by(|&a, &b| samples[a].norm().total_cmp(&samples[b].norm()))
    {
        let shift = 360.0 * ((out[peak]) / 360.0).round();
        for p in &mut out {
            *p -= shift;
        }
    }
    out
}

fn bisect(lo: f64, hi: f64, mut above: impl FnMut(f64) -> bool) -> f64 {
    // `above(lo)` is true, `above(hi)` false; bisect on log f.
    let (mut a, mut b) = (lo.ln(), hi.ln());
    for _ in 0..80 {
        let m = 0.5 * (a + b);
        if above(m.exp()) {
            a = m;
        } else {
            b = m;
        }
    }
    (0.5 * (a + b)).exp()
}

/// Margins from the sampled loop gain (`samples[k]` at `freqs[k]`) and the
/// exact loop gain `eval` at any frequency.
pub fn margins(freqs: &[f64], samples: &[C64], eval: &dyn Fn(f64) -> C64) -> Margins {
    let mut m = Margins::default();
    if freqs.len() < 2 || freqs.len() != samples.len() {
        return m;
    }
    let phase = unwrapped_phase(samples);
    // The phase at a frequency between two samples, continued from the lower one.
    let phase_at = |f: f64, k: usize| {
        let p = eval(f).arg().to_degrees();
        p + 360.0 * ((phase[k] - p) / 360.0).round()
    };
    if let Some(k) = (0..freqs.len() - 1)
        .rev()
        .find(|&k| samples[k].norm() >= 1.0 && samples[k + 1].norm() < 1.0)
    {
        let fc = bisect(freqs[k], freqs[k + 1], |f| eval(f).norm() >= 1.0);
        m.crossover_hz = Some(fc);
        m.phase_margin_deg = Some(180.0 + phase_at(fc, k));
    }
    let peak = (0..samples.len())
        .max_by(|&a, &b| samples[a].norm().total_cmp(&samples[b].norm()))
        .unwrap_or(0);
    if let Some(k) = (peak..freqs.len() - 1).find(|&k| phase[k] > -180.0 && phase[k + 1] <= -180.0)
    {
        let f180 = bisect(freqs[k], freqs[k + 1], |f| phase_at(f, k) > -180.0);
        m.phase_crossover_hz = Some(f180);
        m.gain_margin_db = Some(-20.0 * eval(f180).norm().log10());
    }
    m
}
