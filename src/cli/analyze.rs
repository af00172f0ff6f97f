//! `biasline analyze FILE [--json]`: the DC operating point, the small-signal
//! models and stage figures, and the noise paragraph, as text or JSON.

use super::*;

/// Version of the `analyze --json` schema (docs/analyze-json.md).
pub const ANALYZE_SCHEMA_VERSION: u32 = 1;

pub(super) fn analyze(file: &Path, json: bool, out: &mut dyn Write) -> Result<i32, Failure> {
    let doc = load(file)?;
    let nl = netlist::connect(&doc);
    let assessment = crate::analysis::assess::Assessment::of(&doc, &nl);
    let verdict = assessment.verdict();
    let findings = assessment.rules;
    let op = match assessment.operating_point {
        Ok(op) => op,
        Err(e) => {
            if json {
                let v = failure_json(&e, file);
                writeln!(out, "{}", serde_json::to_string_pretty(&v).expect("json")).map_err(io)?;
                return Ok(EXIT_CANNOT);
            }
            return Err(Failure::cannot(format!(
                "{}: not solvable: {}",
                file.display(),
                e.to_string().trim_end()
            )));
        }
    };
    let rule_warnings: Vec<_> = findings
        .into_iter()
        .filter(|f| f.severity == Severity::Warning)
        .collect();
    let small = small_signal::small_signal(&doc, &nl, &op);
    if json {
        let v = full_json(
            &doc,
            &nl,
            &op,
            &rule_warnings,
            small.as_ref().ok(),
            noise::analyze_json(&doc),
            file,
        );
        writeln!(out, "{}", serde_json::to_string_pretty(&v).expect("json")).map_err(io)?;
    } else {
        analyze_text(&doc, &nl, &op, &rule_warnings, file, out).map_err(io)?;
        match &small {
            Ok((a, r)) => small_signal_text(a, r, out).map_err(io)?,
            Err(e) => writeln!(out, "\nSmall-signal figures unavailable: {e}").map_err(io)?,
        }
        noise::analyze_text(&doc, out).map_err(io)?;
    }
    Ok(verdict_code(verdict))
}

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
/// and `noise` (the value of [`noise::analyze_json`] or
/// [`noise::json_of`]). The design report reads its numbers from this.
pub fn full_json(
    doc: &Document,
    nl: &netlist::Netlist,
    op: &crate::analysis::dc::OperatingPoint,
    rule_warnings: &[netlist::Finding],
    small: Option<&small_signal::SmallSignalResults>,
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

pub(super) fn finite(v: f64) -> serde_json::Value {
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
        .transistors
        .iter()
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
    let diodes: Vec<_> = op
        .diodes
        .iter()
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

pub(super) fn analyze_text(
    doc: &Document,
    nl: &netlist::Netlist,
    op: &crate::analysis::dc::OperatingPoint,
    rule_warnings: &[netlist::Finding],
    file: &Path,
    out: &mut dyn Write,
) -> std::io::Result<()> {
    use crate::units::{format as f, Unit};
    writeln!(
        out,
        "{} — DC operating point at {} °C",
        file.display(),
        doc.analysis.ambient_celsius
    )?;
    writeln!(out, "\nNets")?;
    // Capped: a longer name runs past the column (the formatter's width is limited).
    let width = nl
        .nets
        .iter()
        .map(|n| n.name.len())
        .max()
        .unwrap_or(0)
        .min(64);
    for (id, n) in nl.nets.iter().enumerate() {
        if n.pins.is_empty() {
            continue;
        }
        writeln!(
            out,
            "  {:width$}  {}",
            n.name,
            f(op.net_voltages[id], Unit::Volt)
        )?;
    }
    writeln!(
        out,
        "\nParts (pin currents flow into the pin; power absorbed)"
    )?;
    for (p, r) in doc.parts.iter().zip(&op.parts) {
        if p.kind == crate::document::PartKind::Ground {
            continue;
        }
        let pins: Vec<String> = p
            .kind
            .pin_names()
            .iter()
            .zip(&r.pin_currents)
            .map(|(n, i)| format!("{n} {}", f(*i, Unit::Ampere)))
            .collect();
        writeln!(
            out,
            "  {:6} {:20} {:40} {}",
            r.designator,
            p.kind.word(),
            pins.join(", "),
            f(r.power, Unit::Watt)
        )?;
    }
    if !op.transistors.is_empty() {
        writeln!(out, "\nTransistors")?;
    }
    for t in &op.transistors {
        writeln!(
            out,
            "  {} ({}): {}; IC {}, IB {}, IE {}; VBE {}, VCE {}, VCB {}",
            t.designator,
            match t.polarity {
                crate::analysis::devices::bjt::Polarity::Npn => "NPN",
                crate::analysis::devices::bjt::Polarity::Pnp => "PNP",
            },
            t.region.words(),
            f(t.ic, Unit::Ampere),
            f(t.ib, Unit::Ampere),
            f(t.ie, Unit::Ampere),
            f(t.vbe, Unit::Volt),
            f(t.vce, Unit::Volt),
            f(t.vcb, Unit::Volt),
        )?;
        writeln!(
            out,
            "      hFE = IC/IB {:.1} (model βF {:.1}); βF sensitivity S {:.3}; \
             margin to saturation {}, above cut-off {}; power {}{}",
            t.dc_current_gain,
            t.forward_beta,
            t.beta_sensitivity,
            f(t.saturation_margin, Unit::Volt),
            f(t.cutoff_margin, Unit::Volt),
            f(t.power, Unit::Watt),
            t.junction_celsius
                .map(|tj| format!(", junction {}", crate::units::celsius(tj, 1)))
                .unwrap_or_default()
        )?;
    }
    if !op.diodes.is_empty() {
        writeln!(out, "\nDiodes")?;
    }
    for d in &op.diodes {
        writeln!(
            out,
            "  {}: {}, {} at {}, power {}",
            d.designator,
            match d.state {
                crate::analysis::dc::DiodeState::Forward => "conducting",
                crate::analysis::dc::DiodeState::Off => "off",
                crate::analysis::dc::DiodeState::Reverse => "reverse-biased",
            },
            f(d.current, Unit::Ampere),
            f(d.voltage, Unit::Volt),
            f(d.power, Unit::Watt)
        )?;
    }
    let warnings: Vec<_> = rule_warnings.iter().chain(&op.warnings).collect();
    writeln!(out, "\nWarnings: {}", warnings.len())?;
    for w in warnings {
        writeln!(out, "  {w}")?;
    }
    writeln!(
        out,
        "\nSolver: {} Newton iteration(s){}; Tellegen balance Σv·i = {:.3e} W",
        op.iterations,
        if op.aids.is_empty() {
            String::new()
        } else {
            format!("; {}", op.aids.join("; "))
        },
        op.tellegen_residual
    )?;
    Ok(())
}
