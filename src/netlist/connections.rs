//! The checks a file that gives nets by name must pass before anything is
//! drawn or solved: every name on a net of at least two pins, and never two
//! names on one net (a placed, wired part that its `connect` contradicts).

use super::{connection_name, Netlist, GROUND_NET};
use crate::document::{Document, LoadError};

fn part_item(doc: &Document, part: usize) -> String {
    let p = &doc.parts[part];
    if p.designator.is_empty() {
        format!("part {} ({})", part + 1, p.kind)
    } else {
        format!("part {} ({})", part + 1, p.designator)
    }
}

/// The first connection problem of a document, as the loader's typed error
/// naming the part and pin: a name no other pin shares, or a net given two
/// names by `connect` (the wires join pins the names keep apart).
pub fn check_connections(doc: &Document, nl: &Netlist) -> Result<(), LoadError> {
    for (id, net) in nl.nets.iter().enumerate() {
        if net.connected_names.len() > 1 {
            let mut names = net.connected_names.clone();
            names.sort();
            let named: Vec<String> = net
                .pins
                .iter()
                .filter_map(|p| {
                    connection_name(&doc.parts[p.part], p.pin)
                        .map(|n| format!("{} → \"{n}\"", p.label()))
                })
                .collect();
            let first = net
                .pins
                .iter()
                .find(|p| doc.parts[p.part].connect.contains_key(p.pin))
                .map_or(0, |p| p.part);
            return Err(LoadError::Item {
                item: part_item(doc, first),
                message: format!(
                    "the wires join pins that \"connect\" puts on different nets ({}): \
                     one net cannot be both {}; correct the wiring or the names",
                    named.join(", "),
                    names
                        .iter()
                        .map(|n| format!("\"{n}\""))
                        .collect::<Vec<_>>()
                        .join(" and ")
                ),
            });
        }
        let Some(name) = net.connected_names.first() else {
            continue;
        };
        let grounded = Some(id) == nl.ground && name == GROUND_NET;
        if net.pins.len() == 1 && net.wires.is_empty() && net.labels.is_empty() && !grounded {
            let pin = &net.pins[0];
            return Err(LoadError::Item {
                item: part_item(doc, pin.part),
                message: format!(
                    "pin \"{}\" is the only pin on net \"{name}\": a net joins two pins or more; \
                     check the spelling of the name or connect another pin to it",
                    pin.pin
                ),
            });
        }
    }
    Ok(())
}
