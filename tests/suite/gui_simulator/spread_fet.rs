//! The drawer's spread view on a FET circuit (issue 19) and the dialogs
//! component's recent-file list.

use super::*;
use biasline::gui::spread_view::{self, Target};
use std::sync::Arc;

/// The JFET demo with a finished spread run fed to the app, as the task would.
fn jfet_app_with_run() -> (App, spread_view::SpreadRun) {
    config_dir();
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/piezo-jfet-preamp.json"
    );
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let mut app = App::new(doc, Some(path.into()));
    click_text(&mut app, "spread");
    let revision = app.revision();
    let run = spread_view::run(&app.doc, revision).expect("the demo spreads");
    feed(
        &mut app,
        [Message::Drawer(drawer::Message::SpreadDone(
            revision,
            Arc::new(Ok(run.clone())),
        ))],
    );
    (app, run)
}

#[test]
fn a_jfet_shows_its_drain_current_gm_and_stage_figures_in_the_spread_view() {
    let (mut app, run) = jfet_app_with_run();
    // The pointer on the JFET's body picks it, as it picks a bipolar one.
    let at = app
        .doc
        .part_by_designator("Q1")
        .expect("the demo has Q1")
        .position;
    app.sheet.pointer = Some([at[0] as f64, at[1] as f64]);
    app.follow_pointer();
    assert_eq!(
        app.drawer.spread.target,
        Some(Target::Transistor("Q1".into()))
    );
    // The drain current first, alone; the switch offers the rest.
    let line = find_prefix(&app, "ID(Q1): ").expect("the drain current's histogram");
    assert!(line.contains(&format!("{} runs", run.solved())), "{line}");
    assert!(find_prefix(&app, "gm(Q1): ").is_none());
    for q in ["VDS", "gm", "Av", "Zin", "Zout"] {
        click_text(&mut app, q);
        let line = find_prefix(&app, &format!("{q}(Q1): "))
            .unwrap_or_else(|| panic!("no {q} histogram for the JFET"));
        assert!(line.contains("nominal"), "{line}");
        assert!(
            find_prefix(&app, "ID(Q1): ").is_none(),
            "one quantity at a time"
        );
    }
    // invariant: the view's nominal gm is the operating point's gm (one calculation).
    let nl = biasline::netlist::connect(&app.doc);
    let op = biasline::analysis::dc::solve(&app.doc, &nl).expect("the demo solves");
    let f = op.fets().find(|f| f.designator == "Q1").unwrap();
    assert_eq!(run.nominal_of("gm(Q1)"), Some(f.gm));
    assert_eq!(run.nominal_of("ID(Q1)"), Some(f.drain_current));
    // source: Silveira, Flandre & Jespers, "A gm/ID based methodology…",
    // IEEE JSSC 31(9), 1996 — gm/ID is largest in weak inversion, 1/(n·UT),
    // so below 1/UT ≈ 38.7 /V at 300 K on every board; and an N-channel part
    // conducting forward has ID > 0 and gm > 0.
    let gm = run.samples_of("gm(Q1)").unwrap();
    let id = run.samples_of("ID(Q1)").unwrap();
    assert_eq!(gm.len(), run.solved());
    for (g, i) in gm.iter().zip(id) {
        assert!(*g > 0.0 && *i > 0.0, "gm {g}, ID {i}");
        assert!(g / i < 1.0 / 0.025_85, "gm/ID {} /V", g / i);
    }
    // common practice (no source): IDSS and the pinch-off voltage spread
    // widely between parts, so gm must spread (σ > 0).
    let s = biasline::gui::histogram::Stats::of(gm).unwrap();
    assert!(s.sigma > 0.0, "{s:?}");
}

#[test]
fn a_bipolar_transistor_still_offers_ic_and_vce_only() {
    let (mut app, _run) = jfet_app_with_run();
    app.drawer.spread.target = Some(Target::Transistor("Q2".into()));
    assert!(find_prefix(&app, "IC(Q2): ").is_some());
    click_text(&mut app, "VCE");
    assert!(find_prefix(&app, "VCE(Q2): ").is_some());
    assert!(find_prefix(&app, "IC(Q2): ").is_none());
    // The choice is kept per quantity: the JFET, which has no VCE, shows ID.
    app.drawer.spread.target = Some(Target::Transistor("Q1".into()));
    assert!(find_prefix(&app, "ID(Q1): ").is_some());
}

#[test]
fn a_recent_file_in_the_open_dialog_opens_it() {
    config_dir();
    let dir = std::env::temp_dir().join(format!("biasline-recent-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("recent.json");
    let mut doc = Document::new("a recent one");
    doc.title = "a recent one".into();
    document::save_file(&doc, &path).unwrap();
    let mut app = App::new(Document::new("untitled"), None);
    app.recent = vec![path.clone()];
    click_text(&mut app, "open");
    assert!(app.dialog.is_some());
    click_text(&mut app, &path.display().to_string());
    assert!(app.dialog.is_none(), "the dialog closes");
    assert_eq!(app.path.as_deref(), Some(path.as_path()));
    assert_eq!(app.doc.title, "a recent one");
    let _ = std::fs::remove_dir_all(dir);
}
