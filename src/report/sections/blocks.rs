//! Blocks: groups of transistors read as one (a differential pair, a
//! push-pull output, a current mirror, …), each with its figures exact
//! beside the estimate and the formula it came from, or the reason there is
//! none, and the stages it takes in.

use super::super::page::{array, cell, esc, head, td, Show};
use super::super::Context;
use super::{close, open, para};
use crate::units::Unit;
use serde_json::Value;
use std::fmt::Write;

const BLOCKS: &str = "/analyze/small_signal/blocks";

/// How a figure of `unit` (its symbol in the JSON) is shown.
fn show(unit: &str) -> Show {
    Unit::ALL
        .into_iter()
        .find(|u| u.symbol() == unit && *u != Unit::None)
        .map_or(Show::Ratio(""), Show::Si)
}

fn words(v: &Value) -> Vec<String> {
    v.as_array()
        .map(|a| {
            a.iter()
                .filter_map(|x| x.as_str().map(str::to_string))
                .collect()
        })
        .unwrap_or_default()
}

pub(super) fn render(ctx: &Context) -> Option<String> {
    let blocks = array(&ctx.root, BLOCKS);
    if blocks.is_empty() {
        return None;
    }
    let mut out = String::new();
    open(&mut out, "blocks", "Blocks");
    para(
        &mut out,
        "",
        "Groups of transistors read as one block, with the figures a designer computes for \
         each; exact from the small-signal circuit, beside the textbook estimate where its \
         formula applies (otherwise the reason there is none).",
    );
    let stage_names: Vec<String> = array(&ctx.root, "/analyze/small_signal/stages")
        .iter()
        .map(|s| s["transistor"].as_str().unwrap_or_default().to_string())
        .collect();
    for (i, b) in blocks.iter().enumerate() {
        let base = format!("{BLOCKS}/{i}");
        let transistors = words(&b["transistors"]).join(", ");
        let _ = writeln!(
            out,
            "<h3>{}: {}</h3>",
            esc(&transistors),
            esc(b["words"].as_str().unwrap_or_default())
        );
        let mut facts = vec![format!(
            "input {}; output {}",
            words(&b["input_nets"]).join(" and "),
            words(&b["output_nets"]).join(" to ")
        )];
        let members = words(&b["members"]);
        if !members.is_empty() {
            facts.push(format!("with {}", members.join(", ")));
        }
        let stages: Vec<String> = b["stages"]
            .as_array()
            .map(|a| {
                a.iter()
                    .filter_map(|k| k.as_u64())
                    .filter_map(|k| stage_names.get(k as usize).cloned())
                    .collect()
            })
            .unwrap_or_default();
        if !stages.is_empty() {
            facts.push(format!(
                "takes in the stage{} of {} (in the stages section)",
                if stages.len() == 1 { "" } else { "s" },
                stages.join(", ")
            ));
        }
        para(&mut out, "", &facts.join("; "));
        for w in words(&b["warnings"]) {
            para(&mut out, "warning", &w);
        }
        for n in words(&b["notes"]) {
            para(&mut out, "", &n);
        }
        let _ = writeln!(
            out,
            "<table class=\"keep\">\n<caption>{}: figures</caption>",
            esc(&transistors)
        );
        head(
            &mut out,
            &["figure", "exact", "estimate", "difference", "estimate from"],
        );
        out.push_str("<tbody>\n");
        for (j, f) in b["figures"].as_array().into_iter().flatten().enumerate() {
            let p = format!("{base}/figures/{j}");
            let s = show(f["unit"].as_str().unwrap_or_default());
            let from = match (
                f["estimate_from"].as_str(),
                f["no_estimate_because"].as_str(),
            ) {
                (Some(x), _) => x.to_string(),
                (None, Some(why)) => format!("no estimate: {why}"),
                _ => String::new(),
            };
            let _ = writeln!(
                out,
                "<tr>{}{}{}{}{}</tr>",
                td(&format!(
                    "{} — {}",
                    f["label"].as_str().unwrap_or_default(),
                    f["name"].as_str().unwrap_or_default()
                )),
                cell(&ctx.root, &format!("{p}/exact"), s),
                cell(&ctx.root, &format!("{p}/estimate"), s),
                cell(
                    &ctx.root,
                    &format!("{p}/difference_percent"),
                    Show::PercentSigned
                ),
                td(&from)
            );
        }
        out.push_str("</tbody>\n</table>\n");
    }
    close(&mut out);
    Some(out)
}
