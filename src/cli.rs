//! The command line: parse arguments, call the library, report once.
//!
//! Exit codes, for every command: 0 clean, 1 finished with findings or
//! warnings, 2 cannot proceed (unreadable file, usage error, not solvable).

use crate::document::{self, Document};
use crate::netlist::{self, Severity};
use clap::{Parser, Subcommand};
use std::io::Write;
use std::path::{Path, PathBuf};

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
        /// Comma-separated layers: schematic, voltages, currents, stages
        /// (the title block is always drawn).
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
    if json {
        let v = analyze_json(&doc, &nl, &op, &rule_warnings, file);
        writeln!(out, "{}", serde_json::to_string_pretty(&v).expect("json")).map_err(io)?;
    } else {
        analyze_text(&doc, &nl, &op, &rule_warnings, file, out).map_err(io)?;
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
    if let Some(csv) = response {
        let text = std::fs::read_to_string(csv)
            .map_err(|e| Failure::cannot(format!("cannot read {}: {e}", csv.display())))?;
        let data = crate::render::plot::ResponseData::from_csv(
            &format!("{} — frequency response", doc.title),
            &text,
        )
        .map_err(|e| Failure::cannot(format!("{}: {e}", csv.display())))?;
        let scene = crate::render::plot::response_scene(&data);
        let background = background_of(background)?;
        let all = LayerSet::all();
        let bytes = match format {
            export::Format::Svg => crate::render::svg::render(
                &scene,
                all,
                &crate::render::svg::SvgOptions {
                    background,
                    outline_text: *outline_text,
                    title: data.title.clone(),
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
                    title: data.title.clone(),
                },
            ),
        }
        .map_err(|e| Failure::cannot(e.to_string()))?;
        write_file(output, &bytes)?;
        writeln!(
            out,
            "{}: wrote {} ({} points, {} corner(s))",
            csv.display(),
            output.display(),
            data.points.len(),
            data.corners.len()
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
