//! Feedback figures beside the exact ones, around one controlled source
//! (the transistor whose return ratio is largest at midband):
//!
//! - the asymptotic-gain split of the amplifier's gain (Rosenstark 1986):
//!   A = A∞·T/(1 + T) + A0/(1 + T), where A∞ is what the feedback network
//!   sets (the gain with infinite loop gain), A0 the direct feedthrough with
//!   the controlled source at zero, T the return ratio;
//! - impedances by Blackman's formula (Blackman 1943):
//!   Z = Z0·(1 + T_short)/(1 + T_open), where Z0 is the impedance at the
//!   port with the controlled source at zero and T_short, T_open the return
//!   ratios with the port shorted and left open.
//!
//! All at midband; each is an identity, so the recombined figure equals the
//! exact one to rounding (the tests check it).

use super::loop_gain::{asymptotic_split, Split};
use crate::analysis::linear::{Cut, Drive, LinearCircuit, LinearKind, Mode, Node, System, Test};

/// Blackman's formula at one port.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Blackman {
    /// Z0·(1 + T_short)/(1 + T_open), Ω.
    pub impedance: f64,
    /// Z0: the impedance with the controlled source at zero, Ω.
    pub without_loop: f64,
    /// The return ratio with the port shorted.
    pub loop_gain_shorted: f64,
    /// The return ratio with the port left open.
    pub loop_gain_open: f64,
}

/// The return ratio of transconductance `element` at midband with `cuts`
/// applied and, when `short` is given, that node held at zero.
fn return_ratio_at(
    circuit: &LinearCircuit,
    element: usize,
    cuts: &[Cut],
    short: Option<Node>,
) -> Option<f64> {
    let e = circuit.elements.get(element)?;
    let LinearKind::Transconductance { gm, cp, cn } = e.kind else {
        return None;
    };
    let mut lc = circuit.clone();
    lc.elements[element].kind = LinearKind::CurrentSource;
    lc.elements[element].a = e.b;
    lc.elements[element].b = e.a;
    if let Some(n) = short {
        lc.add(None, n, 0, LinearKind::VoltageSource);
    }
    let sol = System::new(&lc, Mode::Midband, cuts, None)
        .solve(0.0, &[Drive::unit(element)])
        .ok()?;
    let t = -(sol.v(cp) - sol.v(cn)).re * gm;
    t.is_finite().then_some(t)
}

/// Blackman's formula for the impedance at `node` (to ground) with `cuts`,
/// around transconductance `element`.
pub fn blackman(
    circuit: &LinearCircuit,
    element: usize,
    node: Node,
    cuts: &[Cut],
) -> Option<Blackman> {
    if node == 0 {
        return None;
    }
    let mut zeroed = circuit.clone();
    match &mut zeroed.elements.get_mut(element)?.kind {
        LinearKind::Transconductance { gm, .. } => *gm = 0.0,
        _ => return None,
    }
    let z0 = System::new(&zeroed, Mode::Midband, cuts, Some(Test::Current(node)))
        .solve(0.0, &[])
        .ok()?
        .v(node)
        .re;
    let t_short = return_ratio_at(circuit, element, cuts, Some(node))?;
    let t_open = return_ratio_at(circuit, element, cuts, None)?;
    let z = z0 * (1.0 + t_short) / (1.0 + t_open);
    (z.is_finite() && z0.is_finite()).then_some(Blackman {
        impedance: z,
        without_loop: z0,
        loop_gain_shorted: t_short,
        loop_gain_open: t_open,
    })
}

/// The feedback reading of an amplifier around one controlled source.
#[derive(Debug, Clone, PartialEq)]
pub struct FeedbackReading {
    /// Document part index of the transistor the reading is taken around.
    pub part: usize,
    /// The gain from the signal source's EMF to the load, split (midband).
    pub split: Split,
    /// Zin at the amplifier input (the source's feed cut), by Blackman.
    pub input: Option<Blackman>,
    /// Zout at the load (the load cut), by Blackman.
    pub output: Option<Blackman>,
}

/// The reading around `element` (a transconductance of `part`): the split
/// of v(load)/vs with the source's element `signal`, and Blackman at the
/// input (cut `input_cut`) and the load (cut `output_cut`).
pub fn feedback_reading(
    circuit: &LinearCircuit,
    part: usize,
    element: usize,
    signal: usize,
    input: (Node, &[Cut]),
    output: (Node, &[Cut]),
) -> Option<FeedbackReading> {
    let split = asymptotic_split(
        circuit,
        element,
        &[Drive::unit(signal)],
        output.0,
        Mode::Midband,
        0.0,
    )?;
    Some(FeedbackReading {
        part,
        split,
        input: blackman(circuit, element, input.0, input.1),
        output: blackman(circuit, element, output.0, output.1),
    })
}
