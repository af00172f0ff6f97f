//! A sine input run to steady state, then the distortion: at the load, at
//! every stage's output, and at the source's input net.
//!
//! Steady state: after [`WARM_UP_PERIODS`] periods (and the power-on ramp)
//! the periodic solution is found directly by the shooting method
//! ([`super::shooting`]), so slow time constants (coupling capacitors)
//! need a few periods, not hundreds. Then, period after period, the
//! output's samples (uniform, every period) are compared with the period
//! before; when the largest change is below `settle_tolerance` × the
//! output's peak swing the run stops (or after `max_periods`; a fixed
//! number of periods when asked runs without shooting). The last whole
//! period is then taken apart by [`super::fourier`].

use super::engine::{Engine, State, TransientError};
use super::fourier::{spectrum, Spectrum};
use super::sources::{Drive, Wave};
use crate::analysis::circuit::{Circuit, Node};
use crate::analysis::dc::stamps::voltage;
use crate::analysis::stages::{self, Chain};
use crate::document::{Document, TransientSettings, TransientStart};
use crate::netlist::Netlist;
use serde::Serialize;

/// Samples per period for the spectrum (harmonics up to 10 need 21).
pub const SAMPLES_PER_PERIOD: usize = 64;
/// Steps per period at least in a steady-state run. The trapezoidal rule
/// turns a frequency ω into (2/h)·tan(ωh/2), a relative error of about
/// (ωh)²/12; near a resonance of quality Q the phase moves 2Q times that
/// (radians). 640 steps (ωh = 0.0098) keep it under 0.01° up to Q ≈ 20
/// and the amplitude of a first-order network within 1e-5.
pub const STEPS_PER_PERIOD: usize = 640;
/// Periods run from the start before the shooting method takes over.
pub const WARM_UP_PERIODS: usize = 2;

/// Distortion measured at one net.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NetDistortion {
    pub net: String,
    /// The transistor whose stage drives this net (stage outputs).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub transistor: Option<String>,
    pub spectrum: Spectrum,
    /// Mean over the period minus the value at the operating point, V.
    pub dc_shift: f64,
    /// Peak-to-peak swing over the last period, V.
    pub peak_to_peak: f64,
    /// The last period's samples (uniform in time, period start first).
    #[serde(skip)]
    pub samples: Vec<f64>,
}

/// The result of a steady-state distortion run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Distortion {
    /// The source's sine: peak amplitude (V) and frequency (Hz).
    pub amplitude: f64,
    pub frequency: f64,
    pub periods: usize,
    pub settled: bool,
    /// The output's last period-to-period change relative to its peak swing.
    pub last_change: f64,
    pub input: NetDistortion,
    /// The output (the load's net, else the last stage's output).
    pub output: NetDistortion,
    pub stages: Vec<NetDistortion>,
    pub steps: usize,
    pub rejected_steps: usize,
    pub newton_iterations: usize,
    /// Newton iterations of the shooting method (0: not used).
    #[serde(skip)]
    pub shooting_iterations: usize,
    /// The full solution at the last period's samples (when asked for).
    #[serde(skip)]
    pub states: Vec<Vec<f64>>,
}

/// What to run.
#[derive(Debug, Clone, PartialEq)]
pub struct SteadyOptions {
    /// Replace the sine's amplitude (clip search).
    pub amplitude: Option<f64>,
    /// Run exactly this many periods instead of waiting to settle.
    pub periods: Option<usize>,
    pub samples_per_period: usize,
    /// Steps per period at least ([`STEPS_PER_PERIOD`] by default; `None`:
    /// the step by the truncation error alone, as a plain run).
    pub steps_per_period: Option<usize>,
    /// Keep the full solution at the last period's samples.
    pub keep_states: bool,
}

impl Default for SteadyOptions {
    fn default() -> Self {
        SteadyOptions {
            amplitude: None,
            periods: None,
            samples_per_period: SAMPLES_PER_PERIOD,
            steps_per_period: Some(STEPS_PER_PERIOD),
            keep_states: false,
        }
    }
}

/// Nets measured: input, output, stage outputs (node, name, transistor).
pub fn probes(c: &Circuit, nl: &Netlist, chain: &Chain) -> Vec<(Node, String, Option<String>)> {
    let node_of = |net: usize| c.net_node.get(net).copied().unwrap_or(0);
    let mut out = Vec::new();
    if let Some(s) = &chain.source {
        out.push((node_of(s.input), s.input_net.clone(), None));
    } else {
        out.push((0, "ground".into(), None));
    }
    let output = chain
        .load
        .as_ref()
        .map(|l| (l.net, l.net_name.clone()))
        .or_else(|| {
            chain
                .stages
                .last()
                .map(|s| (s.output, s.output_net.clone()))
        });
    match output {
        Some((net, name)) => out.push((node_of(net), name, None)),
        None => out.push((0, "ground".into(), None)),
    }
    for s in &chain.stages {
        out.push((
            node_of(s.output),
            nl.nets[s.output].name.clone(),
            Some(s.transistor.clone()),
        ));
    }
    out
}

/// The drive of a document's transient run.
pub fn drive_of(doc: &Document, c: &Circuit) -> Drive {
    Drive {
        signal: Drive::from_document(doc, c),
        ramp: (doc.transient.start == TransientStart::PowerOn)
            .then_some(doc.transient.power_on_time),
    }
}

/// Run the document's sine to steady state and measure the distortion.
pub fn distortion(
    doc: &Document,
    nl: &Netlist,
    c: &Circuit,
    options: &SteadyOptions,
    keep_going: &mut dyn FnMut(f64) -> bool,
) -> Result<Distortion, TransientError> {
    let chain = stages::recognise(doc, nl);
    let probes = probes(c, nl, &chain);
    let mut drive = drive_of(doc, c);
    if let Some((k, _)) = &drive.signal {
        let e = &c.elements[*k];
        if e.nodes.windows(2).all(|w| w[0] == w[1]) {
            let net = nl
                .nets
                .get(nl.pin_net(doc, e.part, "positive").unwrap_or(usize::MAX))
                .map_or("one net", |n| n.name.as_str());
            return Err(TransientError {
                message: format!(
                    "the signal source {} has both pins on {net}: it drives nothing, so there \
                     is no fundamental to measure distortion against; connect its positive \
                     pin to the amplifier's input",
                    e.designator
                ),
            });
        }
    }
    let Some((_, Wave::Sine { amplitude, .. })) = &mut drive.signal else {
        return Err(TransientError {
            message: "distortion needs a sine at the signal source: set signal.waveform to \
                      a sine (or leave it out)"
                .into(),
        });
    };
    if let Some(a) = options.amplitude {
        *amplitude = a;
    }
    // A floating load: the output is the voltage across it. Its second net
    // rides along as one more probe and is taken off the output after the run.
    let other = chain.load.as_ref().and_then(|l| {
        let n = c.net_node.get(l.other_net?).copied().unwrap_or(0);
        (n != 0).then(|| (n, l.other_net_name.clone().unwrap_or_default()))
    });
    let Some((m, name)) = other else {
        return run_sine(c, drive, &doc.transient, &probes, options, keep_going);
    };
    let mut probes = probes;
    probes.push((m, name.clone(), None));
    let mut d = run_sine(c, drive, &doc.transient, &probes, options, keep_going)?;
    if let Some(r) = d.stages.pop() {
        let o = &d.output;
        let samples: Vec<f64> = o
            .samples
            .iter()
            .zip(&r.samples)
            .map(|(a, b)| a - b)
            .collect();
        let hi = samples.iter().copied().fold(f64::MIN, f64::max);
        let lo = samples.iter().copied().fold(f64::MAX, f64::min);
        let sp = spectrum(&samples, 1);
        // The operating point's difference is the two nets' means less their shifts.
        let dc = (o.spectrum.mean - o.dc_shift) - (r.spectrum.mean - r.dc_shift);
        d.output = NetDistortion {
            net: format!("{} − {name}", o.net),
            transistor: None,
            dc_shift: sp.mean - dc,
            spectrum: sp,
            peak_to_peak: hi - lo,
            samples,
        };
    }
    Ok(d)
}

/// The steady-state run on a built circuit with its drive (a sine).
pub fn run_sine(
    c: &Circuit,
    drive: Drive,
    settings: &TransientSettings,
    probes: &[(Node, String, Option<String>)],
    options: &SteadyOptions,
    keep_going: &mut dyn FnMut(f64) -> bool,
) -> Result<Distortion, TransientError> {
    let Some((
        _,
        Wave::Sine {
            amplitude,
            frequency,
            delay,
            ..
        },
    )) = drive.signal.clone()
    else {
        return Err(TransientError {
            message: "distortion needs a sine at the signal source".into(),
        });
    };
    settings
        .check()
        .map_err(|message| TransientError { message })?;
    let period = 1.0 / frequency;
    let n = options
        .samples_per_period
        .max(2 * super::fourier::HARMONICS + 2);
    let power_on = drive.ramp.is_some();
    let ramp_end = drive.ramp.unwrap_or(0.0);
    let mut engine = Engine::new(c, drive, settings.clone());
    if let Some(k) = options.steps_per_period.filter(|k| *k > 0) {
        engine.limit_step(period / k as f64);
    }
    let mut state: State = engine.initial(power_on)?;
    let dc: Vec<f64> = probes.iter().map(|p| voltage(&state.x, p.0)).collect();
    let max_periods = options
        .periods
        .unwrap_or(settings.max_periods as usize)
        .max(1);
    let mut samples: Vec<Vec<f64>> = vec![Vec::new(); probes.len()];
    let mut states: Vec<Vec<f64>> = Vec::new();
    let mut previous: Option<Vec<f64>> = None;
    let mut settled = false;
    let mut last_change = f64::INFINITY;
    let mut periods = 0;
    let mut t0 = delay;
    let mut shot = false;
    let mut shooting_periods = 0;
    let mut shooting_iterations = 0;
    if delay > 0.0 {
        state = engine.advance(state, delay, &[], &mut |_, _| {}, &mut |_| true)?;
    }
    while periods < max_periods {
        let landing: Vec<f64> = (1..=n).map(|j| t0 + period * j as f64 / n as f64).collect();
        if options.periods.is_none() && !shot && periods >= WARM_UP_PERIODS && t0 >= ramp_end {
            let done = periods as f64 / max_periods as f64;
            let s = super::shooting::shoot(&mut engine, state, period, &landing, &mut |_| {
                keep_going(done)
            })?;
            state = s.state;
            shooting_periods = s.periods;
            shooting_iterations = s.iterations;
            shot = true;
            previous = None;
        }
        // The period's first sample is its start.
        for (s, p) in samples.iter_mut().zip(probes) {
            s.clear();
            s.push(voltage(&state.x, p.0));
        }
        states.clear();
        if options.keep_states {
            states.push(state.x.clone());
        }
        let done = periods as f64 / max_periods as f64;
        state = engine.advance(
            state,
            t0 + period,
            &landing,
            &mut |st, landed| {
                if landed && st.t < t0 + period * (1.0 - 0.5 / n as f64) {
                    for (s, p) in samples.iter_mut().zip(probes) {
                        s.push(voltage(&st.x, p.0));
                    }
                    if options.keep_states {
                        states.push(st.x.clone());
                    }
                }
            },
            &mut |f| keep_going(done + f / max_periods as f64),
        )?;
        periods += 1;
        t0 += period;
        let out = &samples[1];
        if let Some(prev) = &previous {
            let hi = out.iter().copied().fold(f64::MIN, f64::max);
            let lo = out.iter().copied().fold(f64::MAX, f64::min);
            let swing = (0.5 * (hi - lo)).max(1e-15);
            let change = out
                .iter()
                .zip(prev)
                .map(|(a, b)| (a - b).abs())
                .fold(0.0, f64::max);
            last_change = change / swing;
            // A run waiting to settle settles only on the shot periodic solution.
            if options.periods.is_none() && shot && last_change <= settings.settle_tolerance {
                settled = true;
                break;
            }
        }
        previous = Some(out.clone());
    }
    let measure = |k: usize| {
        let s = &samples[k];
        let sp = spectrum(s, 1);
        let hi = s.iter().copied().fold(f64::MIN, f64::max);
        let lo = s.iter().copied().fold(f64::MAX, f64::min);
        NetDistortion {
            net: probes[k].1.clone(),
            transistor: probes[k].2.clone(),
            dc_shift: sp.mean - dc[k],
            spectrum: sp,
            peak_to_peak: hi - lo,
            samples: s.clone(),
        }
    };
    Ok(Distortion {
        amplitude,
        frequency,
        periods: periods + shooting_periods,
        settled,
        last_change,
        input: measure(0),
        output: measure(1),
        stages: (2..probes.len()).map(measure).collect(),
        steps: engine.counts.steps,
        rejected_steps: engine.counts.rejected,
        newton_iterations: engine.counts.newton_iterations,
        shooting_iterations,
        states,
    })
}
