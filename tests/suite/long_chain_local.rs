//! Issue 18 item 11: on long chains each stage's cut impedances, en and in
//! come from entries of one selected inverse among the stage's own unknowns
//! (Takahashi's recurrence; Erisman and Tinney, CACM 18, 1975), instead of
//! rows of the inverse. Here the three paths — a system per figure, rows of
//! one factorization, selected entries — are forced on chains of 9, 40 and
//! 170 stages (and on a bypassed chain of 10, whose held inputs cancel most
//! of the output noise) and must agree, and from 12 stages (sparse) the
//! selected entries must answer every figure of the plain chains (else the
//! test would only see the rows).

use biasline::analysis::figures_cut::{chain_impedances_by, Path, StageImpedances};
use biasline::analysis::noise::{self, stage_noise};
use biasline::analysis::{circuit, dc, small_signal};
use biasline::document::Document;
use biasline::generate::amplifier_chain;
use biasline::netlist;

fn close(a: Option<f64>, b: Option<f64>, tolerance: f64, what: &str) -> f64 {
    match (a, b) {
        (Some(a), Some(b)) => {
            let d = (a - b).abs() / a.abs().max(b.abs()).max(f64::MIN_POSITIVE);
            assert!(d <= tolerance, "{what}: {a} vs {b} ({d:e})");
            d
        }
        (a, b) => {
            assert_eq!(a.is_some(), b.is_some(), "{what}: {a:?} vs {b:?}");
            0.0
        }
    }
}

fn chains() -> Vec<(String, Document)> {
    let mut out = Vec::new();
    for n in [9usize, 40, 170] {
        out.push((format!("chain of {n}"), amplifier_chain(n, None)));
    }
    // Bypassed: about 40 dB a stage. At 40 stages even the exact systems are
    // singular to working precision, and from 12 stages (480 dB) the one
    // factorization's rows already miss the exact en of the first stage.
    out.push((
        "bypassed chain of 10".into(),
        amplifier_chain(10, Some(1e-4)),
    ));
    out
}

#[test]
fn selected_cut_impedances_equal_the_exact_ones() {
    // invariant: opening zero-volt links is a Sherman–Morrison–Woodbury update
    // (Woodbury 1950; Hager, SIAM Review 31, 1989) and needs the inverse only
    // among the cut node and its links; the selected entries are those of the
    // inverse, so Zin, Zout, source and load equal a system per cut to 1e-9.
    // (`generate::transistor_chain` alone has no signal source, so no stages.)
    let mut docs = chains();
    // 480 and 640 dB: the floor on the selected entries leaves the stages to the
    // rows (checked against the exact systems all the same; some of their cut
    // figures are singular to working precision, on every path alike).
    for n in [12usize, 16] {
        docs.push((
            format!("bypassed chain of {n}"),
            amplifier_chain(n, Some(1e-4)),
        ));
    }
    for (name, doc) in docs {
        let nl = netlist::connect(&doc);
        let op = dc::solve(&doc, &nl).expect("solves");
        let c = circuit::build_unchecked(&doc, &nl).expect("builds");
        let a = small_signal::analyse(&doc, &nl, &c, &op);
        let (exact, _) = chain_impedances_by(&a.small_signal, &a.chain, Path::Exact);
        let (rows, none) = chain_impedances_by(&a.small_signal, &a.chain, Path::Rows);
        let (local, hits) = chain_impedances_by(&a.small_signal, &a.chain, Path::Local);
        assert_eq!(none, 0, "{name}: the row path reads no selected entry");
        let pick = |z: &StageImpedances| [z.zin, z.zout, z.source, z.load];
        let mut figures = 0;
        let mut worst = 0.0f64;
        for (k, ((e, r), l)) in exact.iter().zip(&rows).zip(&local).enumerate() {
            for (j, ((x, y), z)) in pick(e).into_iter().zip(pick(r)).zip(pick(l)).enumerate() {
                let what = format!("{name}, stage {k}, figure {j}");
                worst = worst.max(close(x, z, 1e-9, &what));
                close(y, z, 1e-9, &what);
                figures += usize::from(z.is_some());
            }
        }
        eprintln!("{name}: {figures} figures, {hits} from selected entries, worst {worst:e}");
        if !a.chain.stages.is_empty() && !name.starts_with("bypassed chain of 1") {
            assert!(
                figures >= a.chain.stages.len(),
                "{name}: {figures} figures of {} stages",
                a.chain.stages.len()
            );
        }
        // A chain of 9 stages is solved densely (no sparse factors to select from).
        if a.chain.stages.len() >= 12 && !name.starts_with("bypassed") {
            // Every cut, the two-link ones too (their links joined in the pattern).
            assert_eq!(
                hits, figures,
                "{name}: {hits} of {figures} from selected entries"
            );
        }
    }
}

#[test]
fn selected_en_and_in_equal_the_rows_where_the_held_input_cancels_much() {
    // invariant: the quadratic forms in K and the per-generator sums of the rows are
    // two orderings of one sum; on bypassed chains of 12 and 16 stages (480 and 640
    // dB) the held input cancels most of each output's noise, so the local path
    // must either agree with the rows to 1e-9 or leave the stage to them (its
    // LOCAL_CANCELLATION guard). Not against the exact systems: at this gain the one
    // factorization's rows already differ from them for the first stage (see the
    // exact test, which stops at 10 bypassed stages).
    for n in [12usize, 16] {
        let doc = amplifier_chain(n, Some(1e-4));
        let nl = netlist::connect(&doc);
        let setup = noise::setup(&doc, &nl, &noise::BuildOptions::default()).expect("setup");
        for f in [20.0, 1e3, 1e5] {
            let (rows, _) = stage_noise::stage_two_ports_by(&setup, f, Path::Rows);
            let (local, hits) = stage_noise::stage_two_ports_by(&setup, f, Path::Local);
            let mut worst = 0.0f64;
            for (k, (r, l)) in rows.iter().zip(&local).enumerate() {
                let (Ok(r), Ok(l)) = (r, l) else {
                    assert_eq!(r.is_ok(), l.is_ok(), "{n} stages, {k}: {r:?} {l:?}");
                    continue;
                };
                for (y, z) in [(r.0, l.0), (r.1, l.1)] {
                    let what = format!("bypassed chain of {n}, stage {k} at {f} Hz");
                    worst = worst.max(close(Some(y), Some(z), 1e-9, &what));
                }
            }
            eprintln!("bypassed chain of {n} at {f} Hz: {hits} local, worst {worst:e}");
        }
    }
}

#[test]
fn selected_en_and_in_equal_the_exact_ones() {
    // invariant: en² and in² are sums over the generators of |row combination|²,
    // i.e. quadratic forms in the node-noise covariance K = A⁻¹NA⁻ᴴ, which the
    // augmented matrix [[N, A], [Aᴴ, 0]] has as a block of its inverse; so the
    // selected entries give the figures of two systems per stage to 1e-9.
    for (name, doc) in chains() {
        let nl = netlist::connect(&doc);
        let setup = noise::setup(&doc, &nl, &noise::BuildOptions::default()).expect("setup");
        let stages = setup.stages.len();
        assert!(stages >= 9, "{name}: {stages} stages");
        for f in [20.0, 1e3, 1e5] {
            let (exact, _) = stage_noise::stage_two_ports_by(&setup, f, Path::Exact);
            let (rows, none) = stage_noise::stage_two_ports_by(&setup, f, Path::Rows);
            let (local, hits) = stage_noise::stage_two_ports_by(&setup, f, Path::Local);
            assert_eq!(none, 0);
            let mut worst = 0.0f64;
            for (k, ((e, r), l)) in exact.iter().zip(&rows).zip(&local).enumerate() {
                let (Ok(e), Ok(r), Ok(l)) = (e, r, l) else {
                    assert!(
                        e.is_ok() == l.is_ok() && r.is_ok() == l.is_ok(),
                        "{name}, {k}: {e:?} {r:?} {l:?}"
                    );
                    continue;
                };
                for (j, (x, (y, z))) in [(e.0, (r.0, l.0)), (e.1, (r.1, l.1))]
                    .into_iter()
                    .enumerate()
                {
                    let what = format!("{name}, stage {k}, figure {j} at {f} Hz");
                    close(Some(x), Some(y), 1e-9, &format!("{what}, rows"));
                    worst = worst.max(close(Some(x), Some(z), 1e-9, &what));
                    close(Some(y), Some(z), 1e-9, &what);
                }
            }
            eprintln!(
                "{name} at {f} Hz: {hits} of {stages} from selected entries, worst {worst:e}"
            );
            if stages >= 40 && !name.starts_with("bypassed") {
                assert_eq!(
                    hits, stages,
                    "{name} at {f} Hz: every stage from selected entries"
                );
            }
        }
    }
}
