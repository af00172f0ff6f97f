//! The junction-temperature loop of a push-pull output: each output device
//! at its own junction temperature TJ = Ta + P·θJA, its model rebuilt at
//! that temperature (the Gummel–Poon temperature laws of
//! `devices::bjt`, the FET laws of `devices::fet`), the DC point solved
//! again, until the temperatures settle or run away.
//!
//! Everything else in the circuit (bias diodes, the driver) stays at the
//! ambient temperature: the loop shows what the output devices do on their
//! own heat sinks, with no thermal tracking of the bias network.

use crate::analysis::circuit::Circuit;
use crate::analysis::dc::{self, OperatingPoint};
use crate::analysis::elements::per_device;
use crate::document::Document;

/// Loop passes at most.
pub const MAX_PASSES: usize = 80;
/// Settled: every junction moved less than this between passes, K.
pub const SETTLED_KELVIN: f64 = 0.01;
/// Past this junction temperature, °C, the loop is called a runaway (no
/// silicon device survives it; the model's laws stop meaning anything).
pub const RUNAWAY_CELSIUS: f64 = 300.0;

/// How the loop ended.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Thermal {
    /// Junction temperature of each device (part, °C) at the last pass.
    pub junctions: Vec<(usize, f64)>,
    /// Collector (drain) current magnitude of each device at the last pass, A.
    pub currents: Vec<(usize, f64)>,
    pub passes: usize,
    pub settled: bool,
    /// The temperatures kept rising past [`RUNAWAY_CELSIUS`] or never settled.
    pub runaway: bool,
}

/// Power (W) and current magnitude (A) of a device at an operating point.
pub(crate) fn device(op: &OperatingPoint, part: usize) -> Option<(f64, f64)> {
    if let Some(t) = op.transistors().find(|t| t.part == part) {
        return Some((t.power, t.ic.abs()));
    }
    op.fets()
        .find(|f| f.part == part)
        .map(|f| (f.power, f.drain_current.abs()))
}

/// θJA of a device, K/W, when given.
pub(crate) fn theta(c: &Circuit, part: usize) -> Option<f64> {
    per_device::ratings(c, part)?
        .thermal_resistance
        .filter(|t| t.is_finite() && *t >= 0.0)
}

/// Solve with `devices` at the given junction temperatures (°C).
pub(crate) fn solve_at(
    doc: &Document,
    base: &Circuit,
    devices: &[(usize, f64)],
) -> Option<OperatingPoint> {
    let mut c = base.clone();
    for &(p, t) in devices {
        per_device::set_junction(doc, &mut c, p, t);
    }
    dc::solve_circuit(&c).ok()
}

/// Run the loop for `devices` (each with its θJA) from the ambient.
pub(crate) fn settle(
    doc: &Document,
    base: &Circuit,
    op: &OperatingPoint,
    devices: &[(usize, f64)],
) -> Thermal {
    let ambient = base.kelvin - crate::analysis::ZERO_CELSIUS;
    let mut junctions: Vec<(usize, f64)> = devices
        .iter()
        .map(|&(p, th)| (p, ambient + device(op, p).map_or(0.0, |d| d.0) * th))
        .collect();
    let mut currents: Vec<(usize, f64)> = devices
        .iter()
        .map(|&(p, _)| (p, device(op, p).map_or(0.0, |d| d.1)))
        .collect();
    let mut passes = 0;
    let mut settled = false;
    let mut runaway = false;
    while passes < MAX_PASSES {
        passes += 1;
        let Some(here) = solve_at(doc, base, &junctions) else {
            runaway = true;
            break;
        };
        let mut moved: f64 = 0.0;
        let mut next = Vec::with_capacity(junctions.len());
        for (&(p, th), &(_, tj)) in devices.iter().zip(&junctions) {
            let (power, current) = device(&here, p).unwrap_or((0.0, 0.0));
            let t = ambient + power * th;
            moved = moved.max((t - tj).abs());
            next.push((p, t));
            if let Some(c) = currents.iter_mut().find(|c| c.0 == p) {
                c.1 = current;
            }
        }
        junctions = next;
        if junctions
            .iter()
            .any(|j| j.1 > RUNAWAY_CELSIUS || !j.1.is_finite())
        {
            runaway = true;
            break;
        }
        if moved < SETTLED_KELVIN {
            settled = true;
            break;
        }
    }
    if !settled && !runaway {
        // Still moving after every pass: rising without end is a runaway.
        runaway = true;
    }
    Thermal {
        junctions,
        currents,
        passes,
        settled,
        runaway,
    }
}
