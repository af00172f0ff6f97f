//! Loop gain: Bode's return ratio of a controlled source, and the exact
//! loop gain at a break point by double injection.
//!
//! Return ratio (Bode 1945): with the independent sources at zero, the
//! controlled source gm·v is replaced by an independent source of value 1 in
//! the same orientation; the control voltage v it returns gives T = −gm·v.
//! It sees every loop the controlled source is in, local and global.
//!
//! Double injection (Middlebrook 1975; Tian et al. 2001): the named pin is
//! moved off its net onto a fresh node (the forward side: the signal goes
//! from the net into the pin); the net is the return side. A series voltage
//! injection gives Tv = −v(return)/v(forward); a shunt current injection at
//! the joined point gives Ti = i(return)/i(forward), both currents flowing
//! from the injection point into the circuit. The loop gain, exact with all
//! loading and without opening the loop, is T = (Tv·Ti − 1)/(Tv + Ti + 2).

use crate::analysis::linear::{Drive, LinearCircuit, LinearKind, Mode, Node, System, C64};

/// T over a sweep plus its midband value.
#[derive(Debug, Clone, PartialEq)]
pub struct LoopGain {
    /// Midband loop gain (coupling capacitors short, device capacitances open).
    pub t0: C64,
    /// T at each sweep frequency.
    pub t: Vec<C64>,
}

/// The controlled source of `element` replaced by a current source of the
/// same orientation (a transconductance pushes its current into `b`).
fn opened(circuit: &LinearCircuit, element: usize) -> Option<(LinearCircuit, f64, Node, Node)> {
    let e = circuit.elements.get(element)?;
    let LinearKind::Transconductance { gm, cp, cn } = e.kind else {
        return None;
    };
    let mut lc = circuit.clone();
    lc.elements[element].kind = LinearKind::CurrentSource;
    lc.elements[element].a = e.b;
    lc.elements[element].b = e.a;
    Some((lc, gm, cp, cn))
}

/// Bode's return ratio of the transconductance `element` at midband and at
/// each frequency (None: not a transconductance, or a singular system).
pub fn return_ratio(circuit: &LinearCircuit, element: usize, freqs: &[f64]) -> Option<LoopGain> {
    let (lc, gm, cp, cn) = opened(circuit, element)?;
    let d = [Drive::unit(element)];
    let t_of = |sol: &crate::analysis::linear::Solution| -(sol.v(cp) - sol.v(cn)) * gm;
    let mid = System::new(&lc, Mode::Midband, &[], None);
    let t0 = t_of(&mid.solve(0.0, &d).ok()?);
    let sys = System::new(&lc, Mode::Frequency, &[], None);
    let mut t = Vec::with_capacity(freqs.len());
    for &f in freqs {
        t.push(t_of(&sys.solve(f, &d).ok()?));
    }
    Some(LoopGain { t0, t })
}

/// The return ratio of every transistor's main controlled source (per part,
/// its transconductance of largest |gm|): (part, element, loop gain).
pub fn return_ratios(circuit: &LinearCircuit, freqs: &[f64]) -> Vec<(usize, usize, LoopGain)> {
    let mut best: std::collections::BTreeMap<usize, (usize, f64)> = Default::default();
    for (i, e) in circuit.elements.iter().enumerate() {
        if let (Some(p), LinearKind::Transconductance { gm, .. }) = (e.part, e.kind) {
            let entry = best.entry(p).or_insert((i, gm.abs()));
            if gm.abs() > entry.1 {
                *entry = (i, gm.abs());
            }
        }
    }
    best.into_iter()
        .filter_map(|(p, (i, _))| return_ratio(circuit, i, freqs).map(|t| (p, i, t)))
        .collect()
}

/// A break point: the pin of `part` on `node`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BreakPoint {
    pub part: usize,
    pub node: Node,
}

/// Why a break point cannot be used.
#[derive(Debug, Clone, PartialEq)]
pub enum BreakError {
    /// The pin is on ground (or on a node a grounded source holds).
    OnGround,
    /// The part has no pin on that node.
    NotOnNode,
    /// The loop gain there is zero: the point is in no loop.
    NotInLoop,
    Singular,
}

impl std::fmt::Display for BreakError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            BreakError::OnGround => {
                "the break point is on ground (or on a supply held by a source): no loop passes there"
            }
            BreakError::NotOnNode => "the part has no pin on that net",
            BreakError::NotInLoop => {
                "the break point is in no feedback loop: the loop gain there is zero"
            }
            BreakError::Singular => "the circuit cannot be solved with the break point in place",
        })
    }
}

impl std::error::Error for BreakError {}

/// The circuit with the pin moved to a fresh node and a series voltage
/// source (+ on the fresh node) between them: (circuit, fresh node, source).
fn split_at(
    circuit: &LinearCircuit,
    at: BreakPoint,
) -> Result<(LinearCircuit, Node, usize), BreakError> {
    if at.node == 0 {
        return Err(BreakError::OnGround);
    }
    let mut lc = circuit.clone();
    let fresh = lc.add_node();
    let mut touched = false;
    for e in lc.elements.iter_mut().filter(|e| e.part == Some(at.part)) {
        for n in [&mut e.a, &mut e.b] {
            if *n == at.node {
                *n = fresh;
                touched = true;
            }
        }
        if let LinearKind::Transconductance { cp, cn, .. } = &mut e.kind {
            for n in [cp, cn] {
                if *n == at.node {
                    *n = fresh;
                    touched = true;
                }
            }
        }
    }
    if !touched {
        return Err(BreakError::NotOnNode);
    }
    let source = lc.add(None, fresh, at.node, LinearKind::VoltageSource);
    Ok((lc, fresh, source))
}

/// Tv and Ti at one frequency (or midband) and the loop gain from them.
fn inject(
    sys: &System,
    f: f64,
    at: BreakPoint,
    fresh: Node,
    source: usize,
) -> Result<C64, BreakError> {
    let v = [Drive::unit(source)];
    let i = [Drive::inject(fresh)];
    let sols = sys
        .solve_each(f, &[&v, &i])
        .map_err(|_| BreakError::Singular)?;
    let (sv, si) = (&sols[0], &sols[1]);
    // Tv = −vr/vf, Ti = ir/if; T = (Tv·Ti − 1)/(Tv + Ti + 2) multiplied
    // through by vf·if, so a short forward side (vf = 0: T = Ti) or an open
    // one (if = 0: T = Tv) needs no special case.
    let (vr, vf) = (sv.v(at.node), sv.v(fresh));
    let i_f = sys.current_into_part(si, at.part, fresh);
    let i_r = C64::new(1.0, 0.0) - i_f;
    let den = i_r * vf - vr * i_f + 2.0 * vf * i_f;
    let t = (-vr * i_r - vf * i_f) / den;
    if !(t.re.is_finite() && t.im.is_finite()) {
        return Err(BreakError::Singular);
    }
    Ok(t)
}

/// The loop gain at a break point by double injection, at midband and at each frequency.
pub fn double_injection(
    circuit: &LinearCircuit,
    at: BreakPoint,
    freqs: &[f64],
) -> Result<LoopGain, BreakError> {
    let (lc, fresh, source) = split_at(circuit, at)?;
    let whole = System::new(circuit, Mode::Frequency, &[], None);
    if whole.row_of_node(at.node).is_none() {
        return Err(BreakError::OnGround);
    }
    let mid = System::new(&lc, Mode::Midband, &[], None);
    let t0 = inject(&mid, 0.0, at, fresh, source)?;
    let sys = System::new(&lc, Mode::Frequency, &[], None);
    let t = freqs
        .iter()
        .map(|&f| inject(&sys, f, at, fresh, source))
        .collect::<Result<Vec<_>, _>>()?;
    let scale = 1e-9;
    if t0.norm() < scale && t.iter().all(|x| x.norm() < scale) {
        return Err(BreakError::NotInLoop);
    }
    Ok(LoopGain { t0, t })
}

/// The asymptotic-gain split of one gain around one controlled source
/// (Rosenstark 1986): A = A∞·T/(1 + T) + A0/(1 + T).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Split {
    /// The exact gain.
    pub gain: C64,
    /// The gain the loop would give with infinite loop gain (what the feedback network sets).
    pub ideal: C64,
    /// The direct feedthrough with the controlled source at zero.
    pub direct: C64,
    /// The return ratio of the controlled source.
    pub loop_gain: C64,
}

/// Split the gain v(output)/drive around transconductance `element`, at
/// `frequency` in `mode`. By superposition with the source as an
/// independent one: y = a·u + b·i, v = c·u + d·i; then T = −gm·d,
/// A0 = a, A∞ = a − b·c/d, and the exact gain a + b·gm·c/(1 + T).
pub fn asymptotic_split(
    circuit: &LinearCircuit,
    element: usize,
    drives: &[Drive],
    output: Node,
    mode: Mode,
    frequency: f64,
) -> Option<Split> {
    let (lc, gm, cp, cn) = opened(circuit, element)?;
    let sys = System::new(&lc, mode, &[], None);
    let unit = [Drive::unit(element)];
    let sols = sys.solve_each(frequency, &[drives, &unit]).ok()?;
    let (su, si) = (&sols[0], &sols[1]);
    let (a, c) = (su.v(output), su.v(cp) - su.v(cn));
    let (b, d) = (si.v(output), si.v(cp) - si.v(cn));
    let t = -d * gm;
    Some(Split {
        gain: a + b * gm * c / (1.0 + t),
        ideal: a - b * c / d,
        direct: a,
        loop_gain: t,
    })
}

#[cfg(test)]
#[path = "loop_gain_tests.rs"]
mod tests;
