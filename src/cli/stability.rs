//! `biasline stability FILE [--break PART.PIN] [--json]`: the circuit's own
//! poles at the operating point, the return ratio of every transistor's
//! controlled source with crossover and margins, and optionally the exact
//! loop gain at a named pin (double injection).

use super::*;
use biasline::analysis::stability::{LoopGain, Margins};
use biasline::units::{format as f, Unit};

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
    csv: bool,
    out: &mut dyn Write,
) -> Result<i32, Failure> {
    let doc = load(file)?;
    let session = biasline::results::Session::new(&doc);
    let r = biasline::results::stability::stability(&session, break_at)
        .map_err(|e| Failure::cannot(format!("{}: {e}", file.display())))?;
    let name = |p: usize| r.names.get(p).cloned().unwrap_or_default();
    if csv {
        let csv = biasline::results::stability::csv(&r);
        out.write_all(csv.as_bytes()).map_err(io)?;
    } else if json {
        let v = biasline::results::stability::json(&r);
        writeln!(out, "{}", serde_json::to_string_pretty(&v).expect("json")).map_err(io)?;
    } else {
        writeln!(out, "{} — stability at the operating point", doc.title).map_err(io)?;
        writeln!(
            out,
            "\nPoles ({} unknowns; {} infinite eigenvalues discarded):",
            r.poles.size, r.poles.infinite
        )
        .map_err(io)?;
        for p in &r.poles.poles {
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
        for (n, g, m) in &r.loops {
            writeln!(out, "{}", loop_line(n, g, m)).map_err(io)?;
        }
        if let Some((n, g, m)) = &r.broken {
            writeln!(out, "\nLoop gain at {n} (double injection):").map_err(io)?;
            writeln!(out, "{}", loop_line(n, g, m)).map_err(io)?;
        }
        if let Some(fb) = &r.feedback {
            writeln!(
                out,
                "\nFeedback around {} (the largest return ratio at midband):",
                name(fb.part)
            )
            .map_err(io)?;
            for l in biasline::results::stability::feedback_lines(fb, &name(fb.part)) {
                writeln!(out, "  {l}").map_err(io)?;
            }
            if let Some(t) = &r.textbook {
                let g = |x: f64| format!("{x:.4}").replace('-', "−");
                writeln!(
                    out,
                    "  {} feedback: {} {} exact, textbook estimate {} ({:+.1} %) from {}",
                    t.topology,
                    t.figure,
                    g(t.exact),
                    g(t.estimate),
                    t.difference_percent(),
                    t.formula
                )
                .map_err(io)?;
            }
        }
        for w in &r.unstable {
            writeln!(out, "\nWarning: {w}").map_err(io)?;
        }
    }
    let code = super::verdict_code(session.verdict());
    Ok(if r.unstable.is_empty() {
        code
    } else {
        code.max(EXIT_FINDINGS)
    })
}
