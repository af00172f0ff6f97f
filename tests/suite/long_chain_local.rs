//! Issue 18 item 11: on long chains each stage's cut impedances come from
//! entries of one selected inverse among the stage's own unknowns
//! (Takahashi's recurrence; Erisman and Tinney, CACM 18, 1975), instead of
//! rows of the inverse. Here the three paths — a system per figure, rows of
//! one factorization, selected entries — are forced on chains of 9, 40 and
//! 170 stages (and on bypassed chains) and must agree, and from 12 stages
//! (sparse) the selected entries must answer every figure of the plain
//! chains (else the test would only see the rows).

use biasline::analysis::figures_cut::{chain_impedances_by, Path, StageImpedances};
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
