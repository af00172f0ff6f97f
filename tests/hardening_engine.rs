//! Hardening (issue 11, engine and command-semantics items): every hostile
//! input in `tests/hostile/` ends in a result or a clear message, never a
//! panic, a hang or a wrong figure. Each test failed before its fix.

use biasline::cli::{self, Command, EXIT_CANNOT, EXIT_CLEAN, EXIT_FINDINGS};
use std::path::PathBuf;

fn hostile(name: &str) -> PathBuf {
    PathBuf::from(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/hostile")).join(name)
}

fn demo(name: &str) -> PathBuf {
    PathBuf::from(concat!(env!("CARGO_MANIFEST_DIR"), "/projects")).join(name)
}

/// Run a command; (exit code, report text or failure message).
fn run(command: Command) -> (i32, String) {
    let mut out = Vec::new();
    let r = cli::run(&command, &mut out);
    let text = String::from_utf8(out).expect("utf-8");
    match r {
        Ok(code) => (code, text),
        Err(f) => (f.code, format!("{text}{}", f.message)),
    }
}

fn check(file: PathBuf) -> (i32, String) {
    run(Command::Check { file, json: false })
}
fn analyze(file: PathBuf) -> (i32, String) {
    run(Command::Analyze { file, json: false })
}
fn sweep(file: PathBuf, csv: bool) -> (i32, String) {
    run(Command::Sweep { file, csv })
}
fn spread(file: PathBuf, runs: Option<usize>) -> (i32, String) {
    run(Command::Spread {
        file,
        runs,
        seed: None,
        threads: 1,
        json: false,
        csv: false,
    })
}
fn noise(file: PathBuf) -> (i32, String) {
    run(Command::Noise {
        file,
        band: "20..20k".into(),
        csv: false,
        source_resistor: None,
        output: None,
        at: "1k".into(),
    })
}

// ---- item 1: nothing left to solve in the small-signal system ----

#[test]
fn a_resistor_across_a_rail_gives_the_dc_result_and_no_signal_path() {
    for name in ["rail-resistor-only.json", "rail-resistor-named-path.json"] {
        // invariant: Ohm's law, 5 V across 1 kΩ is 5 mA; the run ends with a result.
        let (code, text) = analyze(hostile(name));
        assert!(code == EXIT_CLEAN || code == EXIT_FINDINGS, "{name}: {code}\n{text}");
        assert!(text.contains("5 mA"), "{name}:\n{text}");
        assert!(text.contains("no signal path"), "{name}:\n{text}");
        // invariant: a sweep with nothing to sweep says so (exit 2) instead of panicking.
        let (code, text) = sweep(hostile(name), false);
        assert_eq!(code, EXIT_CANNOT, "{name}:\n{text}");
        assert!(!text.is_empty());
        let (code, text) = spread(hostile(name), Some(10));
        assert!(code == EXIT_CLEAN || code == EXIT_FINDINGS, "{name}: {code}\n{text}");
        let (code, text) = noise(hostile(name));
        assert!(code <= EXIT_CANNOT, "{name}: {code}\n{text}");
        assert!(!text.contains("NaN"), "{name}:\n{text}");
    }
}

// ---- item 3: settings that size work are bounded ----

#[test]
fn unbounded_settings_are_refused_with_the_limit_named() {
    use biasline::document::limits::{MAX_POINTS_PER_DECADE, MAX_SPREAD_RUNS};
    // common practice (no source): a guard limit is stated and named in the message.
    let (code, text) = check(hostile("huge-points-per-decade.json"));
    assert_eq!(code, EXIT_CANNOT, "{text}");
    assert!(text.contains("points_per_decade"), "{text}");
    assert!(text.contains(&MAX_POINTS_PER_DECADE.to_string()), "{text}");
    let commands: [fn(PathBuf) -> (i32, String); 3] = [analyze, |p| sweep(p, true), noise];
    for f in commands {
        let (code, text) = f(hostile("huge-points-per-decade.json"));
        assert_eq!(code, EXIT_CANNOT, "{text}");
    }
    let (code, text) = check(hostile("huge-spread-runs.json"));
    assert_eq!(code, EXIT_CANNOT, "{text}");
    assert!(text.contains("runs"), "{text}");
    assert!(text.contains(&MAX_SPREAD_RUNS.to_string()), "{text}");
    let (code, text) = spread(hostile("huge-spread-runs.json"), None);
    assert_eq!(code, EXIT_CANNOT, "{text}");
    // The command-line flag meets the same limit.
    let (code, text) = spread(demo("common-emitter.json"), Some(1_000_000_000_000));
    assert_eq!(code, EXIT_CANNOT, "{text}");
    assert!(text.contains("--runs") && text.contains(&MAX_SPREAD_RUNS.to_string()), "{text}");
}

#[test]
fn a_temperature_below_absolute_zero_names_the_field() {
    // source: SI brochure (BIPM, 9th ed.), 0 K = −273.15 °C.
    let (code, text) = check(hostile("below-absolute-zero.json"));
    assert_eq!(code, EXIT_CANNOT, "{text}");
    assert!(text.contains("ambient_celsius"), "{text}");
    assert!(text.contains("absolute zero"), "{text}");
    assert!(!text.contains("sweep"), "{text}");
}

// ---- item 7: rules check gaps ----

#[test]
fn the_rules_check_catches_sheet_level_mistakes() {
    // common practice (no source): a shorted transistor, reused ids, a signal
    // source that is not there and control characters are input errors.
    for (name, needle) in [
        ("transistor-one-net.json", "collector, base and emitter all on net"),
        ("duplicate-part-ids.json", "part id \"p1\" is used by more than one part"),
        ("missing-signal-source.json", "signal source is VX, which is not on the sheet"),
        ("control-characters-title.json", "control character U+0000"),
    ] {
        let (code, text) = check(hostile(name));
        assert_eq!(code, EXIT_FINDINGS, "{name}:\n{text}");
        assert!(text.contains(needle), "{name}:\n{text}");
        // invariant: an analysis refuses what the check calls an error (no α −100, no Avs).
        let (code, text) = analyze(hostile(name));
        assert_eq!(code, EXIT_CANNOT, "{name}:\n{text}");
        assert!(text.contains(needle), "{name}:\n{text}");
        assert!(!text.contains("Avs"), "{name}:\n{text}");
    }
}

// ---- item 9: one findings set and one exit code from every command ----

#[test]
fn every_command_agrees_on_warnings_and_exit_code() {
    // invariant: one document, one set of findings, one exit code.
    for name in ["overloaded-resistor.json", "just-above-60-volts.json"] {
        let (c, check_text) = check(hostile(name));
        let (a, analyze_text) = analyze(hostile(name));
        let (s, spread_text) = spread(hostile(name), Some(10));
        assert_eq!(c, EXIT_FINDINGS, "{name}:\n{check_text}");
        assert_eq!(a, EXIT_FINDINGS, "{name}:\n{analyze_text}");
        assert_eq!(s, EXIT_FINDINGS, "{name}:\n{spread_text}");
        let warning = check_text
            .lines()
            .find(|l| l.starts_with("warning"))
            .expect("check lists the warning");
        assert!(analyze_text.contains(warning), "{name}:\n{analyze_text}");
    }
    for name in ["common-emitter.json", "two-stage-preamp.json", "high-voltage-driver.json"] {
        let (c, t1) = check(demo(name));
        let (a, t2) = analyze(demo(name));
        assert_eq!(c, a, "{name}: check\n{t1}\nanalyze\n{t2}");
    }
}

#[test]
fn the_safety_caution_prints_the_value_that_crossed_the_limit() {
    // source: IEC 62368-1, ES1 limit 60 V DC; the caution shows 60.01 V, not "60 V … above 60 V".
    let (_, text) = check(hostile("just-above-60-volts.json"));
    assert!(text.contains("60.01 V DC between"), "{text}");
}

#[test]
fn a_spread_without_runs_judges_limits_by_the_worst_case() {
    // invariant: a limit a worst-case corner misses is not "met on every board".
    let (code, text) = spread(demo("common-emitter.json"), Some(0));
    let line = text
        .lines()
        .find(|l| l.contains("Avs_dB(chain) 26.00"))
        .expect("the limit line");
    assert!(!line.contains("met on every board"), "{text}");
    assert!(line.contains("missed at a worst-case corner"), "{text}");
    assert_eq!(code, EXIT_FINDINGS, "{text}");
}
