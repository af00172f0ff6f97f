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
use crate::analysis::linear::{
    AdjointFactors, Change, Covariance, LocalInverse, Mode, Probe, System, C64,
};
use crate::analysis::AnalysisError;

/// A stage's (en V/√Hz, in A/√Hz), or why it has none.
pub type TwoPort = Result<(f64, f64), AnalysisError>;

/// The most output noise the held input may cancel, as a power ratio to
/// what is left (see `fast_one`).
const CANCELLATION: f64 = 1e6;

/// The most the output's own noise may exceed the held-input sum of the
/// quadratic form (whose terms cancel, unlike the per-generator sum of the
/// rows) before the stage is left to the rows.
const LOCAL_CANCELLATION: f64 = 1e3;

/// How closely the augmented system's A⁻¹ entries must match A's own
/// selected inverse for a stage's en and in to come from it.
const LOCAL_AGREEMENT: f64 = 3e-9;

/// The smallest noise power, as a share of the largest selected entry
/// (in K's units), that the selected entries give to 1e-10 or so.
const LOCAL_FLOOR: f64 = 1e-5;

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
    let path = if fast { Path::Local } else { Path::Exact };
    stage_two_ports_by(setup, frequency, path).0
}

/// As [`stage_two_ports`] by `path`, with the number of stages answered
/// from the augmented selected inverse (for the tests of the paths).
pub fn stage_two_ports_by(setup: &NoiseSetup, frequency: f64, path: Path) -> (Vec<TwoPort>, usize) {
    let exact = |st: &StageNoise| stage_two_port(setup, st, frequency);
    if path == Path::Exact {
        return (setup.stages.iter().map(exact).collect(), 0);
    }
    let sets: Vec<_> = setup
        .stages
        .iter()
        .map(|st| (st.input, st.input_cut.clone()))
        .collect();
    let linked = Linked::build(&setup.network.circuit, sets.iter(), false, Some(WHISKER));
    let system = System::new(&linked.circuit, Mode::Frequency, &[], None);
    let Ok(factors) = system.adjoint_factors(frequency) else {
        return (setup.stages.iter().map(exact).collect(), 0);
    };
    let density: Vec<f64> = setup.sources.iter().map(|s| s.density(frequency)).collect();
    // The entries each stage needs, among its output, input and input links.
    let probes_of = |st: &StageNoise| -> Vec<Probe> {
        let mut p = vec![Probe::Node(st.output), Probe::Node(st.input)];
        for &part in &st.input_cut {
            if let Some(&(link, _)) = linked.links.get(&(part, st.input)) {
                p.push(Probe::Branch(link));
            }
        }
        p
    };
    let generators: Vec<_> = setup
        .sources
        .iter()
        .zip(&density)
        .map(|(s, &d)| (s.a, s.b, d))
        .collect();
    let groups: Vec<_> = setup.stages.iter().map(probes_of).collect();
    let covariance = (path == Path::Local)
        .then(|| factors.covariance(&generators, &groups))
        .flatten();
    // The entries of A⁻¹ by the selected inverse of A itself: the check of
    // the augmented system's digits.
    let plain = covariance.as_ref().and_then(|_| factors.local_inverse());
    let mut hits = 0;
    let mut out = Vec::with_capacity(setup.stages.len());
    for batch in setup.stages.chunks(BATCH) {
        if let (Some(cov), Some(plain)) = (&covariance, &plain) {
            out.extend(batch.iter().map(|st| {
                let local = local_one(st, &factors, cov, plain, &linked);
                hits += usize::from(local.is_some());
                local
                    .or_else(|| fast_one(setup, st, &factors, &linked, &density))
                    .unwrap_or_else(|| exact(st))
            }));
            factors.forget();
            continue;
        }
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
    (out, hits)
}

/// The branch unknowns of the stage's input links.
fn input_links(st: &StageNoise, linked: &Linked) -> Vec<Probe> {
    st.input_cut
        .iter()
        .filter_map(|&p| linked.links.get(&(p, st.input)))
        .map(|&(link, _)| Probe::Branch(link))
        .collect()
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

/// As [`fast_one`] from the entries of A⁻¹ and of the noise covariance K
/// among the stage's own unknowns ([`Covariance`]): the same sums, each a
/// quadratic form in K (None: an entry off the pattern, or a guard trips).
fn local_one(
    st: &StageNoise,
    f: &AdjointFactors,
    cov: &Covariance,
    plain: &LocalInverse,
    linked: &Linked,
) -> Option<Result<(f64, f64), AnalysisError>> {
    let (i, o) = (st.input, st.output);
    if i == 0 {
        return None;
    }
    let (pi, po) = (Probe::Node(i), Probe::Node(o));
    // The augmented system's digits fall with the chain's gain, and the
    // figures below cannot show it: its A⁻¹ entries among the stage's own
    // unknowns that A's own selected inverse holds (at least the output's
    // and the input's own) must equal those to LOCAL_AGREEMENT, else the
    // rows decide.
    let mut own = vec![po, pi];
    own.extend(input_links(st, linked));
    let mut checked = 0;
    for &a in &own {
        for &b in &own {
            // (A pair off A's pattern has no entry there: unchecked.)
            let Some(y) = f.entry(plain, a, b) else {
                continue;
            };
            let x = f.inverse_entry(cov, a, b)?;
            checked += 1;
            if (x - y).norm() > LOCAL_AGREEMENT * x.norm().max(y.norm()) {
                return None;
            }
        }
    }
    if checked < 2 {
        return None;
    }
    let t_ii = f.inverse_entry(cov, pi, pi)?;
    if t_ii.norm() == 0.0 {
        return None;
    }
    let ratio = f.inverse_entry(cov, po, pi)? / t_ii;
    let one = C64::new(1.0, 0.0);
    let total = f.combined_power(cov, &vec![(po, one), (pi, -ratio)])?;
    let unheld = f.combined_power(cov, &vec![(po, one)])?;
    // As in `fast_one`; and a sum of quadratic-form terms that cancel to
    // less than LOCAL_CANCELLATION of the output's own noise, or is not
    // positive, has lost too many digits: the rows decide.
    // The selected entries carry errors of about the rounding unit times
    // the largest of them: a figure far below that (a chain of very high
    // gain, whose later nodes dwarf the earlier ones) is left to the rows.
    let floor = LOCAL_FLOOR * f.covariance_scale(cov);
    if !(total > floor && unheld <= LOCAL_CANCELLATION * total) {
        return None;
    }
    let en = total.sqrt() / ratio.norm();
    let c = f
        .changed_combination(cov, po, &input_changes(st, linked))?
        .ok()?;
    let total = f.combined_power(cov, &c)?;
    let gain = f.combined_entry(cov, &c, pi)?.norm();
    if !(total > floor && gain > 0.0) {
        return None;
    }
    Some(Ok((en, total.sqrt() / gain)))
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
