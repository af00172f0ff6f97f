//! `biasline layout`: place and wire a project given by connections, lay a
//! messy sheet out afresh (`--again`), or write a sheet as connections.

use super::{io, load_as_written, Failure, EXIT_CLEAN};
use biasline::document;
use biasline::layout;
use std::io::Write;
use std::path::PathBuf;

#[derive(Debug, clap::Args)]
pub struct LayoutArgs {
    /// The project to lay out.
    pub file: PathBuf,
    /// Where to write the laid-out project.
    #[arg(short, long)]
    pub output: PathBuf,
    /// Lay out every part afresh, also those the file places (tidy a messy
    /// sheet; the nets and their names stay).
    #[arg(long, conflicts_with = "connections")]
    pub again: bool,
    /// Write the circuit as connections instead (no positions, no wires):
    /// the short form a designer types.
    #[arg(long)]
    pub connections: bool,
}

pub fn run(a: &LayoutArgs, out: &mut dyn Write) -> Result<i32, Failure> {
    let doc = load_as_written(&a.file)?;
    let result = if a.connections {
        layout::to_connections(&doc)
    } else if a.again {
        layout::tidy(&doc)
    } else {
        layout::lay_out(&doc)
    };
    document::save_file(&result, &a.output)
        .map_err(|e| Failure::cannot(format!("{}: {e}", a.output.display())))?;
    if a.connections {
        writeln!(
            out,
            "{}: {} parts written as connections",
            a.output.display(),
            result.parts.len()
        )
        .map_err(io)?;
    } else {
        writeln!(
            out,
            "{}: {} parts, {} wires ({} grid units), {} crossings, {} net labels",
            a.output.display(),
            result.parts.len(),
            result.wires.len(),
            layout::wire_length(&result),
            layout::crossings(&result),
            result.labels.len()
        )
        .map_err(io)?;
    }
    Ok(EXIT_CLEAN)
}
