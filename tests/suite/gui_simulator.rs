//! The editor driven headless through iced_test: real widgets, real update.
#![cfg(feature = "gui")]

use biasline::document::{self, Document, PartKind};
use biasline::gui::app::App;
use biasline::gui::edit::pin_positions;
use biasline::gui::message::{Message, SheetInputKind};
use biasline::gui::panels;
use biasline::gui::{dialogs, drawer};
use iced::keyboard::key::Named;
use iced::{mouse, Event, Point, Settings, Size};
use iced_test::selector::Candidate;
use iced_test::Simulator;

mod spread_fet;

const WINDOW: (f32, f32) = (1400.0, 860.0);

fn sim(app: &App) -> Simulator<'_, Message> {
    Simulator::with_size(
        Settings::default(),
        Size::new(WINDOW.0, WINDOW.1),
        panels::view(app),
    )
}

/// Feed messages to the app's own update (tasks are not run: analyses
/// that are quick run inside update itself).
fn feed(app: &mut App, messages: impl IntoIterator<Item = Message>) -> usize {
    let mut n = 0;
    for m in messages {
        let _ = app.update(m);
        n += 1;
    }
    n
}

fn click_text(app: &mut App, label: &str) {
    let msgs: Vec<Message> = {
        let mut ui = sim(app);
        ui.click(label).unwrap_or_else(|e| panic!("{label}: {e}"));
        ui.into_messages().collect()
    };
    assert!(!msgs.is_empty(), "clicking {label:?} did nothing");
    feed(app, msgs);
}

/// Click on the canvas at a window position.
fn click_window(app: &mut App, at: Point) -> Vec<Message> {
    let msgs: Vec<Message> = {
        let mut ui = sim(app);
        ui.point_at(at);
        ui.simulate([
            Event::Mouse(mouse::Event::CursorMoved { position: at }),
            Event::Mouse(mouse::Event::ButtonPressed(mouse::Button::Left)),
            Event::Mouse(mouse::Event::ButtonReleased(mouse::Button::Left)),
        ]);
        ui.into_messages().collect()
    };
    feed(app, msgs.clone());
    msgs
}

/// The window position of the canvas's top-left corner, learnt from a move.
fn canvas_origin(app: &mut App) -> Point {
    let probe = Point::new(700.0, 400.0);
    let msgs: Vec<Message> = {
        let mut ui = sim(app);
        ui.point_at(probe);
        ui.simulate([Event::Mouse(mouse::Event::CursorMoved { position: probe })]);
        ui.into_messages().collect()
    };
    for m in &msgs {
        if let Message::Sheet(s) = m {
            if s.kind == SheetInputKind::Move {
                feed(app, msgs.clone());
                return Point::new(probe.x - s.position.x, probe.y - s.position.y);
            }
        }
    }
    panic!("the canvas did not report the pointer: {msgs:?}");
}

fn window_point(app: &App, origin: Point, grid: [i32; 2]) -> Point {
    let p = app
        .view_for(app.sheet.size)
        .to_screen([grid[0] as f64, grid[1] as f64]);
    Point::new(p.x + origin.x, p.y + origin.y)
}

/// Any text on screen that starts with `prefix`.
fn find_prefix(app: &App, prefix: &str) -> Option<String> {
    let mut ui = sim(app);
    let p = prefix.to_string();
    ui.find(move |c: Candidate<'_>| match c {
        Candidate::Text { content, .. } if content.starts_with(&p) => Some(content.to_string()),
        _ => None,
    })
    .ok()
}

/// Type `text` into the inspector field now showing `shown`, through the widget.
fn set_field(app: &mut App, shown: &str, key: &str, text: &str) {
    // The widget emits edits for the right parameter...
    let msgs: Vec<Message> = {
        let mut ui = sim(app);
        ui.click(shown)
            .unwrap_or_else(|e| panic!("field {shown}: {e}"));
        ui.typewrite("x");
        ui.into_messages().collect()
    };
    assert!(
        msgs.iter()
            .any(|m| matches!(m, Message::FieldEdited(k, t) if k == key && t.ends_with('x'))),
        "{msgs:?}"
    );
    // ...the user clears it and types the new value...
    feed(app, [Message::FieldEdited(key.into(), text.into())]);
    // ...and presses Enter in the field.
    let msgs: Vec<Message> = {
        let mut ui = sim(app);
        ui.click(text)
            .unwrap_or_else(|e| panic!("typed field {text}: {e}"));
        ui.tap_key(Named::Enter);
        ui.into_messages().collect()
    };
    assert!(
        msgs.iter()
            .any(|m| matches!(m, Message::FieldSubmitted(k) if k == key)),
        "{msgs:?}"
    );
    feed(app, msgs);
}

fn config_dir() {
    let d = std::env::temp_dir().join(format!("biasline-gui-test-{}", std::process::id()));
    std::env::set_var("BIASLINE_CONFIG_DIR", d);
}

#[test]
fn place_wire_set_value_undo_redo_save_open() {
    config_dir();
    let mut app = App::new(Document::new("bench"), None);
    let start = app.doc.clone();
    let origin = canvas_origin(&mut app);

    // Place a resistor and a transistor from the shelf.
    click_text(&mut app, "resistor   r");
    let at_r = window_point(&app, origin, [10, 10]);
    click_window(&mut app, at_r);
    assert_eq!(
        app.doc.parts.len(),
        1,
        "a click on the sheet places the part"
    );
    assert_eq!(app.doc.parts[0].kind, PartKind::Resistor);
    assert_eq!(app.doc.parts[0].designator, "R1");
    click_text(&mut app, "npn   n");
    let at_q = window_point(&app, origin, [18, 12]);
    click_window(&mut app, at_q);
    assert_eq!(app.doc.parts.len(), 2);
    assert_eq!(app.doc.parts[1].designator, "Q1");

    // Wire R1.b to Q1.base.
    let rb = pin_positions(&app.doc.parts[0])[1];
    let base = pin_positions(&app.doc.parts[1])[1];
    click_text(&mut app, "wire   w");
    let a = window_point(&app, origin, rb);
    click_window(&mut app, a);
    let b = window_point(&app, origin, base);
    click_window(&mut app, b);
    assert_eq!(app.doc.wires.len(), 1, "ending on a pin finishes the wire");
    let nl = biasline::netlist::connect(&app.doc);
    // invariant: a wire from one pin to another puts both pins on one net.
    assert_eq!(
        nl.pin_net(&app.doc, 0, "b"),
        nl.pin_net(&app.doc, 1, "base")
    );

    // Select the resistor and set its value; the inspector shows it.
    click_text(&mut app, "select   Esc");
    let body = window_point(&app, origin, app.doc.parts[0].position);
    click_window(&mut app, body);
    assert_eq!(
        app.inspector.part,
        Some(0),
        "a click on the body selects the part"
    );
    assert!(
        find_prefix(&app, "Q1.base: ").is_some(),
        "the nets list shows the joined net"
    );
    set_field(&mut app, "10 kΩ", "resistance", "4k7");
    assert_eq!(app.doc.parts[0].parameter("resistance"), Some(4700.0));
    {
        let mut ui = sim(&app);
        assert!(
            ui.find("4.7 kΩ").is_ok(),
            "the field shows the new value in engineering notation"
        );
    }

    // A bad value shows its message and leaves the document unchanged.
    let before_bad = app.doc.clone();
    let depth = app.history.depth();
    set_field(&mut app, "4.7 kΩ", "resistance", "4x7");
    assert_eq!(app.doc, before_bad);
    assert_eq!(app.history.depth(), depth, "a refused value is not an edit");
    let msg = find_prefix(&app, "not applied:").expect("inline message under the field");
    assert!(msg.contains("R1") && msg.contains("4x7"), "{msg}");

    // Undo everything through the strip, then redo it: exact both ways.
    let end = app.doc.clone();
    let steps = app.history.depth();
    assert!(steps >= 4, "place, place, wire, value: {steps}");
    for _ in 0..steps {
        click_text(&mut app, "undo");
    }
    assert_eq!(app.doc, start);
    for _ in 0..steps {
        click_text(&mut app, "redo");
    }
    assert_eq!(app.doc, end);
    assert!(app.title().contains("unsaved"), "{}", app.title());

    // Save as, then open it again: the same document.
    let dir = std::env::temp_dir().join(format!("biasline-gui-save-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("bench.json");
    click_text(&mut app, "save as");
    assert!(
        app.dialog.is_some(),
        "save as opens its dialog: {}",
        app.status
    );
    feed(
        &mut app,
        [Message::Dialog(dialogs::Message::PathEdited(
            path.display().to_string(),
        ))],
    );
    click_text(&mut app, "save to this path");
    assert!(path.exists());
    assert!(!app.title().contains("unsaved"), "{}", app.title());
    let saved = app.doc.clone();
    click_text(&mut app, "new");
    assert!(app.doc.parts.is_empty());
    click_text(&mut app, "open");
    feed(
        &mut app,
        [Message::Dialog(dialogs::Message::PathEdited(
            path.display().to_string(),
        ))],
    );
    click_text(&mut app, "open this file");
    assert_eq!(app.doc, saved);
    assert_eq!(document::load_file(&path).unwrap(), saved);
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn unsaved_changes_are_asked_about_before_new() {
    config_dir();
    let mut app = App::new(Document::new("t"), None);
    click_text(&mut app, "ground   g");
    let origin = canvas_origin(&mut app);
    let p = window_point(&app, origin, [5, 5]);
    click_window(&mut app, p);
    assert!(app.dirty);
    click_text(&mut app, "new");
    assert_eq!(app.doc.parts.len(), 1, "nothing is lost before an answer");
    assert!(find_prefix(&app, "This sheet has unsaved changes").is_some());
    click_text(&mut app, "cancel");
    assert_eq!(app.doc.parts.len(), 1);
    click_text(&mut app, "new");
    click_text(&mut app, "discard changes");
    assert!(app.doc.parts.is_empty());
}

#[test]
fn demo_window_shows_its_nets_findings_and_shelf() {
    config_dir();
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/two-stage-preamp.json"
    );
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let app = App::new(doc, Some(path.into()));
    assert_eq!(app.title(), "two-stage-preamp.json — Biasline");
    let mut ui = sim(&app);
    for t in [
        "shelf",
        "inspector",
        "nets",
        "findings",
        "resistor   r",
        "voltages",
        "currents",
        "stages",
    ] {
        assert!(ui.find(t).is_ok(), "{t} missing");
    }
    drop(ui);
    for net in ["VCC", "vin", "vout", "ground"] {
        assert!(
            find_prefix(&app, &format!("{net}: ")).is_some(),
            "net {net} missing"
        );
    }
    let mut ui = sim(&app);
    let shot = ui
        .snapshot(&biasline::gui::theme())
        .expect("the window draws headless");
    let _ = shot;
}

#[test]
fn node_voltage_appears_and_follows_a_value_change() {
    config_dir();
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/projects/common-emitter.json");
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let mut app = App::new(doc, Some(path.into()));
    let before = find_prefix(&app, "Q1.base: ").expect("the base net is listed");
    assert!(
        before.ends_with(" V"),
        "the base voltage is shown: {before}"
    );
    let origin = canvas_origin(&mut app);
    let r2 = app
        .doc
        .parts
        .iter()
        .position(|p| p.designator == "R2")
        .unwrap();
    let shown = biasline::units::format(
        app.doc.parts[r2].parameter("resistance").unwrap(),
        biasline::units::Unit::Ohm,
    );
    let body = window_point(&app, origin, app.doc.parts[r2].position);
    click_window(&mut app, body);
    assert_eq!(app.inspector.part, Some(r2), "a click on R2 selects it");
    // Halving the lower divider resistor must pull the base down.
    let half = app.doc.parts[r2].parameter("resistance").unwrap() / 2.0;
    set_field(&mut app, &shown, "resistance", &format!("{half}"));
    let after = find_prefix(&app, "Q1.base: ").unwrap();
    assert_ne!(before, after, "the base voltage follows the edit");
    let volts = |s: &str| -> f64 {
        let t = s.trim_start_matches("Q1.base: ");
        biasline::gui::value::parse(t, biasline::units::Unit::Volt).unwrap()
    };
    // invariant: in a loaded divider, lowering the bottom resistor lowers the tap voltage.
    assert!(volts(&after) < volts(&before), "{before} → {after}");
}

#[test]
fn export_from_the_window_matches_the_screen() {
    config_dir();
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/projects/common-emitter.json");
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let mut app = App::new(doc, Some(path.into()));
    let dir = std::env::temp_dir().join(format!("biasline-gui-export-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let svg = dir.join("sheet.svg");
    click_text(&mut app, "export SVG");
    feed(
        &mut app,
        [Message::Dialog(dialogs::Message::PathEdited(
            svg.display().to_string(),
        ))],
    );
    click_text(&mut app, "export to this path");
    let text = std::fs::read_to_string(&svg).expect("the SVG is written");
    assert!(text.contains("<svg"));
    // invariant: screen and export draw one display list — every text the
    // sheet shows on the visible layers is in the file.
    let layers = app.layer_set();
    let shown: Vec<String> = app
        .scene
        .elements_in(layers)
        .filter_map(|e| match &e.primitive {
            biasline::scene::Primitive::Text(t) => Some(t.text.clone()),
            _ => None,
        })
        .collect();
    assert!(
        shown.iter().any(|t| t.ends_with(" V")),
        "voltage tags on screen"
    );
    for t in &shown {
        let escaped = t
            .replace('&', "&amp;")
            .replace('<', "&lt;")
            .replace('>', "&gt;");
        assert!(text.contains(&escaped), "{t} missing from the export");
    }
    let png = dir.join("sheet.png");
    click_text(&mut app, "export PNG");
    feed(
        &mut app,
        [Message::Dialog(dialogs::Message::PathEdited(
            png.display().to_string(),
        ))],
    );
    click_text(&mut app, "export to this path");
    let bytes = std::fs::read(&png).expect("the PNG is written");
    // source: PNG specification (ISO/IEC 15948), 5.2 — the eight-byte signature.
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn the_design_report_is_written_from_the_window_like_the_command_writes_it() {
    config_dir();
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/projects/common-emitter.json");
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let mut app = App::new(doc.clone(), Some(path.into()));
    let dir = std::env::temp_dir().join(format!("biasline-gui-report-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    // A name that is not HTML is refused in the dialog, nothing written.
    let wrong = dir.join("report.png");
    click_text(&mut app, "report HTML");
    feed(
        &mut app,
        [Message::Dialog(dialogs::Message::PathEdited(
            wrong.display().to_string(),
        ))],
    );
    click_text(&mut app, "write the report");
    assert!(!wrong.exists(), "a non-HTML name writes nothing");
    assert!(find_prefix(&app, &wrong.display().to_string()).is_some());
    let html = dir.join("report.html");
    feed(
        &mut app,
        [Message::Dialog(dialogs::Message::PathEdited(
            html.display().to_string(),
        ))],
    );
    click_text(&mut app, "write the report");
    let page = std::fs::read_to_string(&html).expect("the report is written");
    // invariant: the window and `biasline report` build one page from one
    // library call — with the same layers, model and document bytes the
    // pages are identical.
    let opts = biasline::report::Options {
        layers: app.layer_set(),
        model: app.model_kind(),
        ..biasline::report::Options::default()
    };
    let json = document::to_json(&app.doc);
    let want =
        biasline::report::build(&app.doc, std::path::Path::new(path), json.as_bytes(), &opts)
            .unwrap();
    assert_eq!(page, want.html);
    assert!(page.contains("<section id=\"operating-point\""));
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn response_panel_and_stage_table_show_when_results_exist() {
    config_dir();
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/projects/common-emitter.json");
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let mut app = App::new(doc, Some(path.into()));
    {
        // invariant: opening a project with a signal path runs the small-signal analysis,
        // so the response panel and the stage table fill at once from the real results.
        let mut ui = sim(&app);
        assert!(
            ui.find("response (magnitude, phase)").is_ok(),
            "the sweep fills the response panel"
        );
        assert!(
            ui.find("Q1: common emitter, bypassed").is_ok(),
            "the stage table lists Q1"
        );
    }
    // invariant: without a sweep there is no response panel.
    app.drawer.response = None;
    {
        let mut ui = sim(&app);
        assert!(
            ui.find("response (magnitude, phase)").is_err(),
            "no sweep, no panel"
        );
    }
    // Then the panel with given data: a known curve.
    // A single-pole high-pass at 100 Hz (|H| = x/√(1+x²), x = f/fc).
    // source: first-order high-pass response, any circuits text (e.g. Sedra & Smith, 7th ed., §1.6).
    let frequencies: Vec<f64> = (0..=100).map(|k| 10f64.powf(k as f64 / 20.0)).collect();
    let magnitude_db = frequencies
        .iter()
        .map(|f| {
            let x = f / 100.0;
            20.0 * (x / (1.0 + x * x).sqrt()).log10()
        })
        .collect();
    let phase_degrees = frequencies
        .iter()
        .map(|f| (100.0 / f).atan().to_degrees())
        .collect();
    app.drawer.response = Some(biasline::gui::response::ResponseData {
        frequencies,
        magnitude_db,
        phase_degrees,
        lower_corner: Some(100.0),
        upper_corner: None,
        noise_density: None,
        loop_gain: None,
    });
    app.stages = vec![biasline::scene::StageCard {
        transistor: "Q1".into(),
        configuration: "common emitter".into(),
        elements: Vec::new(),
        models: Vec::new(),
        figures: Vec::new(),
        warnings: Vec::new(),
    }];
    app.rebuild_scene();
    let mut ui = sim(&app);
    assert!(ui.find("response (magnitude, phase)").is_ok());
    assert!(ui.find("Q1: common emitter").is_ok());
    let shot = ui
        .snapshot(&biasline::gui::theme())
        .expect("the plot draws");
    // Set BIASLINE_SNAPSHOT_DIR to keep the picture for a look.
    if let Some(dir) = std::env::var_os("BIASLINE_SNAPSHOT_DIR") {
        let _ = shot.matches_image(std::path::Path::new(&dir).join("response.png"));
    }
}

#[test]
fn dragging_a_part_moves_it_with_its_wires_and_undo_puts_it_back() {
    config_dir();
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/projects/common-emitter.json");
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let mut app = App::new(doc, Some(path.into()));
    let before = app.doc.clone();
    let nets_before = biasline::netlist::connect(&app.doc);
    let origin = canvas_origin(&mut app);
    let rc = app
        .doc
        .parts
        .iter()
        .position(|p| p.designator == "RC")
        .unwrap();
    let from = app.doc.parts[rc].position;
    let a = window_point(&app, origin, from);
    let b = window_point(&app, origin, [from[0] + 3, from[1]]);
    let msgs: Vec<Message> = {
        let mut ui = sim(&app);
        ui.point_at(a);
        ui.simulate([
            Event::Mouse(mouse::Event::CursorMoved { position: a }),
            Event::Mouse(mouse::Event::ButtonPressed(mouse::Button::Left)),
        ]);
        ui.point_at(b);
        ui.simulate([
            Event::Mouse(mouse::Event::CursorMoved { position: b }),
            Event::Mouse(mouse::Event::ButtonReleased(mouse::Button::Left)),
        ]);
        ui.into_messages().collect()
    };
    feed(&mut app, msgs);
    assert_eq!(app.doc.parts[rc].position, [from[0] + 3, from[1]]);
    // invariant: a move changes no connection — every pin keeps its net partners.
    let nets_after = biasline::netlist::connect(&app.doc);
    assert_eq!(nets_before.part_nets, nets_after.part_nets);
    assert_eq!(app.history.undo_name(), Some("move"));
    click_text(&mut app, "undo");
    assert_eq!(app.doc, before);
}

#[test]
fn every_net_readout_sums_to_zero() {
    config_dir();
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/two-stage-preamp.json"
    );
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let app = App::new(doc, None);
    assert!(app.ok_figures().is_some());
    for net in 0..app.derived.netlist.nets.len() {
        let lines = biasline::gui::readout::net_lines(&app, net);
        let sum = lines
            .iter()
            .find(|l| l.contains("sum into the pins"))
            .expect("sum shown");
        // invariant: Kirchhoff's current law — the currents into a node sum to zero.
        assert!(sum.contains(": 0 A (Kirchhoff"), "{lines:?}");
    }
}

#[test]
fn spread_button_runs_and_the_drawer_shows_the_hovered_net_histogram() {
    use biasline::gui::histogram::Stats;
    use biasline::gui::spread_view::{self, Target};
    config_dir();
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/two-stage-preamp.json"
    );
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let mut app = App::new(doc, Some(path.into()));
    assert!(
        find_prefix(&app, "press spread on the command strip").is_some(),
        "without a run the view says how to get one"
    );
    click_text(&mut app, "spread");
    assert!(app.drawer.spread.job.running, "the button starts a run");
    assert!(find_prefix(&app, "running the spread").is_some());
    // Tasks are not run here: drive the result message the task would send.
    let revision = app.revision();
    let run = spread_view::run(&app.doc, revision).expect("the demo spreads");
    let expected_runs = app.doc.spread.runs.min(spread_view::MAX_RUNS);
    assert_eq!(run.runs, expected_runs);
    feed(
        &mut app,
        [Message::Drawer(drawer::Message::SpreadDone(
            revision,
            std::sync::Arc::new(Ok(run.clone())),
        ))],
    );
    assert!(!app.drawer.spread.job.running);
    assert!(find_prefix(&app, "point at a net or a transistor").is_some());
    // A result for another revision (a document since replaced) is not taken.
    let before = app.drawer.spread.job.result.clone();
    feed(
        &mut app,
        [Message::Drawer(drawer::Message::SpreadDone(
            0,
            std::sync::Arc::new(Err("old".into())),
        ))],
    );
    assert_eq!(
        format!("{:?}", app.drawer.spread.job.result),
        format!("{before:?}")
    );

    // Hover Q1's base through the canvas, as a user would.
    let q1 = app
        .doc
        .parts
        .iter()
        .position(|p| p.designator == "Q1")
        .unwrap();
    let base = pin_positions(&app.doc.parts[q1])[1];
    let base_net = &app.derived.netlist.nets[app.derived.netlist.part_nets[q1][1]].name;
    let base_net = base_net.clone();
    let origin = canvas_origin(&mut app);
    let at = window_point(&app, origin, base);
    let msgs: Vec<Message> = {
        let mut ui = sim(&app);
        ui.point_at(at);
        ui.simulate([Event::Mouse(mouse::Event::CursorMoved { position: at })]);
        ui.into_messages().collect()
    };
    feed(&mut app, msgs);
    assert_eq!(
        app.drawer.spread.target,
        Some(Target::Net(base_net.clone()))
    );
    let line = find_prefix(&app, &format!("V({base_net}): "))
        .unwrap_or_else(|| panic!("no histogram line for {base_net}"));
    let samples = run.samples_of(&format!("V({base_net})")).unwrap();
    let stats = Stats::of(samples).unwrap();
    // invariant: every board that solved contributes one sample.
    assert_eq!(stats.count, run.solved());
    assert!(line.contains(&format!("{} runs", stats.count)), "{line}");
    // invariant: a mean lies between the smallest and largest sample.
    assert!(stats.min <= stats.mean && stats.mean <= stats.max);
    assert!(line.contains("mean") && line.contains("σ") && line.contains("nominal"));
    assert!(find_prefix(&app, &format!("{expected_runs} boards (seed")).is_some());
    // common practice (no source): tolerances move a divider-biased base by a
    // few percent, so the base voltage must spread (σ > 0) but stay near nominal.
    let nominal = run.nominal_of(&format!("V({base_net})")).unwrap();
    assert!(
        stats.sigma > 0.0 && stats.sigma < 0.2 * nominal.abs(),
        "{stats:?}"
    );
    // The pointer may leave the sheet for the drawer: the histogram stays.
    let away = Point::new(700.0, WINDOW.1 - 20.0);
    let msgs: Vec<Message> = {
        let mut ui = sim(&app);
        ui.point_at(away);
        ui.simulate([Event::Mouse(mouse::Event::CursorMoved { position: away })]);
        ui.into_messages().collect()
    };
    feed(&mut app, msgs);
    assert!(find_prefix(&app, &format!("V({base_net}): ")).is_some());

    // A transistor shows IC, and VCE at the switch.
    app.drawer.spread.target = Some(Target::Transistor("Q1".into()));
    assert!(find_prefix(&app, "IC(Q1): ").is_some());
    assert!(find_prefix(&app, "VCE(Q1): ").is_none());
    click_text(&mut app, "VCE");
    assert!(find_prefix(&app, "VCE(Q1): ").is_some());
    assert!(find_prefix(&app, "IC(Q1): ").is_none());
    let mut ui = sim(&app);
    let shot = ui
        .snapshot(&biasline::gui::theme())
        .expect("the histogram draws");
    if let Some(dir) = std::env::var_os("BIASLINE_SNAPSHOT_DIR") {
        let _ = shot.matches_image(std::path::Path::new(&dir).join("spread.png"));
    }
    drop(ui);

    // An edit makes the run stale.
    let _ = app.edit("retitle", |d| {
        d.title.push_str(" (b)");
        Ok(())
    });
    assert!(find_prefix(&app, "stale: the document changed").is_some());
}

#[test]
fn waveform_button_runs_and_the_drawer_shows_thd_and_the_clip_level() {
    use biasline::gui::wave_view;
    use std::sync::atomic::{AtomicBool, AtomicU32, Ordering};
    config_dir();
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/two-stage-preamp.json"
    );
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let mut app = App::new(doc, Some(path.into()));
    assert!(
        find_prefix(&app, "press waveform on the command strip").is_some(),
        "without a run the view says how to get one"
    );
    click_text(&mut app, "waveform");
    assert!(app.drawer.wave.job.running, "the button starts a run");
    assert!(find_prefix(&app, "running…").is_some(), "progress is shown");
    // Cancel: the flag the run reads is set.
    feed(&mut app, [Message::Drawer(drawer::Message::WaveformCancel)]);
    assert!(app.drawer.wave.cancel.load(Ordering::Relaxed));
    // A cancelled run stops with a message, not a panic.
    let stopped = wave_view::run(
        &app.doc,
        app.revision(),
        &AtomicBool::new(true),
        &AtomicU32::new(0),
    );
    assert!(stopped.unwrap_err().contains("cancelled"));
    // Tasks are not run here: drive the result message the task would send.
    let revision = app.revision();
    let progress = AtomicU32::new(0);
    let run = wave_view::run(&app.doc, revision, &AtomicBool::new(false), &progress)
        .expect("the demo runs");
    // invariant: progress ends within 0…100 %.
    assert!(progress.load(Ordering::Relaxed) <= 1000);
    feed(
        &mut app,
        [Message::Drawer(drawer::Message::WaveformDone(
            revision,
            std::sync::Arc::new(Ok(run.clone())),
        ))],
    );
    assert!(!app.drawer.wave.job.running);
    assert!(app.status.contains("THD"), "{}", app.status);
    let clip = find_prefix(&app, "clips (THD 1 %) at").expect("the clip level is shown");
    assert!(clip.contains("Q1") || clip.contains("Q2"), "{clip}");
    // The hovered net's trace comes from the kept states.
    let out = &run.distortion.output;
    let again = run.net_samples(&out.net).unwrap();
    // invariant: the output net read back from the states equals its samples.
    assert_eq!(again.len(), out.samples.len());
    assert!(again
        .iter()
        .zip(&out.samples)
        .all(|(a, b)| (a - b).abs() < 1e-12));
}

#[test]
fn design_dialog_places_a_stage_as_one_undoable_edit() {
    config_dir();
    let mut app = App::new(Document::new("design"), None);
    app.autosave = false;
    click_text(&mut app, "design a stage");
    // The dialog opens with the example target line; designing places the stage.
    click_text(&mut app, "design and place");
    assert!(app.dialog.is_none(), "the dialog closes after placing");
    // invariant: the placed stage is the designed one (every designed part present) …
    for d in [
        "Q1", "R1", "R2", "RC", "RE1", "RE2", "CE", "C1", "C2", "RL", "VS",
    ] {
        assert!(app.doc.part_by_designator(d).is_some(), "{d} missing");
    }
    assert!(
        app.status.contains("placed a designed stage"),
        "{}",
        app.status
    );
    // … and one undo takes all of it away.
    click_text(&mut app, "undo");
    assert!(app.doc.parts.is_empty(), "one undo removes the whole stage");
}

#[test]
fn the_distortion_layer_runs_off_the_ui_thread_and_puts_thd_on_the_cards() {
    config_dir();
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/two-stage-preamp.json"
    );
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let mut app = App::new(doc.clone(), Some(path.into()));
    let texts = |app: &App| -> Vec<String> {
        app.scene
            .elements
            .iter()
            .filter_map(|e| match &e.primitive {
                biasline::scene::Primitive::Text(t) => Some(t.text.clone()),
                _ => None,
            })
            .collect()
    };
    // common practice (no source): a costly layer is off until asked for.
    assert!(!texts(&app).iter().any(|t| t.contains("at the output")));
    let before = app.generation();
    click_text(&mut app, "distortion");
    // invariant: switching it on asks for a new analysis, run as a task
    // (tasks do not run here), so the window is not held up meanwhile.
    assert_eq!(app.generation(), before + 1, "an analysis was started");
    assert!(!texts(&app).iter().any(|t| t.contains("at the output")));
    // Deliver what the task computes.
    let nl = biasline::netlist::connect(&doc);
    let r = biasline::gui::annotate::analyse(&doc, &nl, true);
    let generation = app.generation();
    feed(
        &mut app,
        [Message::Analysed(
            generation,
            std::sync::Arc::new(r),
            std::time::Duration::from_millis(150),
        )],
    );
    let shown = texts(&app);
    // invariant: one distortion line per stage card, the same words as the
    // exported layer (tests/distortion_layer.rs checks its numbers).
    let lines = shown.iter().filter(|t| t.contains("at the output")).count();
    assert_eq!(lines, app.stages.len(), "{shown:?}");
    assert!(shown.iter().any(|t| t.starts_with("chain reaches THD")));
    // Off again: the lines go without another analysis.
    let g = app.generation();
    click_text(&mut app, "distortion");
    assert_eq!(app.generation(), g);
    assert!(!texts(&app).iter().any(|t| t.contains("at the output")));
}

#[test]
fn a_jfet_is_fitted_to_its_datasheet_from_the_inspector_and_undo_puts_it_back() {
    // source: IDSS is the drain current at VGS = 0 (its definition); here the fitted part's
    // self-bias current follows the square law ID = IDSS·(1 + ID·RSF/VP)² (the reference
    // page "Field-effect transistors"), and undo restores the preset's values exactly.
    config_dir();
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/piezo-jfet-preamp.json"
    );
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let mut app = App::new(doc, Some(path.into()));
    let q1 = app
        .doc
        .parts
        .iter()
        .position(|p| p.designator == "Q1")
        .unwrap();
    let before = app.doc.parts[q1].clone();
    let origin = canvas_origin(&mut app);
    let body = window_point(&app, origin, app.doc.parts[q1].position);
    click_window(&mut app, body);
    assert_eq!(app.inspector.part, Some(q1), "a click on Q1 selects it");
    assert!(
        find_prefix(&app, "from the datasheet").is_some(),
        "the inspector offers the datasheet line for a JFET"
    );
    // A refused line stays, with its reason, and changes nothing.
    feed(
        &mut app,
        [Message::FitEdited("--idss 4m --vgs-off 1.5".into())],
    );
    feed(&mut app, [Message::FitSubmitted]);
    assert!(app
        .inspector
        .fit_error
        .as_deref()
        .unwrap_or("")
        .contains("wrong sign"));
    assert_eq!(app.doc.parts[q1], before);
    // The user types the datasheet's figures and presses Enter in the box.
    let line = "--idss 4m --vgs-off -1.5 --lambda 0";
    feed(&mut app, [Message::FitEdited(line.into())]);
    let msgs: Vec<Message> = {
        let mut ui = sim(&app);
        ui.click(line)
            .unwrap_or_else(|e| panic!("the typed line: {e}"));
        ui.tap_key(Named::Enter);
        ui.into_messages().collect()
    };
    assert!(
        msgs.iter().any(|m| matches!(m, Message::FitSubmitted)),
        "{msgs:?}"
    );
    feed(&mut app, msgs);
    assert_eq!(app.inspector.fit_error, None);
    // The analysis runs in place when quick, as a task when the last one took long (a
    // loaded machine); deliver what the task computes either way (tasks do not run here).
    let nl = biasline::netlist::connect(&app.doc);
    let r = biasline::gui::annotate::analyse(&app.doc, &nl, false);
    let generation = app.generation();
    feed(
        &mut app,
        [Message::Analysed(
            generation,
            std::sync::Arc::new(r),
            std::time::Duration::from_millis(1),
        )],
    );
    let q = &app.doc.parts[q1];
    assert_eq!(q.parameters["threshold_voltage"], -1.5);
    // The readout follows: the self-bias current of the fitted part, fitted at 25 °C and
    // analysed at 27 °C (the reference page's laws: VTO drifts −2 mV/K in channel sense,
    // β ∝ T^−1.5).
    let rsf = 1000.0;
    let vto = -1.5 - 2e-3 * 2.0;
    let beta = 4e-3 / 2.25 * (300.15f64 / 298.15).powf(-1.5);
    let (mut lo, mut hi) = (0.0, -vto / rsf);
    for _ in 0..200 {
        let id = 0.5 * (lo + hi);
        let vov: f64 = -id * rsf - vto;
        if id - beta * vov * vov < 0.0 {
            lo = id;
        } else {
            hi = id;
        }
    }
    let id = lo;
    let shown = find_prefix(&app, "ID ").or_else(|| {
        let lines = biasline::gui::readout::part_lines(&app, q1);
        lines.into_iter().find(|l| l.contains("drain"))
    });
    let text = shown.expect("a drain-current readout");
    assert!(
        text.contains(&biasline::units::format(id, biasline::units::Unit::Ampere)),
        "{text} vs {id}"
    );
    // The bias readout of the FET: its region and its margin to the triode edge.
    let lines = biasline::gui::readout::part_lines(&app, q1);
    assert!(
        lines
            .iter()
            .any(|l| l.contains("saturation (constant current)"))
            && lines
                .iter()
                .any(|l| l.contains("margin to the triode edge")),
        "{lines:?}"
    );
    feed(
        &mut app,
        [Message::Command(biasline::gui::message::Command::Undo)],
    );
    assert_eq!(app.doc.parts[q1], before, "undo restores the preset's part");
}

#[test]
fn the_findings_panel_shows_the_phase_margin_and_an_unstable_circuit() {
    // invariant: the editor shows the stability command's own figures.
    config_dir();
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/projects/line-driver.json");
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let app = App::new(doc, Some(path.into()));
    let line = find_prefix(&app, "loop: phase margin").expect("a phase margin readout");
    assert!(line.contains("90.2° at Q2.base"), "{line}");
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/follower-lead-inductance.json"
    );
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let app = App::new(doc, Some(path.into()));
    let w = find_prefix(&app, "▲ ").expect("a warning line");
    assert!(w.contains("the operating point is unstable"), "{w}");
}

#[test]
fn the_stage_table_shows_a_block_with_its_figures() {
    // invariant: the editor's table shows the blocks the export draws, with
    // the same figures (the mirror demo: one block, three figures).
    config_dir();
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/projects/current-mirror.json");
    let doc = document::load_file(std::path::Path::new(path)).unwrap();
    let app = App::new(doc.clone(), Some(path.into()));
    let export = biasline::results::annotations_for(&doc);
    assert_eq!(app.blocks, export.blocks);
    let mut ui = sim(&app);
    assert!(ui.find("Block Q1, Q2: current mirror").is_ok());
    for label in ["  Io/Iref", "  Rout", "  Vcompl"] {
        assert!(ui.find(label).is_ok(), "{label} in the table");
    }
}
