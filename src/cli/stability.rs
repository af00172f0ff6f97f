//! `biasline stability FILE [--break PART.PIN] [--json]`: the circuit's own
//! poles at the operating point, the return ratio of every transistor's
//! controlled source with crossover and margins, and optionally the exact
//! loop gain at a named pin (double injection).

use super::*;
use crate::analysis::linear::{log_frequencies, C64};
use crate::analysis::stability::{self, margins, BreakPoint, LoopGain, Margins};
use crate::units::{format as f, Unit};

fn loop_json(name: &str, g: &LoopGain, m: &Margins) -> serde_json::Value {
    serde_json::json!({
        "name": name,
        "t0": g.t0.re,
        "t0_phase_degrees": g.t0.arg().to_degrees(),
        "crossover_hz": m.crossover_hz,
        "phase_margin_degrees": m.phase_margin_deg,
        "phase_crossover_hz": m.phase_crossover_hz,
        "gain_margin_db": m.gain_margin_db,
    })
}

fn loop_line(name: &str, g: &LoopGain, m: &Margins) -> String {
    let opt = |v: Option<f64>, u: &str| v.map_or("—".to_string(), |x| format!("{x:.1} {u}"));
    format!(
        "  {name:<14} T0 {:>10.4}  crossover {:>12}  phase margin {:>9}  gain margin {:>9}",
        g.t0.re,
        m.crossover_hz.map_or("—".into(), |x| f(x, Unit::Hertz)),
        opt(m.phase_margin_deg, "°"),
        opt(m.gain_margin_db, "dB"),
    )
}

pub(super) fn stability(
    file: &Path,
    break_at: Option<&str>,
    json: bool,
    out: &mut dyn Write,
) -> Result<i32, Failure> {
    let doc = load(file)?;
    let nl = netlist::connect(&doc);
    let assessment = crate::analysis::assess::Assessment::of(&doc, &nl);
    let verdict = assessment.verdict();
    let op = assessment.operating_point.map_err(|e| {
        Failure::cannot(format!(
            "{}: not solvable: {}",
            file.display(),
            e.to_string().trim_end()
        ))
    })?;
    let c = crate::analysis::circuit::build_unchecked(&doc, &nl)
        .map_err(|e| Failure::cannot(format!("{}: {e}", file.display())))?;
    let ss = crate::analysis::small_signal::linearise(&c, &op);
    let lc = &ss.circuit;
    let a = &doc.analysis;
    let freqs = log_frequencies(a.frequency_start, a.frequency_stop, a.points_per_decade);
    let name = |p: usize| ss.designator(p).to_string();
    let poles =
        stability::poles(lc).map_err(|e| Failure::cannot(format!("{}: {e}", file.display())))?;
    let eval_rr = |el: usize| {
        move |fr: f64| stability::return_ratio(lc, el, &[fr]).map_or(C64::default(), |g| g.t[0])
    };
    let loops: Vec<(String, LoopGain, Margins)> = stability::return_ratios(lc, &freqs)
        .into_iter()
        .map(|(p, el, g)| {
            let m = margins(&freqs, &g.t, &eval_rr(el));
            (name(p), g, m)
        })
        .collect();
    let broken = match break_at {
        None => None,
        Some(text) => {
            let bad =
                |m: String| Failure::cannot(format!("{}: --break {text}: {m}", file.display()));
            let (part_name, pin) = text
                .split_once('.')
                .ok_or_else(|| bad("write PART.PIN, e.g. Q2.b".into()))?;
            let part = doc
                .parts
                .iter()
                .position(|p| p.designator == part_name)
                .ok_or_else(|| bad(format!("no part {part_name}")))?;
            let net = nl
                .pin_net(&doc, part, pin)
                .ok_or_else(|| bad(format!("{part_name} has no pin {pin:?}")))?;
            let node = ss.net_node.get(net).copied().unwrap_or(0);
            let at = BreakPoint { part, node };
            let g = stability::double_injection(lc, at, &freqs).map_err(|e| bad(e.to_string()))?;
            let eval = |fr: f64| {
                stability::double_injection(lc, at, &[fr]).map_or(C64::default(), |g| g.t[0])
            };
            let m = margins(&freqs, &g.t, &eval);
            Some((text.to_string(), g, m))
        }
    };
    let unstable: Vec<String> = poles
        .unstable()
        .map(|p| stability::poles::instability_message(p, &name))
        .collect();
    if json {
        let pj: Vec<_> = poles
            .poles
            .iter()
            .map(|p| {
                serde_json::json!({
                    "real_per_s": p.s.re, "imaginary_per_s": p.s.im,
                    "natural_hz": p.natural_hz, "oscillation_hz": p.oscillation_hz,
                    "damping": p.damping, "q": p.q, "unstable": p.unstable,
                    "parts": p.parts.iter().map(|(q, w)| serde_json::json!({"part": name(*q), "share": w})).collect::<Vec<_>>(),
                })
            })
            .collect();
        let v = serde_json::json!({
            "poles": pj,
            "infinite_eigenvalues": poles.infinite,
            "unknowns": poles.size,
            "loops": loops.iter().map(|(n, g, m)| loop_json(n, g, m)).collect::<Vec<_>>(),
            "break_point": broken.as_ref().map(|(n, g, m)| loop_json(n, g, m)),
            "warnings": unstable,
        });
        writeln!(out, "{}", serde_json::to_string_pretty(&v).expect("json")).map_err(io)?;
    } else {
        writeln!(out, "{} — stability at the operating point", doc.title).map_err(io)?;
        writeln!(
            out,
            "\nPoles ({} unknowns; {} infinite eigenvalues discarded):",
            poles.size, poles.infinite
        )
        .map_err(io)?;
        for p in &poles.poles {
            let parts: Vec<String> = p
                .parts
                .iter()
                .take(3)
                .map(|(q, w)| format!("{} {:.0} %", name(*q), w * 100.0))
                .collect();
            writeln!(
                out,
                "  s = {:>11.4e} {:+.4e}j /s  {:>12}  ζ {:>7.3}  Q {:>7}  {}",
                p.s.re,
                p.s.im,
                f(p.natural_hz, Unit::Hertz),
                p.damping,
                p.q.map_or("—".into(), |q| format!("{q:.2}")),
                parts.join(", ")
            )
            .map_err(io)?;
        }
        writeln!(
            out,
            "\nReturn ratio of each transistor's controlled source (Bode):"
        )
        .map_err(io)?;
        for (n, g, m) in &loops {
            writeln!(out, "{}", loop_line(n, g, m)).map_err(io)?;
        }
        if let Some((n, g, m)) = &broken {
            writeln!(out, "\nLoop gain at {n} (double injection):").map_err(io)?;
            writeln!(out, "{}", loop_line(n, g, m)).map_err(io)?;
        }
        for w in &unstable {
            writeln!(out, "\nWarning: {w}").map_err(io)?;
        }
    }
    let code = super::verdict_code(verdict);
    Ok(if unstable.is_empty() {
        code
    } else {
        code.max(EXIT_FINDINGS)
    })
}
