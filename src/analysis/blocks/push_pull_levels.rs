//! The level sweep of a push-pull output: the document's sine run to steady
//! state (the transient engine and its shooting method,
//! [`crate::analysis::transient::steady`]) at several source amplitudes, and
//! at each level the output's THD, the power into the load, the power the
//! output pair draws from its rails, the efficiency and each output
//! device's dissipation — averaged over the last period's samples of the
//! full solution.

use super::push_pull::{self, Roles};
use super::BlockKind;
use crate::analysis::circuit::{self, Circuit};
use crate::analysis::dc::stamps::{terminal_currents, voltage};
use crate::analysis::stages::view::View;
use crate::analysis::transient::steady::{self, SteadyOptions};
use crate::document::Document;
use crate::netlist::Netlist;
use serde::Serialize;

/// Steps per period at least in the sweep's runs (the step control by the
/// truncation error adds more where the waveform bends).
pub const STEPS_PER_PERIOD: usize = 200;

/// Threads the levels run on.
pub const THREADS: usize = 2;

/// One level of the sweep.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Level {
    /// The source's peak amplitude, V.
    pub source_amplitude: f64,
    /// The output's fundamental, peak, V.
    pub output_peak: f64,
    /// THD at the output, fraction.
    pub thd: f64,
    /// Mean power into the load, W.
    pub load_power: f64,
    /// Mean power the output pair draws from its two rails, W.
    pub supply_power: f64,
    /// load_power / supply_power.
    pub efficiency: Option<f64>,
    /// Mean dissipation of the top and bottom output devices, W.
    pub dissipation: [f64; 2],
    /// The run reached its periodic steady state.
    pub settled: bool,
}

/// The whole sweep.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LevelSweep {
    /// Designators of the top and bottom output devices and the load.
    pub devices: [String; 2],
    pub load: String,
    pub levels: Vec<Level>,
}

impl LevelSweep {
    /// Each device's worst mean dissipation over the levels and the level index.
    pub fn worst_dissipation(&self, device: usize) -> Option<(usize, f64)> {
        self.levels
            .iter()
            .enumerate()
            .map(|(i, l)| (i, l.dissipation[device]))
            .max_by(|a, b| a.1.total_cmp(&b.1))
    }

    /// The highest level whose THD stays at or below `limit`.
    pub fn largest_clean(&self, limit: f64) -> Option<usize> {
        self.levels
            .iter()
            .enumerate()
            .filter(|(_, l)| l.thd <= limit)
            .max_by(|a, b| a.1.output_peak.total_cmp(&b.1.output_peak))
            .map(|(i, _)| i)
    }
}

/// Mean power absorbed by element `k` over the sampled states.
fn mean_power(c: &Circuit, k: usize, states: &[Vec<f64>]) -> f64 {
    let n = states.len().max(1) as f64;
    states
        .iter()
        .map(|x| {
            let t = terminal_currents(c, k, x, 1.0);
            (0..t.count)
                .map(|i| voltage(x, t.node[i]) * t.current[i])
                .sum::<f64>()
        })
        .sum::<f64>()
        / n
}

/// Mean power delivered into the collector (drain) pin of element `k` from
/// the net it sits on: V(collector)·I(into collector), averaged.
fn mean_collector_supply(c: &Circuit, k: usize, states: &[Vec<f64>]) -> f64 {
    let n = states.len().max(1) as f64;
    states
        .iter()
        .map(|x| {
            let t = terminal_currents(c, k, x, 1.0);
            voltage(x, t.node[0]) * t.current[0]
        })
        .sum::<f64>()
        / n
}

/// Find the document's (first) push-pull output.
pub(crate) fn find_block(doc: &Document, nl: &Netlist) -> Option<Roles> {
    let chain = crate::analysis::stages::recognise(doc, nl);
    let found = super::find(doc, nl, &chain);
    let b = found.iter().find(|b| b.kind == BlockKind::PushPull)?;
    push_pull::roles(&View::new(doc, nl), b).map(|r| r.0)
}

/// Sweep the source amplitudes `amplitudes` (V peak, in the order given).
pub fn sweep(doc: &Document, nl: &Netlist, amplitudes: &[f64]) -> Result<LevelSweep, String> {
    let roles = find_block(doc, nl)
        .ok_or_else(|| "no push-pull output found in this circuit: the level sweep needs an NPN and a PNP (or N and P MOSFETs) with their emitters joined at the output".to_string())?;
    let c = circuit::build(doc, nl).map_err(|e| e.to_string())?;
    let element = |p: usize| c.elements.iter().position(|e| e.part == p);
    let (Some(kt), Some(kb)) = (element(roles.top), element(roles.bottom)) else {
        return Err("the output devices have no elements in the circuit".into());
    };
    let load_name = doc
        .signal
        .load
        .clone()
        .ok_or("no load named: set signal.load to the load resistor")?;
    let kl = doc
        .part_by_designator(&load_name)
        .and_then(|p| doc.parts.iter().position(|q| std::ptr::eq(q, p)))
        .and_then(element)
        .ok_or_else(|| format!("the load {load_name} is not in the circuit"))?;
    let mut levels = Vec::with_capacity(amplitudes.len());
    if let Some(a) = amplitudes.iter().find(|a| !(a.is_finite() && **a > 0.0)) {
        return Err(format!("the level {a} V is not a positive amplitude"));
    }
    let one = |a: f64| -> Result<Level, String> {
        let d = steady::distortion(
            doc,
            nl,
            &c,
            &SteadyOptions {
                amplitude: Some(a),
                keep_states: true,
                steps_per_period: Some(STEPS_PER_PERIOD),
                ..SteadyOptions::default()
            },
            &mut |_| true,
        )
        .map_err(|e| e.message)?;
        let states = &d.states;
        let load_power = mean_power(&c, kl, states);
        let supply_power =
            mean_collector_supply(&c, kt, states) + mean_collector_supply(&c, kb, states);
        Ok(Level {
            source_amplitude: a,
            output_peak: d.output.spectrum.amplitude.first().copied().unwrap_or(0.0),
            thd: d.output.spectrum.thd,
            load_power,
            supply_power,
            efficiency: (supply_power > 0.0).then(|| load_power / supply_power),
            dissipation: [mean_power(&c, kt, states), mean_power(&c, kb, states)],
            settled: d.settled,
        })
    };
    // The levels are independent: two threads, levels dealt alternately
    // (the higher, slower ones spread over both). Each level's result is
    // the same as run alone.
    let threads = THREADS.min(amplitudes.len()).max(1);
    let mut results: Vec<Option<Result<Level, String>>> = vec![None; amplitudes.len()];
    std::thread::scope(|scope| {
        let handles: Vec<_> = (0..threads)
            .map(|t| {
                let one = &one;
                scope.spawn(move || {
                    (t..amplitudes.len())
                        .step_by(threads)
                        .map(|i| (i, one(amplitudes[i])))
                        .collect::<Vec<_>>()
                })
            })
            .collect();
        for h in handles {
            for (i, r) in h.join().expect("a level's run does not panic") {
                results[i] = Some(r);
            }
        }
    });
    for r in results {
        levels.push(r.expect("every level ran")?);
    }
    Ok(LevelSweep {
        devices: [
            doc.parts[roles.top].label(),
            doc.parts[roles.bottom].label(),
        ],
        load: load_name,
        levels,
    })
}

/// The sweep's top level over the estimated largest output.
pub const OVERDRIVE: f64 = 1.25;

/// `count` source amplitudes that put the output's peak (by the midband
/// gain from the source) at 1/count, 2/count, … of [`OVERDRIVE`] times the
/// estimated largest output (the block's `largest_output`; the rail
/// voltage when there is no estimate, and at most the rail): the sweep runs
/// from a small signal into clipping.
pub fn default_amplitudes(doc: &Document, nl: &Netlist, count: usize) -> Result<Vec<f64>, String> {
    let roles = find_block(doc, nl).ok_or("no push-pull output found in this circuit")?;
    let c = circuit::build(doc, nl).map_err(|e| e.to_string())?;
    let op = crate::analysis::dc::solve_circuit(&c).map_err(|e| e.to_string())?;
    let a = crate::analysis::small_signal::analyse(doc, nl, &c, &op);
    let gain = a
        .midband
        .chain
        .source_gain
        .filter(|g| g.is_finite() && *g != 0.0)
        .ok_or("no midband gain from the source to the load: name signal.source and signal.load")?
        .abs();
    let v = View::new(doc, nl);
    let (Some((ct, _, _)), Some((cb, _, _))) = (v.terminals(roles.top), v.terminals(roles.bottom))
    else {
        return Err("the output devices' collectors are not connected".into());
    };
    let rail = 0.5 * (op.net_voltages[ct] - op.net_voltages[cb]).abs();
    // Up to a quarter past the estimated clipping level (within the rail).
    let top = a
        .blocks
        .iter()
        .find(|b| b.kind == BlockKind::PushPull)
        .and_then(|b| b.figure("largest_output"))
        .and_then(|f| f.estimate)
        .filter(|v| v.is_finite() && *v > 0.0)
        .map_or(rail, |v| (OVERDRIVE * v).min(rail));
    Ok((1..=count.max(1))
        .map(|k| top * k as f64 / count.max(1) as f64 / gain)
        .collect())
}
