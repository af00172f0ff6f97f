//! `biasline spread FILE`: worst-case corners, sensitivities and Monte Carlo.

use super::*;

pub(super) fn spread(
    file: &Path,
    runs: Option<usize>,
    seed: Option<u64>,
    threads: usize,
    json: bool,
    csv: bool,
    out: &mut dyn Write,
) -> Result<i32, Failure> {
    use biasline::spread;
    let doc = load(file)?;
    let mut opt = spread::Options::from_document(&doc);
    if let Some(r) = runs {
        biasline::document::limits::check_runs(r)
            .map_err(|m| Failure::cannot(format!("--runs: {m}")))?;
        opt.runs = r;
    }
    if let Some(s) = seed {
        opt.seed = s;
    }
    opt.threads = threads;
    let nl = netlist::connect(&doc);
    let assessment = biasline::analysis::assess::Assessment::of(&doc, &nl);
    if let Err(e) = &assessment.operating_point {
        return Err(Failure::cannot(format!(
            "{}: not solvable: {}",
            file.display(),
            e.to_string().trim_end()
        )));
    }
    let verdict = verdict_code(assessment.verdict());
    let board = spread::evaluate::Board::new(&doc);
    let rep = {
        let _watch = super::watch::watch(&opt.progress, true);
        spread::run(&doc, &board, &opt)
    }
    .map_err(|e| Failure::cannot(format!("{}: {e}", file.display())))?;
    let text = if json {
        serde_json::to_string_pretty(&rep).expect("spread report serialises") + "\n"
    } else if csv {
        spread::report::csv(&rep)
    } else {
        spread::report::text(&rep)
    };
    out.write_all(text.as_bytes()).map_err(io)?;
    let trouble = rep.failed_runs > 0
        || rep.left_active_fraction > 0.0
        || rep.yield_fraction.is_some_and(|y| y < 1.0)
        || rep.limits.iter().any(|l| l.worst_case_misses);
    Ok(verdict.max(if trouble { EXIT_FINDINGS } else { EXIT_CLEAN }))
}
