//! The sheet component alone: what pointer input proposes, and that it
//! never changes the document itself; and the app recording a move.

use super::*;
use crate::gui::app::App;
use crate::gui::edit;
use crate::gui::message::{Command, Message};

/// A view with grid point (x, y) at pixel (10x, 10y).
fn fixed_view(sheet: &mut Sheet) {
    sheet.view = Some(View {
        origin: Vector::new(0.0, 0.0),
        scale: 10.0,
    });
}

fn input(kind: SheetInputKind, grid: [f64; 2]) -> SheetInput {
    SheetInput {
        kind,
        position: Point::new(grid[0] as f32 * 10.0, grid[1] as f32 * 10.0),
        size: Size::new(900.0, 600.0),
        origin: Point::ORIGIN,
    }
}

fn one_resistor() -> Document {
    let mut d = Document::new("sheet test");
    edit::place(&mut d, PartKind::Resistor, [10, 10], 0, false);
    d
}

#[test]
fn a_click_proposes_a_placement_and_leaves_the_document_alone() {
    // invariant: the sheet reads the document and returns an edit for the app.
    let doc = one_resistor();
    let scene = Scene::default();
    let ctx = Context {
        doc: &doc,
        scene: &scene,
    };
    let mut sheet = Sheet::default();
    fixed_view(&mut sheet);
    sheet.set_tool(Tool::Place {
        kind: PartKind::Capacitor,
        rotation: 90,
        mirror: true,
    });
    let a = sheet.update(
        input(SheetInputKind::Press(Button::Left), [20.2, 5.9]),
        &ctx,
    );
    assert_eq!(
        a,
        Action::Place {
            kind: PartKind::Capacitor,
            at: [20, 6],
            rotation: 90,
            mirror: true
        }
    );
    assert_eq!(doc, one_resistor(), "the document is the app's to change");
    let p = sheet.pointer.expect("the pointer is on the sheet");
    assert!(
        (p[0] - 20.2).abs() < 1e-5 && (p[1] - 5.9).abs() < 1e-5,
        "{p:?}"
    );
    let right = sheet.update(
        input(SheetInputKind::Press(Button::Right), [1.0, 1.0]),
        &ctx,
    );
    assert_eq!(right, Action::Escape);
}

#[test]
fn a_wire_is_proposed_when_it_ends_on_a_pin() {
    // invariant: a wire is one edit, proposed when its end lands on a pin.
    let doc = one_resistor();
    let pin = edit::pin_positions(&doc.parts[0])[0];
    let scene = Scene::default();
    let ctx = Context {
        doc: &doc,
        scene: &scene,
    };
    let mut sheet = Sheet::default();
    fixed_view(&mut sheet);
    sheet.set_tool(Tool::Wire {
        points: Vec::new(),
        horizontal_first: true,
    });
    let start = [pin[0] as f64 - 6.0, pin[1] as f64 - 4.0];
    let press = |g| input(SheetInputKind::Press(Button::Left), g);
    assert_eq!(sheet.update(press(start), &ctx), Action::None);
    let end = [pin[0] as f64, pin[1] as f64];
    let Action::Wire(points) = sheet.update(press(end), &ctx) else {
        panic!("a click on a pin ends the wire");
    };
    assert_eq!(points.first(), Some(&[pin[0] - 6, pin[1] - 4]));
    assert_eq!(points.last(), Some(&pin));
    assert_eq!(points.len(), 3, "one bend: {points:?}");
    assert!(
        matches!(&sheet.tool, Tool::Wire { points, .. } if points.is_empty()),
        "the tool starts the next wire afresh"
    );
}

#[test]
fn a_drag_grabs_moves_by_whole_steps_and_ends() {
    // invariant: a drag is a grab, moves of whole grid steps, and an end.
    let doc = one_resistor();
    let scene = Scene::default();
    let ctx = Context {
        doc: &doc,
        scene: &scene,
    };
    let at = edit::pin_positions(&doc.parts[0])[0];
    let at = [at[0] as f64, at[1] as f64];
    let mut sheet = Sheet::default();
    fixed_view(&mut sheet);
    let press = input(SheetInputKind::Press(Button::Left), at);
    assert_eq!(sheet.update(press, &ctx), Action::Grab { selected: true });
    assert_eq!(sheet.selection.len(), 1);
    assert!(sheet.is_moving());
    let moved = |dx: f64, dy: f64| input(SheetInputKind::Move, [at[0] + dx, at[1] + dy]);
    assert_eq!(sheet.update(moved(0.3, 0.2), &ctx), Action::None);
    assert_eq!(sheet.update(moved(2.0, -1.0), &ctx), Action::MoveBy(2, -1));
    assert_eq!(sheet.update(moved(3.0, -1.0), &ctx), Action::MoveBy(1, 0));
    let release = input(
        SheetInputKind::Release(Button::Left),
        [at[0] + 3.0, at[1] - 1.0],
    );
    assert_eq!(sheet.update(release, &ctx), Action::MoveEnd);
    assert!(!sheet.is_moving());
    // Pressing the selected item again grabs without reselecting.
    assert_eq!(sheet.update(press, &ctx), Action::Grab { selected: false });
}

#[test]
fn a_move_cut_short_by_a_change_of_tool_is_kept_for_undo() {
    // invariant: undo never drops work — a move ended by a tool key is one
    // recorded edit, undone as a whole.
    let mut app = App::new(one_resistor(), None);
    fixed_view(&mut app.sheet);
    let start = app.doc.parts[0].position;
    let at = edit::pin_positions(&app.doc.parts[0])[0];
    let at = [at[0] as f64, at[1] as f64];
    send(&mut app, SheetInputKind::Press(Button::Left), at);
    send(&mut app, SheetInputKind::Move, [at[0] + 4.0, at[1] + 2.0]);
    assert_eq!(app.doc.parts[0].position, [start[0] + 4, start[1] + 2]);
    let _ = app.update(Message::Command(Command::Wire));
    assert!(!app.sheet.is_moving());
    send(
        &mut app,
        SheetInputKind::Release(Button::Left),
        [at[0] + 4.0, at[1] + 2.0],
    );
    assert_eq!(app.doc.parts[0].position, [start[0] + 4, start[1] + 2]);
    let _ = app.update(Message::Command(Command::Undo));
    assert_eq!(app.doc.parts.len(), 1, "undo takes back the move, not more");
    assert_eq!(app.doc.parts[0].position, start);
    assert!(app.status.contains("move"), "{}", app.status);
}

/// Send one pointer input to the app's sheet.
fn send(app: &mut App, kind: SheetInputKind, at: [f64; 2]) {
    let _ = app.update(Message::Sheet(input(kind, at)));
}

/// Grab the resistor of `one_resistor` and drag it by (4, 2) grid steps.
fn grab_and_drag(app: &mut App) -> ([f64; 2], GridPoint) {
    fixed_view(&mut app.sheet);
    let start = app.doc.parts[0].position;
    let at = edit::pin_positions(&app.doc.parts[0])[0];
    let at = [at[0] as f64, at[1] as f64];
    let press = input(SheetInputKind::Press(Button::Left), at);
    let _ = app.update(Message::Sheet(press));
    let to = [at[0] + 4.0, at[1] + 2.0];
    send(app, SheetInputKind::Move, to);
    assert_eq!(app.doc.parts[0].position, [start[0] + 4, start[1] + 2]);
    (to, start)
}

#[test]
fn a_middle_press_during_a_move_keeps_the_move_for_undo() {
    // invariant: undo never drops work — a pan begun mid-move ends the move.
    let mut app = App::new(one_resistor(), None);
    let (to, start) = grab_and_drag(&mut app);
    send(&mut app, SheetInputKind::Press(Button::Middle), to);
    send(&mut app, SheetInputKind::Release(Button::Middle), to);
    assert_eq!(app.history.undo_name(), Some("move"));
    let _ = app.update(Message::Command(Command::Undo));
    assert_eq!(app.doc.parts[0].position, start);
}

#[test]
fn an_undo_during_a_move_first_keeps_the_move() {
    // invariant: undo never drops work — undo mid-move takes back the move
    // itself, and the drag goes on moving nothing.
    let mut app = App::new(one_resistor(), None);
    let (to, start) = grab_and_drag(&mut app);
    let _ = app.update(Message::Command(Command::Undo));
    assert_eq!(app.doc.parts[0].position, start, "the move is undone");
    let further = [to[0] + 3.0, to[1]];
    send(&mut app, SheetInputKind::Move, further);
    send(&mut app, SheetInputKind::Release(Button::Left), further);
    assert_eq!(app.doc.parts[0].position, start);
    let _ = app.update(Message::Command(Command::Redo));
    assert_eq!(app.doc.parts[0].position, [start[0] + 4, start[1] + 2]);
}

#[test]
fn a_second_press_during_a_move_keeps_the_first_move() {
    // invariant: undo never drops work — a press while dragging (a release
    // the window missed) records the move so far before grabbing again.
    let mut app = App::new(one_resistor(), None);
    let (to, start) = grab_and_drag(&mut app);
    send(&mut app, SheetInputKind::Press(Button::Left), to);
    send(&mut app, SheetInputKind::Release(Button::Left), to);
    assert_eq!(app.history.undo_name(), Some("move"));
    let _ = app.update(Message::Command(Command::Undo));
    assert_eq!(app.doc.parts[0].position, start);
}

/// A small deterministic generator (64-bit LCG, high bits).
struct Lcg(u64);
impl Lcg {
    fn next(&mut self, n: u64) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (self.0 >> 33) % n
    }
}

#[test]
fn random_pointer_work_and_commands_undo_back_to_the_start() {
    // invariant: undo never drops work — whatever the pointer and the keys
    // do (drags cut short, middle presses mid-move, undo mid-drag), undoing
    // every step gives back the document opened, and as many redos give
    // back the document left; at rest every change is a step of the
    // history; no selection points past the document.
    let kinds = PartKind::ALL;
    let demos = [
        "two-stage-preamp.json",
        "piezo-jfet-preamp.json",
        "line-driver.json",
    ];
    for (demo, seed) in demos.iter().flat_map(|d| [1u64, 7, 8, 42].map(|s| (d, s))) {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("projects")
            .join(demo);
        let start = crate::document::load_file(&path).expect("demo loads");
        let mut app = App::new(start.clone(), None);
        app.sheet.view = Some(View {
            origin: Vector::new(20.0, 20.0),
            scale: 12.0,
        });
        let mut rng = Lcg(seed);
        let mut log = Vec::new();
        let mut rest = (app.doc.clone(), app.history.steps());
        for _ in 0..150 {
            // A gesture: a drag from a pin (sometimes cut short), one
            // pointer input, or one command.
            let g = [rng.next(70) as f64 + 0.1, rng.next(45) as f64 - 0.2];
            let mut gesture: Vec<(Option<SheetInputKind>, [f64; 2], Option<Command>)> = Vec::new();
            let pointer = |k: SheetInputKind, at: [f64; 2]| (Some(k), at, None);
            let command = |c: Command| (None, [0.0, 0.0], Some(c));
            let tool = |rng: &mut Lcg| match rng.next(5) {
                0 => Command::Select,
                1 => Command::Wire,
                2 => Command::Label,
                3 => Command::Escape,
                _ => Command::Place(kinds[rng.next(kinds.len() as u64) as usize]),
            };
            match rng.next(10) {
                0..=3 => {
                    let from = match app.doc.parts.len() {
                        n if n > 0 && rng.next(4) > 0 => {
                            let pin =
                                edit::pin_positions(&app.doc.parts[rng.next(n as u64) as usize]);
                            pin.first().map_or(g, |p| [p[0] as f64, p[1] as f64])
                        }
                        _ => g,
                    };
                    gesture.push(pointer(SheetInputKind::Press(Button::Left), from));
                    let mut at = from;
                    for _ in 0..1 + rng.next(4) {
                        at = [
                            at[0] + rng.next(7) as f64 - 3.0,
                            at[1] + rng.next(7) as f64 - 3.0,
                        ];
                        gesture.push(pointer(SheetInputKind::Move, at));
                    }
                    match rng.next(8) {
                        0 => gesture.push(pointer(SheetInputKind::Press(Button::Middle), at)),
                        1 => gesture.push(command(Command::Undo)),
                        2 => gesture.push(command(tool(&mut rng))),
                        3 => gesture.push(command(Command::Delete)),
                        4 => gesture.push(command(Command::Turn)),
                        _ => {}
                    }
                    gesture.push(pointer(SheetInputKind::Release(Button::Left), at));
                    gesture.push(pointer(SheetInputKind::Release(Button::Middle), at));
                }
                4..=6 => {
                    let kind = match rng.next(8) {
                        0..=2 => SheetInputKind::Press(Button::Left),
                        3 => SheetInputKind::Release(Button::Left),
                        4 => SheetInputKind::Move,
                        5 => SheetInputKind::Press(Button::Right),
                        _ => SheetInputKind::Scroll(if rng.next(2) == 0 { 1.0 } else { -1.0 }),
                    };
                    gesture.push(pointer(kind, g));
                }
                _ => {
                    let c = match rng.next(13) {
                        0 | 1 => tool(&mut rng),
                        2 => Command::Turn,
                        3 => Command::Flip,
                        4 => Command::Delete,
                        5 => Command::Copy,
                        6 => Command::Paste,
                        7 => Command::Duplicate,
                        8 => Command::Undo,
                        9 => Command::Redo,
                        10 => Command::ToggleBend,
                        11 => Command::ZoomIn,
                        _ => Command::Fit,
                    };
                    gesture.push(command(c));
                }
            }
            for step in gesture {
                let message = match step {
                    (Some(kind), at, _) => {
                        let mut i = input(kind, at);
                        i.position = app.view_for(app.sheet.size).to_screen(at);
                        Message::Sheet(i)
                    }
                    (None, _, Some(c)) => Message::Command(c),
                    _ => unreachable!("a step is a pointer input or a command"),
                };
                log.push(format!("{message:?}"));
                let _ = app.update(message);
                for item in &app.sheet.selection {
                    let ok = match *item {
                        Item::Part(k) => k < app.doc.parts.len(),
                        Item::Wire(k) => k < app.doc.wires.len(),
                        Item::Label(k) => k < app.doc.labels.len(),
                    };
                    assert!(
                        ok,
                        "{demo} seed {seed}: {item:?} past the document after {log:#?}"
                    );
                }
                // At rest (no move under way) every change of the document is a
                // step of the history.
                if !app.sheet.is_moving() {
                    let now = (app.doc.clone(), app.history.steps());
                    assert!(
                        now.0 == rest.0 || now.1 != rest.1,
                        "{demo} seed {seed}: a change left out of the history after {:#?}",
                        &log[log.len().saturating_sub(30)..]
                    );
                    assert!(
                        app.history.can_undo() || app.doc == start,
                        "{demo} seed {seed}: nothing to undo, yet not the start, after {:#?}",
                        &log[log.len().saturating_sub(30)..]
                    );
                    rest = now;
                }
            }
        }
        // Let go of every button and put the tool down, then undo everything.
        for b in [Button::Left, Button::Middle] {
            let _ = app.update(Message::Sheet(input(
                SheetInputKind::Release(b),
                [1.0, 1.0],
            )));
        }
        let _ = app.update(Message::Command(Command::Escape));
        let _ = app.update(Message::Command(Command::Escape));
        let end = app.doc.clone();
        let mut undone = 0;
        while app.history.can_undo() {
            let _ = app.update(Message::Command(Command::Undo));
            undone += 1;
        }
        assert!(
            app.doc == start,
            "{demo} seed {seed}: {undone} undos do not give back the start after {log:#?}"
        );
        for _ in 0..undone {
            let _ = app.update(Message::Command(Command::Redo));
        }
        assert!(
            app.doc == end,
            "{demo} seed {seed}: as many redos do not give back the end"
        );
    }
}
