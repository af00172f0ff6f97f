//! Rules about the sheet as a whole that the per-part and per-net rules miss:
//! part ids used twice, a transistor with every pin on one net, a signal
//! source or load that names no part, control characters in the text that
//! the drawing and the files carry.

use super::rules::{Finding, Severity, Subject};
use super::Netlist;
use crate::document::{Document, PartKind};
use std::collections::BTreeMap;

pub(super) fn sheet_rules(doc: &Document, nl: &Netlist, out: &mut Vec<Finding>) {
    let error = |subject: Subject, position, message: String| Finding {
        severity: Severity::Error,
        subject,
        position,
        message,
    };

    // Part ids identify parts across edits and in the layout: one each.
    let mut by_id: BTreeMap<&str, usize> = BTreeMap::new();
    for p in &doc.parts {
        let n = by_id.entry(&p.id).or_default();
        *n += 1;
        if *n == 2 {
            out.push(error(
                Subject::Part(p.label()),
                Some(p.position),
                format!(
                    "part id \"{}\" is used by more than one part: give each part its own id",
                    p.id
                ),
            ));
        }
    }

    // A transistor with all three pins on one net is shorted out.
    for (i, p) in doc.parts.iter().enumerate() {
        if !p.kind.is_transistor() {
            continue;
        }
        let nets = &nl.part_nets[i];
        if nets.len() == 3 && nets[0] == nets[1] && nets[1] == nets[2] {
            out.push(error(
                Subject::Part(p.label()),
                Some(p.position),
                format!(
                    "{} has {} all on net {}: it is shorted out; \
                     wire each pin to its own net",
                    p.label(),
                    three_pins(p.kind),
                    nl.nets[nets[0]].name
                ),
            ));
        }
    }

    // The signal path names parts that exist and can play the role.
    let named = |role: &str, name: &Option<String>, kinds: &[PartKind], out: &mut Vec<Finding>| {
        let Some(d) = name else { return };
        match doc.part_by_designator(d) {
            None => out.push(error(
                Subject::Sheet,
                None,
                format!(
                    "the project's signal {role} is {d}, which is not on the sheet: \
                     name an existing part or clear it"
                ),
            )),
            Some(p) if !kinds.contains(&p.kind) => out.push(error(
                Subject::Part(p.label()),
                Some(p.position),
                format!(
                    "the project's signal {role} is {d}, a {}; it must be a {}",
                    p.kind,
                    kinds
                        .iter()
                        .map(|k| k.word())
                        .collect::<Vec<_>>()
                        .join(" or ")
                ),
            )),
            _ => {}
        }
    };
    named(
        "source",
        &doc.signal.source,
        &[PartKind::SignalSource, PartKind::VoltageSource],
        out,
    );
    named(
        "load",
        &doc.signal.load,
        &[
            PartKind::Resistor,
            PartKind::Capacitor,
            PartKind::PolarisedCapacitor,
            PartKind::Inductor,
            PartKind::Diode,
        ],
        out,
    );

    // Control characters break the drawing's text and every export.
    let mut text = |what: String, s: &str, allow_lines: bool, position| {
        let bad = s
            .chars()
            .find(|c| c.is_control() && !(allow_lines && matches!(c, '\n' | '\r' | '\t')));
        if let Some(c) = bad {
            out.push(error(
                Subject::Sheet,
                position,
                format!(
                    "{what} contains the control character U+{:04X}: remove it",
                    c as u32
                ),
            ));
        }
    };
    text("the title".into(), &doc.title, false, None);
    text("the notes".into(), &doc.notes, true, None);
    for p in &doc.parts {
        text(
            format!("designator {:?}", p.designator),
            &p.designator,
            false,
            Some(p.position),
        );
    }
    for l in &doc.labels {
        text(
            format!("net label {:?}", l.name),
            &l.name,
            false,
            Some(l.position),
        );
    }
}

/// "collector, base and emitter": a three-pin kind's pins in words.
fn three_pins(kind: crate::document::PartKind) -> String {
    match kind.pin_names() {
        [a, b, c] => format!("{a}, {b} and {c}"),
        pins => pins.join(", "),
    }
}
