//! `biasline analyze FILE [--json]`: the DC operating point, the small-signal
//! models and stage figures, and the noise paragraph, as text or JSON.

use super::*;
use biasline::results::Session;

pub(super) fn analyze(file: &Path, json: bool, out: &mut dyn Write) -> Result<i32, Failure> {
    let doc = load(file)?;
    let session = Session::new(&doc);
    if json {
        let v = session.analyze_json(file);
        writeln!(out, "{}", serde_json::to_string_pretty(&v).expect("json")).map_err(io)?;
        return Ok(match session.operating_point() {
            Ok(_) => verdict_code(session.verdict()),
            Err(_) => EXIT_CANNOT,
        });
    }
    let op = session.operating_point().map_err(|e| {
        Failure::cannot(format!(
            "{}: not solvable: {}",
            file.display(),
            e.to_string().trim_end()
        ))
    })?;
    // Blocks' warnings (a push-pull output idling hot, a thermal runaway)
    // count with the operating point's.
    let block_warnings: Vec<String> = match session.small_signal() {
        Some(Ok(a)) => a
            .blocks
            .iter()
            .flat_map(|b| b.warnings.iter().map(|w| format!("warning: {w}")))
            .collect(),
        _ => Vec::new(),
    };
    analyze_text(
        &doc,
        &session.netlist,
        op,
        &session.rule_warnings(),
        &block_warnings,
        file,
        out,
    )
    .map_err(io)?;
    match session.small_signal_and_response() {
        Some((a, r)) => small_signal_text(a, r, out).map_err(io)?,
        None => {
            if let Some(Err(e)) = session.small_signal() {
                writeln!(out, "\nSmall-signal figures unavailable: {e}").map_err(io)?
            }
        }
    }
    noise::analyze_text(session.noise(), out).map_err(io)?;
    // A block's warning counts in the exit code as any other warning does.
    let code = verdict_code(session.verdict());
    Ok(if block_warnings.is_empty() {
        code
    } else {
        code.max(EXIT_FINDINGS)
    })
}

pub(super) fn analyze_text(
    doc: &Document,
    nl: &netlist::Netlist,
    op: &biasline::analysis::dc::OperatingPoint,
    rule_warnings: &[netlist::Finding],
    block_warnings: &[String],
    file: &Path,
    out: &mut dyn Write,
) -> std::io::Result<()> {
    use biasline::units::{format as f, Unit};
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
    let largest = biasline::units::largest_current(op.parts.iter().flat_map(|p| &p.pin_currents));
    for (p, r) in doc.parts.iter().zip(&op.parts) {
        if p.kind == biasline::document::PartKind::Ground {
            continue;
        }
        let pins: Vec<String> = p
            .kind
            .pin_names()
            .iter()
            .zip(&r.pin_currents)
            .map(|(n, i)| format!("{n} {}", biasline::units::format_current(*i, largest)))
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
    if op.transistors().next().is_some() {
        writeln!(out, "\nTransistors")?;
    }
    for t in op.transistors() {
        writeln!(
            out,
            "  {} ({}): {}; IC {}, IB {}, IE {}; VBE {}, VCE {}, VCB {}",
            t.designator,
            match t.polarity {
                biasline::analysis::devices::bjt::Polarity::Npn => "NPN",
                biasline::analysis::devices::bjt::Polarity::Pnp => "PNP",
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
            "      hFE = IC/IB {} (model βF {}); βF sensitivity S {}; \
             margin to saturation {}, above cut-off {}; power {}{}",
            biasline::units::fixed(t.dc_current_gain, 1),
            biasline::units::fixed(t.forward_beta, 1),
            biasline::units::fixed(t.beta_sensitivity, 3),
            f(t.saturation_margin, Unit::Volt),
            f(t.cutoff_margin, Unit::Volt),
            f(t.power, Unit::Watt),
            t.junction_celsius
                .map(|tj| format!(", junction {}", biasline::units::celsius(tj, 1)))
                .unwrap_or_default()
        )?;
    }
    if op.fets().next().is_some() {
        writeln!(out, "\nField-effect transistors")?;
    }
    for t in op.fets() {
        writeln!(
            out,
            "  {} ({}): {}; ID {}; VGS {}, VDS {}",
            t.designator,
            t.kind_words(),
            t.region.words(),
            f(t.drain_current, Unit::Ampere),
            f(t.measured_vgs(), Unit::Volt),
            f(t.measured_vds(), Unit::Volt),
        )?;
        writeln!(
            out,
            "      gm {}, ro {}; margin to the triode edge {}; power {}{}",
            f(t.gm, Unit::Siemens),
            if t.ro.is_finite() {
                f(t.ro, Unit::Ohm)
            } else {
                "∞ (no channel-length modulation)".to_string()
            },
            f(t.triode_margin, Unit::Volt),
            f(t.power, Unit::Watt),
            t.junction_celsius
                .map(|tj| format!(", junction {}", biasline::units::celsius(tj, 1)))
                .unwrap_or_default()
        )?;
    }
    if op.diodes().next().is_some() {
        writeln!(out, "\nDiodes")?;
    }
    for d in op.diodes() {
        writeln!(
            out,
            "  {}: {}, {} at {}, power {}",
            d.designator,
            match d.state {
                biasline::analysis::dc::DiodeState::Forward => "conducting",
                biasline::analysis::dc::DiodeState::Off => "off",
                biasline::analysis::dc::DiodeState::Reverse => "reverse-biased",
            },
            f(d.current, Unit::Ampere),
            f(d.voltage, Unit::Volt),
            f(d.power, Unit::Watt)
        )?;
    }
    let warnings: Vec<_> = rule_warnings.iter().chain(&op.warnings).collect();
    writeln!(out, "\nWarnings: {}", warnings.len() + block_warnings.len())?;
    for w in warnings {
        writeln!(out, "  {w}")?;
    }
    for w in block_warnings {
        writeln!(out, "  {w}")?;
    }
    writeln!(
        out,
        "\nSolver: {} Newton iteration(s){}; Tellegen balance Σv·i = {}",
        op.iterations,
        if op.aids.is_empty() {
            String::new()
        } else {
            format!("; {}", op.aids.join("; "))
        },
        if op.tellegen_residual.is_finite() {
            format!("{:.3e} W", op.tellegen_residual)
        } else {
            "not computable (the products v·i overflow: a voltage or current past 1e150)".into()
        }
    )?;
    Ok(())
}
