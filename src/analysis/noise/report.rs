//! The noise report: everything the command line, the JSON output and the
//! editor show, computed from a [`NoiseSetup`].

use super::figures::{self, CurrentHint};
use super::setup::NoiseSetup;
use super::spectrum::{self, Spectrum};
use crate::analysis::AnalysisError;
use serde::Serialize;

/// Settings of one noise run.
#[derive(Debug, Clone, PartialEq)]
pub struct NoiseSettings {
    /// The sweep (Hz) the densities are reported at.
    pub frequencies: Vec<f64>,
    /// Band the noise is integrated over, Hz (default 20 Hz–20 kHz).
    pub band: (f64, f64),
    /// Points per decade of the integration grid.
    pub band_points_per_decade: u32,
    /// Frequency of the spot figures (en, in, spot NF), Hz.
    pub spot_frequency: f64,
    /// Whether to scan each transistor's collector current.
    pub current_hints: bool,
}

impl Default for NoiseSettings {
    fn default() -> Self {
        NoiseSettings {
            frequencies: spectrum::log_grid(1.0, 1e8, 20),
            band: (20.0, 20e3),
            band_points_per_decade: 20,
            spot_frequency: 1e3,
            current_hints: true,
        }
    }
}

/// One generator's share.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Contributor {
    /// e.g. `RS thermal (source resistance)`, `Q1 collector shot`.
    pub label: String,
    pub designator: String,
    pub mechanism: super::Mechanism,
    pub is_source_resistance: bool,
    /// Output noise from this generator integrated over the band, V rms.
    pub band_output_rms: f64,
    /// Its fraction of the band's total output noise power.
    pub share: f64,
    /// Output density at the spot frequency, V/√Hz.
    pub spot_output_density: f64,
}

/// One part's share of the band's output noise power.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PartShare {
    pub designator: String,
    pub share: f64,
}

/// Signal-to-noise ratio for the signal source's stated level.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SignalToNoise {
    /// The source's peak amplitude, V, and its RMS value peak/√2 (a sine).
    pub amplitude_peak: f64,
    pub amplitude_rms: f64,
    /// Frequency the gain is taken at, Hz.
    pub frequency: f64,
    /// Output signal, V rms.
    pub output_signal_rms: f64,
    /// 20·log10(output signal rms / band output noise rms), dB.
    pub snr_db: f64,
}

/// The amplifier's noise generators at the spot frequency and what follows.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct InputNoise {
    /// V/√Hz (short-circuited input).
    pub voltage_density: f64,
    /// A/√Hz (open-circuited input).
    pub current_density: f64,
    /// en/in, Ω (uncorrelated estimate).
    pub optimum_source_resistance: f64,
    /// Noise figure with a source of that resistance, dB.
    pub optimum_figure_db: f64,
}

/// en and in of one stage at the spot frequency.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StageInputNoise {
    /// Designator of the stage's transistor.
    pub transistor: String,
    /// V/√Hz (input held at 0 V).
    pub voltage_density: f64,
    /// A/√Hz (input opened).
    pub current_density: f64,
}

/// The whole noise result.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NoiseReport {
    pub kelvin: f64,
    pub output: String,
    /// Designator of the signal source, when there is one.
    pub signal_source: Option<String>,
    pub source_resistance: Option<String>,
    pub source_resistance_ohms: Option<f64>,
    pub spot_frequency: f64,
    pub band: (f64, f64),
    /// Sweep frequencies, Hz.
    pub frequencies: Vec<f64>,
    /// Output density, V/√Hz.
    pub output_density: Vec<f64>,
    /// Density referred to the signal source, V/√Hz.
    pub input_density: Vec<f64>,
    /// Output density of each generator, V/√Hz, `[frequency][contributor]`.
    pub contribution_density: Vec<Vec<f64>>,
    /// Contributors in generator order.
    pub contributors: Vec<Contributor>,
    /// Band share of each part (its generators together), largest first.
    pub by_part: Vec<PartShare>,
    /// Band output noise, V rms.
    pub band_output_rms: f64,
    /// Band noise referred to the signal source, V rms (∫ S_out/|H|² df)^½.
    pub band_input_rms: f64,
    /// Input-referred density at the spot frequency, V/√Hz.
    pub spot_input_density: f64,
    /// Output density at the spot frequency, V/√Hz.
    pub spot_output_density: f64,
    /// Spot noise figure at the real source resistance, dB.
    pub spot_figure_db: Option<f64>,
    /// Band noise figure at the real source resistance, dB, and its factor.
    pub band_figure_db: Option<f64>,
    pub band_noise_factor: Option<f64>,
    pub signal_to_noise: Option<SignalToNoise>,
    /// en/in of the chain at the spot frequency.
    pub chain_input_noise: Option<InputNoise>,
    /// en/in of each recognised stage at the spot frequency.
    pub stages: Vec<StageInputNoise>,
    pub current_hints: Vec<CurrentHint>,
    /// Assumptions, in plain words.
    pub notes: Vec<String>,
}

impl NoiseReport {
    /// Contributor indices ordered by band share, largest first.
    pub fn ranked(&self) -> Vec<usize> {
        let mut idx: Vec<usize> = (0..self.contributors.len()).collect();
        idx.sort_by(|a, b| {
            self.contributors[*b]
                .share
                .total_cmp(&self.contributors[*a].share)
        });
        idx
    }
}

/// Compute the report.
pub fn report(setup: &NoiseSetup, settings: &NoiseSettings) -> Result<NoiseReport, AnalysisError> {
    let sweep = spectrum::spectrum(
        &setup.network,
        &setup.sources,
        setup.output,
        &settings.frequencies,
    )?;
    let band_grid = spectrum::log_grid(
        settings.band.0,
        settings.band.1,
        settings.band_points_per_decade,
    );
    let band = spectrum::spectrum(&setup.network, &setup.sources, setup.output, &band_grid)?;
    let spot = spectrum::spectrum(
        &setup.network,
        &setup.sources,
        setup.output,
        &[settings.spot_frequency],
    )?;
    let band_total = spectrum::integrate(&band.frequencies, &band.total);
    let contributors = contributors(setup, &band, &spot, band_total);
    let mut by_part: Vec<PartShare> = Vec::new();
    for c in &contributors {
        match by_part.iter_mut().find(|p| p.designator == c.designator) {
            Some(p) => p.share += c.share,
            None => by_part.push(PartShare {
                designator: c.designator.clone(),
                share: c.share,
            }),
        }
    }
    by_part.sort_by(|a, b| b.share.total_cmp(&a.share));
    let input_power: Vec<f64> = band
        .total
        .iter()
        .zip(&band.gain)
        .map(|(t, g)| t / g.norm_sqr())
        .collect();
    let band_input_rms = spectrum::integrate(&band.frequencies, &input_power).sqrt();

    let mut notes = vec![
        format!("temperature {:.2} K (the analysis ambient)", setup.kelvin),
        "sources: thermal 4kT/R of every resistor and base resistance, shot 2q·I of collector, \
         base and diode currents and of current sources marked shot_noise, taken as uncorrelated"
            .to_string(),
    ];
    if setup
        .sources
        .iter()
        .any(|s| matches!(s.mechanism, super::Mechanism::ChannelThermal))
    {
        notes.push(
            "field-effect transistors: channel noise 4kT·(2/3)·gm in saturation (van der Ziel), \
             the JFET's gate shot noise 2q·IG, flicker Kf·ID^Af/f when given"
                .to_string(),
        );
    }
    if setup.sources.iter().any(|s| s.flicker_corner > 0.0) {
        notes.push(
            "flicker noise of the base current: 2q·IB·(1 + fc/f) with each part's \
             flicker_corner_frequency fc"
                .to_string(),
        );
    }
    let (mut spot_nf, mut band_nf, mut band_f) = (None, None, None);
    if setup.source_resistance.is_some() {
        // A noise factor is total over the source's own part: a source part of
        // zero (a noiseless or zero resistance, or no gain to the output at
        // all) leaves no figure to give — never ∞ or NaN dB.
        let finite = |v: f64| v.is_finite().then_some(v);
        spot_nf = finite(figures::decibels(figures::noise_factor(setup, &spot)[0]));
        let f = figures::band_noise_factor(setup, &band);
        band_f = finite(f);
        band_nf = finite(figures::decibels(f));
        if spot_nf.is_none() || band_nf.is_none() {
            notes.push(
                "no noise figure: the source resistance contributes no noise at the output \
                 (it is zero, or the signal does not reach the output), so the ratio to it \
                 is undefined"
                    .to_string(),
            );
        }
    } else {
        notes.push(
            "no resistor marked as the signal source's own resistance: the noise figure needs \
             a source resistance (set source_resistance_mark on it)"
                .to_string(),
        );
    }

    let signal_to_noise = setup.signal.as_ref().and_then(|sig| {
        if sig.amplitude <= 0.0 {
            return None;
        }
        let g = spectrum::spectrum(&setup.network, &[], setup.output, &[sig.frequency])
            .ok()?
            .gain[0]
            .norm();
        let rms = sig.amplitude / std::f64::consts::SQRT_2;
        let out = rms * g;
        let snr_db = 20.0 * (out / band_total.sqrt()).log10();
        // No signal or no noise at the output: no ratio to give (never NaN or ∞).
        if !snr_db.is_finite() {
            return None;
        }
        Some(SignalToNoise {
            amplitude_peak: sig.amplitude,
            amplitude_rms: rms,
            frequency: sig.frequency,
            output_signal_rms: out,
            snr_db,
        })
    });
    if signal_to_noise.is_some() {
        notes.push(
            "signal-to-noise: the source's amplitude is a peak value; RMS = peak/√2 (a sine)"
                .to_string(),
        );
    }

    let chain = figures::chain_two_port(setup, &[settings.spot_frequency]).unwrap_or_else(|_| {
        notes.push(
            "the source resistance cannot be shorted or opened on its own (a source sits \
             across it), so the chain's en and in are not given"
                .to_string(),
        );
        None
    });
    let chain_input_noise = chain.and_then(|tp| {
        let (r, f) = figures::optimum_source(tp.en[0], tp.in_[0], setup.kelvin);
        let nf = figures::decibels(f);
        // en/in with a zero en or in has no optimum to name (0/0 or ∞).
        if !(r.is_finite() && nf.is_finite() && tp.en[0].is_finite() && tp.in_[0].is_finite()) {
            notes.push(
                "the chain's en and in give no optimum source resistance (one of them is \
                 zero or not finite), so neither it nor the figure there is given"
                    .to_string(),
            );
            return None;
        }
        Some(InputNoise {
            voltage_density: tp.en[0],
            current_density: tp.in_[0],
            optimum_source_resistance: r,
            optimum_figure_db: nf,
        })
    });
    let mut stages = Vec::new();
    let two_ports = super::stage_noise::stage_two_ports(setup, settings.spot_frequency);
    for (st, two_port) in setup.stages.iter().zip(two_ports) {
        match two_port {
            Ok((en, in_)) => stages.push(StageInputNoise {
                transistor: st.transistor.clone(),
                voltage_density: en,
                current_density: in_,
            }),
            Err(_) => notes.push(format!(
                "stage {}: its input net cannot be held at 0 V or opened on its own (a source \
                 fixes it), so its en and in are not given",
                st.transistor
            )),
        }
    }
    let current_hints = if settings.current_hints {
        // A hint whose figures are not finite (no source noise to compare
        // with) says nothing: left out, never printed as NaN or ∞ dB.
        figures::better_currents(setup, &band_grid)
            .unwrap_or_default()
            .into_iter()
            .filter(|h| {
                [h.present_figure_db, h.better_figure_db, h.better_current]
                    .iter()
                    .all(|v| v.is_finite())
            })
            .collect()
    } else {
        Vec::new()
    };
    if !current_hints.is_empty() && setup.transistors.len() > figures::MAX_SCANNED_TRANSISTORS {
        notes.push(format!(
            "better collector current: scanned for the {} transistors whose own noise \
             reaches the output most (the input side, which sets the noise figure), not \
             for all {}",
            figures::MAX_SCANNED_TRANSISTORS,
            setup.transistors.len()
        ));
    }
    if !current_hints.is_empty() {
        notes.push(
            "better collector current: each transistor's gm, gπ, go, diffusion capacitance and \
             shot noise scaled with its current, the rest of the circuit held; the bias network \
             that would set it is not redesigned"
                .to_string(),
        );
        if current_hints.iter().any(|h| h.field_effect) {
            notes.push(
                "better drain current (FETs): the same part at another drain current — by the \
                 square law gm and the channel noise go as √ID, gds as ID; the gate shot noise \
                 and the capacitances are held"
                    .to_string(),
            );
        }
    }

    Ok(NoiseReport {
        kelvin: setup.kelvin,
        output: setup.output_name.clone(),
        signal_source: setup.signal.as_ref().map(|s| s.designator.clone()),
        source_resistance: setup
            .source_resistance
            .as_ref()
            .map(|r| r.designator.clone()),
        source_resistance_ohms: setup.source_resistance.as_ref().map(|r| r.resistance),
        spot_frequency: settings.spot_frequency,
        band: settings.band,
        frequencies: sweep.frequencies.clone(),
        output_density: sweep.total.iter().map(|t| t.sqrt()).collect(),
        input_density: figures::input_density(&sweep),
        contribution_density: sweep
            .contributions
            .iter()
            .map(|row| row.iter().map(|c| c.sqrt()).collect())
            .collect(),
        contributors,
        by_part,
        band_output_rms: band_total.sqrt(),
        band_input_rms,
        spot_input_density: figures::input_density(&spot)[0],
        spot_output_density: spot.total[0].sqrt(),
        spot_figure_db: spot_nf,
        band_figure_db: band_nf,
        band_noise_factor: band_f,
        signal_to_noise,
        chain_input_noise,
        stages,
        current_hints,
        notes,
    })
}

fn contributors(
    setup: &NoiseSetup,
    band: &Spectrum,
    spot: &Spectrum,
    band_total: f64,
) -> Vec<Contributor> {
    setup
        .sources
        .iter()
        .enumerate()
        .map(|(k, s)| {
            let col: Vec<f64> = band.contributions.iter().map(|c| c[k]).collect();
            let power = spectrum::integrate(&band.frequencies, &col);
            Contributor {
                label: s.label(),
                designator: s.designator.clone(),
                mechanism: s.mechanism,
                is_source_resistance: s.is_source_resistance,
                band_output_rms: power.sqrt(),
                share: if band_total > 0.0 {
                    power / band_total
                } else {
                    0.0
                },
                spot_output_density: spot.contributions[0][k].sqrt(),
            }
        })
        .collect()
}

/// Build and compute the noise report of a project over its own sweep
/// (`doc.analysis` frequencies), integrated over `band`, spot figures at
/// `spot_frequency`. What `biasline noise`, `analyze --json`, the `noise`
/// drawing layer and the noise plot all use.
pub fn report_for_document(
    doc: &crate::document::Document,
    band: (f64, f64),
    spot_frequency: f64,
    opts: &super::BuildOptions,
) -> Result<NoiseReport, AnalysisError> {
    let nl = crate::netlist::connect(doc);
    let setup = super::setup(doc, &nl, opts)?;
    let a = &doc.analysis;
    let settings = NoiseSettings {
        frequencies: super::spectrum::log_grid(
            a.frequency_start,
            a.frequency_stop,
            a.points_per_decade,
        ),
        band,
        spot_frequency,
        ..NoiseSettings::default()
    };
    report(&setup, &settings)
}

/// Only the total output noise density, V/√Hz, at `frequencies`: the setup and
/// one adjoint spectrum, without the report's figures or the collector-current
/// scan (what the editor's response panel needs on every edit).
pub fn output_density(
    doc: &crate::document::Document,
    nl: &crate::netlist::Netlist,
    frequencies: &[f64],
) -> Result<Vec<f64>, AnalysisError> {
    let setup = super::setup(doc, nl, &super::BuildOptions::default())?;
    let s = super::spectrum::spectrum(&setup.network, &setup.sources, setup.output, frequencies)?;
    Ok(s.total.iter().map(|p| p.sqrt()).collect())
}
