//! The loop gain at a pin named `PART.PIN` (the `--break` option and the
//! file's `analysis.loop_break`): the pin found in the linearised circuit,
//! the double injection over a sweep, and its margins.

use super::{double_injection, margins, BreakPoint, LoopGain, Margins};
use crate::analysis::linear::C64;
use crate::analysis::small_signal::SmallSignal;
use crate::document::Document;
use crate::netlist::Netlist;

/// The break point `text` (`PART.PIN`) names. Errors are plain sentences
/// naming the part or pin.
pub fn find(
    doc: &Document,
    nl: &Netlist,
    ss: &SmallSignal,
    text: &str,
) -> Result<BreakPoint, String> {
    let (part_name, pin) = text
        .split_once('.')
        .ok_or_else(|| "write PART.PIN, e.g. Q2.base".to_string())?;
    let part = doc
        .parts
        .iter()
        .position(|p| p.designator == part_name)
        .ok_or_else(|| format!("no part {part_name}"))?;
    let net = nl
        .pin_net(doc, part, pin)
        .ok_or_else(|| format!("{part_name} has no pin {pin:?}"))?;
    let node = ss.net_node.get(net).copied().unwrap_or(0);
    Ok(BreakPoint { part, node })
}

/// The loop gain at `at` over `freqs` and its margins (crossings found on
/// the exact loop gain, not the samples).
pub fn loop_at(
    ss: &SmallSignal,
    at: BreakPoint,
    freqs: &[f64],
) -> Result<(LoopGain, Margins), String> {
    let lc = &ss.circuit;
    let g = double_injection(lc, at, freqs).map_err(|e| e.to_string())?;
    let eval = |fr: f64| double_injection(lc, at, &[fr]).map_or(C64::default(), |g| g.t[0]);
    let m = margins(freqs, &g.t, &eval);
    Ok((g, m))
}
