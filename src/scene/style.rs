//! The look: palette, line weights and type sizes, chosen for print at 100 %
//! on A4 or Letter (one grid unit = 2.54 mm). Meaning is carried by shape and
//! text as well as colour: voltage tags are framed boxes with a `V` value,
//! current markers are arrows with an `A` value, stage cards are double-ruled
//! panels with headings, warnings start with a `!` mark.

use super::Colour;

/// Points to grid units (1 pt = 0.3528 mm, 1 grid = 2.54 mm).
pub const fn pt(points: f64) -> f64 {
    points * 0.352_777_8 / 2.54
}

/// Millimetres to grid units.
pub const fn mm(millimetres: f64) -> f64 {
    millimetres / 2.54
}

pub const INK: Colour = Colour::rgb(0x23262f);
pub const PAPER: Colour = Colour::rgb(0xfbf9f4);
pub const GRID: Colour = Colour::rgb(0xe7e2d6);
pub const VOLTAGE: Colour = Colour::rgb(0x0f766e);
pub const CURRENT: Colour = Colour::rgb(0xb45309);
pub const STAGE: Colour = Colour::rgb(0x5b21b6);
pub const WARNING: Colour = Colour::rgb(0xb91c1c);
/// Secondary ink for values and notes (ink at reduced strength, still > 7:1 on paper).
pub const INK_SOFT: Colour = Colour::rgb(0x4a4f5c);
/// Fill behind annotation text so it reads over the grid.
pub const TAG_FILL: Colour = Colour::rgb(0xffffff);

/// Symbols and wires.
pub const LINE: f64 = mm(0.35);
/// Annotation frames.
pub const FRAME: f64 = mm(0.2);
/// Leader lines from a moved annotation to its anchor.
pub const LEADER: f64 = mm(0.15);
/// Current arrows.
pub const ARROW: f64 = mm(0.3);
/// Junction dot radius.
pub const DOT: f64 = mm(0.55);

/// Designators and values on the schematic.
pub const TEXT_PART: f64 = pt(7.0);
/// Voltage tags and current values.
pub const TEXT_TAG: f64 = pt(6.5);
/// Stage-card body text.
pub const TEXT_CARD: f64 = pt(6.0);
/// Stage-card and title-block headings.
pub const TEXT_HEADING: f64 = pt(7.5);
/// The project title.
pub const TEXT_TITLE: f64 = pt(11.0);

/// Padding inside annotation frames.
pub const PAD: f64 = mm(0.6);
/// Clear space kept around annotations, symbols and wires when placing.
pub const CLEARANCE: f64 = mm(0.5);
/// Margin around the drawing.
pub const MARGIN: f64 = 2.0;
