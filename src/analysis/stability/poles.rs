//! The circuit's own poles: s with (G + s·C)·x = 0.
//!
//! With G·x = λ·C·x (faer's generalized eigenvalue decomposition, QZ) the
//! poles are s = −λ. Unknowns whose rows and columns of C are empty (nodes
//! with no capacitance to anything, most branch currents) carry no dynamics:
//! they are eliminated from G first (Schur complement, exact), which removes
//! most infinite eigenvalues before the QZ. What the QZ still returns with
//! β = 0, or beyond [`INFINITE_HZ`] (a numerical infinity from a singular C —
//! a capacitor loop or an inductor cut set), is discarded and counted.

use crate::analysis::linear::{LinearCircuit, LinearKind, Mode, Node, System, C64};
use faer::linalg::solvers::Solve;
use faer::Mat;
use std::f64::consts::PI;

/// Largest system (unknowns after folding) solved densely for poles: the
/// QZ costs about 30·n³ operations, 0.1 s at 600 unknowns.
pub const DENSE_POLE_LIMIT: usize = 600;
/// Eigenvalues beyond this frequency are taken as infinite, Hz.
pub const INFINITE_HZ: f64 = 1e15;

/// One natural frequency.
#[derive(Debug, Clone, PartialEq)]
pub struct Pole {
    /// s = σ + jω, rad/s.
    pub s: C64,
    /// |s|/2π, Hz (the corner of a real pole, the natural frequency of a pair).
    pub natural_hz: f64,
    /// |ω|/2π, Hz: the frequency it rings or oscillates at (0 for a real pole).
    pub oscillation_hz: f64,
    /// Damping ratio ζ = −σ/|s| (1 for a real left-half-plane pole; negative: unstable).
    pub damping: f64,
    /// Q = 1/(2ζ) of a complex pair (None for a real pole).
    pub q: Option<f64>,
    /// Positive real part: the operating point is unstable.
    pub unstable: bool,
    /// The parts the pole depends on most, with their share (0..1) of the
    /// energy the mode stores in capacitances and inductances, largest first.
    pub parts: Vec<(usize, f64)>,
    /// Eigenvector weight per node (node, |x|/max|x|), largest first.
    pub nodes: Vec<(Node, f64)>,
}

/// All poles of a circuit.
#[derive(Debug, Clone, PartialEq)]
pub struct Poles {
    /// One per real pole and one per complex pair (the member with ω ≥ 0),
    /// slowest first.
    pub poles: Vec<Pole>,
    /// Infinite eigenvalues discarded (a singular C).
    pub infinite: usize,
    /// Unknowns of the system.
    pub size: usize,
}

impl Poles {
    pub fn unstable(&self) -> impl Iterator<Item = &Pole> {
        self.poles.iter().filter(|p| p.unstable)
    }
}

/// Why no poles were found.
#[derive(Debug, Clone, PartialEq)]
pub enum PolesError {
    TooLarge { size: usize, limit: usize },
    Failed,
}

impl std::fmt::Display for PolesError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            PolesError::TooLarge { size, limit } => write!(
                f,
                "the circuit has {size} unknowns; the pole analysis solves at most {limit} \
                 (a dense eigenvalue solve) — analyse a part of the circuit"
            ),
            PolesError::Failed => write!(f, "the eigenvalue solve did not converge"),
        }
    }
}

impl std::error::Error for PolesError {}

/// The poles of `circuit` (small-signal, every capacitance and inductance).
pub fn poles(circuit: &LinearCircuit) -> Result<Poles, PolesError> {
    let sys = System::new(circuit, Mode::Frequency, &[], None);
    let n = sys.size();
    if n > DENSE_POLE_LIMIT {
        return Err(PolesError::TooLarge {
            size: n,
            limit: DENSE_POLE_LIMIT,
        });
    }
    let pencil = sys.pencil();
    let mut g: Vec<f64> = pencil.g.values.clone();
    let c = &pencil.c.values;
    // Eliminate static unknowns (empty C row and column, a usable pivot).
    let static_unknown = |k: usize| (0..n).all(|j| c[k * n + j] == 0.0 && c[j * n + k] == 0.0);
    let mut gone = vec![false; n];
    let mut order = Vec::new();
    loop {
        let mut any = false;
        for k in 0..n {
            if gone[k] || !static_unknown(k) {
                continue;
            }
            let piv = g[k * n + k];
            let row_max = (0..n)
                .filter(|&j| !gone[j])
                .map(|j| g[k * n + j].abs())
                .fold(0.0, f64::max);
            if piv == 0.0 || piv.abs() < 1e-8 * row_max {
                continue;
            }
            for i in (0..n).filter(|&i| !gone[i] && i != k) {
                let f = g[i * n + k] / piv;
                if f != 0.0 {
                    for j in (0..n).filter(|&j| !gone[j]) {
                        g[i * n + j] -= f * g[k * n + j];
                    }
                }
            }
            gone[k] = true;
            order.push(k);
            any = true;
        }
        if !any {
            break;
        }
    }
    let kept: Vec<usize> = (0..n).filter(|&k| !gone[k]).collect();
    let m = kept.len();
    let mut out = Poles {
        poles: Vec::new(),
        infinite: 0,
        size: n,
    };
    if m == 0 {
        return Ok(out);
    }
    let a = Mat::<f64>::from_fn(m, m, |i, j| g[kept[i] * n + kept[j]]);
    let b = Mat::<f64>::from_fn(m, m, |i, j| c[kept[i] * n + kept[j]]);
    let ev = gevd(a, b).ok_or(PolesError::Failed)?;
    let (sa, sb, u) = (&ev.0, &ev.1, &ev.2);
    for k in 0..m {
        let (alpha, beta) = (sa[k], C64::new(sb[k], 0.0));
        let s = -alpha / beta;
        if beta.norm() == 0.0 || !s.re.is_finite() || !s.im.is_finite() {
            out.infinite += 1;
            continue;
        }
        if s.norm() / (2.0 * PI) > INFINITE_HZ {
            out.infinite += 1;
            continue;
        }
        if s.im < 0.0 && s.im.abs() > 1e-9 * s.norm() {
            continue; // the conjugate of one listed
        }
        // The full eigenvector: kept entries, then the eliminated ones in reverse.
        let mut x = vec![C64::default(); n];
        for (i, &r) in kept.iter().enumerate() {
            x[r] = u[k][i];
        }
        recover(&pencil.g.values, n, &order, &mut x);
        out.poles.push(describe(circuit, &sys, s, &x));
    }
    out.poles
        .sort_by(|p, q| p.natural_hz.total_cmp(&q.natural_hz));
    Ok(out)
}

/// Generalized eigenvalues α/β and right eigenvectors of the real pair (A, B),
/// by faer's QZ. (Called at this level with a workspace that includes the
/// eigenvector back-substitution: faer 0.24's `Mat::generalized_eigen` asks
/// for too small a one and panics for n ≥ 1.)
#[allow(clippy::type_complexity)]
fn gevd(mut a: Mat<f64>, mut b: Mat<f64>) -> Option<(Vec<C64>, Vec<f64>, Vec<Vec<C64>>)> {
    use faer::diag::Diag;
    use faer::dyn_stack::{MemBuffer, MemStack};
    use faer::linalg::evd::ComputeEigenvectors;
    use faer::Par;
    let n = a.nrows();
    let par = Par::Seq;
    let mut u = Mat::<f64>::zeros(n, n);
    let (mut s_re, mut s_im, mut beta) = (
        Diag::<f64>::zeros(n),
        Diag::<f64>::zeros(n),
        Diag::<f64>::zeros(n),
    );
    let req = faer::linalg::gevd::gevd_scratch::<f64>(
        n,
        ComputeEigenvectors::No,
        ComputeEigenvectors::Yes,
        par,
        Default::default(),
    )
    .and(faer::linalg::temp_mat_scratch::<f64>(n, 8))
    .and(faer::linalg::temp_mat_scratch::<f64>(n, 8));
    let mut buf = MemBuffer::new(req);
    faer::linalg::gevd::gevd_real(
        a.as_mut(),
        b.as_mut(),
        s_re.as_mut(),
        s_im.as_mut(),
        beta.as_mut(),
        None,
        Some(u.as_mut()),
        par,
        MemStack::new(&mut buf),
        Default::default(),
    )
    .ok()?;
    let mut alpha: Vec<C64> = (0..n).map(|k| C64::new(s_re[k], s_im[k])).collect();
    let mut beta: Vec<f64> = (0..n).map(|k| beta[k]).collect();
    // A complex pair k, k+1: faer 0.24.4 (qz_real, the 2×2 block
    // standardisation) scales the second member's α by one factor and its
    // β by another, so α/β of the second member is off by a real factor
    // (5.8 on the follower fixture: 9.71 MHz shown for a 56.3 MHz pair).
    // The first member is consistent: the pair is it and its conjugate.
    let mut k = 0;
    while k + 1 < n {
        if alpha[k].im != 0.0 {
            alpha[k + 1] = alpha[k].conj();
            beta[k + 1] = beta[k];
            k += 2;
        } else {
            k += 1;
        }
    }
    // Real storage of eigenvectors: a complex pair k, k+1 (im > 0 first)
    // keeps the real part in column k and the imaginary part in column k+1.
    let mut vecs = Vec::with_capacity(n);
    let mut k = 0;
    while k < n {
        if alpha[k].im != 0.0 && k + 1 < n {
            let v: Vec<C64> = (0..n).map(|i| C64::new(u[(i, k)], u[(i, k + 1)])).collect();
            let w: Vec<C64> = v.iter().map(|z| z.conj()).collect();
            vecs.push(v);
            vecs.push(w);
            k += 2;
        } else {
            vecs.push((0..n).map(|i| C64::new(u[(i, k)], 0.0)).collect());
            k += 1;
        }
    }
    Some((alpha, beta, vecs))
}

/// The eliminated unknowns from the kept ones: their rows of G are static
/// (no C), so G·x = 0 there: G_ee·x_e = −G_ek·x_k, solved densely.
fn recover(g0: &[f64], n: usize, order: &[usize], x: &mut [C64]) {
    if order.is_empty() {
        return;
    }
    // Solve G_ee·x_e = −G_ek·x_k densely (few unknowns, small cost).
    let e = order.len();
    let others: Vec<usize> = (0..n).filter(|j| !order.contains(j)).collect();
    let mut m = Mat::<f64>::from_fn(e, e, |i, j| g0[order[i] * n + order[j]]);
    let rhs_re = Mat::<f64>::from_fn(e, 1, |i, _| {
        -others
            .iter()
            .map(|&j| g0[order[i] * n + j] * x[j].re)
            .sum::<f64>()
    });
    let rhs_im = Mat::<f64>::from_fn(e, 1, |i, _| {
        -others
            .iter()
            .map(|&j| g0[order[i] * n + j] * x[j].im)
            .sum::<f64>()
    });
    let lu = m.as_mut().partial_piv_lu();
    let (re, im) = (lu.solve(&rhs_re), lu.solve(&rhs_im));
    for (i, &r) in order.iter().enumerate() {
        x[r] = C64::new(re[(i, 0)], im[(i, 0)]);
    }
}

fn describe(circuit: &LinearCircuit, sys: &System, s: C64, x: &[C64]) -> Pole {
    let w = s.norm();
    let v = |n: Node| sys.row_of_node(n).map(|r| x[r]).unwrap_or_default();
    // Node weights.
    let mut nodes: Vec<(Node, f64)> = (1..=circuit.node_count).map(|n| (n, v(n).norm())).collect();
    let top = nodes.iter().map(|p| p.1).fold(0.0, f64::max);
    if top > 0.0 {
        for p in &mut nodes {
            p.1 /= top;
        }
    }
    nodes.retain(|p| p.1 >= 0.01);
    nodes.sort_by(|a, b| b.1.total_cmp(&a.1));
    // Stored energy per part: C·|Δv|² and L·|i|² with i = Δv/(s·L).
    let mut energy: std::collections::BTreeMap<usize, f64> = Default::default();
    for e in &circuit.elements {
        let dv = (v(e.a) - v(e.b)).norm();
        let stored = match e.kind {
            LinearKind::Capacitor(c) | LinearKind::DeviceCapacitance(c) => c * dv * dv,
            LinearKind::Inductor(l) if w > 0.0 => dv * dv / (w * w * l),
            _ => continue,
        };
        if let Some(p) = e.part {
            *energy.entry(p).or_default() += stored;
        }
    }
    let total: f64 = energy.values().sum();
    let mut parts: Vec<(usize, f64)> = energy
        .into_iter()
        .map(|(p, e)| (p, if total > 0.0 { e / total } else { 0.0 }))
        .filter(|p| p.1 >= 0.01)
        .collect();
    parts.sort_by(|a, b| b.1.total_cmp(&a.1));
    let complex = s.im.abs() > 1e-9 * w;
    let damping = if w > 0.0 { -s.re / w } else { 1.0 };
    Pole {
        s,
        natural_hz: w / (2.0 * PI),
        oscillation_hz: if complex {
            s.im.abs() / (2.0 * PI)
        } else {
            0.0
        },
        damping,
        q: complex.then(|| 1.0 / (2.0 * damping)),
        unstable: s.re > 0.0,
        parts,
        nodes,
    }
}

/// The plain-words warning for an unstable pole, naming the parts by `name`.
pub fn instability_message(pole: &Pole, name: &dyn Fn(usize) -> String) -> String {
    let parts: Vec<String> = pole.parts.iter().take(4).map(|&(p, _)| name(p)).collect();
    let through = match parts.len() {
        0 => String::new(),
        1 => format!("; the loop runs through {}", parts[0]),
        k => format!(
            "; the loop runs through {} and {}",
            parts[..k - 1].join(", "),
            parts[k - 1]
        ),
    };
    if pole.oscillation_hz > 0.0 {
        format!(
            "the operating point is unstable: it will oscillate near {}{through}",
            crate::units::format(pole.oscillation_hz, crate::units::Unit::Hertz)
        )
    } else {
        format!(
            "the operating point is unstable: it will latch (a real pole at +{}){through}",
            crate::units::format(pole.natural_hz, crate::units::Unit::Hertz)
        )
    }
}

#[cfg(test)]
#[path = "poles_tests.rs"]
mod tests;
