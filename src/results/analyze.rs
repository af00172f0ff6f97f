//! The JSON of `biasline analyze --json` (docs/analyze-json.md): the DC
//! keys, the small-signal models and stages, the response and the noise
//! keys. The design report reads its numbers from the same object.

use super::small_signal::small_signal_json;
use crate::analysis::ac::FrequencyResponse;
use crate::analysis::small_signal::Analysis;
use crate::document::Document;
use crate::netlist;
use std::path::Path;

/// Version of the `analyze --json` schema (docs/analyze-json.md).
pub const ANALYZE_SCHEMA_VERSION: u32 = 1;

/// The object `analyze --json` prints when the operating point cannot be found.
pub fn failure_json(e: &crate::analysis::AnalysisError, file: &Path) -> serde_json::Value {
    use crate::analysis::AnalysisError;
    let (kind, findings) = match e {
        AnalysisError::Rules(f) => ("rules", f.clone()),
        AnalysisError::Singular { .. } => ("singular", Vec::new()),
        AnalysisError::NoConvergence { .. } => ("no_convergence", Vec::new()),
    };
    serde_json::json!({
        "schema": ANALYZE_SCHEMA_VERSION,
        "file": file.display().to_string(),
        "solved": false,
        "error": { "kind": kind, "message": e.to_string().trim_end(), "findings": findings },
    })
}

/// The whole object `analyze --json` prints for a solved document: the DC
/// keys, `small_signal` and `response` (when the small-signal analysis ran)
/// and `noise` (the value of [`super::noise::json_of`]). The design report reads its numbers from this.
pub fn full_json(
    doc: &Document,
    nl: &netlist::Netlist,
    op: &crate::analysis::dc::OperatingPoint,
    rule_warnings: &[netlist::Finding],
    small: Option<(&Analysis, &FrequencyResponse)>,
    noise: serde_json::Value,
    file: &Path,
) -> serde_json::Value {
    let mut v = analyze_json(doc, nl, op, rule_warnings, file);
    if let (Some(obj), Some((a, r))) = (v.as_object_mut(), small) {
        obj.insert("small_signal".into(), small_signal_json(a));
        obj.insert(
            "response".into(),
            serde_json::to_value(r).expect("response serialises"),
        );
    }
    if let Some(obj) = v.as_object_mut() {
        obj.insert("noise".into(), noise);
    }
    v
}

pub fn finite(v: f64) -> serde_json::Value {
    if v.is_finite() {
        serde_json::json!(v)
    } else {
        serde_json::Value::Null
    }
}

/// The stable JSON of `analyze --json` (every key in docs/analyze-json.md).
pub fn analyze_json(
    doc: &Document,
    nl: &netlist::Netlist,
    op: &crate::analysis::dc::OperatingPoint,
    rule_warnings: &[netlist::Finding],
    file: &Path,
) -> serde_json::Value {
    use serde_json::json;
    let nets: Vec<_> = nl
        .nets
        .iter()
        .enumerate()
        .filter(|(_, n)| !n.pins.is_empty())
        .map(|(id, n)| json!({ "name": n.name, "voltage": finite(op.net_voltages[id]) }))
        .collect();
    let parts: Vec<_> = doc
        .parts
        .iter()
        .zip(&op.parts)
        .filter(|(p, _)| p.kind != crate::document::PartKind::Ground)
        .map(|(p, r)| {
            let pins: serde_json::Map<String, serde_json::Value> = p
                .kind
                .pin_names()
                .iter()
                .zip(&r.pin_currents)
                .map(|(n, i)| (n.to_string(), finite(*i)))
                .collect();
            json!({
                "designator": r.designator,
                "kind": p.kind.word(),
                "pin_currents": pins,
                "power": finite(r.power),
            })
        })
        .collect();
    let transistors: Vec<_> = op
        .transistors()
        .map(|t| {
            json!({
                "designator": t.designator,
                "polarity": t.polarity,
                "region": t.region,
                "collector_current": finite(t.ic),
                "base_current": finite(t.ib),
                "emitter_current": finite(t.ie),
                "base_emitter_voltage": finite(t.vbe),
                "collector_emitter_voltage": finite(t.vce),
                "collector_base_voltage": finite(t.vcb),
                "saturation_margin": finite(t.saturation_margin),
                "cutoff_margin": finite(t.cutoff_margin),
                "dc_current_gain": finite(t.dc_current_gain),
                "forward_beta": finite(t.forward_beta),
                "beta_sensitivity": finite(t.beta_sensitivity),
                "power": finite(t.power),
                "junction_celsius": t.junction_celsius.map(finite),
            })
        })
        .collect();
    let fets: Vec<_> = op
        .fets()
        .map(|t| {
            json!({
                "designator": t.designator,
                "kind": t.kind,
                "channel": t.channel,
                "region": t.region,
                "drain_current": finite(t.drain_current),
                "gate_source_voltage": finite(t.measured_vgs()),
                "drain_source_voltage": finite(t.measured_vds()),
                "triode_margin": finite(t.triode_margin),
                "transconductance": finite(t.gm),
                "output_resistance": t.ro.is_finite().then(|| finite(t.ro)),
                "power": finite(t.power),
                "junction_celsius": t.junction_celsius.map(finite),
            })
        })
        .collect();
    let diodes: Vec<_> = op
        .diodes()
        .map(|d| {
            json!({
                "designator": d.designator,
                "state": d.state,
                "current": finite(d.current),
                "voltage": finite(d.voltage),
                "power": finite(d.power),
            })
        })
        .collect();
    let warnings: Vec<_> = rule_warnings.iter().chain(&op.warnings).collect();
    json!({
        "schema": ANALYZE_SCHEMA_VERSION,
        "file": file.display().to_string(),
        "solved": true,
        "ambient_celsius": doc.analysis.ambient_celsius,
        "nets": nets,
        "parts": parts,
        "transistors": transistors,
        "field_effect_transistors": fets,
        "diodes": diodes,
        "warnings": warnings,
        "solver": {
            "iterations": op.iterations,
            "aids": op.aids,
            "tellegen_residual": finite(op.tellegen_residual),
        },
        "largest_voltage": {
            "voltage": finite(op.largest_voltage),
            "between": [op.largest_voltage_nets.0, op.largest_voltage_nets.1],
        },
    })
}
