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
//! Cost on the normal path: a union–find over the elements to see whether
//! transistors drive each other in a loop of DC paths (without one, a
//! circuit cannot latch); only then one stamp and one dense LU of the
//! reduced system at the start and one at the solution, for at most
//! [`DETERMINANT_TEST_LIMIT`] unknowns (larger circuits are not tested). Only when the signs differ are the
//! other states looked for, by Newton runs seeded with one transistor on
//! and the others off.

use super::newton::{Engine, State};
use super::stamps::{stamp_all, terminal_currents, Conditions, Junction};
use crate::analysis::circuit::{Circuit, ElementKind};
use crate::analysis::elements::{with_model, Model};
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

/// A transistor's junction pair when it is off (a bipolar's junctions at
/// zero, a FET's gate a volt short of its threshold, channel sense) and the
/// name of its main current; None for any other element. Said in the kind's
/// home (`Model::transistor_off`).
fn off(kind: &ElementKind) -> Option<(Junction, &'static str)> {
    with_model!(kind, |m| m.transistor_off())
}

/// One DC state: node voltages (the full solution vector) and each
/// transistor's collector (a FET's drain) current.
#[derive(Debug, Clone, PartialEq)]
pub struct DcState {
    pub x: Vec<f64>,
    /// (designator, collector or drain current into the pin, A).
    pub collector_currents: Vec<(String, f64)>,
    /// "IC" or "ID", one per entry of `collector_currents`.
    pub current_names: Vec<&'static str>,
}

/// Every transistor's collector (drain) current at solution `x`.
pub(crate) fn describe(c: &Circuit, x: &[f64]) -> DcState {
    let mut collector_currents = Vec::new();
    let mut current_names = Vec::new();
    for (k, e) in c.elements.iter().enumerate() {
        let Some((_, name)) = off(&e.kind) else {
            continue;
        };
        collector_currents.push((
            e.designator.clone(),
            terminal_currents(c, k, x, 1.0).current[0],
        ));
        current_names.push(name);
    }
    DcState {
        x: x.to_vec(),
        collector_currents,
        current_names,
    }
}

/// If the solution `found` cannot be the only DC state, the stable states
/// found by seeded runs (possibly none found, but the test still holds).
pub fn other_states(c: &Circuit, engine: &mut Engine<'_>, found: &State) -> Option<Vec<DcState>> {
    let bjts: Vec<usize> = c
        .elements
        .iter()
        .enumerate()
        .filter(|(_, e)| off(&e.kind).is_some())
        .map(|(k, _)| k)
        .collect();
    if bjts.len() < 2 || !feedback_loop(c, &bjts) {
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
                seed.junctions[j] = off(&c.elements[j].kind).map_or([0.0, 0.0], |o| o.0);
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

/// Do two or more transistors drive each other in a loop through DC paths?
/// Nets are joined by resistors, inductors, diodes and floating voltage
/// sources, never through ground or a node a grounded source holds (those
/// carry no feedback). Transistor i drives j when i's collector or emitter
/// shares such a group with j's base or emitter.
fn feedback_loop(c: &Circuit, bjts: &[usize]) -> bool {
    let n = c.node_count + 1;
    let mut fixed = vec![false; n];
    fixed[0] = true;
    for e in &c.elements {
        if with_model!(&e.kind, |m| m.is_voltage_source()) {
            match (e.nodes.first().copied(), e.nodes.get(1).copied()) {
                (Some(a), Some(0)) | (Some(0), Some(a)) if a < n => fixed[a] = true,
                _ => {}
            }
        }
    }
    let mut parent: Vec<usize> = (0..n).collect();
    fn find(p: &mut [usize], mut x: usize) -> usize {
        while p[x] != x {
            p[x] = p[p[x]];
            x = p[x];
        }
        x
    }
    let join = |a: usize, b: usize, parent: &mut Vec<usize>| {
        if a < n && b < n && !fixed[a] && !fixed[b] {
            let (ra, rb) = (find(parent, a), find(parent, b));
            parent[ra] = rb;
        }
    };
    for e in &c.elements {
        let conducts = with_model!(&e.kind, |m| m.joins_pins_at_dc());
        if conducts {
            let first = e.nodes[0];
            for &other in e.nodes[1..].iter().chain(&e.internal_nodes) {
                join(first, other, &mut parent);
            }
        } else if let Some((a, b)) = with_model!(&e.kind, |m| m.one_point(e)) {
            // A transistor's base pin and its internal base are one point for this purpose.
            join(a, b, &mut parent);
        }
    }
    let group = |node: usize, parent: &mut Vec<usize>| -> Option<usize> {
        (node < n && !fixed[node]).then(|| find(parent, node))
    };
    // Edges i → j.
    let k = bjts.len();
    let mut edges: Vec<Vec<usize>> = vec![Vec::new(); k];
    let terminals: Vec<[Option<usize>; 3]> = bjts
        .iter()
        .map(|&b| {
            let e = &c.elements[b];
            [
                group(e.nodes[0], &mut parent),
                group(e.nodes[1], &mut parent),
                group(e.nodes[2], &mut parent),
            ]
        })
        .collect();
    let mut by_group: Vec<Vec<usize>> = vec![Vec::new(); n];
    for (j, t) in terminals.iter().enumerate() {
        for g in [t[1], t[2]].into_iter().flatten() {
            by_group[g].push(j);
        }
    }
    for (i, t) in terminals.iter().enumerate() {
        for g in [t[0], t[2]].into_iter().flatten() {
            {
                let js = &by_group[g];
                for &j in js {
                    if j != i && !edges[i].contains(&j) {
                        edges[i].push(j);
                    }
                }
            }
        }
    }
    // A cycle among transistors (iterative depth-first search, three colours).
    let mut colour = vec![0u8; k];
    for start in 0..k {
        if colour[start] != 0 {
            continue;
        }
        let mut stack = vec![(start, 0usize)];
        colour[start] = 1;
        while let Some(&mut (v, ref mut next)) = stack.last_mut() {
            if *next < edges[v].len() {
                let w = edges[v][*next];
                *next += 1;
                match colour[w] {
                    0 => {
                        colour[w] = 1;
                        stack.push((w, 0));
                    }
                    1 => return true,
                    _ => {}
                }
            } else {
                colour[v] = 2;
                stack.pop();
            }
        }
    }
    false
}
