//! Hardening of the drawings: small SVGs (the font cut to the glyphs used),
//! print-ready PNGs by default, huge titles cut, large sheets placed in
//! bounded time, spread bounded and stoppable on large boards.

use crate::cli_common;
use cli_common::{root, run, text};
use std::path::PathBuf;

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("biasline-harden-render-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir.join(name)
}

/// Width and height from a PNG's IHDR chunk.
fn png_size(bytes: &[u8]) -> (u32, u32) {
    // source: PNG specification (ISO/IEC 15948), §11.2.2 — IHDR width and height follow the signature and chunk header.
    assert!(bytes.starts_with(b"\x89PNG\r\n\x1a\n"));
    let w = u32::from_be_bytes(bytes[16..20].try_into().unwrap());
    let h = u32::from_be_bytes(bytes[20..24].try_into().unwrap());
    (w, h)
}

#[test]
fn an_svg_carries_only_the_glyphs_it_uses_and_keeps_its_text() {
    // common practice (no source): a report figure should be small; the
    // embedded font is cut to the glyphs drawn, text stays selectable text.
    let svg = scratch("ce.svg");
    let out = run(&[
        "export",
        "projects/two-stage-preamp.json",
        "-o",
        svg.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = std::fs::read_to_string(&svg).unwrap();
    assert!(s.len() < 300_000, "{} bytes", s.len());
    assert!(s.contains("@font-face") && s.contains("<text "));
    assert!(
        s.contains(">Q1<") || s.contains(">Q1 "),
        "designators stay text"
    );
}

#[test]
fn a_png_is_print_ready_by_default() {
    // common practice (no source): 150 dpi across an A4 page width (210 mm) is 1,240 px.
    let png = scratch("ce.png");
    let out = run(&[
        "export",
        "projects/common-emitter.json",
        "-o",
        png.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let (w, _) = png_size(&std::fs::read(&png).unwrap());
    assert!(w >= 1240, "{w} px wide");
    // invariant: an explicit --scale still decides (1 = 9.6 px per grid step).
    let out = run(&[
        "export",
        "projects/common-emitter.json",
        "-o",
        png.to_str().unwrap(),
        "--scale",
        "1",
    ]);
    assert_eq!(out.status.code(), Some(0));
    let (w1, _) = png_size(&std::fs::read(&png).unwrap());
    assert!(w1 < w && w1 * 2 >= w / 2, "{w1} vs {w}");
}

#[test]
fn a_huge_title_is_cut_on_the_drawing_and_kept_in_the_file() {
    // invariant: the drawing of a 5 MB title stays page-sized; the title
    // block shows its first characters and "…".
    let mut doc: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(root().join("projects/common-emitter.json")).unwrap(),
    )
    .unwrap();
    let long = "Very long title ".repeat(5_000_000 / 16);
    doc["title"] = serde_json::Value::String(long.clone());
    let project = scratch("long-title.json");
    std::fs::write(&project, doc.to_string()).unwrap();
    let svg = scratch("long-title.svg");
    let out = run(&[
        "export",
        project.to_str().unwrap(),
        "-o",
        svg.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = std::fs::read_to_string(&svg).unwrap();
    let drawn = s
        .lines()
        .find(|l| l.starts_with("<text") && l.contains("Very long"))
        .unwrap();
    assert!(
        drawn.contains('…') && drawn.len() < 1000,
        "{}",
        &drawn[..200.min(drawn.len())]
    );
    let png = scratch("long-title.png");
    let out = run(&[
        "export",
        project.to_str().unwrap(),
        "-o",
        png.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let (w, h) = png_size(&std::fs::read(&png).unwrap());
    assert!(w < 4000 && h < 4000, "{w} × {h}");
}

#[test]
fn a_large_sheet_exports_with_every_annotation_placed_apart() {
    // invariant: placement on a 2,000-part generated chain still gives
    // boxes that never overlap (the grid index finds every neighbour).
    use biasline::render::export::{ExportOptions, Format};
    let doc = biasline::generate::transistor_chain(500);
    let out = biasline::results::export::export(
        &doc,
        None,
        &ExportOptions {
            format: Format::Svg,
            ..ExportOptions::default()
        },
    )
    .unwrap();
    let boxes: Vec<_> = out.scene.annotations.iter().map(|a| a.rect).collect();
    assert!(boxes.len() > 1500, "{}", boxes.len());
    let mut sorted: Vec<usize> = (0..boxes.len()).collect();
    sorted.sort_by(|&a, &b| boxes[a].min[0].total_cmp(&boxes[b].min[0]));
    for (k, &i) in sorted.iter().enumerate() {
        for &j in &sorted[k + 1..] {
            if boxes[j].min[0] >= boxes[i].max[0] {
                break;
            }
            assert!(
                !boxes[i].overlaps(&boxes[j]),
                "{:?} and {:?}",
                boxes[i],
                boxes[j]
            );
        }
    }
}

#[test]
fn spread_on_a_large_board_runs_monte_carlo_only_and_says_why() {
    // invariant: corners and sensitivities need 4 solves per variable and 2
    // per quantity; past the bound they are left out and the report says so,
    // while every Monte Carlo run is still made.
    use biasline::spread::{self, evaluate::Board, Options};
    let doc = biasline::generate::transistor_chain(150);
    let board = Board::new(&doc);
    let opt = Options {
        runs: 3,
        ..Options::from_document(&doc)
    };
    let rep = spread::run(&doc, &board, &opt).unwrap();
    let why = rep.skipped.as_deref().expect("skipped, with the reason");
    assert!(why.contains("worst-case"), "{why}");
    assert_eq!(rep.runs, 3);
    assert_eq!(rep.corner_solves, 0);
    assert!(rep.quantities.iter().all(|q| q.worst_case.is_none()));
    assert!(rep.quantities.iter().any(|q| q.monte_carlo.is_some()));
    // invariant: a run asked to stop stops, with a message and no report.
    let stopped = Options {
        runs: 1000,
        ..Options::from_document(&doc)
    };
    stopped.progress.stop();
    let e = spread::run(&doc, &board, &stopped).unwrap_err();
    assert!(e.contains("stopped"), "{e}");
}
