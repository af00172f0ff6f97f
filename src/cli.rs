//! The command line: parse arguments, call the library, report once.
//!
//! Exit codes, for every command: 0 clean, 1 finished with findings or
//! warnings, 2 cannot proceed (unreadable file, usage error, not solvable).

use biasline::document::{self, Document};
use biasline::netlist::{self, Severity};
use clap::{Parser, Subcommand};
use std::io::Write;
use std::path::{Path, PathBuf};

mod analyze;
pub mod design;
mod export;
mod fit;
mod layout;
mod levels;
pub mod noise;
mod preferred;
mod report;
mod small_signal;
mod spread;
mod stability;
pub mod transient;
mod watch;

use analyze::analyze;
use export::export;
use small_signal::{small_signal_text, sweep};
use spread::spread;

pub const EXIT_CLEAN: i32 = 0;
pub const EXIT_FINDINGS: i32 = 1;
pub const EXIT_CANNOT: i32 = 2;

#[derive(Debug, Parser)]
#[command(
    name = "biasline",
    version,
    about = "Draw a transistor amplifier; see its bias, small-signal figures and response.",
    args_conflicts_with_subcommands = true
)]
pub struct Args {
    /// Project file to open in the editor.
    pub file: Option<PathBuf>,
    #[command(subcommand)]
    pub command: Option<Command>,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Rules check: unconnected pins, missing values, floating nets, source loops.
    Check {
        file: PathBuf,
        /// Print the findings as JSON.
        #[arg(long)]
        json: bool,
    },
    /// List every net with the pins on it.
    Nets {
        file: PathBuf,
        /// Print the netlist as JSON.
        #[arg(long)]
        json: bool,
    },
    /// The whole analysis as a report: the DC operating point (net voltages,
    /// pin currents, power, transistor regions and margins, warnings), the
    /// small-signal models of each transistor (hybrid-π, h-parameters, T),
    /// each stage's Zin, Zout, Av and Ai with textbook estimates beside them,
    /// the whole amplifier's gain, −3 dB corners and swing, and a noise
    /// summary.
    Analyze {
        file: PathBuf,
        /// Print the operating point as JSON (schema: docs/analyze-json.md).
        #[arg(long)]
        json: bool,
    },
    /// Stability: the circuit's own poles, the loop gain of each
    /// transistor's controlled source with crossover and margins, and the
    /// loop gain at a named pin (--break PART.PIN).
    Stability {
        file: PathBuf,
        /// Break the loop at this pin for the exact loop gain there, e.g. Q2.b.
        #[arg(long = "break", value_name = "PART.PIN")]
        break_at: Option<String>,
        /// Print JSON.
        #[arg(long, conflicts_with = "csv")]
        json: bool,
        /// Print each loop gain over the sweep as comma-separated values:
        /// frequency, then magnitude (dB) and phase (degrees) per loop.
        #[arg(long)]
        csv: bool,
    },
    /// Frequency response from the signal source to the load, as numbers:
    /// frequency, magnitude (dB) and phase (degrees).
    Sweep {
        file: PathBuf,
        /// Print comma-separated values (with a header line) instead of a table.
        #[arg(long)]
        csv: bool,
    },
    /// Noise: output and input-referred noise, noise figure at the real
    /// source resistance, the largest contributors, the better collector current.
    Noise {
        file: PathBuf,
        /// Band to integrate over, LOW..HIGH with prefixes (e.g. 20..20k).
        #[arg(long, default_value = "20..20k")]
        band: String,
        /// Print the densities across the sweep as CSV.
        #[arg(long)]
        csv: bool,
        /// Resistor to count as the signal source's own resistance
        /// (default: the resistors the file marks with source_resistance_mark).
        #[arg(long, value_name = "DESIGNATOR")]
        source_resistor: Option<String>,
        /// Net to measure the output at (default: across the load).
        #[arg(long, value_name = "NET")]
        output: Option<String>,
        /// Frequency of the spot figures (en, in, spot noise figure).
        #[arg(long, value_name = "FREQUENCY", default_value = "1k")]
        at: String,
    },
    /// Design spread: every quantity over part tolerances, β spread and temperature
    /// (worst-case corners, sensitivities, Monte Carlo).
    Spread {
        file: PathBuf,
        /// Monte Carlo runs (default: the project's setting, 1,000).
        #[arg(long)]
        runs: Option<usize>,
        /// Seed of the random draws (default: the project's setting).
        #[arg(long)]
        seed: Option<u64>,
        /// Worker threads for the Monte Carlo runs; 0 (the default) uses all cores.
        #[arg(long, default_value_t = 0, hide_default_value = true)]
        threads: usize,
        /// Print the report as JSON.
        #[arg(long, conflicts_with = "csv")]
        json: bool,
        /// Print one CSV row per quantity.
        #[arg(long)]
        csv: bool,
    },
    /// Waveforms in time; for a sine input the distortion at steady state
    /// (THD, harmonics 2–10, DC shift, per stage) or with --clip the input
    /// level where THD reaches a limit and which transistor limits first.
    Transient {
        file: PathBuf,
        /// Run this long from t = 0 and report the waveforms (e.g. 5ms);
        /// without it a sine input runs to steady state.
        #[arg(long = "for", value_name = "TIME")]
        run_for: Option<String>,
        /// Print JSON.
        #[arg(long, conflicts_with = "csv")]
        json: bool,
        /// Print comma-separated values with a header line.
        #[arg(long)]
        csv: bool,
        /// A net to report (repeat for more; default: input and output, and a floating load's second net).
        #[arg(long = "net", value_name = "NET")]
        nets: Vec<String>,
        /// A pin current to report, PART.PIN (repeat for more).
        #[arg(long = "current", value_name = "PART.PIN")]
        currents: Vec<String>,
        /// Search the input amplitude at which THD reaches --thd.
        #[arg(long)]
        clip: bool,
        /// THD limit of the clip search (default 1%).
        #[arg(long, value_name = "LIMIT")]
        thd: Option<String>,
        /// Run exactly this many periods instead of waiting to settle.
        #[arg(long)]
        periods: Option<usize>,
        /// Use this source amplitude instead of the file's (e.g. 50m).
        #[arg(long, value_name = "VOLTS")]
        amplitude: Option<String>,
        /// Push-pull output: run the sine at N levels (output peaks 1/N … 1
        /// of the rail) and report THD, output power, efficiency and each
        /// output device's dissipation at each.
        #[arg(long, value_name = "N", conflicts_with_all = ["clip", "run_for"])]
        levels: Option<usize>,
    },
    /// Export the annotated drawing (PNG or SVG, by the output's extension),
    /// or with --table one of the report tables as CSV.
    Export {
        file: PathBuf,
        /// OUT.png or OUT.svg; with --table, OUT.csv (omit to print the CSV).
        #[arg(short, long)]
        output: Option<PathBuf>,
        /// PNG resolution: 1 draws the sheet at 96 pixels per inch of its
        /// printed size (one grid step = 2.54 mm), 2 at 192, 3 at 288. By
        /// default the smallest of these that makes the picture at least
        /// 1,240 pixels wide (an A4 page width at 150 dpi).
        #[arg(long)]
        scale: Option<f64>,
        /// Comma-separated layers: schematic, voltages, currents, stages,
        /// and the optional spread (worst-case voltage ranges) and noise
        /// (en, in, NF on stage cards); the title block is always drawn.
        #[arg(long, default_value = "schematic,voltages,currents,stages")]
        layers: String,
        /// The device model on stage cards: t, h or hybrid-pi.
        #[arg(long, default_value = "t")]
        model: String,
        /// white, paper or transparent.
        #[arg(long, default_value = "white")]
        background: String,
        /// SVG: turn text into outlines (no font needed to view it).
        #[arg(long)]
        outline_text: bool,
        /// Place every annotation afresh, ignoring dragged positions in the file.
        #[arg(long)]
        fresh_layout: bool,
        /// Write a CSV table instead of the drawing: bias, stages or parts.
        #[arg(long)]
        table: Option<String>,
        /// Draw the frequency response from SWEEP.csv (as written by
        /// `sweep --csv`: frequency_hz,magnitude_db,phase_degrees) instead
        /// of the sheet; −3 dB corners are found from the data.
        #[arg(long, value_name = "SWEEP.csv", conflicts_with = "table")]
        response: Option<PathBuf>,
        /// Draw the noise density plot from NOISE.csv (as written by
        /// `noise --csv`: frequency_hz, output and input-referred density in
        /// V/√Hz), both axes logarithmic, instead of the sheet.
        #[arg(long, value_name = "NOISE.csv", conflicts_with_all = ["table", "response"])]
        noise: Option<PathBuf>,
        /// Draw the waveform plot instead of the sheet: input and output
        /// over one period at steady state with the source's amplitude,
        /// and the output's harmonics with its THD.
        #[arg(long, conflicts_with_all = ["table", "response", "noise"])]
        waveform: bool,
    },
    /// The design report: one self-contained HTML file (drawing, operating
    /// point, stages, response, noise, spread, warnings, parts list) that
    /// reads in a browser and prints to A4 or Letter.
    Report {
        file: PathBuf,
        /// OUT.html
        #[arg(short, long)]
        output: PathBuf,
        /// Layers of the annotated drawing (as for `export`).
        #[arg(long, default_value = "schematic,voltages,currents,stages")]
        layers: String,
        /// The device model drawn in each stage's AC equivalent: t, h or hybrid-pi.
        #[arg(long, default_value = "t")]
        model: String,
        /// Add the spread section even when the project has no spread settings.
        #[arg(long, conflicts_with = "no_spread")]
        spread: bool,
        /// Leave the spread section out.
        #[arg(long)]
        no_spread: bool,
        /// Monte Carlo runs of the spread section (default: the project's setting).
        #[arg(long)]
        runs: Option<usize>,
        /// Seed of the spread draws (default: the project's setting).
        #[arg(long)]
        seed: Option<u64>,
        /// Worker threads of the spread runs (default: all cores).
        #[arg(long, default_value_t = 0)]
        threads: usize,
        /// Print the date and time of writing in the title block (without
        /// it the same project always gives the same bytes).
        #[arg(long)]
        timestamp: bool,
        /// Place every annotation afresh, ignoring dragged positions in the file.
        #[arg(long)]
        fresh_layout: bool,
    },
    /// Lay a project out: parts given by connections placed and wired as a
    /// schematic (signal left to right, rails on top, grounds at the feet),
    /// written as a project the editor opens.
    Layout(layout::LayoutArgs),
    /// Design a stage from targets: part values solved by the engine,
    /// rounded to preferred values, re-analysed, drawn (`-o` writes the project).
    Design(Box<design::DesignArgs>),
    /// Preferred values (IEC 60063 E-series) around a resistance, or the best
    /// pair for a parallel value (--parallel) or a divider fraction (--divider).
    Preferred(preferred::PreferredArgs),
    /// A transistor's model parameters from its datasheet figures (bipolar:
    /// --vbe/--vbe-at, --hfe/--hfe-at, --early; JFET: two of --idss,
    /// --vgs-off, --gfs/--gfs-at; MOSFET: --vgs-th/--vgs-th-at and
    /// --id-on/--id-on-at; FET capacitances --ciss --crss --coss at --vds),
    /// printed, or written into a part with --into FILE --part Q1.
    Fit(Box<fit::FitArgs>),
    /// Round every resistor and capacitor to a preferred-value series and
    /// report what each change did to the operating points and stage figures.
    Snap {
        file: PathBuf,
        /// Series of the resistors: E6, E12, E24, E48, E96 or E192.
        #[arg(long, default_value = "E24")]
        series: String,
        /// Series of the capacitors (default E12, or E6 with --series E6).
        #[arg(long)]
        capacitor_series: Option<String>,
        /// Write the rounded project here (nothing is written without it).
        #[arg(short, long)]
        output: Option<PathBuf>,
        /// Print the report as JSON.
        #[arg(long)]
        json: bool,
    },
}

/// A failure to report: the message and the exit code.
#[derive(Debug)]
pub struct Failure {
    pub message: String,
    pub code: i32,
}

impl Failure {
    pub fn cannot(message: impl Into<String>) -> Self {
        Failure {
            message: message.into(),
            code: EXIT_CANNOT,
        }
    }
}

/// Load a project, naming the file in any message. A file whose parts are
/// given by connections is checked (every net name on two pins or more, no
/// wiring that contradicts a name) and laid out, so every command draws it.
pub fn load(path: &Path) -> Result<Document, Failure> {
    let doc = load_as_written(path)?;
    if !biasline::layout::needs_layout(&doc) {
        return Ok(doc);
    }
    Ok(biasline::layout::lay_out(&doc))
}

/// Load a project without laying it out (its connections checked).
pub fn load_as_written(path: &Path) -> Result<Document, Failure> {
    let named = |e: document::LoadError| match e {
        document::LoadError::Io { .. } => Failure::cannot(e.to_string()),
        _ => Failure::cannot(format!("{}: {e}", path.display())),
    };
    let doc = document::load_file(path).map_err(named)?;
    if doc
        .parts
        .iter()
        .any(|p| !p.connect.is_empty() || !p.is_placed())
    {
        netlist::check_connections(&doc, &netlist::connect(&doc)).map_err(named)?;
    }
    Ok(doc)
}

/// Run a subcommand, writing its report to `out`. Returns the exit code.
pub fn run(command: &Command, out: &mut dyn Write) -> Result<i32, Failure> {
    match command {
        Command::Check { file, json } => check(file, *json, out),
        Command::Nets { file, json } => nets(file, *json, out),
        Command::Analyze { file, json } => analyze(file, *json, out),
        Command::Noise {
            file,
            band,
            csv,
            source_resistor,
            output,
            at,
        } => noise::run(
            file,
            band,
            at,
            *csv,
            &biasline::analysis::noise::BuildOptions {
                source_resistor: source_resistor.clone(),
                output_net: output.clone(),
            },
            out,
        ),
        Command::Spread {
            file,
            runs,
            seed,
            threads,
            json,
            csv,
        } => spread(file, *runs, *seed, *threads, *json, *csv, out),
        Command::Sweep { file, csv } => sweep(file, *csv, out),
        Command::Stability {
            file,
            break_at,
            json,
            csv,
        } => stability::stability(file, break_at.as_deref(), *json, *csv, out),
        Command::Export { .. } => export(command, out),
        Command::Transient {
            file,
            run_for,
            json,
            csv,
            nets,
            currents,
            clip,
            thd,
            periods,
            amplitude,
            levels,
        } => transient::run(
            file,
            &transient::Request {
                run_for: run_for.clone(),
                json: *json,
                csv: *csv,
                nets: nets.clone(),
                currents: currents.clone(),
                clip: *clip,
                thd: thd.clone(),
                periods: *periods,
                amplitude: amplitude.clone(),
                levels: *levels,
            },
            out,
        ),
        Command::Report { .. } => report::run(command, out),
        Command::Design(a) => design::run_design(a, out),
        Command::Fit(a) => fit::run(a, out),
        Command::Layout(a) => layout::run(a, out),
        Command::Preferred(a) => preferred::run(a, out),
        Command::Snap {
            file,
            series,
            capacitor_series,
            output,
            json,
        } => design::run_snap(
            file,
            series,
            capacitor_series.as_deref(),
            output.as_deref(),
            *json,
            out,
        ),
    }
}

/// A failed write of the report. A reader that went away early (`| head`)
/// ends the command quietly with exit 0, as a closed pipe is no failure.
fn io(e: std::io::Error) -> Failure {
    if e.kind() == std::io::ErrorKind::BrokenPipe {
        return Failure {
            message: String::new(),
            code: EXIT_CLEAN,
        };
    }
    Failure::cannot(format!("cannot write the report: {e}"))
}

/// The one exit-code rule for commands that need an operating point:
/// clean 0, warnings 1, no operating point 2 (see `analysis::assess`).
pub fn verdict_code(v: biasline::analysis::assess::Verdict) -> i32 {
    use biasline::analysis::assess::Verdict;
    match v {
        Verdict::Clean => EXIT_CLEAN,
        Verdict::Warnings => EXIT_FINDINGS,
        Verdict::Unsolved => EXIT_CANNOT,
    }
}

/// Why the editor cannot open here, if it cannot: on Linux and the BSDs a
/// window needs an X11 (`DISPLAY`) or Wayland (`WAYLAND_DISPLAY`) display.
/// One line naming what works without one.
pub fn no_display() -> Option<String> {
    if !cfg!(all(unix, not(target_os = "macos"))) {
        return None;
    }
    let set = |k: &str| std::env::var_os(k).is_some_and(|v| !v.is_empty());
    if set("DISPLAY") || set("WAYLAND_DISPLAY") {
        return None;
    }
    Some(
        "no display found (neither DISPLAY nor WAYLAND_DISPLAY is set), so the editor \
         cannot open; without a display these commands work: check, nets, analyze, sweep, \
         noise, spread, export (see biasline --help)"
            .into(),
    )
}

fn check(file: &Path, json: bool, out: &mut dyn Write) -> Result<i32, Failure> {
    let doc = load(file)?;
    let nl = netlist::connect(&doc);
    let a = biasline::analysis::assess::Assessment::of(&doc, &nl);
    // The same set every command shows: rules errors, or why the operating
    // point fails, then every warning (rules, designer, safety caution).
    let mut findings: Vec<netlist::Finding> = a.errors().cloned().collect();
    if let (Err(e), true) = (&a.operating_point, findings.is_empty()) {
        findings.push(netlist::Finding {
            severity: Severity::Error,
            subject: netlist::Subject::Sheet,
            position: None,
            message: format!("not solvable: {}", e.to_string().trim_end()),
        });
    }
    findings.extend(a.warnings().into_iter().cloned());
    if json {
        writeln!(
            out,
            "{}",
            serde_json::to_string_pretty(&findings).expect("findings serialise")
        )
        .map_err(io)?;
    } else if findings.is_empty() {
        writeln!(
            out,
            "{}: no findings ({} parts, {} nets)",
            file.display(),
            doc.parts.len(),
            nl.nets.len()
        )
        .map_err(io)?;
    } else {
        for f in &findings {
            writeln!(out, "{f}").map_err(io)?;
        }
        let errors = findings
            .iter()
            .filter(|f| f.severity == Severity::Error)
            .count();
        writeln!(
            out,
            "{} error(s), {} warning(s)",
            errors,
            findings.len() - errors
        )
        .map_err(io)?;
    }
    Ok(if findings.is_empty() {
        EXIT_CLEAN
    } else {
        EXIT_FINDINGS
    })
}

fn nets(file: &Path, json: bool, out: &mut dyn Write) -> Result<i32, Failure> {
    let doc = load(file)?;
    let nl = netlist::connect(&doc);
    let findings = netlist::check(&doc, &nl);
    if json {
        writeln!(
            out,
            "{}",
            serde_json::to_string_pretty(&nl).expect("netlist serialises")
        )
        .map_err(io)?;
    } else {
        // Capped: a longer name runs past the column (the formatter's width is limited).
        let width = nl
            .nets
            .iter()
            .map(|n| n.name.len())
            .max()
            .unwrap_or(0)
            .min(64);
        for net in &nl.nets {
            let pins: Vec<String> = net
                .pins
                .iter()
                .filter(|p| doc.parts[p.part].kind != biasline::document::PartKind::Ground)
                .map(|p| p.label())
                .collect();
            writeln!(out, "{:width$}  {}", net.name, pins.join(" ")).map_err(io)?;
        }
    }
    Ok(if findings.is_empty() {
        EXIT_CLEAN
    } else {
        EXIT_FINDINGS
    })
}
