//! The parts list grouped by value: designators, tolerances and the ratings
//! the checks used (the part's own, else its preset's).

use super::super::page::{cell, head, td, Show};
use super::super::Context;
use super::{close, open, para};
use crate::document::{Part, PartKind};
use crate::presets::{self, keys};
use crate::units::{self, Unit};
use std::fmt::Write;

fn main_unit(kind: PartKind) -> Unit {
    kind.main_unit()
}

/// The ratings a part is checked against, in words (value and where from).
fn ratings(p: &Part) -> String {
    let eff = presets::effective_parameters(p);
    let list: [(&str, &str, Unit); 12] = [
        (keys::POWER_RATING, "power", Unit::Watt),
        (keys::VOLTAGE_RATING, "voltage", Unit::Volt),
        (keys::MAX_COLLECTOR_EMITTER_VOLTAGE, "VCE max", Unit::Volt),
        (keys::MAX_COLLECTOR_BASE_VOLTAGE, "VCB max", Unit::Volt),
        (keys::MAX_EMITTER_BASE_VOLTAGE, "VEB max", Unit::Volt),
        (keys::MAX_COLLECTOR_CURRENT, "IC max", Unit::Ampere),
        (keys::MAX_DRAIN_SOURCE_VOLTAGE, "VDS max", Unit::Volt),
        (keys::MAX_GATE_SOURCE_VOLTAGE, "VGS max", Unit::Volt),
        (keys::MAX_DRAIN_CURRENT, "ID max", Unit::Ampere),
        (keys::MAX_FORWARD_CURRENT, "IF max", Unit::Ampere),
        (keys::MAX_REVERSE_VOLTAGE, "VR max", Unit::Volt),
        (keys::MAX_POWER, "P max", Unit::Watt),
    ];
    let mut out: Vec<String> = list
        .iter()
        .filter_map(|(k, w, u)| {
            let v = eff.get(*k)?;
            let from = if p.parameters.contains_key(*k) {
                ""
            } else {
                " (preset)"
            };
            Some(format!("{w} {}{from}", units::format(*v, *u)))
        })
        .collect();
    if let Some(t) = eff.get(keys::MAX_JUNCTION_CELSIUS) {
        out.push(format!("TJ max {t:.0} °C"));
    }
    out.join(", ")
}

/// Sort key that puts R2 before R10.
fn natural(s: &str) -> (String, u64, String) {
    let split = s.find(|c: char| c.is_ascii_digit()).unwrap_or(s.len());
    let (head, rest) = s.split_at(split);
    let end = rest
        .find(|c: char| !c.is_ascii_digit())
        .unwrap_or(rest.len());
    (
        head.to_string(),
        rest[..end].parse().unwrap_or(0),
        rest[end..].to_string(),
    )
}

pub fn render(ctx: &Context) -> String {
    let mut out = String::new();
    open(&mut out, "parts", "Parts list");
    // (group key) → indices of the parts in it, first seen first.
    let mut order: Vec<usize> = (0..ctx.doc.parts.len())
        .filter(|&i| ctx.doc.parts[i].kind != PartKind::Ground)
        .collect();
    order.sort_by_key(|&i| {
        (
            ctx.doc.parts[i].kind.word(),
            natural(&ctx.doc.parts[i].designator),
        )
    });
    let key_of = |p: &Part| {
        let value = p
            .kind
            .main_parameter()
            .and_then(|k| p.parameter(k))
            .map(|v| format!("{v:e}"))
            .unwrap_or_default();
        (
            p.kind.word(),
            value,
            p.parameter(keys::TOLERANCE).map(|t| format!("{t:e}")),
            p.preset.clone(),
            ratings(p),
        )
    };
    let mut groups: Vec<(_, Vec<usize>)> = Vec::new();
    for i in order {
        let k = key_of(&ctx.doc.parts[i]);
        match groups.iter_mut().find(|(g, _)| *g == k) {
            Some((_, v)) => v.push(i),
            None => groups.push((k, vec![i])),
        }
    }
    out.push_str("<table id=\"parts-list\">\n<caption>Parts, grouped by value</caption>\n");
    head(
        &mut out,
        &[
            "quantity",
            "designators",
            "kind",
            "value",
            "preset",
            "tolerance",
            "ratings used",
        ],
    );
    out.push_str("<tbody>\n");
    let r = &ctx.root;
    for (_, members) in &groups {
        let first = members[0];
        let p = &ctx.doc.parts[first];
        let designators: Vec<&str> = members
            .iter()
            .map(|&i| ctx.doc.parts[i].designator.as_str())
            .collect();
        let value = match p.kind.main_parameter() {
            Some(k) if p.parameters.contains_key(k) => cell(
                r,
                &format!("/project/parts/{first}/parameters/{k}"),
                Show::Si(main_unit(p.kind)),
            ),
            _ => td("—"),
        };
        let tolerance = if p.parameters.contains_key(keys::TOLERANCE) {
            cell(
                r,
                &format!("/project/parts/{first}/parameters/{}", keys::TOLERANCE),
                Show::Percent,
            )
        } else {
            td("default of the spread analysis")
        };
        let _ = writeln!(
            out,
            "<tr><td class=\"count\">{}</td>{}{}{}{}{}{}</tr>",
            members.len(),
            td(&designators.join(", ")),
            td(p.kind.word()),
            value,
            td(p.preset.as_deref().unwrap_or("")),
            tolerance,
            td(&ratings(p)),
        );
    }
    out.push_str("</tbody>\n</table>\n");
    para(
        &mut out,
        "note",
        "Ratings marked (preset) come from the part's generic preset; the others are set on the part. Tolerances not set on a part take the spread analysis's defaults by kind (resistor 5 %, film capacitor 10 %, electrolytic −20 %/+80 %).",
    );
    close(&mut out);
    out
}
