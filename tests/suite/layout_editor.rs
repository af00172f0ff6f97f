//! The editor and the layout: a connection file opens as a drawn sheet, and
//! "tidy the sheet" lays a messy sheet out afresh, keeping its nets, and is
//! undone in one step.

#![cfg(feature = "gui")]

use crate::layout_round_trip::pin_nets;
use biasline::document::{self, PartKind};
use biasline::gui::app::App;
use biasline::gui::message::{Command, Message};
use biasline::layout;
use std::path::Path;

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

#[test]
fn a_connection_file_opens_as_a_drawn_sheet() {
    // invariant: the editor never shows an unplaced part.
    let path = root().join("projects/connections/two-stage-preamp.json");
    let doc = biasline::gui::files::load_for_editing(&path).unwrap();
    assert!(!layout::needs_layout(&doc));
    assert!(layout::drawing_faults(&doc).is_empty());
    let drawn = document::load_file(&root().join("projects/two-stage-preamp.json")).unwrap();
    assert_eq!(pin_nets(&doc), pin_nets(&drawn));
}

#[test]
fn tidy_the_sheet_keeps_the_nets_and_undoes_in_one_step() {
    // A laid-out sheet (its parts keep their nets by name) whose resistors
    // were then shoved aside, leaving their wires dangling.
    let drawn = document::load_file(&root().join("projects/two-stage-preamp.json")).unwrap();
    let nets = pin_nets(&drawn);
    let mut messy = layout::lay_out(&layout::to_connections(&drawn));
    for p in messy.parts.iter_mut() {
        if p.kind == PartKind::Resistor {
            p.position[0] += 3;
            p.position[1] += 60;
        }
    }
    assert_eq!(pin_nets(&messy), nets);
    let mut app = App::new(messy.clone(), None);
    let _ = app.update(Message::Command(Command::Tidy));
    assert_ne!(app.doc, messy, "the sheet changed");
    assert!(layout::drawing_faults(&app.doc).is_empty());
    // invariant: tidying moves parts and wires, never a connection.
    assert_eq!(pin_nets(&app.doc), nets);
    let _ = app.update(Message::Command(Command::Undo));
    assert_eq!(app.doc, messy, "one undo brings the messy sheet back");
}
