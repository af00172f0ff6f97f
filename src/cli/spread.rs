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
    use crate::spread;
    let doc = load(file)?;
    let mut opt = spread::Options::from_document(&doc);
    if let Some(r) = runs {
        opt.runs = r;
    }
    if let Some(s) = seed {
        opt.seed = s;
    }
    opt.threads = threads;
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
        || rep.yield_fraction.is_some_and(|y| y < 1.0);
    Ok(if trouble { EXIT_FINDINGS } else { EXIT_CLEAN })
}
