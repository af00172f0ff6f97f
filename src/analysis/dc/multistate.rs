//! More than one DC state (a latch, a flip-flop, a Schmitt trigger):
//! detected by the sign of the Jacobian's determinant.
//!
//! Along the supply ramp from zero (where every junction is off and the
//! circuit is a resistor network with one solution), the sum of
//! sign(det J) over every solution stays what it was at the start (the
//! Leray–Schauder degree of the circuit equations does not change under the
//! homotopy). So a solution whose det J has the opposite sign to the
//! start's cannot be the only one: there are at least two more, of the
//! start's sign. The solver's point is then an unstable in-between point,
//! like the symmetric point of a cross-coupled pair.
//!
//! Cost on the normal path: one stamp and one dense LU of the reduced
//! system at the start and one at the solution, and only for circuits with
//! two or more transistors and at most [`DETERMINANT_TEST_LIMIT`] unknowns
//! (larger circuits are not tested). Only when the signs differ are the
//! other states looked for, by Newton runs seeded with one transistor on
//! and the others off.

use super::newton::{Engine, State};
use super::stamps::{stamp_all, terminal_currents, Conditions, Junction};
use crate::analysis::circuit::{Circuit, ElementKind};
use crate::analysis::mna::{Reduced, Stamp};

/// Largest reduced system the determinant test is run on.
pub const DETERMINANT_TEST_LIMIT: usize = 60;
/// Seeded runs tried when the test flags a circuit.
const MAX_SEEDS: usize = 8;
/// Two states differ when some node voltage differs by more than this, V.
const DISTINCT_VOLTS: f64 = 1e-3;

struct Dense {
    n: usize,
    m: Vec<f64>,
}

impl Stamp<f64> for Dense {
    fn add(&mut self, row: usize, col: usize, value: f64) {
        if row < self.n && col < self.n {
            self.m[row * self.n + col] += value;
        }
    }
    fn add_rhs(&mut self, _row: usize, _value: f64) {}
}

/// Sign of det J of the reduced system linearised at `junctions`.
fn det_sign(c: &Circuit, engine: &Engine<'_>, junctions: &[Junction]) -> Option<f64> {
    let n = engine.reduction.reduced_size();
    if n == 0 || n > DETERMINANT_TEST_LIMIT {
        return None;
    }
    let mut d = Dense {
        n,
        m: vec![0.0; n * n],
    };
    let known = vec![0.0; c.size()];
    stamp_all(
        c,
        &mut Reduced {
            inner: &mut d,
            reduction: &engine.reduction,
            known: &known,
        },
        junctions,
        Conditions::PLAIN,
    );
    let det = nalgebra::DMatrix::from_row_slice(n, n, &d.m)
        .lu()
        .determinant();
    (det != 0.0 && det.is_finite()).then_some(det.signum())
}

/// One DC state: node voltages (the full solution vector) and each
/// transistor's collector current.
#[derive(Debug, Clone, PartialEq)]
pub struct DcState {
    pub x: Vec<f64>,
    /// (designator, collector current into the pin, A).
    pub collector_currents: Vec<(String, f64)>,
}

fn describe(c: &Circuit, x: &[f64]) -> DcState {
    let collector_currents = c
        .elements
        .iter()
        .enumerate()
        .filter(|(_, e)| matches!(e.kind, ElementKind::Bjt { .. }))
        .map(|(k, e)| {
            (
                e.designator.clone(),
                terminal_currents(c, k, x, 1.0).current[0],
            )
        })
        .collect();
    DcState {
        x: x.to_vec(),
        collector_currents,
    }
}

/// If the solution `found` cannot be the only DC state, the stable states
/// found by seeded runs (possibly none found, but the test still holds).
pub fn other_states(c: &Circuit, engine: &mut Engine<'_>, found: &State) -> Option<Vec<DcState>> {
    let bjts: Vec<usize> = c
        .elements
        .iter()
        .enumerate()
        .filter(|(_, e)| matches!(e.kind, ElementKind::Bjt { .. }))
        .map(|(k, _)| k)
        .collect();
    if bjts.len() < 2 {
        return None;
    }
    let start: Vec<Junction> = vec![[0.0, 0.0]; c.elements.len()];
    let reference = det_sign(c, engine, &start)?;
    let here = det_sign(c, engine, &found.junctions)?;
    if here == reference {
        return None;
    }
    // Seeds: one transistor on, the others off; keep the distinct states of the start's sign.
    let saved = engine.iterations;
    let mut states: Vec<DcState> = Vec::new();
    for &k in bjts.iter().take(MAX_SEEDS) {
        let mut seed = engine.zero_state();
        for &j in &bjts {
            if j != k {
                seed.junctions[j] = [0.0, 0.0];
            }
        }
        let Ok(s) = engine.run(&seed, Conditions::PLAIN) else {
            continue;
        };
        if det_sign(c, engine, &s.junctions) != Some(reference) {
            continue;
        }
        let distinct = states.iter().all(|o| {
            o.x.iter()
                .zip(&s.x)
                .take(c.node_count)
                .any(|(a, b)| (a - b).abs() > DISTINCT_VOLTS)
        });
        if distinct {
            states.push(describe(c, &s.x));
        }
    }
    // The seeded runs are a diagnosis, not part of the solve's iteration count.
    engine.iterations = saved;
    Some(states)
}
