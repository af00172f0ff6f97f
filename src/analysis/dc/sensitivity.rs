//! The βF sensitivity of every bipolar transistor's collector current,
//! S = ∂IC/∂βF·βF/IC, from the linearised system at the operating point:
//! only IBE = (Is/βF)(e^{VBE/nFVT} − 1) depends on βF, ∂IBE/∂βF = −IBE/βF,
//! so ∂F/∂βF has two entries (internal base and emitter), and S needs three
//! entries (collector, emitter, internal base) of J⁻¹·∂F/∂βF.
//!
//! Up to [`SELECTED_FROM`] unknowns each transistor's right-hand side is
//! solved through the final factors, 64 at a time. A larger circuit takes
//! the six entries of J⁻¹ each transistor needs from the selected inverse
//! (one pass over the factors): a solve per transistor made `check` grow as
//! the square of the circuit's size.

use super::newton::{Engine, State};
use super::stamps::{self, junction_of, voltage, Junction};
use crate::analysis::circuit::Circuit;
use crate::analysis::devices::bjt::{BjtEval, BjtModel};
use crate::analysis::elements::per_device::bipolar;
use crate::analysis::mna::SelectedInverse;

/// Transistors whose βF sensitivities are solved together in one block.
const SENSITIVITY_BLOCK: usize = 64;

/// From this many unknowns the sensitivities come from the selected
/// inverse (below, block solves are cheap and every figure stays as it
/// was; both ways agree to rounding, tested).
pub const SELECTED_FROM: usize = 1000;

/// S for every element (0 for all but bipolar transistors); the selected
/// inverse is used from `selected_from` unknowns.
pub fn beta_sensitivities(
    c: &Circuit,
    engine: &mut Engine<'_>,
    state: &State,
    selected_from: usize,
) -> Vec<f64> {
    let mut out = vec![0.0; c.elements.len()];
    let mut bjts: Vec<usize> = (0..c.elements.len())
        .filter(|&k| bipolar(&c.elements[k]).is_some())
        .collect();
    if bjts.is_empty() {
        return out;
    }
    // Factor the Jacobian at the converged point (junctions = exact there).
    let junctions: Vec<_> = c
        .elements
        .iter()
        .map(|e| junction_of(e, &state.x))
        .collect();
    if engine
        .linear_solve(&junctions, stamps::Conditions::PLAIN)
        .is_err()
    {
        return out;
    }
    if engine.system.size() >= selected_from {
        if let Some(Ok(z)) = engine.selected_inverse() {
            // A transistor whose entries are off the pattern is solved below.
            bjts.retain(|&k| match selected(c, engine, &z, junctions[k], k) {
                Some(v) => {
                    out[k] = v;
                    false
                }
                None => true,
            });
        }
    }
    // One right-hand side per transistor, solved in blocks of columns.
    let size = c.size();
    for block in bjts.chunks(SENSITIVITY_BLOCK) {
        let mut rhs = vec![0.0; size * block.len()];
        let mut evals = Vec::with_capacity(block.len());
        for (col, &k) in block.iter().enumerate() {
            let e = &c.elements[k];
            let (ev, d_ib) = drive(e, junctions[k]);
            let r = &mut rhs[col * size..(col + 1) * size];
            if let Some(i) = bipolar(e).and_then(|(_, b)| b.checked_sub(1)) {
                r[i] -= d_ib;
            }
            if let Some(i) = e.nodes[2].checked_sub(1) {
                r[i] += d_ib;
            }
            evals.push(ev);
        }
        let Ok(s) = engine.solve_many(&rhs, block.len()) else {
            continue;
        };
        for (col, &k) in block.iter().enumerate() {
            let e = &c.elements[k];
            let Some((model, internal_base)) = bipolar(e) else {
                continue;
            };
            let s = &s[col * size..(col + 1) * size];
            let sv = |n: usize| voltage(s, n);
            let (sc, se, sb) = (sv(e.nodes[0]), sv(e.nodes[2]), sv(internal_base));
            out[k] = from_shifts(model, &evals[col], sc, se, sb);
        }
    }
    out
}

/// The transistor's evaluation at its junctions and ∂(pin current into the
/// internal base)/∂βF (the emitter gets its negative).
fn drive(e: &crate::analysis::circuit::Element, j: Junction) -> (BjtEval, f64) {
    let Some((model, _)) = bipolar(e) else {
        unreachable!("only bipolar transistors are driven")
    };
    let ev = model.evaluate(j[0], j[1]);
    let d_ib = model.polarity.sign() * (-ev.ibe / model.forward_beta);
    (ev, d_ib)
}

/// S from the shifts of the collector, emitter and internal base per unit βF.
fn from_shifts(model: &BjtModel, ev: &BjtEval, sc: f64, se: f64, sb: f64) -> f64 {
    let dic = ev.dic_dvbe * (sb - se) + ev.dic_dvbc * (sb - sc);
    let ic = model.polarity.sign() * ev.ic;
    let value = dic * model.forward_beta / ic;
    if value.is_finite() {
        value
    } else {
        0.0
    }
}

/// One transistor's S from the selected inverse (`None`: an entry it needs
/// is off the pattern).
fn selected(
    c: &Circuit,
    engine: &Engine<'_>,
    z: &SelectedInverse,
    junction: Junction,
    k: usize,
) -> Option<f64> {
    let e = &c.elements[k];
    let (model, internal_base) = bipolar(e)?;
    let (ev, d_ib) = drive(e, junction);
    let pins = [(internal_base, -d_ib), (e.nodes[2], d_ib)];
    let shift = |w: usize| -> Option<f64> {
        let Some(w) = w.checked_sub(1) else {
            return Some(0.0);
        };
        let mut s = 0.0;
        for &(n, v) in &pins {
            if let Some(r) = n.checked_sub(1) {
                s += engine.inverse_entry(z, w, r)? * v;
            }
        }
        Some(s)
    };
    let (sc, se, sb) = (
        shift(e.nodes[0])?,
        shift(e.nodes[2])?,
        shift(internal_base)?,
    );
    Some(from_shifts(model, &ev, sc, se, sb))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::circuit;

    #[test]
    fn the_selected_inverse_gives_the_solved_sensitivities() {
        // invariant: both ways compute the same entries of J⁻¹·∂F/∂βF, one
        // by solving, one by Takahashi's recurrence; they agree to rounding.
        for stages in [3usize, 40, 170] {
            let doc = crate::generate::amplifier_chain(stages, None);
            let nl = crate::netlist::connect(&doc);
            let c = circuit::build(&doc, &nl).expect("builds");
            let mut engine = Engine::new(&c);
            let (state, _) = engine.solve().expect("solves");
            let solved = beta_sensitivities(&c, &mut engine, &state, usize::MAX);
            let picked = beta_sensitivities(&c, &mut engine, &state, 0);
            let mut compared = 0;
            for (k, (a, b)) in solved.iter().zip(&picked).enumerate() {
                assert!(
                    (a - b).abs() <= 1e-9 * a.abs().max(1e-12),
                    "{stages} stages, element {k}: solved {a:e}, selected {b:e}"
                );
                compared += usize::from(*a != 0.0);
            }
            assert_eq!(compared, stages, "every transistor has a sensitivity");
        }
    }
}
