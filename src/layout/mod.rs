//! Automatic layout: a circuit given as connections (each part's pins to
//! named nets, no positions) drawn as a schematic a designer would put in a
//! report, and the same on demand for a placed sheet that has become messy.
//!
//! How a sheet is drawn:
//! - the supply rails run along the top (a negative rail along the bottom);
//!   every part tied to ground gets its own ground symbol at its foot;
//! - the signal flows left to right: the signal source first, then each
//!   stage in the order the stage recognition finds them, then the load;
//! - each transistor stands with its bias network around it: the base
//!   divider vertical above and below the base node, the collector resistor
//!   above, the emitter network below (a PNP drawn emitter up);
//! - a part between two signal nets (a coupling capacitor, a series
//!   resistor) lies horizontal between them; one that jumps back over a
//!   stage (feedback) lies on a row below the chain;
//! - wires are routed orthogonally by a maze router that never passes
//!   through a part or a pin it does not end on and crosses other wires
//!   only at right angles; where no route exists two net labels join the net.
//!
//! Placed parts of a mixed file stay where they are; the unplaced ones are
//! drawn beside them and joined to the placed ones by net labels.

mod classify;
mod measure;
mod place;
pub(crate) mod route;
mod wires;

pub use measure::{crossings, drawing_faults, wire_length};

use crate::document::{Document, PartKind, UNPLACED};
use crate::netlist::{self, GROUND_NET};

/// Whether any part of the document still needs a place on the sheet.
pub fn needs_layout(doc: &Document) -> bool {
    doc.parts.iter().any(|p| !p.is_placed())
}

/// Lay out every unplaced part: positions, wires, ground symbols, labels
/// where no wire fits. A fully placed document comes back unchanged.
pub fn lay_out(doc: &Document) -> Document {
    if !needs_layout(doc) {
        return doc.clone();
    }
    let nl = netlist::connect(doc);
    let chain = crate::analysis::stages::recognise(doc, &nl);
    let classes = classify::classify(doc, &nl);
    let plan = place::place(doc, &nl, &chain, &classes);
    wires::draw(doc, &nl, &classes, plan)
}

/// The same circuit given by connections: every part's pins named to its
/// nets, positions, wires, labels and annotation positions dropped, and
/// ground symbols left unplaced (the layout draws its own).
pub fn to_connections(doc: &Document) -> Document {
    let nl = netlist::connect(doc);
    let mut out = doc.clone();
    out.wires.clear();
    out.labels.clear();
    out.layout.annotations.clear();
    for (i, part) in out.parts.iter_mut().enumerate() {
        part.position = UNPLACED;
        part.rotation = 0;
        part.mirror = false;
        part.connect.clear();
        if part.kind == PartKind::Ground {
            continue;
        }
        for (k, pin) in part.kind.pin_names().iter().enumerate() {
            let Some(&net) = nl.part_nets.get(i).and_then(|v| v.get(k)) else {
                continue;
            };
            let name = if Some(net) == nl.ground {
                GROUND_NET.to_string()
            } else {
                nl.nets[net].name.clone()
            };
            part.connect.insert(pin.to_string(), name);
        }
    }
    out
}

/// Lay a placed sheet out afresh (the command's `--again` and the editor's
/// "tidy the sheet"): the same nets on new positions and wires. The result
/// is an ordinary wired sheet: the names the user gave by labels come back
/// as one label each, at a pin of their net, and no part keeps `connect`
/// (unless the wires could not join a net without it).
pub fn tidy(doc: &Document) -> Document {
    let before = netlist::connect(doc);
    let mut out = lay_out(&to_connections(doc));
    let mut wired = out.clone();
    for p in wired.parts.iter_mut() {
        p.connect.clear();
    }
    let laid = netlist::connect(&out);
    for net in before.nets.iter() {
        if net.named_by != netlist::NameSource::Label {
            continue;
        }
        let Some(id) = laid.net_by_name(&net.name) else {
            continue;
        };
        let Some(pin) = laid.nets[id].pins.first() else {
            continue;
        };
        if !wired.labels.iter().any(|l| l.name == net.name) {
            wired.labels.push(crate::document::NetLabel {
                name: net.name.clone(),
                position: pin.position,
            });
        }
    }
    // Only if the wires and labels alone make the very same nets.
    let check = netlist::connect(&wired);
    let names = |nl: &netlist::Netlist, d: &Document| -> Vec<Vec<String>> {
        d.parts
            .iter()
            .enumerate()
            .filter(|(_, p)| p.kind != PartKind::Ground)
            .map(|(i, _)| {
                nl.part_nets[i]
                    .iter()
                    .map(|n| nl.nets[*n].name.clone())
                    .collect()
            })
            .collect()
    };
    if names(&check, &wired) == names(&laid, &out) {
        out = wired;
    }
    out
}
