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
    let _ = app.update(Message::Sheet(input(
        SheetInputKind::Press(Button::Left),
        at,
    )));
    let _ = app.update(Message::Sheet(input(
        SheetInputKind::Move,
        [at[0] + 4.0, at[1] + 2.0],
    )));
    assert_eq!(app.doc.parts[0].position, [start[0] + 4, start[1] + 2]);
    let _ = app.update(Message::Command(Command::Wire));
    assert!(!app.sheet.is_moving());
    let _ = app.update(Message::Sheet(input(
        SheetInputKind::Release(Button::Left),
        [at[0] + 4.0, at[1] + 2.0],
    )));
    assert_eq!(app.doc.parts[0].position, [start[0] + 4, start[1] + 2]);
    let _ = app.update(Message::Command(Command::Undo));
    assert_eq!(app.doc.parts.len(), 1, "undo takes back the move, not more");
    assert_eq!(app.doc.parts[0].position, start);
    assert!(app.status.contains("move"), "{}", app.status);
}
