//! The small-signal results of one operating point: models, stage
//! recognition, midband figures and the swept response, and the
//! `small_signal` object of `analyze --json`.

use crate::analysis::ac::{self, FrequencyResponse};
use crate::analysis::circuit;
use crate::analysis::dc::OperatingPoint;
use crate::analysis::small_signal::{self, Analysis};
use crate::document::Document;
use crate::netlist::Netlist;

/// The small-signal analysis and its swept response.
pub type SmallSignalResults = (Analysis, FrequencyResponse);

/// Linearise at the operating point, recognise the stages and compute the
/// midband figures (no sweep).
pub fn analysis(doc: &Document, nl: &Netlist, op: &OperatingPoint) -> Result<Analysis, String> {
    let c = circuit::build_unchecked(doc, nl).map_err(|e| e.to_string())?;
    Ok(small_signal::analyse(doc, nl, &c, op))
}

/// The frequency response of an analysis over the project's sweep.
pub fn response(doc: &Document, a: &Analysis) -> FrequencyResponse {
    ac::sweep(&a.small_signal, &a.chain, &a.midband, &doc.analysis)
}

/// Linearise at the operating point, recognise the stages, compute the
/// midband figures and sweep the response.
pub fn small_signal(
    doc: &Document,
    nl: &Netlist,
    op: &OperatingPoint,
) -> Result<SmallSignalResults, String> {
    let a = analysis(doc, nl, op)?;
    let r = response(doc, &a);
    Ok((a, r))
}

/// The `small_signal` object of `analyze --json` (docs/analyze-json.md).
pub fn small_signal_json(a: &Analysis) -> serde_json::Value {
    serde_json::json!({
        "transistors": a.small_signal.transistors,
        "field_effect_transistors": a.small_signal.fets,
        "diodes": a.small_signal.diodes,
        "chain_topology": a.chain,
        "stages": a.midband.stages,
        "chain": a.midband.chain,
        "blocks": a.blocks,
    })
}
