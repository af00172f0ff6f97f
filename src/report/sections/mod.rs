//! The report's sections, in reading order. Each returns its HTML (a
//! `<section>`), or nothing when it has nothing to show.

mod blocks;
mod operating;
mod overview;
mod parts;
mod response;
mod spread;
mod stability;
mod stages;
pub mod transient;

mod noise;

use super::page::esc;
use super::Context;
use std::fmt::Write;

/// Every section that applies, in order.
pub fn all(ctx: &Context) -> Vec<String> {
    let mut out = vec![
        overview::title(ctx),
        overview::findings(ctx),
        overview::schematic(ctx),
    ];
    if ctx.not_solvable.is_none() {
        out.push(operating::render(ctx));
        if let Some(s) = blocks::render(ctx) {
            out.push(s);
        }
        out.push(stages::render(ctx));
        out.push(response::render(ctx));
        if let Some(s) = stability::render(ctx) {
            out.push(s);
        }
        out.push(noise::render(ctx));
        if let Some(s) = spread::render(ctx) {
            out.push(s);
        }
        if let Some(s) = transient::render(ctx) {
            out.push(s);
        }
    }
    out.push(parts::render(ctx));
    out
}

/// Open a section with its heading.
pub(super) fn open(out: &mut String, id: &str, heading: &str) {
    let _ = writeln!(out, "<section id=\"{id}\">\n<h2>{}</h2>", esc(heading));
}

pub(super) fn close(out: &mut String) {
    out.push_str("</section>\n");
}

/// A paragraph of plain text.
pub(super) fn para(out: &mut String, class: &str, s: &str) {
    if class.is_empty() {
        let _ = writeln!(out, "<p>{}</p>", esc(s));
    } else {
        let _ = writeln!(out, "<p class=\"{class}\">{}</p>", esc(s));
    }
}
