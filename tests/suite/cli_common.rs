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

/// Exit codes of every command (README): clean, findings or warnings,
/// cannot proceed.
// common practice (no source): 0 success, 1 finished with findings, 2 usage
// or input error, as command-line tools commonly report.
pub const EXIT_CLEAN: i32 = 0;
pub const EXIT_FINDINGS: i32 = 1;
pub const EXIT_CANNOT: i32 = 2;

/// One run of the built command: its exit code, what it printed, and the
/// message it gave on stderr (without the `biasline: ` prefix).
#[derive(Debug)]
pub struct Ran {
    pub code: i32,
    pub out: String,
    pub message: String,
}

/// Run `biasline ARGS` in the repository root and keep code, output and message.
pub fn ran<S: AsRef<std::ffi::OsStr>>(args: &[S]) -> Ran {
    let o = Command::new(env!("CARGO_BIN_EXE_biasline"))
        .args(args)
        .current_dir(root())
        .output()
        .expect("the binary runs");
    let err = text(&o.stderr);
    Ran {
        code: o.status.code().unwrap_or(-1),
        out: text(&o.stdout),
        message: err
            .trim_end()
            .strip_prefix("biasline: ")
            .unwrap_or(err.trim_end())
            .to_string(),
    }
}

/// "NaN" or "inf" standing as a word of the text (a figure printed from a
/// non-finite number), not inside a longer word.
pub fn non_finite_word(s: &str) -> bool {
    s.split(|c: char| !c.is_alphanumeric())
        .any(|w| w == "NaN" || w == "inf" || w == "Infinity")
}

/// The longest run of digits in the text (a number printed in plain
/// notation past any readable size: "577456828599…" over 200 digits).
pub fn longest_digit_run(s: &str) -> usize {
    s.split(|c: char| !c.is_ascii_digit())
        .map(str::len)
        .max()
        .unwrap_or(0)
}
