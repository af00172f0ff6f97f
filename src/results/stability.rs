//! The stability results of one operating point (`biasline stability`):
//! the circuit's own poles, the return ratio of every transistor's
//! controlled source with crossover and margins, optionally the exact loop
//! gain at a named pin (double injection), and their JSON.

use super::Session;
use crate::analysis::linear::{log_frequencies, C64};
use crate::analysis::stability::{self, margins, LoopGain, Margins, Poles};

/// Everything `stability` reports.
pub struct Stability {
    pub poles: Poles,
    /// Part names by document part index (for the poles' weights).
    pub names: Vec<String>,
    /// (transistor, return ratio over the sweep, margins).
    pub loops: Vec<(String, LoopGain, Margins)>,
    /// The loop gain at the break point asked for.
    pub broken: Option<(String, LoopGain, Margins)>,
    /// One sentence per pole in the right half-plane.
    pub unstable: Vec<String>,
    /// The sweep's frequencies, Hz (the loop gains' samples).
    pub freqs: Vec<f64>,
    /// The gain split and Blackman's impedances around the transistor
    /// with the largest midband return ratio (when there is a signal source
    /// and a load, and that return ratio is at least [`FEEDBACK_T0`]).
    pub feedback: Option<stability::FeedbackReading>,
    /// The textbook estimate of a series–shunt or shunt–shunt feedback
    /// amplifier beside its exact figure.
    pub textbook: Option<super::feedback_topology::Textbook>,
}

/// The smallest midband return ratio read as feedback worth splitting.
pub const FEEDBACK_T0: f64 = 0.5;

/// The feedback reading of an amplifier: around the transistor whose
/// controlled source has the largest midband return ratio, the split of
/// the gain from the source to the load and Blackman's Zin and Zout (cut as
/// the whole-amplifier figures cut).
pub fn feedback(
    doc: &crate::document::Document,
    nl: &crate::netlist::Netlist,
    ss: &crate::analysis::small_signal::SmallSignal,
    loops: &[(usize, usize, LoopGain)],
) -> Option<stability::FeedbackReading> {
    use crate::analysis::linear::Cut;
    let (part, element, _) = loops
        .iter()
        .filter(|(_, _, g)| g.t0.re.abs() >= FEEDBACK_T0)
        .max_by(|a, b| a.2.t0.re.abs().total_cmp(&b.2.t0.re.abs()))?;
    let chain = crate::analysis::stages::recognise(doc, nl);
    let (src, load) = (chain.source.as_ref()?, chain.load.as_ref()?);
    // A floating load's gain and Zout are taken across it; the split here
    // is to ground, so it is left out rather than read wrong.
    if load.other_net.is_some() {
        return None;
    }
    let node = |n: usize| ss.net_node.get(n).copied().unwrap_or(0);
    let (ni, no) = (node(src.input), node(load.net));
    let cut_in = [Cut {
        part: src.feed,
        node: ni,
    }];
    let cut_out = [Cut {
        part: load.part,
        node: no,
    }];
    stability::feedback_reading(
        &ss.circuit,
        *part,
        *element,
        ss.signal?,
        (ni, &cut_in),
        (no, &cut_out),
    )
}

/// Poles and loop gains of a session's operating point. `break_at` is a
/// `PART.PIN` where the loop gain is wanted by double injection (the
/// file's `analysis.loop_break` when `None`). Errors
/// are plain sentences naming what is wrong.
pub fn stability(s: &Session, break_at: Option<&str>) -> Result<Stability, String> {
    let doc = s.doc;
    let nl = &s.netlist;
    let op = s
        .operating_point()
        .map_err(|e| format!("not solvable: {}", e.to_string().trim_end()))?;
    let c = crate::analysis::circuit::build_unchecked(doc, nl).map_err(|e| e.to_string())?;
    let ss = crate::analysis::small_signal::linearise_by_role(doc, nl, &c, op);
    let lc = &ss.circuit;
    let a = &doc.analysis;
    let freqs = log_frequencies(a.frequency_start, a.frequency_stop, a.points_per_decade);
    let names: Vec<String> = (0..doc.parts.len())
        .map(|p| ss.designator(p).to_string())
        .collect();
    let name = |p: usize| names.get(p).cloned().unwrap_or_default();
    let poles = stability::poles(lc).map_err(|e| e.to_string())?;
    let eval_rr = |el: usize| {
        move |fr: f64| stability::return_ratio(lc, el, &[fr]).map_or(C64::default(), |g| g.t[0])
    };
    let ratios = stability::return_ratios(lc, &freqs);
    let feedback = feedback(doc, nl, &ss, &ratios);
    let textbook = feedback.as_ref().and_then(|_| {
        let chain = crate::analysis::stages::recognise(doc, nl);
        super::feedback_topology::textbook(doc, nl, &ss, &chain)
    });
    let loops: Vec<(String, LoopGain, Margins)> = ratios
        .into_iter()
        .map(|(p, el, g)| {
            let m = margins(&freqs, &g.t, &eval_rr(el));
            (name(p), g, m)
        })
        .collect();
    // `--break` wins over the file's `analysis.loop_break`.
    let (break_at, origin) = match break_at {
        Some(t) => (Some(t), "--break"),
        None => (doc.analysis.loop_break.as_deref(), "analysis.loop_break"),
    };
    let broken = match break_at {
        None => None,
        Some(text) => {
            let bad = |m: String| format!("{origin} {text}: {m}");
            let at = stability::at_pin::find(doc, nl, &ss, text).map_err(bad)?;
            let (g, m) = stability::at_pin::loop_at(&ss, at, &freqs).map_err(bad)?;
            Some((text.to_string(), g, m))
        }
    };
    let unstable: Vec<String> = poles
        .unstable()
        .map(|p| stability::poles::instability_message(p, &name))
        .collect();
    Ok(Stability {
        poles,
        names,
        loops,
        broken,
        unstable,
        freqs,
        feedback,
        textbook,
    })
}

fn loop_json(name: &str, g: &LoopGain, m: &Margins) -> serde_json::Value {
    let db: Vec<f64> = g.t.iter().map(|t| 20.0 * t.norm().log10()).collect();
    let largest = g.t.iter().map(|t| t.norm()).fold(0.0, f64::max);
    serde_json::json!({
        "largest_magnitude": largest,
        "magnitude_db": db,
        "phase_degrees": stability::margins::unwrapped_phase(&g.t),
        "name": name,
        "t0": g.t0.re,
        "t0_phase_degrees": g.t0.arg().to_degrees(),
        "crossover_hz": m.crossover_hz,
        "phase_margin_degrees": m.phase_margin_deg,
        "phase_crossover_hz": m.phase_crossover_hz,
        "gain_margin_db": m.gain_margin_db,
    })
}

fn blackman_json(b: &Option<stability::Blackman>) -> serde_json::Value {
    match b {
        Some(b) => serde_json::json!({
            "impedance": b.impedance,
            "without_loop": b.without_loop,
            "loop_gain_shorted": b.loop_gain_shorted,
            "loop_gain_open": b.loop_gain_open,
        }),
        None => serde_json::Value::Null,
    }
}

/// The `feedback` object of `stability --json`.
pub fn feedback_json(f: &stability::FeedbackReading, around: &str) -> serde_json::Value {
    serde_json::json!({
        "around": around,
        "gain": f.split.gain.re,
        "ideal_gain": f.split.ideal.re,
        "direct_gain": f.split.direct.re,
        "loop_gain": f.split.loop_gain.re,
        "input_impedance": blackman_json(&f.input),
        "output_impedance": blackman_json(&f.output),
    })
}

/// The feedback reading in plain words, one line each: the split, then
/// Zin and Zout by Blackman's formula.
pub fn feedback_lines(f: &stability::FeedbackReading, around: &str) -> Vec<String> {
    use crate::units::{format as si, Unit};
    let s = &f.split;
    let g = |x: f64| format!("{:.4}", x).replace('-', "−");
    let mut out = vec![format!(
        "gain from the source {}: the feedback network sets {} (with infinite loop gain), \
         the loop gain of {} around {around} takes {} away, direct feedthrough {} \
         (A = A∞·T/(1 + T) + A0/(1 + T))",
        g(s.gain.re),
        g(s.ideal.re),
        g(s.loop_gain.re),
        g(s.ideal.re - s.gain.re),
        g(s.direct.re)
    )];
    for (what, b) in [("Zin", &f.input), ("Zout", &f.output)] {
        if let Some(b) = b {
            out.push(format!(
                "{what} {} = {} without the loop × (1 + {})/(1 + {}) (Blackman: loop gain with the port shorted, open)",
                si(b.impedance, Unit::Ohm),
                si(b.without_loop, Unit::Ohm),
                g(b.loop_gain_shorted),
                g(b.loop_gain_open)
            ));
        }
    }
    out
}

/// The CSV of `stability --csv`: a header line, then one row per sweep
/// frequency: the frequency (Hz), then for each loop (every transistor's
/// return ratio, then the break point's) |T| in dB and its phase in degrees.
pub fn csv(r: &Stability) -> String {
    let loops: Vec<(String, &LoopGain)> = r
        .loops
        .iter()
        .map(|(n, g, _)| (format!("{n} return ratio"), g))
        .chain(
            r.broken
                .iter()
                .map(|(n, g, _)| (format!("{n} break point"), g)),
        )
        .collect();
    let mut out = String::from("frequency_hz");
    for (n, _) in &loops {
        let key = n.replace([' ', ','], "_");
        out.push_str(&format!(",{key}_magnitude_db,{key}_phase_degrees"));
    }
    out.push('\n');
    let phases: Vec<Vec<f64>> = loops
        .iter()
        .map(|(_, g)| stability::margins::unwrapped_phase(&g.t))
        .collect();
    for (k, f) in r.freqs.iter().enumerate() {
        out.push_str(&format!("{f}"));
        for ((_, g), ph) in loops.iter().zip(&phases) {
            let t = g.t.get(k).copied().unwrap_or_default();
            out.push_str(&format!(",{},{}", 20.0 * t.norm().log10(), ph[k]));
        }
        out.push('\n');
    }
    out
}

/// The JSON of `stability --json`.
pub fn json(r: &Stability) -> serde_json::Value {
    let name = |p: usize| r.names.get(p).cloned().unwrap_or_default();
    let pj: Vec<_> = r
        .poles
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
    serde_json::json!({
        "poles": pj,
        "infinite_eigenvalues": r.poles.infinite,
        "unknowns": r.poles.size,
        "loops": r.loops.iter().map(|(n, g, m)| loop_json(n, g, m)).collect::<Vec<_>>(),
        "break_point": r.broken.as_ref().map(|(n, g, m)| loop_json(n, g, m)),
        "warnings": r.unstable,
        "frequencies": r.freqs,
        "feedback": r.feedback.as_ref().map(|f| {
            let mut v = feedback_json(f, &name(f.part));
            v["textbook"] = r.textbook.as_ref().map_or(serde_json::Value::Null, |t| {
                serde_json::json!({
                    "topology": t.topology,
                    "figure": t.figure,
                    "exact": t.exact,
                    "estimate": t.estimate,
                    "difference_percent": t.difference_percent(),
                    "formula": t.formula,
                })
            });
            v
        }),
    })
}

/// The editor computes stability only for circuits of at most this many
/// transistors (each edit reruns it; a larger sheet uses `stability`).
pub const EDITOR_TRANSISTORS: usize = 8;

/// What the editor shows: one sentence per right-half-plane pole (a
/// finding), and a readout of the phase margin — at the file's
/// `analysis.loop_break`, else of the transistor return ratio with the least
/// margin. Nothing for a larger circuit or one without a loop reaching 1.
pub fn for_editor(
    doc: &crate::document::Document,
    nl: &crate::netlist::Netlist,
    op: &crate::analysis::dc::OperatingPoint,
) -> (Vec<String>, Option<String>) {
    use crate::units::{format as si, Unit};
    let transistors = doc.parts.iter().filter(|p| p.kind.is_transistor()).count();
    if transistors > EDITOR_TRANSISTORS {
        return (Vec::new(), None);
    }
    let Ok(c) = crate::analysis::circuit::build_unchecked(doc, nl) else {
        return (Vec::new(), None);
    };
    let ss = crate::analysis::small_signal::linearise_by_role(doc, nl, &c, op);
    if ss.transistors.len() > EDITOR_TRANSISTORS {
        return (Vec::new(), None);
    }
    let name = |p: usize| ss.designator(p).to_string();
    let unstable = stability::poles(&ss.circuit).map_or(Vec::new(), |poles| {
        poles
            .unstable()
            .map(|p| stability::poles::instability_message(p, &name))
            .collect()
    });
    let a = &doc.analysis;
    let freqs = log_frequencies(a.frequency_start, a.frequency_stop, a.points_per_decade);
    let line = |m: &Margins, what: String| {
        let pm = m.phase_margin_deg?;
        let fc = m.crossover_hz?;
        Some(format!(
            "phase margin {pm:.1}° {what} (|T| = 1 at {})",
            si(fc, Unit::Hertz)
        ))
    };
    let readout = match &a.loop_break {
        Some(text) => stability::at_pin::find(doc, nl, &ss, text)
            .and_then(|at| stability::at_pin::loop_at(&ss, at, &freqs))
            .ok()
            .and_then(|(_, m)| line(&m, format!("at {text}"))),
        None => {
            let eval = |el: usize| {
                let lc = &ss.circuit;
                move |fr: f64| {
                    stability::return_ratio(lc, el, &[fr]).map_or(C64::default(), |g| g.t[0])
                }
            };
            stability::return_ratios(&ss.circuit, &freqs)
                .into_iter()
                .map(|(p, el, g)| (p, margins(&freqs, &g.t, &eval(el))))
                .filter(|(_, m)| m.phase_margin_deg.is_some())
                .min_by(|x, y| {
                    x.1.phase_margin_deg
                        .unwrap_or(0.0)
                        .total_cmp(&y.1.phase_margin_deg.unwrap_or(0.0))
                })
                .and_then(|(p, m)| line(&m, format!("of {}'s return ratio (the least)", name(p))))
        }
    };
    (unstable, readout)
}
