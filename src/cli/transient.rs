//! `biasline transient FILE [--for 5ms] [--json|--csv] [--net NET]…
//! [--current PART.PIN]… [--clip [--thd 1%]]`: waveforms in time, and for a
//! sine input the distortion at steady state or the clipping level.
//!
//! Without `--for` a sine input runs to steady state and the report gives
//! THD, harmonics 2–10 and the DC shift at the output and at every stage's
//! output; with `--for` the run covers that time from t = 0 and reports the
//! waveforms. `--clip` searches the input amplitude where THD reaches
//! `--thd` (1 %).

use super::{io, load, Failure, EXIT_CANNOT, EXIT_CLEAN, EXIT_FINDINGS};
use biasline::analysis::circuit::{self, Circuit};
use biasline::analysis::transient;
use biasline::analysis::transient::clip::{self, Clip, DEFAULT_THD_LIMIT};
use biasline::analysis::transient::steady::{self, Distortion, NetDistortion, SteadyOptions};
use biasline::document::Document;
use biasline::netlist::{self, Netlist};
use biasline::units::{self, Unit};
use std::io::Write;
use std::path::Path;

/// The longest run accepted, in periods of the signal.
pub const MAX_RUN_PERIODS: f64 = 100_000.0;

/// What the command was asked for.
#[derive(Debug, Clone, Default)]
pub struct Request {
    pub run_for: Option<String>,
    pub json: bool,
    pub csv: bool,
    pub nets: Vec<String>,
    pub currents: Vec<String>,
    pub clip: bool,
    pub thd: Option<String>,
    pub periods: Option<usize>,
    pub amplitude: Option<String>,
    /// Push-pull level sweep at this many levels.
    pub levels: Option<usize>,
}

fn cannot(m: impl Into<String>) -> Failure {
    Failure {
        message: m.into(),
        code: EXIT_CANNOT,
    }
}

/// Parse a THD limit: `1%`, `0.5 %` or a fraction `0.01`.
pub fn parse_thd(text: &str) -> Result<f64, String> {
    let t = text.trim();
    let v = if let Some(p) = t.strip_suffix('%') {
        p.trim().parse::<f64>().map(|v| v / 100.0)
    } else {
        t.parse::<f64>()
    }
    .map_err(|_| format!("{text:?} is not a THD limit: write it like 1% or 0.01"))?;
    if v > 0.0 && v < 1.0 {
        Ok(v)
    } else {
        Err(format!("{text:?}: a THD limit lies between 0 and 100 %"))
    }
}

/// Parse a time that must carry its unit (`5ms`, `20 us`).
pub fn parse_time(text: &str) -> Result<f64, String> {
    if !text.trim_end().ends_with('s') {
        return Err(format!(
            "{text:?} has no unit: write a time with its unit, like 5ms"
        ));
    }
    match units::parse(text, Unit::Second) {
        Ok(v) if v > 0.0 && v.is_finite() => Ok(v),
        Ok(_) => Err(format!("{text:?}: a run length must be above zero")),
        Err(e) => Err(e.to_string()),
    }
}

/// Everything the command needs from the file, checked.
struct Setup {
    doc: Document,
    nl: Netlist,
    c: Circuit,
}

fn setup(file: &Path) -> Result<Setup, Failure> {
    let doc = load(file)?;
    if let Some(w) = &doc.signal.waveform {
        w.check()
            .map_err(|m| cannot(format!("{}: signal.{m}", file.display())))?;
    }
    doc.transient
        .check()
        .map_err(|m| cannot(format!("{}: {m}", file.display())))?;
    let nl = netlist::connect(&doc);
    let c = circuit::build(&doc, &nl)
        .map_err(|e| cannot(format!("{}: {}", file.display(), e.to_string().trim_end())))?;
    Ok(Setup { doc, nl, c })
}

/// Run the command.
pub fn run(file: &Path, req: &Request, out: &mut dyn Write) -> Result<i32, Failure> {
    let thd = match &req.thd {
        Some(t) => parse_thd(t).map_err(|m| cannot(format!("--thd: {m}")))?,
        None => DEFAULT_THD_LIMIT,
    };
    let run_for = match &req.run_for {
        Some(t) => Some(parse_time(t).map_err(|m| cannot(format!("--for: {m}")))?),
        None => None,
    };
    let amplitude = match &req.amplitude {
        Some(t) => Some(
            units::parse(t, Unit::Volt)
                .ok()
                .filter(|v| v.is_finite() && *v >= 0.0)
                .ok_or_else(|| cannot(format!("--amplitude: {t:?} is not a voltage, like 10m")))?,
        ),
        None => None,
    };
    if let Some(p) = req.periods {
        if p == 0 || p as f64 > MAX_RUN_PERIODS {
            return Err(cannot(format!(
                "--periods {p}: give between 1 and {MAX_RUN_PERIODS} periods"
            )));
        }
    }
    if run_for.is_none() && (!req.nets.is_empty() || !req.currents.is_empty()) {
        let what = if req.nets.is_empty() {
            "--current"
        } else {
            "--net"
        };
        return Err(cannot(format!(
            "{what} chooses what a --for run reports; the steady-state run (and --clip) \
             reports the input, the output and every stage's output. Add --for TIME \
             (e.g. --for 5ms) or leave {what} out"
        )));
    }
    let s = setup(file)?;
    let drive = steady::drive_of(&s.doc, &s.c);
    if let (Some(t), Some(p)) = (run_for, drive.signal.as_ref().and_then(|(_, w)| w.period())) {
        if t / p > MAX_RUN_PERIODS {
            return Err(cannot(format!(
                "--for: {} is {:.3e} periods of the signal; the longest run is {MAX_RUN_PERIODS} periods",
                units::format(t, Unit::Second),
                t / p
            )));
        }
    }
    if let Some(n) = req.levels {
        return super::levels::run(&s.doc, &s.nl, n, thd, req.json, file, out);
    }
    if req.clip {
        let c = clip::search(&s.doc, &s.nl, &s.c, thd, &mut |_| true)
            .map_err(|e| cannot(format!("{}: {e}", file.display())))?;
        if req.json {
            writeln!(
                out,
                "{}",
                serde_json::to_string_pretty(&c).expect("serialises")
            )
            .map_err(io)?;
        } else {
            write_clip(&c, out).map_err(io)?;
        }
        return Ok(if c.amplitude.is_some() {
            EXIT_CLEAN
        } else {
            EXIT_FINDINGS
        });
    }
    if let Some(t) = run_for {
        return run_for_time(&s, drive, t, req, out);
    }
    let opts = SteadyOptions {
        amplitude,
        periods: req.periods,
        ..SteadyOptions::default()
    };
    let d = steady::distortion(&s.doc, &s.nl, &s.c, &opts, &mut |_| true)
        .map_err(|e| cannot(format!("{}: {e}", file.display())))?;
    if req.csv {
        write_period_csv(&d, out).map_err(io)?;
    } else if req.json {
        let v = biasline::results::transient::steady_json(&d);
        writeln!(
            out,
            "{}",
            serde_json::to_string_pretty(&v).expect("serialises")
        )
        .map_err(io)?;
    } else {
        write_distortion(&s.doc.title, &d, out).map_err(io)?;
    }
    Ok(if d.settled || req.periods.is_some() {
        EXIT_CLEAN
    } else {
        EXIT_FINDINGS
    })
}

fn write_period_csv(d: &Distortion, out: &mut dyn Write) -> std::io::Result<()> {
    // One column per net: the input, output and a stage's output may be
    // one net.
    let mut cols: Vec<&NetDistortion> = Vec::new();
    for c in [&d.input, &d.output].into_iter().chain(d.stages.iter()) {
        if !cols.iter().any(|k| k.net == c.net) {
            cols.push(c);
        }
    }
    let header: Vec<String> = cols.iter().map(|c| format!("{}_volts", c.net)).collect();
    writeln!(out, "time_seconds,{}", header.join(","))?;
    for (j, t) in biasline::results::transient::period_times(d)
        .iter()
        .enumerate()
    {
        let row: Vec<String> = cols.iter().map(|c| format!("{}", c.samples[j])).collect();
        writeln!(out, "{t},{}", row.join(","))?;
    }
    Ok(())
}

fn percent(v: f64) -> String {
    format!("{:.3} %", 100.0 * v)
}

fn write_net(n: &NetDistortion, out: &mut dyn Write) -> std::io::Result<()> {
    let who = n
        .transistor
        .as_ref()
        .map(|t| format!(" ({t} stage)"))
        .unwrap_or_default();
    writeln!(
        out,
        "  {}{who}: fundamental {} peak, THD {}, DC shift {}",
        n.net,
        units::format(n.spectrum.amplitude[0], Unit::Volt),
        percent(n.spectrum.thd),
        units::format_signed(n.dc_shift, Unit::Volt),
    )?;
    let bars: Vec<String> = n
        .spectrum
        .relative_db
        .iter()
        .enumerate()
        .map(|(k, db)| {
            if db.is_finite() {
                format!("H{} {:.1}", k + 2, db)
            } else {
                // A harmonic of exactly zero amplitude.
                format!("H{} none", k + 2)
            }
        })
        .collect();
    writeln!(
        out,
        "    harmonics (dB below the fundamental): {}",
        bars.join("  ")
    )
}

fn write_distortion(title: &str, d: &Distortion, out: &mut dyn Write) -> std::io::Result<()> {
    writeln!(out, "{title}: transient, sine input")?;
    writeln!(
        out,
        "source: {} peak at {}; {} periods, {}",
        units::format(d.amplitude, Unit::Volt),
        units::format(d.frequency, Unit::Hertz),
        d.periods,
        if d.settled {
            format!("settled (last change {:.1e} of the swing)", d.last_change)
        } else {
            format!(
                "NOT settled: the output still changed by {:.1e} of its swing from one period to the next",
                d.last_change
            )
        }
    )?;
    writeln!(out, "output:")?;
    write_net(&d.output, out)?;
    if !d.stages.is_empty() {
        writeln!(out, "per stage:")?;
        for s in &d.stages {
            write_net(s, out)?;
        }
    }
    writeln!(out, "input:")?;
    write_net(&d.input, out)?;
    writeln!(
        out,
        "{} steps ({} rejected), {} Newton iterations",
        d.steps, d.rejected_steps, d.newton_iterations
    )
}

fn write_clip(c: &Clip, out: &mut dyn Write) -> std::io::Result<()> {
    match c.amplitude {
        Some(a) => writeln!(
            out,
            "clips at {} peak source amplitude (THD {} of the output); first limit: {}",
            units::format(a, Unit::Volt),
            percent(c.thd_limit),
            c.limited_by
        )?,
        None => writeln!(out, "no clipping level found: {}", c.limited_by)?,
    }
    for e in &c.excursions {
        writeln!(
            out,
            "  {} in {} for {:.0} % of the period",
            e.transistor,
            e.region,
            100.0 * e.fraction
        )?;
    }
    if let (Some(e), Some(st), Some(l)) = (c.estimate, &c.estimate_stage, &c.estimate_limit) {
        write!(
            out,
            "load-line estimate: {} ({st} stage, toward {l})",
            units::format(e, Unit::Volt)
        )?;
        match c.difference_percent {
            Some(d) => writeln!(out, "; the search differs by {d:+.1} %")?,
            None => writeln!(out)?,
        }
    }
    writeln!(out, "{} trial runs", c.trials)
}

/// A run over a stated time from t = 0, reporting waveforms.
fn run_for_time(
    s: &Setup,
    drive: transient::Drive,
    stop: f64,
    req: &Request,
    out: &mut dyn Write,
) -> Result<i32, Failure> {
    let run = biasline::results::transient::time_run(
        &s.doc,
        &s.nl,
        &s.c,
        drive,
        stop,
        &req.nets,
        &req.currents,
    )
    .map_err(cannot)?;
    let (w, nets, currents, cols) = (&run, &run.nets, &run.currents, &run.columns);
    if req.csv {
        let head: Vec<String> = nets
            .iter()
            .map(|n| format!("{n}_volts"))
            .chain(currents.iter().map(|i| format!("{i}_amperes")))
            .collect();
        writeln!(out, "time_seconds,{}", head.join(",")).map_err(io)?;
        for (j, t) in w.times.iter().enumerate() {
            let row: Vec<String> = cols.iter().map(|col| format!("{}", col[j])).collect();
            writeln!(out, "{t},{}", row.join(",")).map_err(io)?;
        }
    } else if req.json {
        let v = biasline::results::transient::time_run_json(&run);
        writeln!(
            out,
            "{}",
            serde_json::to_string_pretty(&v).expect("serialises")
        )
        .map_err(io)?;
    } else {
        writeln!(
            out,
            "{}: transient over {} — {} steps ({} rejected), {} Newton iterations",
            s.doc.title,
            units::format(stop, Unit::Second),
            w.counts.steps,
            w.counts.rejected,
            w.counts.newton_iterations
        )
        .map_err(io)?;
        for (k, n) in nets.iter().enumerate() {
            let col = &cols[k];
            let (lo, hi) = min_max(col);
            writeln!(
                out,
                "  {}: from {} to {}, at the end {}",
                n,
                units::format(lo, Unit::Volt),
                units::format(hi, Unit::Volt),
                units::format(col[col.len() - 1], Unit::Volt)
            )
            .map_err(io)?;
        }
        for (k, i) in currents.iter().enumerate() {
            let col = &cols[nets.len() + k];
            let (lo, hi) = min_max(col);
            writeln!(
                out,
                "  {}: from {} to {}",
                i,
                units::format(lo, Unit::Ampere),
                units::format(hi, Unit::Ampere)
            )
            .map_err(io)?;
        }
        writeln!(out, "(--csv or --json for every point)").map_err(io)?;
    }
    Ok(EXIT_CLEAN)
}

fn min_max(v: &[f64]) -> (f64, f64) {
    v.iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| {
            (a.min(x), b.max(x))
        })
}

/// The waveform plot's data of a project: its sine at the source's
/// amplitude, run to steady state (for `export --waveform`).
pub fn waveform_data(
    file: &Path,
    doc: &Document,
) -> Result<biasline::render::wave_plot::WaveData, Failure> {
    let s = setup(file)?;
    let d = steady::distortion(doc, &s.nl, &s.c, &SteadyOptions::default(), &mut |_| true)
        .map_err(|e| cannot(format!("{}: {e}", file.display())))?;
    Ok(biasline::results::plots::wave_data(
        &format!("{} — waveforms at steady state", doc.title),
        &d,
    ))
}
