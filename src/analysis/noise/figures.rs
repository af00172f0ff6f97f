//! Figures from the output spectrum: input-referred density, noise factor
//! and figure, the amplifier's two-port noise generators en and in, the
//! optimum source resistance, and the better collector current.
//!
//! Definitions (the standard ones; e.g. Motchenbacher and Connelly,
//! "Low-Noise Electronic System Design", ch. 1–2; Gray, Hurst, Lewis,
//! Meyer, "Analysis and Design of Analog Integrated Circuits", noise chapter):
//! - noise factor F = (total output noise) / (output noise due to the
//!   source resistance alone); noise figure NF = 10·log10 F dB. Over a band,
//!   both powers are integrated first.
//! - en: the output noise with the source resistance short-circuited,
//!   divided by the gain from the source voltage; in: the output noise with
//!   the source resistance open-circuited, divided by the transimpedance
//!   from a current pushed into the amplifier's input node. Their
//!   correlation is not computed, so the optimum source resistance
//!   Ropt = en/in and Fopt = 1 + en·in/(2kT) are the uncorrelated estimates.

use super::setup::NoiseSetup;
use super::spectrum::{self, adjoint, transfer, Spectrum};
use crate::analysis::{AnalysisError, BOLTZMANN};

/// Input-referred density at each frequency, V/√Hz: the output density over
/// the gain from the signal source (infinite where the gain is zero).
pub fn input_density(s: &Spectrum) -> Vec<f64> {
    s.total
        .iter()
        .zip(&s.gain)
        .map(|(t, g)| t.sqrt() / g.norm())
        .collect()
}

/// Spot noise factor at each frequency: total over the part from the source
/// resistance.
pub fn noise_factor(setup: &NoiseSetup, s: &Spectrum) -> Vec<f64> {
    s.total
        .iter()
        .zip(&s.contributions)
        .map(|(t, c)| t / setup.source_part(c))
        .collect()
}

/// Decibels of a power ratio.
pub fn decibels(ratio: f64) -> f64 {
    10.0 * ratio.log10()
}

/// The band noise factor: integrated total over integrated source part.
pub fn band_noise_factor(setup: &NoiseSetup, s: &Spectrum) -> f64 {
    let src: Vec<f64> = s
        .contributions
        .iter()
        .map(|c| setup.source_part(c))
        .collect();
    spectrum::integrate(&s.frequencies, &s.total) / spectrum::integrate(&s.frequencies, &src)
}

/// The amplifier's equivalent input noise generators at each frequency.
#[derive(Debug, Clone, PartialEq)]
pub struct TwoPortNoise {
    pub frequencies: Vec<f64>,
    /// V/√Hz, from the short-circuited input.
    pub en: Vec<f64>,
    /// A/√Hz, from the open-circuited input.
    pub in_: Vec<f64>,
}

/// en and in of the whole chain, seen at the signal source (the source
/// resistance short-circuited, then open-circuited). `None` without a
/// source resistance.
pub fn chain_two_port(
    setup: &NoiseSetup,
    frequencies: &[f64],
) -> Result<Option<TwoPortNoise>, AnalysisError> {
    let (Some(rs), Some(_)) = (&setup.source_resistance, &setup.signal) else {
        return Ok(None);
    };
    let shorted = setup
        .with_source_resistance(true)
        .expect("has a source resistance");
    let opened = setup
        .with_source_resistance(false)
        .expect("has a source resistance");
    let short_spec = spectrum::spectrum(
        &shorted.network,
        &shorted.sources,
        shorted.output,
        frequencies,
    )?;
    let en = input_density(&short_spec);
    let mut in_ = Vec::with_capacity(frequencies.len());
    let sys = spectrum::system(&opened.network);
    for &f in frequencies {
        let x = adjoint(&sys, opened.output, f)?;
        let total: f64 = opened
            .sources
            .iter()
            .map(|s| transfer(&x, s.a, s.b).norm_sqr() * s.density(f))
            .sum();
        let zt = transfer(&x, rs.amplifier_node, 0).norm();
        in_.push(total.sqrt() / zt);
    }
    Ok(Some(TwoPortNoise {
        frequencies: frequencies.to_vec(),
        en,
        in_,
    }))
}

/// Ropt = en/in and the noise factor there, 1 + en·in/(2kT) (uncorrelated
/// generators): from F = 1 + (en² + in²·R²)/(4kT·R), minimised at R = en/in.
pub fn optimum_source(en: f64, in_: f64, kelvin: f64) -> (f64, f64) {
    (en / in_, 1.0 + en * in_ / (2.0 * BOLTZMANN * kelvin))
}

/// What a different collector current would do for one transistor.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct CurrentHint {
    pub designator: String,
    /// A FET: the current is its drain current, scaled by the square law
    /// ([`super::setup::CurrentLaw::SquareLaw`]).
    pub field_effect: bool,
    /// Present collector current, A.
    pub present_current: f64,
    /// Band noise figure of the chain now, dB.
    pub present_figure_db: f64,
    /// Collector current that minimises the chain's band noise figure with
    /// the present source resistance, A (scan of this transistor's
    /// small-signal values scaled with its current, everything else held).
    pub better_current: f64,
    /// The chain's band noise figure at that current, dB.
    pub better_figure_db: f64,
    /// The classic single-transistor optimum IC = VT·√β/(Rs + rb) from
    /// en² ≈ 4kT(rb + 1/(2gm)), in² ≈ 2q·IC/β (Gray et al., noise chapter),
    /// with Rs the chain's source resistance; given for comparison (not a
    /// number for a FET, which it does not describe).
    pub classic_current: f64,
    /// The transistor of the first recognised stage (where the classic
    /// estimate applies).
    pub is_input: bool,
}

/// Band noise figure (dB) of a setup over `band_grid`.
pub fn band_figure_db(setup: &NoiseSetup, band_grid: &[f64]) -> Result<f64, AnalysisError> {
    if setup.source_resistance.is_none() {
        return Err(AnalysisError::Singular {
            message:
                "no source resistance: mark the source's own resistor (source_resistance_mark)"
                    .into(),
        });
    }
    let s = spectrum::spectrum(&setup.network, &setup.sources, setup.output, band_grid)?;
    Ok(decibels(band_noise_factor(setup, &s)))
}

/// The most transistors whose collector current [`better_currents`] scans.
/// Each scan re-solves the whole band some 55 times, so scanning every
/// transistor of an n-stage chain grew as n² (a 100-stage chain took 20 s);
/// the transistors scanned are those whose own noise sources put the most
/// noise at the output over the band — the input-side ones, which set the
/// noise figure. Every demo has fewer transistors than this.
pub const MAX_SCANNED_TRANSISTORS: usize = 4;

/// Indices of the transistors [`better_currents`] scans: those with a
/// current, at most [`MAX_SCANNED_TRANSISTORS`] of them with the largest
/// own output noise in `present` (ties: the earlier one), in their order.
pub fn scanned_transistors(setup: &NoiseSetup, present: &Spectrum) -> Vec<usize> {
    // Each transistor's sources, in source order, found once (not by a scan of every
    // source per transistor and frequency, which grew as the square of the chain).
    let mut by_part: std::collections::HashMap<&str, Vec<usize>> = Default::default();
    for (k, s) in setup.sources.iter().enumerate() {
        by_part.entry(s.designator.as_str()).or_default().push(k);
    }
    let own: Vec<f64> = setup
        .transistors
        .iter()
        .map(|tr| {
            let mine = by_part
                .get(tr.designator.as_str())
                .map_or(&[][..], Vec::as_slice);
            let per_frequency: Vec<f64> = present
                .contributions
                .iter()
                .map(|c| mine.iter().filter_map(|&k| c.get(k)).sum())
                .collect();
            spectrum::integrate(&present.frequencies, &per_frequency)
        })
        .collect();
    let mut live: Vec<usize> = (0..setup.transistors.len())
        .filter(|&t| setup.transistors[t].collector_current > 0.0 && setup.transistors[t].gm > 0.0)
        .collect();
    if live.len() > MAX_SCANNED_TRANSISTORS {
        live.sort_by(|&a, &b| own[b].total_cmp(&own[a]).then(a.cmp(&b)));
        live.truncate(MAX_SCANNED_TRANSISTORS);
        live.sort_unstable();
    }
    live
}

/// For the transistors of [`scanned_transistors`], the collector current
/// that minimises the chain's band noise figure: a scan of the current scale
/// from 1/100 to 100 times (8 points per decade), refined by golden-section
/// search in log scale.
pub fn better_currents(
    setup: &NoiseSetup,
    band_grid: &[f64],
) -> Result<Vec<CurrentHint>, AnalysisError> {
    let Some(rs) = &setup.source_resistance else {
        return Ok(Vec::new());
    };
    let now = spectrum::spectrum(&setup.network, &setup.sources, setup.output, band_grid)?;
    let present = decibels(band_noise_factor(setup, &now));
    let vt = crate::analysis::thermal_voltage(setup.kelvin);
    let mut hints = Vec::new();
    for t in scanned_transistors(setup, &now) {
        let tr = &setup.transistors[t];
        // Few transistors (every demo): re-solve the scaled circuit, as
        // always. More: the low-rank update of `scan`, equal to rounding
        // (tested there) and without a factorization per trial.
        let fast = if setup.transistors.len() > MAX_SCANNED_TRANSISTORS {
            Some(super::scan::CurrentScan::new(setup, t, band_grid)?)
        } else {
            None
        };
        let nf = |log_k: f64| match &fast {
            Some(scan) => Ok(scan.figure_db(log_k)),
            None => band_figure_db(&setup.with_scaled_current(t, 10f64.powf(log_k)), band_grid),
        };
        let mut best = (0.0, present);
        let steps = 32;
        for i in 0..=steps {
            let lk = -2.0 + 4.0 * i as f64 / steps as f64;
            let v = nf(lk)?;
            if v < best.1 {
                best = (lk, v);
            }
        }
        // Golden-section refinement within one scan step either side.
        let (mut lo, mut hi) = (best.0 - 0.125, best.0 + 0.125);
        let g = 0.5 * (5f64.sqrt() - 1.0);
        let (mut c, mut d) = (hi - g * (hi - lo), lo + g * (hi - lo));
        let (mut fc, mut fd) = (nf(c)?, nf(d)?);
        for _ in 0..20 {
            if fc < fd {
                hi = d;
                d = c;
                fd = fc;
                c = hi - g * (hi - lo);
                fc = nf(c)?;
            } else {
                lo = c;
                c = d;
                fc = fd;
                d = lo + g * (hi - lo);
                fd = nf(d)?;
            }
        }
        let (lk, v) = if fc < fd { (c, fc) } else { (d, fd) };
        if v < best.1 {
            best = (lk, v);
        }
        let beta = tr.gm / tr.gpi;
        let field_effect = tr.law == super::setup::CurrentLaw::SquareLaw;
        hints.push(CurrentHint {
            field_effect,
            designator: tr.designator.clone(),
            present_current: tr.collector_current,
            present_figure_db: present,
            better_current: tr.collector_current * 10f64.powf(best.0),
            better_figure_db: best.1,
            // The bipolar formula has no FET counterpart here: not a number,
            // shown as none.
            classic_current: if field_effect {
                f64::NAN
            } else {
                vt * beta.sqrt() / (rs.resistance + tr.base_resistance)
            },
            is_input: setup
                .stages
                .first()
                .is_some_and(|s| s.transistor == tr.designator),
        });
    }
    Ok(hints)
}

/// en and in of one recognised stage at `frequency`: en from the stage's
/// input net held at 0 V by a test source (output noise at the stage's
/// output over the gain from that source), in from the input opened (the
/// parts that bring the signal in cut away; output noise over the
/// transimpedance from a current pushed into the input net). Every noise
/// generator of the circuit counts, as connected (later stages load it).
pub fn stage_two_port(
    setup: &NoiseSetup,
    stage: &super::setup::StageNoise,
    frequency: f64,
) -> Result<(f64, f64), AnalysisError> {
    use super::network::Element;
    let output = (stage.output, 0);
    let mut held = setup.network.clone();
    held.signal = None;
    held.push(Element::VoltageSource {
        p: stage.input,
        n: 0,
        signal: true,
    });
    let s = spectrum::spectrum(&held, &setup.sources, output, &[frequency])?;
    let en = s.total[0].sqrt() / s.gain[0].norm();

    let mut open = setup.network.clone();
    for &p in &stage.input_cut {
        open.cut(p, stage.input);
    }
    let x = adjoint(&spectrum::system(&open), output, frequency)?;
    let total: f64 = setup
        .sources
        .iter()
        .map(|s| transfer(&x, s.a, s.b).norm_sqr() * s.density(frequency))
        .sum();
    let in_ = total.sqrt() / transfer(&x, stage.input, 0).norm();
    Ok((en, in_))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn optimum_source_minimises_the_en_in_noise_factor() {
        // source: Motchenbacher & Connelly, "Low-Noise Electronic System Design", ch. 2 —
        // F(R) = 1 + (en² + in²R²)/(4kTR) is least at R = en/in, where F = 1 + en·in/(2kT).
        let (en, in_, t) = (2e-9, 1e-12, 300.0);
        let f = |r: f64| 1.0 + (en * en + in_ * in_ * r * r) / (4.0 * BOLTZMANN * t * r);
        let (ropt, fopt) = optimum_source(en, in_, t);
        assert!((ropt - 2e3).abs() < 1e-9);
        assert!((fopt - f(ropt)).abs() < 1e-12);
        for r in [0.5 * ropt, 0.9 * ropt, 1.1 * ropt, 2.0 * ropt] {
            assert!(f(r) > fopt);
        }
    }
}
