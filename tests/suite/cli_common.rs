//! Running the built `biasline` command in the command-line tests.
#![allow(dead_code)]

use std::path::Path;
use std::process::{Command, Output};

/// The repository root (the demos are under `projects/`).
pub fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// Run `biasline ARGS` in the repository root.
pub fn run(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_biasline"))
        .args(args)
        .current_dir(root())
        .output()
        .expect("the binary runs")
}

/// Output bytes as text.
pub fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}
