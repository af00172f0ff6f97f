//! Output noise of every source at once, by the adjoint (transposed) system.
//!
//! With the network `A·v = b` and the output `v_out = eᵀ·v`, the transfer
//! from a right-hand side `b` to the output is `eᵀ·A⁻¹·b = xᵀ·b` with
//! `Aᵀ·x = e`. One transposed solve per frequency therefore gives the
//! transfer of every current-noise generator (`x[a] − x[b]`) and of the
//! signal source (`xᵀ·b` of its unit drive) together. The system is the
//! small-signal one of [`crate::analysis::linear`] (grounded sources folded,
//! dense or sparse LU by size), stamped transposed. Sources are uncorrelated, so their
//! output powers add: `S_out = Σ |Z_k|²·S_k`.

use super::network::{Network, Node};
use super::sources::NoiseSource;
use crate::analysis::linear::{Adjoint, Drive, Mode, System, C64};
use crate::analysis::AnalysisError;
use num_complex::Complex64;

/// Output noise across frequency.
#[derive(Debug, Clone, PartialEq)]
pub struct Spectrum {
    pub frequencies: Vec<f64>,
    /// Output power density of each source, V²/Hz, `[frequency][source]`.
    pub contributions: Vec<Vec<f64>>,
    /// Total output power density, V²/Hz (the sum of the contributions).
    pub total: Vec<f64>,
    /// Transfer from the signal source's open-circuit voltage to the output.
    pub gain: Vec<Complex64>,
}

/// The network's system at every frequency (the symbolic analysis of a
/// large one is done once here and reused).
pub fn system(network: &Network) -> System<'_> {
    System::new(&network.circuit, Mode::Frequency, &[], None)
}

/// The adjoint solution at one frequency: `Aᵀ·x = e_out`.
pub fn adjoint(
    system: &System,
    output: (Node, Node),
    frequency: f64,
) -> Result<Adjoint, AnalysisError> {
    system
        .adjoint(frequency, output)
        .map_err(|_| singular(frequency))
}

fn singular(frequency: f64) -> AnalysisError {
    AnalysisError::Singular {
        message: format!(
            "the small-signal equations have no unique solution at {}: \
             look for a net joined to the rest only through current sources or open parts",
            crate::units::format(frequency, crate::units::Unit::Hertz)
        ),
    }
}

/// The transfer (V per A) from a source's current to the output, read from
/// an adjoint solution.
pub fn transfer(x: &Adjoint, a: Node, b: Node) -> Complex64 {
    x.transfer(a, b)
}

/// The gain from the signal source (1 V) to the output, from an adjoint
/// solution; zero without a signal source.
pub fn signal_gain(system: &System, network: &Network, x: &Adjoint) -> Complex64 {
    network.signal.map_or(C64::default(), |k| {
        system.adjoint_response(x, &[Drive::unit(k)])
    })
}

/// Output noise of every source at every frequency (one transposed solve each).
pub fn spectrum(
    network: &Network,
    sources: &[NoiseSource],
    output: (Node, Node),
    frequencies: &[f64],
) -> Result<Spectrum, AnalysisError> {
    let sys = system(network);
    let mut out = Spectrum {
        frequencies: frequencies.to_vec(),
        contributions: Vec::with_capacity(frequencies.len()),
        total: Vec::with_capacity(frequencies.len()),
        gain: Vec::with_capacity(frequencies.len()),
    };
    for &f in frequencies {
        let x = adjoint(&sys, output, f)?;
        let row: Vec<f64> = sources
            .iter()
            .map(|s| transfer(&x, s.a, s.b).norm_sqr() * s.density(f))
            .collect();
        out.total.push(row.iter().sum());
        out.contributions.push(row);
        out.gain.push(signal_gain(&sys, network, &x));
    }
    Ok(out)
}

/// The same contributions at one frequency by one direct solve per source
/// (`A·v = b_k`, read `v_out`): an independent check of [`spectrum`].
pub fn direct(
    network: &Network,
    sources: &[NoiseSource],
    output: (Node, Node),
    frequency: f64,
) -> Result<Vec<f64>, AnalysisError> {
    let sys = system(network);
    sources
        .iter()
        .map(|s| {
            let drives = [
                Drive::inject(s.a),
                Drive {
                    value: C64::new(-1.0, 0.0),
                    ..Drive::inject(s.b)
                },
            ];
            let v = sys
                .solve(frequency, &drives)
                .map_err(|_| singular(frequency))?;
            Ok((v.v(output.0) - v.v(output.1)).norm_sqr() * s.density(frequency))
        })
        .collect()
}

/// Logarithmically spaced frequencies from `start` to `stop` inclusive,
/// `per_decade` points per decade (at least two points).
pub fn log_grid(start: f64, stop: f64, per_decade: u32) -> Vec<f64> {
    if !(start > 0.0 && stop > start) {
        return vec![start.max(f64::MIN_POSITIVE)];
    }
    // A ratio that overflows (1e-300..1e300) is measured by its logarithms;
    // the count is capped like a sweep's, so no grid outgrows memory.
    let ratio = stop / start;
    let decades = if ratio.is_finite() {
        ratio.log10()
    } else {
        stop.log10() - start.log10()
    };
    let steps = ((decades * per_decade.max(1) as f64).round() as usize)
        .clamp(1, crate::document::limits::MAX_SWEEP_POINTS);
    (0..=steps)
        .map(|i| start * 10f64.powf(decades * i as f64 / steps as f64))
        .collect()
}

/// `∫ y(f) df` over the grid, taking `y` as a power of `f` between
/// neighbouring points (exact for flat, 1/f and 1/f² densities; falls back
/// to the trapezoid rule where a value is zero).
pub fn integrate(frequencies: &[f64], values: &[f64]) -> f64 {
    frequencies
        .windows(2)
        .zip(values.windows(2))
        .map(|(f, y)| segment(f[0], f[1], y[0], y[1]))
        .sum()
}

fn segment(f0: f64, f1: f64, y0: f64, y1: f64) -> f64 {
    if !(y0 > 0.0 && y1 > 0.0) {
        return 0.5 * (y0 + y1) * (f1 - f0);
    }
    let r = f1 / f0;
    let p = (y1 / y0).ln() / r.ln() + 1.0;
    if p.abs() < 1e-9 {
        y0 * f0 * r.ln()
    } else {
        y0 * f0 * (r.powf(p) - 1.0) / p
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_grid_matches_the_sweep_convention() {
        // invariant: 1 Hz–100 MHz at 20 points per decade is 8·20 + 1 = 161 points, ends included.
        let g = log_grid(1.0, 1e8, 20);
        assert_eq!(g.len(), 161);
        assert!((g[0] - 1.0).abs() < 1e-12 && (g[160] / 1e8 - 1.0).abs() < 1e-12);
        assert!((g[20] / 10.0 - 1.0).abs() < 1e-12);
    }

    #[test]
    fn integral_of_a_flat_density_is_its_bandwidth() {
        // invariant: ∫ 1 df from 20 Hz to 20 kHz = 19 980 Hz; ∫ 1/f df = ln(1000).
        let g = log_grid(20.0, 20e3, 7);
        let ones = vec![1.0; g.len()];
        assert!((integrate(&g, &ones) / 19_980.0 - 1.0).abs() < 1e-12);
        let inv: Vec<f64> = g.iter().map(|f| 1.0 / f).collect();
        assert!((integrate(&g, &inv) / 1000f64.ln() - 1.0).abs() < 1e-12);
    }
}
