//! Transient (large-signal, time-domain) analysis: waveforms, distortion
//! and the clipping level.
//!
//! - [`sources`]: the signal waveform and power-on ramp in time, corners;
//! - [`companion`]: the slots (charges and fluxes) and their per-step
//!   stamps by the integration rule; each element kind says which charges
//!   it stores and evaluates them (`analysis::elements`, with the device
//!   charges themselves in `devices::charge`);
//! - [`engine`]: Newton per step on `dc::stamps::stamp_all` plus the
//!   companions, trapezoidal rule, backward Euler after corners, step by
//!   the truncation error;
//! - [`fourier`]: harmonics of whole periods sampled uniformly, THD;
//! - [`steady`]: run a sine input to steady state and measure distortion
//!   at the load and at every stage's output;
//! - [`shooting`]: the periodic steady state by Newton on x(T) − x(0);
//! - [`clip`]: the input amplitude where THD reaches a limit.

pub mod clip;
pub mod companion;
pub mod engine;
pub mod fourier;
mod pace;
pub mod shooting;
pub mod sources;
pub mod steady;

pub use engine::{Counts, Engine, State, TransientError};
pub use sources::{Drive, Wave};

use crate::analysis::circuit::{Circuit, ElementKind, Node};
use crate::analysis::dc::stamps::{terminal_currents, voltage};
use crate::analysis::elements::{with_model, Model};
use companion::Slot;

/// The recorded solution of a run.
#[derive(Debug, Clone, PartialEq)]
pub struct Waveforms {
    pub times: Vec<f64>,
    /// Full MNA vector at every time.
    pub x: Vec<Vec<f64>>,
    /// Per time, per slot: the current through the stored charge.
    pub slot_currents: Vec<Vec<f64>>,
    /// Indices of the points that landed on a requested time.
    pub landed: Vec<usize>,
    /// Supply scale at every time (power-on ramp; 1 otherwise).
    pub scale: Vec<f64>,
    pub counts: Counts,
}

impl Waveforms {
    fn push(&mut self, st: &State, landed: bool, scale: f64) {
        if landed {
            self.landed.push(self.times.len());
        }
        self.times.push(st.t);
        self.x.push(st.x.clone());
        self.slot_currents.push(st.i.clone());
        self.scale.push(scale);
    }

    /// A node's voltage at every recorded time.
    pub fn node_voltage(&self, node: Node) -> Vec<f64> {
        self.x.iter().map(|x| voltage(x, node)).collect()
    }

    /// Every element's pin currents (into the pin, `pin_names()` order) at
    /// point `n`, charge currents included; grounded sources' currents
    /// from Kirchhoff's current law at their node.
    pub fn pin_currents(&self, c: &Circuit, slots: &[Slot], n: usize) -> Vec<Vec<f64>> {
        let x = &self.x[n];
        let mut out: Vec<Vec<f64>> = (0..c.elements.len())
            .map(|k| {
                let t = terminal_currents(c, k, x, self.scale[n]);
                t.current[..c.elements[k].nodes.len().min(t.count)].to_vec()
            })
            .collect();
        for (s, i) in slots.iter().zip(&self.slot_currents[n]) {
            let p = &mut out[s.element];
            with_model!(&c.elements[s.element].kind, |m| m.slot_pins(s, *i, p));
        }
        // Sources whose branch current was not solved for: KCL at a node
        // they hold alone against ground.
        for (k, e) in c.elements.iter().enumerate() {
            let ElementKind::VoltageSource { .. } = e.kind else {
                continue;
            };
            let (node, sign) = match (e.nodes[0], e.nodes[1]) {
                (m, 0) if m != 0 => (m, 1.0),
                (0, m) if m != 0 => (m, -1.0),
                _ => continue,
            };
            let row = c.branch_row(c.branch_of[k].expect("source has a branch"));
            if x[row] != 0.0 {
                continue;
            }
            let mut acc = 0.0;
            for (j, f) in c.elements.iter().enumerate() {
                if j == k {
                    continue;
                }
                for (pin, &m) in f.nodes.iter().enumerate() {
                    if m == node {
                        acc += out[j].get(pin).copied().unwrap_or(0.0);
                    }
                }
            }
            let i = -sign * acc;
            out[k] = if e.nodes.len() > 1 {
                vec![i, -i]
            } else {
                vec![i]
            };
            if out[k].len() > e.nodes.len() {
                out[k].truncate(e.nodes.len());
            }
        }
        out
    }
}

/// Run `engine` from `start` to `stop`, recording every accepted point.
pub fn record(
    engine: &mut Engine<'_>,
    start: State,
    stop: f64,
    landing: &[f64],
    keep_going: &mut dyn FnMut(f64) -> bool,
) -> Result<(Waveforms, State), TransientError> {
    let mut w = Waveforms {
        times: Vec::new(),
        x: Vec::new(),
        slot_currents: Vec::new(),
        landed: Vec::new(),
        scale: Vec::new(),
        counts: Counts::default(),
    };
    let drive = engine.drive.clone();
    w.push(&start, false, drive.scale(start.t));
    let before = engine.counts;
    let end = engine.advance(
        start,
        stop,
        landing,
        &mut |st, landed| w.push(st, landed, drive.scale(st.t)),
        keep_going,
    )?;
    w.counts = Counts {
        steps: engine.counts.steps - before.steps,
        rejected: engine.counts.rejected - before.rejected,
        newton_iterations: engine.counts.newton_iterations - before.newton_iterations,
    };
    Ok((w, end))
}
