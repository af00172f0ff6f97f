//! Issue 18 item 11: `analyze` on long chains takes a second path for the
//! stage cut impedances, each stage's en and in, and the better-current
//! scan (one factorization of the whole chain and low-rank updates instead
//! of a factorization per cut). Chains of at most `FAST_STAGES` stages
//! (every demo and fixture) keep the per-cut systems; here both paths are
//! forced on chains of several sizes and on the demos, and must agree.

use biasline::analysis::figures_cut::{chain_impedances, StageImpedances, FAST_STAGES};
use biasline::analysis::noise::{self, figures, scan::CurrentScan, spectrum, stage_noise};
use biasline::analysis::{circuit, dc, small_signal};
use biasline::document::{self, Document};
use biasline::generate::amplifier_chain;
use biasline::netlist;

fn close(a: Option<f64>, b: Option<f64>, what: &str) {
    match (a, b) {
        (Some(a), Some(b)) => assert!(
            (a - b).abs() <= 1e-9 * a.abs().max(b.abs()),
            "{what}: exact {a} vs one factorization {b}"
        ),
        (a, b) => assert_eq!(a.is_some(), b.is_some(), "{what}: {a:?} vs {b:?}"),
    }
}

fn demos() -> Vec<(String, Document)> {
    let mut out: Vec<(String, Document)> = [3usize, 12, 40]
        .iter()
        .map(|&n| (format!("chain of {n}"), amplifier_chain(n, None)))
        .collect();
    out.push((
        "bypassed chain of 10".into(),
        amplifier_chain(10, Some(1e-4)),
    ));
    for f in [
        "projects/two-stage-preamp.json",
        "projects/piezo-jfet-preamp.json",
        "projects/line-driver.json",
    ] {
        let doc = document::load_file(std::path::Path::new(f)).expect("demo loads");
        out.push((f.to_string(), doc));
    }
    out
}

#[test]
fn the_cut_impedances_agree_on_both_paths() {
    // invariant: opening zero-volt links by the Sherman–Morrison–Woodbury update
    // (Woodbury 1950; Hager, SIAM Review 31, 1989) is exact, so the one-factorization
    // Zin, Zout, source and load resistances equal those of a system per cut to 1e-9.
    for (name, doc) in demos() {
        let nl = netlist::connect(&doc);
        let op = dc::solve(&doc, &nl).expect("solves");
        let c = circuit::build_unchecked(&doc, &nl).expect("builds");
        let a = small_signal::analyse(&doc, &nl, &c, &op);
        assert!(!a.chain.stages.is_empty(), "{name}: stages recognised");
        if name.starts_with("projects/") {
            // The demos keep the per-cut systems (their figures bit for bit).
            assert!(a.chain.stages.len() <= FAST_STAGES, "{name}");
        }
        let exact = chain_impedances(&a.small_signal, &a.chain, false);
        let fast = chain_impedances(&a.small_signal, &a.chain, true);
        assert_eq!(exact.len(), fast.len());
        let mut compared = 0;
        for (k, (e, f)) in exact.iter().zip(&fast).enumerate() {
            let pick = |z: &StageImpedances| [z.zin, z.zout, z.source, z.load];
            for (j, (x, y)) in pick(e).into_iter().zip(pick(f)).enumerate() {
                close(x, y, &format!("{name}, stage {k}, figure {j}"));
                compared += usize::from(x.is_some());
            }
        }
        assert!(
            compared >= exact.len(),
            "{name}: {compared} figures compared"
        );
    }
}

#[test]
fn each_stage_en_and_in_agree_on_both_paths() {
    // invariant: holding the input at 0 V is a rank-one change of the connected
    // system and opening the input cuts a low-rank one; both are exact, so en and in
    // equal those of the two systems per stage to 1e-9.
    for (name, doc) in demos() {
        let nl = netlist::connect(&doc);
        let setup = noise::setup(&doc, &nl, &noise::BuildOptions::default()).expect("setup");
        assert!(!setup.stages.is_empty(), "{name}: stages");
        for f in [20.0, 1e3, 1e5] {
            let exact = stage_noise::stage_two_ports_with(&setup, f, false);
            let fast = stage_noise::stage_two_ports_with(&setup, f, true);
            for (k, (e, g)) in exact.iter().zip(&fast).enumerate() {
                let (Ok(e), Ok(g)) = (e, g) else {
                    assert_eq!(e.is_ok(), g.is_ok(), "{name}, stage {k}");
                    continue;
                };
                close(
                    Some(e.0),
                    Some(g.0),
                    &format!("{name}, stage {k}, en at {f} Hz"),
                );
                close(
                    Some(e.1),
                    Some(g.1),
                    &format!("{name}, stage {k}, in at {f} Hz"),
                );
            }
        }
    }
}

#[test]
fn the_summed_current_scan_matches_re_solving_a_long_chain() {
    // invariant: the scan's quadratic form over the untouched generators is an exact
    // rearrangement of their sum, so the band noise figure at a trial current equals a
    // fresh solve of the scaled circuit to 1e-9 (a chain of more transistors than are
    // scanned, where `analyze` takes this path).
    let doc = amplifier_chain(6, None);
    let nl = netlist::connect(&doc);
    let setup = noise::setup(&doc, &nl, &noise::BuildOptions::default()).expect("setup");
    assert!(setup.transistors.len() > figures::MAX_SCANNED_TRANSISTORS);
    let grid = spectrum::log_grid(20.0, 20e3, 10);
    for t in [0, 1, setup.transistors.len() - 1] {
        let scan = CurrentScan::new(&setup, t, &grid).expect("scan");
        for lk in [-2.0, -0.4, 0.0, 0.9, 2.0] {
            let direct =
                figures::band_figure_db(&setup.with_scaled_current(t, 10f64.powf(lk)), &grid)
                    .expect("direct");
            let fast = scan.figure_db(lk);
            assert!(
                (fast - direct).abs() <= 1e-9 * direct.abs().max(1.0),
                "transistor {t}, log k {lk}: {fast} vs {direct}"
            );
        }
    }
}

/// A small deterministic generator (64-bit LCG), uniform in [0, 1).
struct Lcg(u64);
impl Lcg {
    fn unit(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// A generated chain with every resistor scaled by ×0.5…×2 and every
/// capacitor by ×0.3…×3 (some transistors leave the active region; the
/// stages found are whatever the reading finds).
fn mutant(seed: u64) -> (String, Document) {
    let mut rng = Lcg(seed);
    let n = 9 + (rng.unit() * 20.0) as usize;
    let bypass = (rng.unit() < 0.5).then_some(1e-5 + rng.unit() * 1e-4);
    let mut doc = amplifier_chain(n, bypass);
    for p in &mut doc.parts {
        for (key, span) in [("resistance", 0.3), ("capacitance", 0.5)] {
            if let Some(v) = p.parameters.get_mut(key) {
                *v *= 10f64.powf((rng.unit() * 2.0 - 1.0) * span);
            }
        }
    }
    (
        format!("mutant {seed} ({n} stages, bypass {bypass:?})"),
        doc,
    )
}

/// How closely the one-factorization figures of the random chains must
/// match the exact ones: the noise path's selected entries are used only
/// where they match A's own selected inverse to 3e-9 (`stage_noise`), and
/// en and in are quadratic forms in them.
const TOLERANCE: f64 = 1e-8;

#[test]
fn random_long_chains_agree_on_both_paths() {
    // invariant: both paths compute the same figures (exact updates of one
    // factorization), here on chains of 9–28 stages with random part values,
    // so a path that only agrees on the generator's own values is caught.
    // Where the chain's gain passes 1e12 (240 dB: bypassed chains of more
    // than six stages) its systems hold numbers beyond double precision's
    // reach, and the two paths may differ on which figures they can compute
    // (a pivot lost to rounding in one elimination order, not the other);
    // the figures both give must still agree.
    let mut stages = 0;
    for seed in 1..=12u64 {
        let (name, doc) = mutant(seed);
        let nl = netlist::connect(&doc);
        let Ok(op) = dc::solve(&doc, &nl) else {
            continue;
        };
        let c = circuit::build_unchecked(&doc, &nl).expect("builds");
        let a = small_signal::analyse(&doc, &nl, &c, &op);
        let loud = a.midband.chain.voltage_gain.is_none_or(|g| g.abs() > 1e12);
        let agree = |x: Option<f64>, y: Option<f64>, what: &str| match (x, y) {
            (Some(a), Some(b)) => {
                let r = (a - b).abs() / a.abs().max(b.abs());
                assert!(
                    r <= TOLERANCE,
                    "{what}: exact {a} vs one factorization {b} ({r:e})"
                );
            }
            _ => assert!(x.is_some() == y.is_some() || loud, "{what}: {x:?} vs {y:?}"),
        };
        let exact = chain_impedances(&a.small_signal, &a.chain, false);
        let fast = chain_impedances(&a.small_signal, &a.chain, true);
        assert_eq!(exact.len(), fast.len(), "{name}");
        stages += exact.len();
        for (k, (e, f)) in exact.iter().zip(&fast).enumerate() {
            let pick = |z: &StageImpedances| [z.zin, z.zout, z.source, z.load];
            for (j, (x, y)) in pick(e).into_iter().zip(pick(f)).enumerate() {
                agree(x, y, &format!("{name}, stage {k}, figure {j}"));
            }
        }
        let setup = noise::setup(&doc, &nl, &noise::BuildOptions::default()).expect("setup");
        for f in [20.0, 1e3, 1e5] {
            let exact = stage_noise::stage_two_ports_with(&setup, f, false);
            let fast = stage_noise::stage_two_ports_with(&setup, f, true);
            for (k, (e, g)) in exact.iter().zip(&fast).enumerate() {
                let (e, g) = (e.as_ref().ok(), g.as_ref().ok());
                let what = format!("{name}, stage {k} at {f} Hz");
                agree(e.map(|e| e.0), g.map(|g| g.0), &format!("{what}, en"));
                agree(e.map(|e| e.1), g.map(|g| g.1), &format!("{what}, in"));
            }
        }
    }
    assert!(stages >= 40, "only {stages} stages compared");
}
