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
