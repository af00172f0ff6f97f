//! en and in of every recognised stage ([`super::figures::stage_two_port`]):
//! by two systems per stage for short chains, and for long ones through one
//! factorization of the whole (linked) chain at the spot frequency.
//!
//! Long chains. The input cuts of every stage become zero-volt links of a
//! linked network ([`crate::analysis::figures_cut`]); each link's fresh end
//! carries the 1 pS whisker a cut end gets, cancelled by −1 pS at the node
//! while the link is closed, so the closed linked network is the connected
//! one. en: holding the stage input i at 0 V adds the current that cancels
//! its voltage, so a generator s reaches the output o as
//! `τ(o; s) − τ(o; i)·τ(i; s)/τ(i; i)` and the held input drives it by
//! `τ(o; i)/τ(i; i)` (τ read from the adjoint rows o and i). in: the
//! stage's links opened and their −1 pS removed, by the low-rank update of
//! [`crate::analysis::linear::Change`]. Where the update is singular or a
//! transfer is zero, that stage is solved as for a short chain.

use super::figures::stage_two_port;
use super::setup::{NoiseSetup, StageNoise};
use crate::analysis::figures_cut::{Linked, Path, BATCH, FAST_STAGES};
use crate::analysis::linear::{AdjointFactors, Change, Mode, Probe, System, C64};
use crate::analysis::AnalysisError;

/// A stage's (en V/√Hz, in A/√Hz), or why it has none.
pub type TwoPort = Result<(f64, f64), AnalysisError>;

/// The most output noise the held input may cancel, as a power ratio to
/// what is left (see `fast_one`).
const CANCELLATION: f64 = 1e6;

/// The whisker [`super::network::Network::cut`] puts on a cut end, S.
const WHISKER: f64 = 1e-12;

/// en (V/√Hz) and in (A/√Hz) of each stage of `setup` at `frequency`, in
/// stage order; the fast path when there are more than [`FAST_STAGES`].
pub fn stage_two_ports(
    setup: &NoiseSetup,
    frequency: f64,
) -> Vec<Result<(f64, f64), AnalysisError>> {
    stage_two_ports_with(setup, frequency, setup.stages.len() > FAST_STAGES)
}

/// As [`stage_two_ports`] with the path chosen (`fast`).
pub fn stage_two_ports_with(
    setup: &NoiseSetup,
    frequency: f64,
    fast: bool,
) -> Vec<Result<(f64, f64), AnalysisError>> {
    let path = if fast { Path::Rows } else { Path::Exact };
    stage_two_ports_by(setup, frequency, path)
}

/// As [`stage_two_ports`] by `path`: each stage exactly (`Path::Exact`), or
/// from the adjoint rows of one factorization of the linked chain (any
/// other path; the stage figures of [`crate::analysis::figures_cut`]'s
/// selected entries have no noise counterpart: the noise covariance from an
/// augmented system lost its digits on high-gain chains, see the developer
/// guide).
pub fn stage_two_ports_by(setup: &NoiseSetup, frequency: f64, path: Path) -> Vec<TwoPort> {
    let exact = |st: &StageNoise| stage_two_port(setup, st, frequency);
    if path == Path::Exact {
        return setup.stages.iter().map(exact).collect();
    }
    let sets: Vec<_> = setup
        .stages
        .iter()
        .map(|st| (st.input, st.input_cut.clone()))
        .collect();
    let linked = Linked::build(&setup.network.circuit, sets.iter(), false, Some(WHISKER));
    let system = System::new(&linked.circuit, Mode::Frequency, &[], None);
    let Ok(factors) = system.adjoint_factors(frequency) else {
        return setup.stages.iter().map(exact).collect();
    };
    let density: Vec<f64> = setup.sources.iter().map(|s| s.density(frequency)).collect();
    let mut out = Vec::with_capacity(setup.stages.len());
    for batch in setup.stages.chunks(BATCH) {
        // Every row the batch reads, solved together (a failure shows again
        // row by row in `fast_one`, which then leaves the stage to the exact path).
        let mut probes = Vec::new();
        for st in batch {
            probes.extend([Probe::Node(st.output), Probe::Node(st.input)]);
            for &p in &st.input_cut {
                if let Some(&(link, _)) = linked.links.get(&(p, st.input)) {
                    probes.push(Probe::Branch(link));
                }
            }
        }
        let _ = factors.prefetch(&probes);
        out.extend(batch.iter().map(|st| {
            fast_one(setup, st, &factors, &linked, &density).unwrap_or_else(|| exact(st))
        }));
        factors.forget();
    }
    out
}

/// The input cut's changes for `in`: each link opened, with its whisker's
/// −g at the input node removed.
fn input_changes(st: &StageNoise, linked: &Linked) -> Vec<Change> {
    let mut changes = Vec::new();
    let mut seen = Vec::new();
    for &p in &st.input_cut {
        if seen.contains(&p) {
            continue;
        }
        seen.push(p);
        if let Some(&(link, _)) = linked.links.get(&(p, st.input)) {
            changes.push(Change::Open(link));
        }
    }
    if !changes.is_empty() {
        changes.push(Change::Shunt(st.input, WHISKER * changes.len() as f64));
    }
    changes
}

fn fast_one(
    setup: &NoiseSetup,
    st: &StageNoise,
    f: &AdjointFactors,
    linked: &Linked,
    density: &[f64],
) -> Option<Result<(f64, f64), AnalysisError>> {
    let (i, o) = (st.input, st.output);
    if i == 0 {
        return None;
    }
    // en: the input held at 0 V.
    let x_o = f.row(Probe::Node(o)).ok()?;
    let x_i = f.row(Probe::Node(i)).ok()?;
    let t_ii = f.transfer(&x_i, i, 0);
    if t_ii.norm() == 0.0 {
        return None;
    }
    let t_oi = f.transfer(&x_o, i, 0);
    let ratio = t_oi / t_ii;
    let total: f64 = setup
        .sources
        .iter()
        .zip(density)
        .map(|(s, d)| {
            let t: C64 = f.transfer(&x_o, s.a, s.b) - ratio * f.transfer(&x_i, s.a, s.b);
            t.norm_sqr() * d
        })
        .sum();
    let unheld: f64 = setup
        .sources
        .iter()
        .zip(density)
        .map(|(s, d)| f.transfer(&x_o, s.a, s.b).norm_sqr() * d)
        .sum();
    // Noise from before the input reaches the output only through it, and
    // holding the input cancels it: where that part outweighs what is left
    // by more than CANCELLATION, the difference has lost too many digits
    // (a bypassed chain of 270 dB), and the stage is solved exactly.
    let kept = unheld <= CANCELLATION * total;
    if !kept {
        return None;
    }
    let en = total.sqrt() / ratio.norm();
    // in: the input cuts opened, each cut end with its whisker.
    let x = f
        .changed_row(Probe::Node(o), &input_changes(st, linked))
        .ok()?;
    let total: f64 = setup
        .sources
        .iter()
        .zip(density)
        .map(|(s, d)| f.transfer(&x, s.a, s.b).norm_sqr() * d)
        .sum();
    let in_ = total.sqrt() / f.transfer(&x, i, 0).norm();
    Some(Ok((en, in_)))
}
