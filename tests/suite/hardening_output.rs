//! Hardening of what the program writes: atomic writes that survive a kill,
//! one rule for unsolvable circuits (exit 2 writes nothing), quiet broken
//! pipes, plain help texts, and a clear message when there is no display.

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn bin() -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_biasline"));
    c.current_dir(root());
    c
}

fn run(args: &[&str]) -> Output {
    bin().args(args).output().expect("the binary runs")
}

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

fn scratch(tag: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("biasline-harden-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn files_in(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

/// Wait for `marker` to appear (the writer has its temporary file complete).
fn wait_for(marker: &Path, child: &mut std::process::Child) {
    let start = Instant::now();
    while !marker.exists() {
        if let Ok(Some(status)) = child.try_wait() {
            panic!("the writer ended before pausing: {status}");
        }
        assert!(
            start.elapsed() < Duration::from_secs(120),
            "the writer never paused"
        );
        std::thread::sleep(Duration::from_millis(20));
    }
}

#[test]
fn an_export_killed_before_its_rename_leaves_the_old_file_intact() {
    // invariant: a write is atomic — killed (SIGKILL) between writing the
    // temporary file and renaming it, the old file is byte-identical and no
    // partial file takes its name; the next write sweeps the leftover away.
    let dir = scratch("kill-export");
    let target = dir.join("ce.png");
    let old = b"the old picture, not a PNG at all".to_vec();
    std::fs::write(&target, &old).unwrap();
    let marker = dir.join("paused");
    let mut child = bin()
        .args([
            "export",
            "projects/common-emitter.json",
            "-o",
            target.to_str().unwrap(),
        ])
        .env(biasline::document::PAUSE_ENV, &marker)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    wait_for(&marker, &mut child);
    child.kill().unwrap(); // SIGKILL on Unix
    child.wait().unwrap();
    assert_eq!(std::fs::read(&target).unwrap(), old);
    let left = files_in(&dir);
    assert_eq!(left.len(), 3, "{left:?}");
    assert!(left.iter().any(|f| f.starts_with(".ce.png.saving-")));
    std::fs::remove_file(&marker).unwrap();
    // A later export replaces the file and clears the dead writer's leftover.
    let out = run(&[
        "export",
        "projects/common-emitter.json",
        "-o",
        target.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert_eq!(files_in(&dir), ["ce.png"]);
    assert!(std::fs::read(&target).unwrap().starts_with(b"\x89PNG"));
    let _ = std::fs::remove_dir_all(dir);
}

/// Run by the kill test below in a child process of this test binary.
#[test]
fn helper_save_that_is_killed() {
    let Some(path) = std::env::var_os("BIASLINE_TEST_SAVE_TARGET") else {
        return; // an ordinary test run: nothing to do
    };
    let mut doc = biasline::document::Document::new("the new version");
    doc.notes = "x".repeat(100_000);
    biasline::document::save_file(&doc, Path::new(&path)).unwrap();
}

#[test]
fn a_save_killed_before_its_rename_leaves_the_old_project_intact() {
    // invariant: project saves go through the same atomic writer.
    let dir = scratch("kill-save");
    let target = dir.join("amp.json");
    std::fs::copy(root().join("projects/common-emitter.json"), &target).unwrap();
    let old = std::fs::read(&target).unwrap();
    let marker = dir.join("paused");
    let mut child = Command::new(std::env::current_exe().unwrap())
        .args([
            "--exact",
            "hardening_output::helper_save_that_is_killed",
            "--test-threads",
            "1",
        ])
        .env("BIASLINE_TEST_SAVE_TARGET", &target)
        .env(biasline::document::PAUSE_ENV, &marker)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    wait_for(&marker, &mut child);
    child.kill().unwrap();
    child.wait().unwrap();
    assert_eq!(std::fs::read(&target).unwrap(), old);
    assert!(biasline::document::load_file(&target).is_ok());
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn an_unsolvable_circuit_exports_nothing_and_exits_2() {
    // common practice (no source): exit 2 means "cannot proceed" — one rule
    // for every writing command: nothing is written, an old file is kept.
    let dir = scratch("unsolved");
    for (args, name) in [
        (vec!["-o"], "x.png"),
        (vec!["-o"], "x.svg"),
        (vec!["--table", "bias", "-o"], "bias.csv"),
        (vec!["--table", "stages", "-o"], "stages.csv"),
    ] {
        let target = dir.join(name);
        std::fs::write(&target, b"old").unwrap();
        let mut a = vec!["export", "tests/fixtures/no-ground.json"];
        a.extend(args);
        a.push(target.to_str().unwrap());
        let out = run(&a);
        assert_eq!(out.status.code(), Some(2), "{a:?}");
        let e = text(&out.stderr);
        assert!(
            e.contains("not solvable") && e.contains("nothing written"),
            "{e}"
        );
        assert_eq!(std::fs::read(&target).unwrap(), b"old", "{a:?}");
    }
    // The parts list needs no operating point: written, exit 1 (findings).
    let out = run(&[
        "export",
        "tests/fixtures/no-ground.json",
        "--table",
        "parts",
    ]);
    assert_eq!(out.status.code(), Some(1), "{}", text(&out.stderr));
    assert!(text(&out.stdout).lines().count() > 1);
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn a_reader_that_goes_away_early_ends_the_command_quietly() {
    // common practice (no source): `biasline … | head` must not print
    // "Broken pipe"; like other command-line tools it ends quietly, exit 0.
    for args in [
        &["analyze", "projects/two-stage-preamp.json"][..],
        &["nets", "projects/two-stage-preamp.json"],
        &[
            "export",
            "projects/two-stage-preamp.json",
            "--table",
            "bias",
        ],
        &["sweep", "projects/two-stage-preamp.json", "--csv"],
    ] {
        let mut child = bin()
            .args(args)
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        drop(child.stdout.take()); // the reader is gone before anything is written
        let out = child.wait_with_output().unwrap();
        assert_eq!(text(&out.stderr), "", "{args:?}");
        assert_eq!(out.status.code(), Some(0), "{args:?}");
    }
}

#[test]
fn help_texts_say_what_the_options_mean_in_words() {
    // common practice (no source): help describes every output and default in plain words.
    let analyze = text(&run(&["analyze", "--help"]).stdout);
    for word in ["operating point", "small-signal", "Zin", "noise", "corners"] {
        assert!(
            analyze.contains(word),
            "analyze --help lacks {word}:\n{analyze}"
        );
    }
    let spread = text(&run(&["spread", "--help"]).stdout);
    assert!(!spread.contains("[default: 0]"), "{spread}");
    assert!(spread.contains("all cores"), "{spread}");
    let export = text(&run(&["export", "--help"]).stdout);
    assert!(!export.contains('÷'), "{export}");
    assert!(export.contains("pixels per inch"), "{export}");
}

#[test]
fn without_a_display_the_editor_says_so_in_one_line_and_exits_2() {
    // common practice (no source): a missing display is a clear message, not a panic.
    let mut child = bin()
        .arg("projects/common-emitter.json")
        .env_remove("DISPLAY")
        .env_remove("WAYLAND_DISPLAY")
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let start = Instant::now();
    while child.try_wait().unwrap().is_none() {
        if start.elapsed() > Duration::from_secs(60) {
            child.kill().unwrap();
            panic!("the editor did not stop without a display");
        }
        std::thread::sleep(Duration::from_millis(50));
    }
    let out = child.wait_with_output().unwrap();
    let e = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{e}");
    assert_eq!(e.lines().count(), 1, "{e}");
    if cfg!(feature = "gui") {
        assert!(e.contains("no display found"), "{e}");
        for command in ["check", "analyze", "export"] {
            assert!(e.contains(command), "{e}");
        }
    }
}

#[test]
fn the_exported_phase_is_continuous_like_the_editor_shows_it() {
    // invariant: phase is unwrapped everywhere — neighbouring points of the
    // swept phase differ by less than 180° (a wrap is not the circuit).
    let mut wrapped_before = 0;
    for demo in ["two-stage-preamp", "common-emitter", "photodiode-buffer"] {
        let path = format!("projects/{demo}.json");
        let out = run(&["sweep", &path, "--csv"]);
        assert!(out.status.code().unwrap() < 2, "{}", text(&out.stderr));
        let phase: Vec<f64> = text(&out.stdout)
            .lines()
            .skip(1)
            .map(|l| l.split(',').nth(2).unwrap().parse().unwrap())
            .collect();
        assert!(phase.len() > 10);
        for w in phase.windows(2) {
            assert!((w[1] - w[0]).abs() < 180.0, "{demo}: {} → {}", w[0], w[1]);
        }
        // The raw angle of the two-stage demo leaves (−180°, 180°]: the
        // case that wrapped before.
        wrapped_before += phase.iter().any(|p| p.abs() > 180.0) as usize;
    }
    assert!(wrapped_before > 0, "no demo exercises the wrap");
}
