//! The command line: parse arguments, call the library, report once.
//!
//! Exit codes, for every command: 0 clean, 1 finished with findings or
//! warnings, 2 cannot proceed (unreadable file, usage error, not solvable).

use crate::document::{self, Document};
use crate::netlist::{self, Severity};
use clap::{Parser, Subcommand};
use std::io::Write;
use std::path::{Path, PathBuf};

pub mod noise;

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
    /// DC operating point: net voltages, pin currents, power, transistor
    /// regions and margins, warnings.
    Analyze {
        file: PathBuf,
        /// Print the operating point as JSON (schema: docs/analyze-json.md).
        #[arg(long)]
        json: bool,
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
        /// (default: the resistors in series with the signal source).
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
        /// Worker threads (default: all cores).
        #[arg(long, default_value_t = 0)]
        threads: usize,
        /// Print the report as JSON.
        #[arg(long, conflicts_with = "csv")]
        json: bool,
        /// Print one CSV row per quantity.
        #[arg(long)]
        csv: bool,
    },
    /// Export the annotated drawing (PNG or SVG, by the output's extension),
    /// or with --table one of the report tables as CSV.
    Export {
        file: PathBuf,
        /// OUT.png or OUT.svg; with --table, OUT.csv (omit to print the CSV).
        #[arg(short, long)]
        output: Option<PathBuf>,
        /// PNG pixels per grid step ÷ 9.6: 1, 2 or 3.
        #[arg(long, default_value_t = 1.0)]
        scale: f64,
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

/// Load a project, naming the file in any message.
pub fn load(path: &Path) -> Result<Document, Failure> {
    document::load_file(path).map_err(|e| match e {
        document::LoadError::Io { .. } => Failure::cannot(e.to_string()),
        _ => Failure::cannot(format!("{}: {e}", path.display())),
    })
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
            &crate::analysis::noise::BuildOptions {
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
        Command::Export { .. } => export(command, out),
    }
}

fn io(e: std::io::Error) -> Failure {
    Failure::cannot(format!("cannot write the report: {e}"))
}

fn check(file: &Path, json: bool, out: &mut dyn Write) -> Result<i32, Failure> {
    let doc = load(file)?;
    let nl = netlist::connect(&doc);
    let findings = netlist::check(&doc, &nl);
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
        let width = nl.nets.iter().map(|n| n.name.len()).max().unwrap_or(0);
        for net in &nl.nets {
            let pins: Vec<String> = net
                .pins
                .iter()
                .filter(|p| doc.parts[p.part].kind != crate::document::PartKind::Ground)
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

/// Version of the `analyze --json` schema (docs/analyze-json.md).
pub const ANALYZE_SCHEMA_VERSION: u32 = 1;

fn analyze(file: &Path, json: bool, out: &mut dyn Write) -> Result<i32, Failure> {
    use crate::analysis::{dc, AnalysisError};
    let doc = load(file)?;
    let nl = netlist::connect(&doc);
    let findings = netlist::check(&doc, &nl);
    let op = match dc::solve(&doc, &nl) {
        Ok(op) => op,
        Err(e) => {
            if json {
                let (kind, findings) = match &e {
                    AnalysisError::Rules(f) => ("rules", f.clone()),
                    AnalysisError::Singular { .. } => ("singular", Vec::new()),
                    AnalysisError::NoConvergence { .. } => ("no_convergence", Vec::new()),
                };
                let v = serde_json::json!({
                    "schema": ANALYZE_SCHEMA_VERSION,
                    "file": file.display().to_string(),
                    "solved": false,
                    "error": { "kind": kind, "message": e.to_string().trim_end(), "findings": findings },
                });
                writeln!(out, "{}", serde_json::to_string_pretty(&v).expect("json")).map_err(io)?;
                return Ok(EXIT_CANNOT);
            }
            return Err(Failure::cannot(format!(
                "{}: not solvable: {}",
                file.display(),
                e.to_string().trim_end()
            )));
        }
    };
    let rule_warnings: Vec<_> = findings
        .into_iter()
        .filter(|f| f.severity == Severity::Warning)
        .collect();
    let small = small_signal(&doc, &nl, &op);
    if json {
        let mut v = analyze_json(&doc, &nl, &op, &rule_warnings, file);
        if let (Some(obj), Ok((a, r))) = (v.as_object_mut(), &small) {
            obj.insert("small_signal".into(), small_signal_json(a));
            obj.insert(
                "response".into(),
                serde_json::to_value(r).expect("response serialises"),
            );
        }
        if let Some(obj) = v.as_object_mut() {
            obj.insert("noise".into(), noise::analyze_json(&doc));
        }
        writeln!(out, "{}", serde_json::to_string_pretty(&v).expect("json")).map_err(io)?;
    } else {
        analyze_text(&doc, &nl, &op, &rule_warnings, file, out).map_err(io)?;
        match &small {
            Ok((a, r)) => small_signal_text(a, r, out).map_err(io)?,
            Err(e) => writeln!(out, "\nSmall-signal figures unavailable: {e}").map_err(io)?,
        }
        noise::analyze_text(&doc, out).map_err(io)?;
    }
    Ok(if op.warnings.is_empty() && rule_warnings.is_empty() {
        EXIT_CLEAN
    } else {
        EXIT_FINDINGS
    })
}

fn finite(v: f64) -> serde_json::Value {
    if v.is_finite() {
        serde_json::json!(v)
    } else {
        serde_json::Value::Null
    }
}

/// The stable JSON of `analyze --json` (every key in docs/analyze-json.md).
pub fn analyze_json(
    doc: &Document,
    nl: &netlist::Netlist,
    op: &crate::analysis::dc::OperatingPoint,
    rule_warnings: &[netlist::Finding],
    file: &Path,
) -> serde_json::Value {
    use serde_json::json;
    let nets: Vec<_> = nl
        .nets
        .iter()
        .enumerate()
        .filter(|(_, n)| !n.pins.is_empty())
        .map(|(id, n)| json!({ "name": n.name, "voltage": finite(op.net_voltages[id]) }))
        .collect();
    let parts: Vec<_> = doc
        .parts
        .iter()
        .zip(&op.parts)
        .filter(|(p, _)| p.kind != crate::document::PartKind::Ground)
        .map(|(p, r)| {
            let pins: serde_json::Map<String, serde_json::Value> = p
                .kind
                .pin_names()
                .iter()
                .zip(&r.pin_currents)
                .map(|(n, i)| (n.to_string(), finite(*i)))
                .collect();
            json!({
                "designator": r.designator,
                "kind": p.kind.word(),
                "pin_currents": pins,
                "power": finite(r.power),
            })
        })
        .collect();
    let transistors: Vec<_> = op
        .transistors
        .iter()
        .map(|t| {
            json!({
                "designator": t.designator,
                "polarity": t.polarity,
                "region": t.region,
                "collector_current": finite(t.ic),
                "base_current": finite(t.ib),
                "emitter_current": finite(t.ie),
                "base_emitter_voltage": finite(t.vbe),
                "collector_emitter_voltage": finite(t.vce),
                "collector_base_voltage": finite(t.vcb),
                "saturation_margin": finite(t.saturation_margin),
                "cutoff_margin": finite(t.cutoff_margin),
                "dc_current_gain": finite(t.dc_current_gain),
                "forward_beta": finite(t.forward_beta),
                "beta_sensitivity": finite(t.beta_sensitivity),
                "power": finite(t.power),
                "junction_celsius": t.junction_celsius.map(finite),
            })
        })
        .collect();
    let diodes: Vec<_> = op
        .diodes
        .iter()
        .map(|d| {
            json!({
                "designator": d.designator,
                "state": d.state,
                "current": finite(d.current),
                "voltage": finite(d.voltage),
                "power": finite(d.power),
            })
        })
        .collect();
    let warnings: Vec<_> = rule_warnings.iter().chain(&op.warnings).collect();
    json!({
        "schema": ANALYZE_SCHEMA_VERSION,
        "file": file.display().to_string(),
        "solved": true,
        "ambient_celsius": doc.analysis.ambient_celsius,
        "nets": nets,
        "parts": parts,
        "transistors": transistors,
        "diodes": diodes,
        "warnings": warnings,
        "solver": {
            "iterations": op.iterations,
            "aids": op.aids,
            "tellegen_residual": finite(op.tellegen_residual),
        },
        "largest_voltage": {
            "voltage": finite(op.largest_voltage),
            "between": [op.largest_voltage_nets.0, op.largest_voltage_nets.1],
        },
    })
}

fn analyze_text(
    doc: &Document,
    nl: &netlist::Netlist,
    op: &crate::analysis::dc::OperatingPoint,
    rule_warnings: &[netlist::Finding],
    file: &Path,
    out: &mut dyn Write,
) -> std::io::Result<()> {
    use crate::units::{format as f, Unit};
    writeln!(
        out,
        "{} — DC operating point at {} °C",
        file.display(),
        doc.analysis.ambient_celsius
    )?;
    writeln!(out, "\nNets")?;
    let width = nl.nets.iter().map(|n| n.name.len()).max().unwrap_or(0);
    for (id, n) in nl.nets.iter().enumerate() {
        if n.pins.is_empty() {
            continue;
        }
        writeln!(
            out,
            "  {:width$}  {}",
            n.name,
            f(op.net_voltages[id], Unit::Volt)
        )?;
    }
    writeln!(
        out,
        "\nParts (pin currents flow into the pin; power absorbed)"
    )?;
    for (p, r) in doc.parts.iter().zip(&op.parts) {
        if p.kind == crate::document::PartKind::Ground {
            continue;
        }
        let pins: Vec<String> = p
            .kind
            .pin_names()
            .iter()
            .zip(&r.pin_currents)
            .map(|(n, i)| format!("{n} {}", f(*i, Unit::Ampere)))
            .collect();
        writeln!(
            out,
            "  {:6} {:20} {:40} {}",
            r.designator,
            p.kind.word(),
            pins.join(", "),
            f(r.power, Unit::Watt)
        )?;
    }
    if !op.transistors.is_empty() {
        writeln!(out, "\nTransistors")?;
    }
    for t in &op.transistors {
        writeln!(
            out,
            "  {} ({}): {}; IC {}, IB {}, IE {}; VBE {}, VCE {}, VCB {}",
            t.designator,
            match t.polarity {
                crate::analysis::devices::bjt::Polarity::Npn => "NPN",
                crate::analysis::devices::bjt::Polarity::Pnp => "PNP",
            },
            t.region.words(),
            f(t.ic, Unit::Ampere),
            f(t.ib, Unit::Ampere),
            f(t.ie, Unit::Ampere),
            f(t.vbe, Unit::Volt),
            f(t.vce, Unit::Volt),
            f(t.vcb, Unit::Volt),
        )?;
        writeln!(
            out,
            "      hFE = IC/IB {:.1} (model βF {:.1}); βF sensitivity S {:.3}; \
             margin to saturation {}, above cut-off {}; power {}{}",
            t.dc_current_gain,
            t.forward_beta,
            t.beta_sensitivity,
            f(t.saturation_margin, Unit::Volt),
            f(t.cutoff_margin, Unit::Volt),
            f(t.power, Unit::Watt),
            t.junction_celsius
                .map(|tj| format!(", junction {tj:.1} °C"))
                .unwrap_or_default()
        )?;
    }
    if !op.diodes.is_empty() {
        writeln!(out, "\nDiodes")?;
    }
    for d in &op.diodes {
        writeln!(
            out,
            "  {}: {}, {} at {}, power {}",
            d.designator,
            match d.state {
                crate::analysis::dc::DiodeState::Forward => "conducting",
                crate::analysis::dc::DiodeState::Off => "off",
                crate::analysis::dc::DiodeState::Reverse => "reverse-biased",
            },
            f(d.current, Unit::Ampere),
            f(d.voltage, Unit::Volt),
            f(d.power, Unit::Watt)
        )?;
    }
    let warnings: Vec<_> = rule_warnings.iter().chain(&op.warnings).collect();
    writeln!(out, "\nWarnings: {}", warnings.len())?;
    for w in warnings {
        writeln!(out, "  {w}")?;
    }
    writeln!(
        out,
        "\nSolver: {} Newton iteration(s){}; Tellegen balance Σv·i = {:.3e} W",
        op.iterations,
        if op.aids.is_empty() {
            String::new()
        } else {
            format!("; {}", op.aids.join("; "))
        },
        op.tellegen_residual
    )?;
    Ok(())
}

fn spread(
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
    let rep = spread::run(&doc, &board, &opt)
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

type SmallSignalResults = (
    crate::analysis::small_signal::Analysis,
    crate::analysis::ac::FrequencyResponse,
);

/// Linearise at the operating point, recognise the stages, compute the
/// midband figures and sweep the response.
fn small_signal(
    doc: &Document,
    nl: &netlist::Netlist,
    op: &crate::analysis::dc::OperatingPoint,
) -> Result<SmallSignalResults, String> {
    use crate::analysis::{ac, circuit, small_signal};
    let c = circuit::build_unchecked(doc, nl).map_err(|e| e.to_string())?;
    let a = small_signal::analyse(doc, nl, &c, op);
    let r = ac::sweep(&a.small_signal, &a.chain, &a.midband, &doc.analysis);
    Ok((a, r))
}

/// The `small_signal` object of `analyze --json` (docs/analyze-json.md).
pub fn small_signal_json(a: &crate::analysis::small_signal::Analysis) -> serde_json::Value {
    serde_json::json!({
        "transistors": a.small_signal.transistors,
        "diodes": a.small_signal.diodes,
        "chain_topology": a.chain,
        "stages": a.midband.stages,
        "chain": a.midband.chain,
    })
}

/// A resistance, or "open" when it is beyond any real part (ro without Early effect).
fn ohms_or_open(r: f64) -> String {
    if !r.is_finite() || r > 1e15 {
        "open (no Early effect)".into()
    } else {
        crate::units::format(r, crate::units::Unit::Ohm)
    }
}

/// hre: in this model the base current has no Early term, so hre is zero up to
/// rounding; say so rather than print 1e-59.
fn reverse_ratio(h12: f64) -> String {
    if h12.abs() < 1e-12 {
        "0 (none in this model)".into()
    } else {
        format!("{h12:.2e}")
    }
}

/// Three significant figures of a plain number (gains).
fn sig3(v: f64) -> String {
    if !v.is_finite() {
        return "—".into();
    }
    if v == 0.0 {
        return "0".into();
    }
    let digits = (2 - v.abs().log10().floor() as i32).max(0) as usize;
    format!("{v:.digits$}").replace('-', "−")
}

fn small_signal_text(
    a: &crate::analysis::small_signal::Analysis,
    r: &crate::analysis::ac::FrequencyResponse,
    out: &mut dyn Write,
) -> std::io::Result<()> {
    use crate::analysis::figures::Figure;
    use crate::units::{format as f, Unit};
    let ohm = |v: Option<f64>| v.map_or("—".to_string(), |v| f(v, Unit::Ohm));
    if !a.small_signal.transistors.is_empty() {
        writeln!(out, "\nSmall-signal models at the operating point")?;
    }
    for t in &a.small_signal.transistors {
        let p = &t.models.hybrid_pi;
        write!(
            out,
            "  {}: hybrid-π gm {}, rπ {}, ro {}, rb {}, Cπ {}, Cμ {}",
            t.designator,
            f(p.gm, Unit::Siemens),
            f(p.r_pi(), Unit::Ohm),
            ohms_or_open(p.ro()),
            f(p.rb, Unit::Ohm),
            f(p.c_pi, Unit::Farad),
            f(p.c_mu, Unit::Farad)
        )?;
        if let (Some(tm), Some(h)) = (t.models.t, t.models.h) {
            let ce = h.common_emitter;
            write!(
                out,
                "\n      T model re {}, α {:.4}; h (CE) hie {}, hfe {}, hre {}, hoe {}",
                f(tm.re, Unit::Ohm),
                tm.alpha,
                f(ce.h11, Unit::Ohm),
                sig3(ce.h21),
                reverse_ratio(ce.h12),
                f(ce.h22, Unit::Siemens)
            )?;
        }
        writeln!(out)?;
    }
    for d in &a.small_signal.diodes {
        writeln!(
            out,
            "  {}: g {}, C {}",
            d.designator,
            f(d.conductance, Unit::Siemens),
            f(d.capacitance, Unit::Farad)
        )?;
    }
    if !a.midband.stages.is_empty() {
        writeln!(
            out,
            "\nStages at midband (exact from the small-signal circuit; estimates with their difference)"
        )?;
    }
    let cell = |x: Option<f64>, d: Option<f64>, unit: Option<Unit>| -> String {
        let v = match (x, unit) {
            (Some(x), Some(u)) => f(x, u),
            (Some(x), None) => sig3(x),
            (None, _) => "—".into(),
        };
        match d {
            Some(d) => format!("{v} ({}{:.1} %)", if d >= 0.0 { "+" } else { "−" }, d.abs()),
            None => v,
        }
    };
    for (k, s) in a.midband.stages.iter().enumerate() {
        writeln!(
            out,
            "  {}. {} — {}{}; input {}, output {}",
            k + 1,
            s.transistor,
            s.configuration_words,
            if s.overridden {
                " (set by the project)"
            } else {
                ""
            },
            s.input_net,
            s.output_net
        )?;
        for n in &s.notes {
            writeln!(out, "     also: {n}")?;
        }
        for c in &s.caveats {
            writeln!(out, "     CAUTION: {c}")?;
        }
        let lump = |l: &Option<crate::analysis::stages::Lumped>| {
            l.as_ref()
                .map(|l| format!("{} {}", l.label, f(l.resistance, Unit::Ohm)))
        };
        let mut eq = Vec::new();
        if let Some(x) = lump(&s.ac.source) {
            eq.push(format!("driven by {x}"));
        }
        if let Some(x) = lump(&s.ac.base) {
            eq.push(format!("base {x}"));
        }
        if let Some(x) = lump(&s.ac.emitter) {
            eq.push(format!("emitter {x}"));
        }
        if let Some(x) = lump(&s.ac.output) {
            eq.push(format!("output {x}"));
        }
        if let Some(x) = &s.ac.loaded_by {
            eq.push(format!("loaded by {x} ({})", ohm(s.load_resistance)));
        }
        writeln!(out, "     AC equivalent: {}", eq.join("; "))?;
        writeln!(
            out,
            "     {:6} {:>12}  {:>22}  {:>22}",
            "", "exact", "re model", "h-parameters"
        )?;
        let rows: [(&str, &Figure, Option<Unit>); 4] = [
            ("Zin", &s.input_impedance, Some(Unit::Ohm)),
            ("Zout", &s.output_impedance, Some(Unit::Ohm)),
            ("Av", &s.voltage_gain, None),
            ("Ai", &s.current_gain, None),
        ];
        for (name, fig, unit) in rows {
            writeln!(
                out,
                "     {:6} {:>12}  {:>22}  {:>22}",
                name,
                cell(fig.exact, None, unit),
                cell(fig.re_model, fig.re_difference_percent, unit),
                cell(fig.h_model, fig.h_difference_percent, unit)
            )?;
        }
        writeln!(
            out,
            "     re model leaves out: {}",
            s.re_model_neglects.join("; ")
        )?;
        writeln!(
            out,
            "     h-parameters leave out: {}",
            s.h_model_neglects.join("; ")
        )?;
        if let Some(w) = &s.swing {
            writeln!(
                out,
                "     swing: {} peak at the output before {} ({} toward saturation, {} toward cut-off, AC load {}){}{}",
                f(w.limit, Unit::Volt),
                w.limited_by,
                f(w.toward_saturation, Unit::Volt),
                f(w.toward_cut_off, Unit::Volt),
                f(w.ac_load, Unit::Ohm),
                w.input_amplitude
                    .map(|v| format!("; reached by {} at the stage input", f(v, Unit::Volt)))
                    .unwrap_or_default(),
                w.source_amplitude
                    .map(|v| format!(", {} from the source", f(v, Unit::Volt)))
                    .unwrap_or_default()
            )?;
        }
        if let Some(m) = &s.miller {
            writeln!(
                out,
                "     Miller input capacitance {} with {} → upper corner ≈ {} (estimate; ignores the other poles)",
                f(m.input_capacitance, Unit::Farad),
                f(m.resistance, Unit::Ohm),
                f(m.upper_corner, Unit::Hertz)
            )?;
        }
    }
    let c = &a.midband.chain;
    let src = a.chain.source.as_ref().map(|s| s.designator.clone());
    let load = a.chain.load.as_ref().map(|l| l.designator.clone());
    writeln!(
        out,
        "\nWhole amplifier (source {} to load {})",
        src.as_deref().unwrap_or("—"),
        load.as_deref().unwrap_or("—")
    )?;
    writeln!(
        out,
        "  Zin {} seen by the source (source resistance {}); Zout {} seen by the load ({})",
        ohm(c.input_impedance),
        ohm(c.source_resistance),
        ohm(c.output_impedance),
        ohm(c.load_impedance)
    )?;
    let db = |v: Option<f64>| v.map_or(String::new(), |d| format!(" ({} dB)", sig3(d)));
    writeln!(
        out,
        "  Avs {}{} from the source EMF; Av {}{} from the input; Ai {}",
        c.source_gain.map_or("—".into(), sig3),
        db(c.source_gain_db),
        c.voltage_gain.map_or("—".into(), sig3),
        db(c.voltage_gain_db),
        c.current_gain.map_or("—".into(), sig3)
    )?;
    for u in &c.unavailable {
        writeln!(out, "  unavailable: {u}")?;
    }
    let hz =
        |v: Option<f64>| v.map_or("— (outside the sweep)".to_string(), |v| f(v, Unit::Hertz));
    if r.gain.is_some() {
        writeln!(
            out,
            "  Response: midband {}; −3 dB at {} and {}",
            r.midband_gain_db
                .map_or("—".into(), |g| format!("{} dB", sig3(g))),
            hz(r.lower_corner),
            hz(r.upper_corner)
        )?;
    }
    if let (Some(by), Some(est)) = (&r.low_corner_set_by, r.short_circuit_estimate) {
        writeln!(
            out,
            "  Low corner set by {by} (short-circuit time constants: Σ 1/(2π·R·C) ≈ {})",
            f(est, Unit::Hertz)
        )?;
    }
    for n in &r.notes {
        writeln!(out, "  note: {n}")?;
    }
    Ok(())
}

fn sweep(file: &Path, csv: bool, out: &mut dyn Write) -> Result<i32, Failure> {
    use crate::analysis::dc;
    let doc = load(file)?;
    let nl = netlist::connect(&doc);
    let op = dc::solve(&doc, &nl).map_err(|e| {
        Failure::cannot(format!(
            "{}: not solvable: {}",
            file.display(),
            e.to_string().trim_end()
        ))
    })?;
    let (a, r) = small_signal(&doc, &nl, &op)
        .map_err(|e| Failure::cannot(format!("{}: {e}", file.display())))?;
    let Some(g) = &r.gain else {
        let why = a
            .chain
            .notes
            .first()
            .cloned()
            .or_else(|| r.notes.first().cloned())
            .unwrap_or_else(|| "there is no signal path to sweep".into());
        return Err(Failure::cannot(format!("{}: {why}", file.display())));
    };
    if csv {
        writeln!(out, "frequency_hz,magnitude_db,phase_degrees").map_err(io)?;
        for (k, fr) in r.frequencies.iter().enumerate() {
            writeln!(out, "{fr},{},{}", g.magnitude_db[k], g.phase_degrees[k]).map_err(io)?;
        }
    } else {
        use crate::units::{format as f, Unit};
        writeln!(
            out,
            "{} — {} ({} points)",
            file.display(),
            g.name,
            g.magnitude_db.len()
        )
        .map_err(io)?;
        writeln!(out, "{:>12}  {:>10}  {:>10}", "frequency", "dB", "degrees").map_err(io)?;
        for (k, fr) in r.frequencies.iter().enumerate().take(g.magnitude_db.len()) {
            writeln!(
                out,
                "{:>12}  {:>10.2}  {:>10.1}",
                f(*fr, Unit::Hertz),
                g.magnitude_db[k],
                g.phase_degrees[k]
            )
            .map_err(io)?;
        }
    }
    Ok(if op.warnings.is_empty() {
        EXIT_CLEAN
    } else {
        EXIT_FINDINGS
    })
}

fn export(command: &Command, out: &mut dyn Write) -> Result<i32, Failure> {
    use crate::render::{export, tables, Background};
    use crate::scene::{LayerSet, ModelKind};
    let Command::Export {
        file,
        output,
        scale,
        layers,
        model,
        background,
        outline_text,
        fresh_layout,
        table,
        response,
        noise,
    } = command
    else {
        return Err(Failure::cannot(
            "internal: export called for another command",
        ));
    };
    let doc = load(file)?;
    if let Some(kind) = table {
        let nl = netlist::connect(&doc);
        let ann = crate::scene::annotations_for(&doc, &nl);
        let csv = match kind.as_str() {
            "bias" => tables::bias_csv(&doc, &nl, &ann),
            "stages" => tables::stages_csv(&ann),
            "parts" => tables::parts_csv(&doc),
            other => {
                return Err(Failure::cannot(format!(
                    "unknown table \"{other}\": use --table bias, stages or parts"
                )))
            }
        };
        match output {
            Some(path) => write_file(path, csv.as_bytes())?,
            None => out.write_all(csv.as_bytes()).map_err(io)?,
        }
        return Ok(state_code(&ann.title.state));
    }
    let Some(output) = output else {
        return Err(Failure::cannot(
            "export needs -o OUT.png or -o OUT.svg (or --table bias|stages|parts)",
        ));
    };
    let format = export::Format::of_path(output).ok_or_else(|| {
        Failure::cannot(format!(
            "{}: the output must end in .png or .svg",
            output.display()
        ))
    })?;
    if ![1.0, 2.0, 3.0].contains(scale) {
        return Err(Failure::cannot(format!("--scale {scale}: use 1, 2 or 3")));
    }
    let background_of = |w: &str| {
        Background::from_word(w).ok_or_else(|| {
            Failure::cannot(format!("--background {w}: use white, paper or transparent"))
        })
    };
    let plot = match (response, noise) {
        (Some(csv), _) => {
            let text = std::fs::read_to_string(csv)
                .map_err(|e| Failure::cannot(format!("cannot read {}: {e}", csv.display())))?;
            let data = crate::render::plot::ResponseData::from_csv(
                &format!("{} — frequency response", doc.title),
                &text,
            )
            .map_err(|e| Failure::cannot(format!("{}: {e}", csv.display())))?;
            let what = format!(
                "{} points, {} corner(s)",
                data.points.len(),
                data.corners.len()
            );
            Some((
                csv,
                crate::render::plot::response_scene(&data),
                data.title,
                what,
            ))
        }
        (None, Some(csv)) => {
            let text = std::fs::read_to_string(csv)
                .map_err(|e| Failure::cannot(format!("cannot read {}: {e}", csv.display())))?;
            let data = crate::render::noise_plot::NoiseData::from_csv(
                &format!("{} — noise density", doc.title),
                &text,
            )
            .map_err(|e| Failure::cannot(format!("{}: {e}", csv.display())))?;
            let what = format!("{} points", data.points.len());
            Some((
                csv,
                crate::render::noise_plot::noise_scene(&data),
                data.title,
                what,
            ))
        }
        (None, None) => None,
    };
    if let Some((csv, scene, title, what)) = plot {
        let background = background_of(background)?;
        let all = LayerSet::all();
        let bytes = match format {
            export::Format::Svg => crate::render::svg::render(
                &scene,
                all,
                &crate::render::svg::SvgOptions {
                    background,
                    outline_text: *outline_text,
                    title: title.clone(),
                    ..Default::default()
                },
            )
            .map(String::into_bytes),
            export::Format::Png => crate::render::png::render(
                &scene,
                all,
                &crate::render::png::PngOptions {
                    scale: *scale,
                    background,
                    title,
                },
            ),
        }
        .map_err(|e| Failure::cannot(e.to_string()))?;
        write_file(output, &bytes)?;
        writeln!(
            out,
            "{}: wrote {} ({what})",
            csv.display(),
            output.display(),
        )
        .map_err(io)?;
        return Ok(EXIT_CLEAN);
    }
    let layers = LayerSet::parse(layers).map_err(Failure::cannot)?;
    let model = ModelKind::from_word(model)
        .ok_or_else(|| Failure::cannot(format!("--model {model}: use t, h or hybrid-pi")))?;
    let background = background_of(background)?;
    let opts = export::ExportOptions {
        format,
        scale: *scale,
        layers,
        model,
        background,
        outline_text: *outline_text,
        use_stored_layout: !fresh_layout,
    };
    let done = export::export(&doc, None, &opts).map_err(|e| Failure::cannot(e.to_string()))?;
    write_file(output, &done.bytes)?;
    writeln!(
        out,
        "{}: wrote {} ({})",
        file.display(),
        output.display(),
        done.state.text()
    )
    .map_err(io)?;
    Ok(state_code(&done.state))
}

fn state_code(state: &crate::scene::ResultState) -> i32 {
    use crate::scene::ResultState;
    match state {
        ResultState::Solved | ResultState::NotRun => EXIT_CLEAN,
        ResultState::Warnings(_) => EXIT_FINDINGS,
        // The drawing is written, with the reason in its title block.
        ResultState::NotSolvable(_) => EXIT_CANNOT,
    }
}

/// Write a whole file, naming it in any message.
fn write_file(path: &Path, bytes: &[u8]) -> Result<(), Failure> {
    std::fs::write(path, bytes)
        .map_err(|e| Failure::cannot(format!("cannot write {}: {e}", path.display())))
}
