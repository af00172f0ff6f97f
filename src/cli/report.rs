//! `biasline report FILE -o OUT.html`: the design report.

use super::*;

/// UTC date and time of `secs` since 1970-01-01, `YYYY-MM-DD hh:mm UTC`
/// (days to civil date by H. Hinnant's algorithm).
pub fn utc_text(secs: u64) -> String {
    let days = (secs / 86_400) as i64;
    let rem = secs % 86_400;
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!(
        "{y:04}-{m:02}-{d:02} {:02}:{:02} UTC",
        rem / 3600,
        (rem % 3600) / 60
    )
}

/// Write `bytes` to `path` by the program's one atomic writer (a temporary
/// file unique to this write beside it, then a rename).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), Failure> {
    biasline::document::write_atomic(path, bytes)
        .map_err(|e| Failure::cannot(format!("cannot write {}: {e}", path.display())))
}

pub(super) fn run(command: &Command, out: &mut dyn Write) -> Result<i32, Failure> {
    use biasline::report::{self, SpreadChoice};
    use biasline::scene::{LayerSet, ModelKind};
    let Command::Report {
        file,
        output,
        layers,
        model,
        spread,
        no_spread,
        runs,
        seed,
        threads,
        timestamp,
        fresh_layout,
    } = command
    else {
        return Err(Failure::cannot(
            "internal: report called for another command",
        ));
    };
    let is_html = output
        .extension()
        .and_then(|e| e.to_str())
        .is_some_and(|e| e.eq_ignore_ascii_case("html") || e.eq_ignore_ascii_case("htm"));
    if !is_html {
        return Err(Failure::cannot(format!(
            "{}: the report is an HTML file; name it OUT.html (print it to PDF from a browser)",
            output.display()
        )));
    }
    // Refused before any work, so exit 2 writes nothing (the spread section
    // used to say so only inside a written page, exit 0).
    if let Some(r) = runs {
        biasline::document::limits::check_runs(*r)
            .map_err(|m| Failure::cannot(format!("--runs: {m}; nothing written")))?;
    }
    let bytes = std::fs::read(file)
        .map_err(|e| Failure::cannot(format!("cannot read {}: {e}", file.display())))?;
    let doc = load(file)?;
    let layers = LayerSet::parse(layers).map_err(Failure::cannot)?;
    let model = ModelKind::from_word(model)
        .ok_or_else(|| Failure::cannot(format!("--model {model}: use t, h or hybrid-pi")))?;
    let opts = report::Options {
        layers,
        model,
        spread: if *spread {
            SpreadChoice::Always
        } else if *no_spread {
            SpreadChoice::Never
        } else {
            SpreadChoice::WhenSet
        },
        runs: *runs,
        seed: *seed,
        threads: *threads,
        use_stored_layout: !fresh_layout,
        timestamp: timestamp.then(|| {
            let secs = std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map_or(0, |d| d.as_secs());
            utc_text(secs)
        }),
    };
    let rep = report::build(&doc, file, &bytes, &opts)
        .map_err(|e| Failure::cannot(format!("{}: {e}", file.display())))?;
    write_atomic(output, rep.html.as_bytes())?;
    writeln!(
        out,
        "{}: wrote {} ({} kB; {})",
        file.display(),
        output.display(),
        rep.html.len().div_ceil(1024),
        if !rep.solved {
            "not solvable: the reason is in the report".to_string()
        } else if rep.warnings == 0 {
            "no warnings".to_string()
        } else {
            format!("{} warning(s)", rep.warnings)
        }
    )
    .map_err(io)?;
    // The one rule of the writing commands: exit 2 writes nothing, so a
    // report that was written ends with at most 1; what it could not show
    // is said on stderr too, not only inside the page.
    if let Some(why) = &rep.not_solvable {
        eprintln!("biasline: {}: not solvable: {why}", file.display());
    }
    if let Some(why) = &rep.spread_error {
        eprintln!("biasline: {}: no spread section: {why}", file.display());
    }
    Ok(report_code(&rep))
}

/// Exit code of a written report: 1 when the circuit is not solvable, a
/// spread run asked for failed, or there are warnings; else 0.
fn report_code(rep: &biasline::report::Report) -> i32 {
    if !rep.solved || rep.spread_error.is_some() || rep.warnings > 0 {
        EXIT_FINDINGS
    } else {
        EXIT_CLEAN
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn utc_text_of_known_instants() {
        // source: POSIX time: 0 is 1970-01-01 00:00 UTC; 951_782_400 is 2000-02-29 00:00 UTC
        // (a leap day of a year divisible by 400).
        assert_eq!(utc_text(0), "1970-01-01 00:00 UTC");
        assert_eq!(utc_text(951_782_400), "2000-02-29 00:00 UTC");
        assert_eq!(utc_text(951_782_400 + 86_399), "2000-02-29 23:59 UTC");
    }
}
