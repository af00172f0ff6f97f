//! Issue 18 "Trust": escaping of user text in the report and the drawing,
//! the exit rule of the writing commands, atomic writes that keep a file's
//! mode, owner and links, bounds on coordinates and pictures, and arguments
//! refused with their range. Each test failed before its fix.

use crate::cli_common;

use biasline::document::{self, Document};
use cli_common::{root, run, text};
use scraper::{Html, Selector};
use std::path::{Path, PathBuf};

fn scratch(tag: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("biasline-trust-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn demo(name: &str) -> Document {
    document::load_file(&root().join("projects").join(name)).unwrap()
}

fn save(doc: &Document, path: &Path) {
    std::fs::write(path, document::to_json(doc)).unwrap();
}

fn p(path: &Path) -> &str {
    path.to_str().unwrap()
}

/// Markup, quotes and an ampersand: any of them unescaped makes an element
/// or an attribute (`<i class="inj">`, a `<script>`, an `onmouseover`, a
/// `data-inj` attribute) that the checks below look for.
const HOSTILE: &str =
    "<script>alert(1)</script><i class=\"inj\">\" onmouseover=\"x\" ' data-inj='1' &amp; <b>";

/// The two-stage demo with the hostile text in every user string: title,
/// notes, every designator (and the signal path naming them), every label.
fn hostile_project() -> Document {
    let mut doc = demo("two-stage-preamp.json");
    doc.title = format!("T{HOSTILE}");
    doc.notes = format!("N{HOSTILE}");
    let rename = |d: &str| format!("{d}{HOSTILE}");
    for part in &mut doc.parts {
        if !part.designator.is_empty() {
            part.designator = rename(&part.designator);
        }
    }
    for s in [&mut doc.signal.source, &mut doc.signal.load]
        .into_iter()
        .flatten()
    {
        *s = rename(s);
    }
    for l in &mut doc.labels {
        l.name = rename(&l.name);
    }
    doc
}

/// No element or attribute of `markup` comes from user text.
fn assert_no_injection(markup: &str, what: &str) {
    let html = Html::parse_document(markup);
    for bad in ["script", "i.inj", "b", "[onmouseover]", "[data-inj]"] {
        let n = html.select(&Selector::parse(bad).unwrap()).count();
        assert_eq!(n, 0, "{what}: {n} `{bad}` made from user text");
    }
}

#[test]
fn user_text_never_becomes_markup_in_the_report_or_the_drawing() {
    // invariant: HTML5 and SVG escaping (WHATWG HTML, "Escaping a string";
    // XML 1.0 §2.4): `<`, `&` and the quote of the attribute are written as
    // references, so a parser sees the user's text as text only.
    let dir = scratch("escape");
    let file = dir.join(format!("a{}.json", "<b>\"'&"));
    save(&hostile_project(), &file);
    let page = dir.join("r.html");
    let o = run(&[
        "report",
        p(&file),
        "-o",
        p(&page),
        "--spread",
        "--runs",
        "50",
    ]);
    assert!(page.exists(), "{}", text(&o.stderr));
    let html = std::fs::read_to_string(&page).unwrap();
    assert_no_injection(&html, "report");
    // invariant: the text is shown, escaped, not dropped.
    let doc = Html::parse_document(&html);
    let all: String = doc.root_element().text().collect();
    assert!(
        all.contains("<script>alert(1)</script>"),
        "the user text is shown"
    );
    for layers in [
        "schematic,voltages,currents,stages,spread,noise",
        "schematic",
    ] {
        let svg = dir.join("d.svg");
        let o = run(&["export", p(&file), "-o", p(&svg), "--layers", layers]);
        assert!(svg.exists(), "{}", text(&o.stderr));
        let s = std::fs::read_to_string(&svg).unwrap();
        assert_no_injection(&format!("<html><body>{s}</body></html>"), "svg");
        std::fs::remove_file(&svg).unwrap();
    }
    let _ = std::fs::remove_dir_all(dir);
}

fn old_file(dir: &Path, name: &str) -> PathBuf {
    let f = dir.join(name);
    std::fs::write(&f, b"old").unwrap();
    f
}

#[test]
fn a_command_that_exits_2_writes_nothing() {
    // common practice (no source): exit 2 means "cannot proceed"; one rule
    // for every writing command — nothing written, an old file kept.
    let dir = scratch("exit2");
    let snap_out = old_file(&dir, "snap.json");
    let o = run(&["snap", "tests/fixtures/no-ground.json", "-o", p(&snap_out)]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    assert!(
        text(&o.stderr).contains("not solvable"),
        "{}",
        text(&o.stderr)
    );
    assert_eq!(std::fs::read(&snap_out).unwrap(), b"old");
    // Runs above the stated limit: refused before any work.
    let page = old_file(&dir, "r.html");
    let runs = (document::limits::MAX_SPREAD_RUNS + 1).to_string();
    let o = run(&[
        "report",
        "projects/two-stage-preamp.json",
        "-o",
        p(&page),
        "--spread",
        "--runs",
        &runs,
    ]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    assert!(text(&o.stderr).contains("--runs"), "{}", text(&o.stderr));
    assert_eq!(std::fs::read(&page).unwrap(), b"old");
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn a_written_report_of_an_unsolvable_circuit_exits_1_with_the_reason_on_stderr() {
    // invariant: the exit rule above — a report that was written is not
    // exit 2; what it could not show is on stderr, not only in the page.
    let dir = scratch("exit1");
    let page = old_file(&dir, "r.html");
    let o = run(&["report", "tests/fixtures/no-ground.json", "-o", p(&page)]);
    assert_eq!(o.status.code(), Some(1), "{}", text(&o.stderr));
    assert!(
        text(&o.stderr).contains("not solvable"),
        "{}",
        text(&o.stderr)
    );
    assert!(std::fs::read_to_string(&page).unwrap().contains("<html"));
    let _ = std::fs::remove_dir_all(dir);
}

#[cfg(unix)]
mod atomic {
    use super::*;
    use std::os::unix::fs::{MetadataExt, PermissionsExt};

    fn mode(f: &Path) -> u32 {
        std::fs::metadata(f).unwrap().mode() & 0o7777
    }

    #[test]
    fn a_private_file_stays_private_and_keeps_its_owner() {
        // invariant: replacing a file's contents keeps its mode and owner (as
        // an in-place write would); a 600 file came back 644.
        let dir = scratch("mode");
        let f = old_file(&dir, "amp.svg");
        std::fs::set_permissions(&f, std::fs::Permissions::from_mode(0o600)).unwrap();
        let o = run(&["export", "projects/common-emitter.json", "-o", p(&f)]);
        assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
        assert_eq!(mode(&f), 0o600);
        assert!(
            std::fs::read(&f).unwrap().starts_with(b"<?xml")
                || std::fs::read(&f).unwrap().starts_with(b"<svg")
        );
        // The owner: only a process that may change owners can test it.
        if std::os::unix::fs::chown(&f, Some(12_345), Some(12_345)).is_ok() {
            document::write_atomic(&f, b"again").unwrap();
            let m = std::fs::metadata(&f).unwrap();
            assert_eq!((m.uid(), m.gid()), (12_345, 12_345));
        }
        let _ = std::fs::remove_dir_all(dir);
    }

    #[test]
    fn a_read_only_file_is_refused_with_a_message() {
        // common practice (no source): editors refuse to replace a file the
        // user made read-only even when the folder is writable.
        let dir = scratch("readonly");
        let f = old_file(&dir, "amp.svg");
        std::fs::set_permissions(&f, std::fs::Permissions::from_mode(0o444)).unwrap();
        let o = run(&["export", "projects/common-emitter.json", "-o", p(&f)]);
        assert_eq!(o.status.code(), Some(2));
        let e = text(&o.stderr);
        assert!(e.contains("read-only"), "{e}");
        assert_eq!(std::fs::read(&f).unwrap(), b"old");
        assert_eq!(mode(&f), 0o444);
        assert_eq!(
            std::fs::read_dir(&dir).unwrap().count(),
            1,
            "no temporary file left"
        );
        let _ = std::fs::remove_dir_all(dir);
    }

    #[test]
    fn a_link_is_written_through_not_replaced() {
        // invariant: writing to a symbolic link writes the file it points at
        // (as `open(2)` does); the link stays a link.
        let dir = scratch("link");
        std::fs::create_dir_all(dir.join("real")).unwrap();
        let real = old_file(&dir.join("real"), "amp.svg");
        let link = dir.join("link.svg");
        std::os::unix::fs::symlink("real/amp.svg", &link).unwrap();
        let o = run(&["export", "projects/common-emitter.json", "-o", p(&link)]);
        assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
        assert!(std::fs::symlink_metadata(&link)
            .unwrap()
            .file_type()
            .is_symlink());
        assert_ne!(std::fs::read(&real).unwrap(), b"old");
        let _ = std::fs::remove_dir_all(dir);
    }

    #[test]
    fn a_long_legal_file_name_is_written() {
        // source: POSIX NAME_MAX / Linux ext4 and tmpfs: a file name may be up
        // to 255 bytes; the temporary name must fit too.
        let dir = scratch("long");
        let name = format!("{}.svg", "a".repeat(245));
        assert_eq!(name.len(), 249);
        let f = dir.join(&name);
        let o = run(&["export", "projects/common-emitter.json", "-o", p(&f)]);
        assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
        assert!(f.exists());
        let _ = std::fs::remove_dir_all(dir);
    }

    #[test]
    fn sigint_and_sigterm_remove_the_partial_temporary_file() {
        // invariant: a writer stopped by SIGINT or SIGTERM leaves the old file
        // whole and no hidden temporary file beside it.
        for sig in ["-INT", "-TERM"] {
            let dir = scratch(&format!("sig{sig}"));
            let f = old_file(&dir, "amp.svg");
            let marker = std::env::temp_dir()
                .join(format!("biasline-trust-marker{sig}-{}", std::process::id()));
            let _ = std::fs::remove_file(&marker);
            let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_biasline"))
                .args(["export", "projects/common-emitter.json", "-o", p(&f)])
                .current_dir(root())
                .env(document::PAUSE_ENV, &marker)
                .stdout(std::process::Stdio::null())
                .stderr(std::process::Stdio::null())
                .spawn()
                .unwrap();
            let start = std::time::Instant::now();
            while !marker.exists() {
                assert!(start.elapsed().as_secs() < 120, "the writer never paused");
                std::thread::sleep(std::time::Duration::from_millis(20));
            }
            let k = std::process::Command::new("kill")
                .args([sig, &child.id().to_string()])
                .status()
                .unwrap();
            assert!(k.success());
            let status = child.wait().unwrap();
            assert!(!status.success());
            let left: Vec<_> = std::fs::read_dir(&dir)
                .unwrap()
                .flatten()
                .map(|e| e.file_name())
                .collect();
            assert_eq!(left.len(), 1, "{sig}: {left:?}");
            assert_eq!(std::fs::read(&f).unwrap(), b"old");
            let _ = std::fs::remove_file(&marker);
            let _ = std::fs::remove_dir_all(dir);
        }
    }
}

#[test]
fn snap_never_writes_nan_and_nothing_writes_a_file_the_loader_refuses() {
    // invariant: IEC 60063 rounding keeps a positive finite value positive and
    // finite (to 4 significant digits), down to the smallest normal doubles.
    let e24 = biasline::design::eseries::find("E24").unwrap();
    for v in [1e-307, 2.2e-300, 4.7e300] {
        let r = e24.nearest(v);
        assert!(r.is_finite() && (r / v - 1.0).abs() < 0.1, "{v} → {r}");
    }
    let dir = scratch("snap");
    let mut doc = demo("common-emitter.json");
    let r = doc
        .parts
        .iter_mut()
        .find(|p| p.kind == document::PartKind::Resistor)
        .unwrap();
    r.parameters.insert("resistance".into(), 1.1e-307);
    let file = dir.join("tiny.json");
    save(&doc, &file);
    let out = dir.join("out.json");
    let o = run(&["snap", p(&file), "-o", p(&out)]);
    assert!(
        o.status.code().is_some_and(|c| c <= 2),
        "{}",
        text(&o.stderr)
    );
    if out.exists() {
        // invariant: what the program writes, it reads back.
        let t = std::fs::read_to_string(&out).unwrap();
        assert!(!t.contains("null"), "{t}");
        document::load_str(&t).unwrap();
    } else {
        assert_eq!(o.status.code(), Some(2));
    }
    // The writers' check: a document the loader refuses is not written and
    // the message names the part.
    let mut bad = demo("common-emitter.json");
    bad.parts[1].position = [5_000_000, 0];
    let target = dir.join("bad.json");
    let e = document::save_file_checked(&bad, &target)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains(&bad.parts[1].designator) && !target.exists(),
        "{e}"
    );
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn a_very_long_label_is_shown_without_a_panic() {
    // invariant: no panic on user input; the formatter's width argument is
    // limited to u16 (65,535), and a label that long was used as the width.
    let dir = scratch("label");
    let mut doc = demo("common-emitter.json");
    doc.labels[0].name = "v".repeat(70_000);
    let file = dir.join("long.json");
    save(&doc, &file);
    for args in [
        &["spread", p(&file), "--runs", "20"][..],
        &["nets", p(&file)],
        &["analyze", p(&file)],
    ] {
        let o = run(args);
        assert!(
            o.status.code().is_some_and(|c| c <= 1),
            "{args:?}: {}",
            text(&o.stderr)
        );
    }
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn coordinates_are_bounded_when_the_file_is_read() {
    // invariant: every coordinate within the stated limit
    // (document::geometry_limits), so no drawing is sized by an unchecked
    // number; the message names the wire or annotation.
    let limit = document::geometry_limits::MAX_COORDINATE;
    let dir = scratch("coords");
    let mut doc = demo("common-emitter.json");
    doc.wires[0].points = vec![[i32::MIN, 2], [i32::MAX, 2]];
    let file = dir.join("wide.json");
    save(&doc, &file);
    let o = run(&["export", p(&file), "-o", p(&dir.join("x.png"))]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o.stderr).contains("wire 1"), "{}", text(&o.stderr));
    let mut doc = demo("common-emitter.json");
    doc.layout
        .annotations
        .insert("voltages/vout".into(), [1e9, 0.0]);
    save(&doc, &file);
    let o = run(&["report", p(&file), "-o", p(&dir.join("r.html"))]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o.stderr).contains("voltages/vout"),
        "{}",
        text(&o.stderr)
    );
    assert!(!dir.join("r.html").exists() && !dir.join("x.png").exists());
    // At the limit the file reads.
    let mut doc = demo("common-emitter.json");
    doc.labels[0].position = [limit, -limit];
    assert!(document::load_str(&document::to_json(&doc)).is_ok());
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn a_png_above_the_pixel_limit_is_refused_with_its_size_and_the_svg_way() {
    // invariant: the raster is bounded (render::png::MAX_PIXELS); the SVG of
    // the same sheet is written.
    let dir = scratch("raster");
    let mut doc = demo("common-emitter.json");
    // A label far off: the sheet spans 30,000 grid units (288,000 px at 1×).
    doc.labels[1].position = [30_000, 30_000];
    let file = dir.join("big.json");
    save(&doc, &file);
    let png = dir.join("x.png");
    let o = run(&["export", p(&file), "-o", p(&png)]);
    assert_eq!(o.status.code(), Some(2));
    let e = text(&o.stderr);
    assert!(e.contains("megapixels") && e.contains("SVG"), "{e}");
    assert!(!png.exists());
    let svg = dir.join("x.svg");
    let o = run(&["export", p(&file), "-o", p(&svg)]);
    assert!(
        o.status.code().is_some_and(|c| c <= 1),
        "{}",
        text(&o.stderr)
    );
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn arguments_out_of_range_are_refused_with_the_range() {
    // common practice (no source): a negative value is a value, refused with
    // a message about it, not taken for an option.
    let base = [
        "design", "--supply", "12", "--gain", "20dB", "--load", "10k",
    ];
    let with = |extra: &[&str]| {
        let mut a: Vec<&str> = base.to_vec();
        a.extend_from_slice(extra);
        run(&a)
    };
    let o = with(&["--zin", "-20k", "--low", "20"]);
    assert_eq!(o.status.code(), Some(2));
    let e = text(&o.stderr);
    assert!(
        e.contains("zin") && !e.contains("unexpected argument"),
        "{e}"
    );
    // A 1e-30 Hz corner asked for a 6.8e25 F capacitor.
    let o = with(&["--zin", "20k", "--low", "1e-30"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o.stderr).contains("100 mHz"), "{}", text(&o.stderr));
    // source: IEC 60063 series span real parts; 1e-300 Ω gave "0 Ω (−100 %)".
    let o = run(&["preferred", "1e-300", "--parallel"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o.stderr).contains("1 mΩ to 1 TΩ"),
        "{}",
        text(&o.stderr)
    );
    let o = run(&["preferred", "4k9", "--parallel"]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
}

#[test]
fn more_threads_than_cores_cost_no_more_than_all_cores() {
    // common practice (no source): workers beyond the cores only add
    // switching; 10,000 asked for ran past 30 s where one took 0.05 s.
    let time = |threads: &str| {
        let t = std::time::Instant::now();
        let o = run(&[
            "spread",
            "projects/common-emitter.json",
            "--runs",
            "200",
            "--threads",
            threads,
        ]);
        assert!(
            o.status.code().is_some_and(|c| c <= 1),
            "{}",
            text(&o.stderr)
        );
        (t.elapsed().as_secs_f64(), o.stdout)
    };
    let (one, a) = time("1");
    let (many, b) = time("10000");
    // invariant: the same seed gives the same numbers on any number of threads.
    assert_eq!(a, b);
    assert!(
        many < 5.0 * one + 2.0,
        "1 thread {one:.2} s, 10,000 asked {many:.2} s"
    );
}

#[test]
fn an_annotation_at_the_coordinate_limit_is_drawn_quickly() {
    // invariant: drawing work is bounded by what is drawn, not by the area
    // a leader spans (an annotation at 1e6 took 24 GB and minutes).
    let limit = document::geometry_limits::MAX_COORDINATE as f64;
    let dir = scratch("far");
    let mut doc = demo("common-emitter.json");
    doc.layout
        .annotations
        .insert("voltages/vout".into(), [limit, -limit]);
    doc.wires[0].points = vec![[-900_000, 2], [900_000, 2]];
    let file = dir.join("far.json");
    save(&doc, &file);
    let t = std::time::Instant::now();
    let o = run(&["export", p(&file), "-o", p(&dir.join("x.svg"))]);
    assert!(
        o.status.code().is_some_and(|c| c <= 1),
        "{}",
        text(&o.stderr)
    );
    assert!(t.elapsed().as_secs_f64() < 20.0, "{:?}", t.elapsed());
    let _ = std::fs::remove_dir_all(dir);
}
