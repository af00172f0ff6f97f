//! `biasline transient FILE --levels N [--thd 1%] [--json]`: the push-pull
//! output's level sweep — THD, output power, efficiency and each output
//! device's dissipation at N levels, the largest clean output and the worst
//! dissipation against the rating.

use super::{io, Failure, EXIT_CANNOT, EXIT_CLEAN, EXIT_FINDINGS};
use biasline::document::Document;
use biasline::netlist::Netlist;
use biasline::results::push_pull::{level_json, level_report, LevelReport};
use biasline::units::{format as f, Unit};
use std::io::Write;
use std::path::Path;

/// The most levels a sweep runs.
pub const MAX_LEVELS: usize = 100;

pub(super) fn run(
    doc: &Document,
    nl: &Netlist,
    n: usize,
    thd: f64,
    json: bool,
    file: &Path,
    out: &mut dyn Write,
) -> Result<i32, Failure> {
    if n == 0 || n > MAX_LEVELS {
        return Err(Failure {
            message: format!("--levels {n}: give between 1 and {MAX_LEVELS} levels"),
            code: EXIT_CANNOT,
        });
    }
    let r = level_report(doc, nl, n, thd).map_err(|m| Failure {
        message: format!("{}: {m}", file.display()),
        code: EXIT_CANNOT,
    })?;
    if json {
        writeln!(
            out,
            "{}",
            serde_json::to_string_pretty(&level_json(&r)).expect("json")
        )
        .map_err(io)?;
    } else {
        write_text(&r, out).map_err(io)?;
    }
    Ok(if r.warnings.is_empty() {
        EXIT_CLEAN
    } else {
        EXIT_FINDINGS
    })
}

fn write_text(r: &LevelReport, out: &mut dyn Write) -> std::io::Result<()> {
    let s = &r.sweep;
    writeln!(
        out,
        "Push-pull output {} / {} into {}: {} levels at steady state",
        s.devices[0],
        s.devices[1],
        s.load,
        s.levels.len()
    )?;
    writeln!(
        out,
        "  {:>10} {:>10} {:>9} {:>10} {:>10} {:>7} {:>10} {:>10}",
        "source",
        "output pk",
        "THD",
        "P load",
        "P rails",
        "η",
        format!("PD {}", s.devices[0]),
        format!("PD {}", s.devices[1])
    )?;
    for l in &s.levels {
        writeln!(
            out,
            "  {:>10} {:>10} {:>8.3}% {:>10} {:>10} {:>7} {:>10} {:>10}{}",
            f(l.source_amplitude, Unit::Volt),
            f(l.output_peak, Unit::Volt),
            l.thd * 100.0,
            f(l.load_power, Unit::Watt),
            f(l.supply_power, Unit::Watt),
            l.efficiency
                .map_or("—".into(), |e| format!("{:.1}%", e * 100.0)),
            f(l.dissipation[0], Unit::Watt),
            f(l.dissipation[1], Unit::Watt),
            if l.settled { "" } else { "  (not settled)" }
        )?;
    }
    match r.largest_clean {
        Some(i) => {
            let l = &s.levels[i];
            writeln!(
                out,
                "Largest clean output (THD ≤ {:.2} %) among the levels: {} peak, {} into {}, efficiency {}",
                r.thd_limit * 100.0,
                f(l.output_peak, Unit::Volt),
                f(l.load_power, Unit::Watt),
                s.load,
                l.efficiency
                    .map_or("—".into(), |e| format!("{:.1} %", e * 100.0))
            )?;
        }
        None => writeln!(
            out,
            "No level stays under THD {:.2} %: crossover or clipping distorts every level",
            r.thd_limit * 100.0
        )?,
    }
    writeln!(
        out,
        "(`biasline transient FILE --clip` finds the exact clipping level and what limits it; `analyze` names the limit)"
    )?;
    for d in &r.devices_worst {
        writeln!(
            out,
            "{}: worst dissipation {} at {} output peak{}",
            d.designator,
            f(d.worst_dissipation, Unit::Watt),
            f(d.at_output_peak, Unit::Volt),
            match d.rating {
                Some(m) => format!(" (rating {})", f(m, Unit::Watt)),
                None => " (no max_power given)".into(),
            }
        )?;
    }
    writeln!(out, "\nWarnings: {}", r.warnings.len())?;
    for w in &r.warnings {
        writeln!(out, "  warning: {w}")?;
    }
    writeln!(out, "Sweep time {:.3} s", r.seconds)?;
    Ok(())
}
