//! The small-signal part of `analyze` (models, stage table, chain figures)
//! and `biasline sweep FILE [--csv]`.

use super::*;

/// A resistance, or "open" when it is beyond any real part (ro without Early effect).
pub(super) fn ohms_or_open(r: f64) -> String {
    if !r.is_finite() || r > 1e15 {
        "open (no Early effect)".into()
    } else {
        biasline::units::format(r, biasline::units::Unit::Ohm)
    }
}

/// hre: in this model the base current has no Early term, so hre is zero up to
/// rounding; say so rather than print 1e-59.
pub(super) fn reverse_ratio(h12: f64) -> String {
    // hre is a voltage ratio: its natural scale is 1.
    if biasline::units::negligible(h12, 1.0) {
        biasline::units::NONE_IN_MODEL.into()
    } else {
        format!("{h12:.2e}")
    }
}

/// Three significant figures of a plain number (gains).
pub(super) fn sig3(v: f64) -> String {
    biasline::units::plain(v)
}

pub(super) fn small_signal_text(
    a: &biasline::analysis::small_signal::Analysis,
    r: &biasline::analysis::ac::FrequencyResponse,
    out: &mut dyn Write,
) -> std::io::Result<()> {
    use biasline::analysis::figures::Figure;
    use biasline::units::{format as f, Unit};
    let ohm = |v: Option<f64>| v.map_or("—".to_string(), |v| f(v, Unit::Ohm));
    if !a.small_signal.transistors.is_empty() || !a.small_signal.fets.is_empty() {
        writeln!(out, "\nSmall-signal models at the operating point")?;
    }
    for t in &a.small_signal.transistors {
        let p = &t.models.hybrid_pi;
        write!(
            out,
            "  {}: hybrid-π gm {}, rπ {}, ro {}, rb {}, Cπ {}, Cμ {}",
            t.designator,
            f(p.gm, Unit::Siemens),
            f(p.r_pi(), Unit::Ohm),
            ohms_or_open(p.ro()),
            f(p.rb, Unit::Ohm),
            f(p.c_pi, Unit::Farad),
            f(p.c_mu, Unit::Farad)
        )?;
        if let (Some(tm), Some(h)) = (t.models.t, t.models.h) {
            let ce = h.common_emitter;
            write!(
                out,
                "\n      T model re {}, α {:.4}; h (CE) hie {}, hfe {}, hre {}, hoe {}",
                f(tm.re, Unit::Ohm),
                tm.alpha,
                f(ce.h11, Unit::Ohm),
                sig3(ce.h21),
                reverse_ratio(ce.h12),
                f(ce.h22, Unit::Siemens)
            )?;
        }
        writeln!(out)?;
    }
    for t in &a.small_signal.fets {
        writeln!(
            out,
            "  {}: FET hybrid-π gm {}, ro {}, Cgs {}, Cgd {}, Cds {}; T model 1/gm {} in the source lead",
            t.designator,
            f(t.gm, Unit::Siemens),
            ohms_or_open(t.ro()),
            f(t.cgs, Unit::Farad),
            f(t.cgd, Unit::Farad),
            f(t.cds, Unit::Farad),
            f(t.inverse_gm(), Unit::Ohm)
        )?;
    }
    for d in &a.small_signal.diodes {
        writeln!(
            out,
            "  {}: g {}, C {}",
            d.designator,
            f(d.conductance, Unit::Siemens),
            f(d.capacitance, Unit::Farad)
        )?;
    }
    if !a.midband.stages.is_empty() {
        writeln!(
            out,
            "\nStages at midband (exact from the small-signal circuit; estimates with their difference)"
        )?;
    }
    let cell = |x: Option<f64>, d: Option<f64>, unit: Option<Unit>| -> String {
        let v = match (x, unit) {
            (Some(x), Some(u)) => f(x, u),
            (Some(x), None) => sig3(x),
            (None, _) => "—".into(),
        };
        match d {
            Some(d) => format!(
                "{v} ({}{} %)",
                if d >= 0.0 { "+" } else { "−" },
                biasline::units::fixed(d.abs(), 1)
            ),
            None => v,
        }
    };
    for (k, s) in a.midband.stages.iter().enumerate() {
        writeln!(
            out,
            "  {}. {} — {}{}; input {}, output {}",
            k + 1,
            s.transistor,
            s.configuration_words,
            if s.overridden {
                " (set by the project)"
            } else {
                ""
            },
            s.input_net,
            s.output_net
        )?;
        for n in &s.notes {
            writeln!(out, "     also: {n}")?;
        }
        for c in &s.caveats {
            writeln!(out, "     CAUTION: {c}")?;
        }
        let lump = |l: &Option<biasline::analysis::stages::Lumped>| {
            l.as_ref()
                .map(|l| format!("{} {}", l.label, f(l.resistance, Unit::Ohm)))
        };
        let mut eq = Vec::new();
        if let Some(x) = lump(&s.ac.source) {
            eq.push(format!("driven by {x}"));
        }
        let fet = s.family == biasline::analysis::stages::Family::FieldEffect;
        if let Some(x) = lump(&s.ac.base) {
            eq.push(format!("{} {x}", if fet { "gate" } else { "base" }));
        }
        if let Some(x) = lump(&s.ac.emitter) {
            eq.push(format!("{} {x}", if fet { "source" } else { "emitter" }));
        }
        if let Some(x) = lump(&s.ac.output) {
            eq.push(format!("output {x}"));
        }
        if let Some(x) = &s.ac.loaded_by {
            // One part's name only when the load is that part alone.
            let own = biasline::analysis::figures::own_resistance(&a.small_signal, x);
            let alone = match (own, s.load_resistance) {
                (Some(own), Some(r)) => (own / r - 1.0).abs() < 1e-6,
                _ => true,
            };
            if alone {
                eq.push(format!("loaded by {x} ({})", ohm(s.load_resistance)));
            } else {
                eq.push(format!(
                    "loaded by {x} and what else the output drives ({})",
                    ohm(s.load_resistance)
                ));
            }
        }
        writeln!(out, "     AC equivalent: {}", eq.join("; "))?;
        writeln!(
            out,
            "     {:6} {:>12}  {:>22}  {:>22}",
            "", "exact", s.estimate_names[0], s.estimate_names[1]
        )?;
        let rows: [(&str, &Figure, Option<Unit>); 4] = [
            ("Zin", &s.input_impedance, Some(Unit::Ohm)),
            ("Zout", &s.output_impedance, Some(Unit::Ohm)),
            ("Av", &s.voltage_gain, None),
            ("Ai", &s.current_gain, None),
        ];
        for (name, fig, unit) in rows {
            writeln!(
                out,
                "     {:6} {:>12}  {:>22}  {:>22}",
                name,
                cell(fig.exact, None, unit),
                cell(fig.re_model, fig.re_difference_percent, unit),
                cell(fig.h_model, fig.h_difference_percent, unit)
            )?;
        }
        // What each estimate leaves out, when there are estimates at all.
        let estimated = [&s.input_impedance, &s.voltage_gain]
            .iter()
            .any(|f| f.re_model.is_some() || f.h_model.is_some());
        if estimated {
            writeln!(
                out,
                "     {} leaves out: {}",
                s.estimate_names[0],
                s.re_model_neglects.join("; ")
            )?;
            writeln!(
                out,
                "     {} {} out: {}",
                s.estimate_names[1],
                if fet { "leaves" } else { "leave" },
                s.h_model_neglects.join("; ")
            )?;
        }
        if let Some(w) = &s.swing {
            writeln!(
                out,
                "     swing: {} peak at the output before {} ({} toward {}, {} toward cut-off, AC load {}){}{}",
                f(w.limit, Unit::Volt),
                w.limited_by,
                f(w.toward_saturation, Unit::Volt),
                if fet { "the triode edge" } else { "saturation" },
                f(w.toward_cut_off, Unit::Volt),
                f(w.ac_load, Unit::Ohm),
                w.input_amplitude
                    .map(|v| format!("; reached by {} at the stage input", f(v, Unit::Volt)))
                    .unwrap_or_default(),
                w.source_amplitude
                    .map(|v| format!(", {} from the source", f(v, Unit::Volt)))
                    .unwrap_or_default()
            )?;
        }
        if let Some(m) = &s.miller {
            writeln!(
                out,
                "     Miller input capacitance {} with {} → upper corner ≈ {} (estimate; ignores the other poles)",
                f(m.input_capacitance, Unit::Farad),
                f(m.resistance, Unit::Ohm),
                f(m.upper_corner, Unit::Hertz)
            )?;
        }
    }
    blocks_text(a, out)?;
    if a.chain.source.is_none() || a.chain.stages.is_empty() {
        // Say once why there are no chain figures instead of a block of dashes.
        let mut why: Vec<&str> = Vec::new();
        for n in a.chain.notes.iter().chain(&a.midband.chain.unavailable) {
            if !why.contains(&n.as_str()) {
                why.push(n);
            }
        }
        let why = if why.is_empty() {
            "nothing on the sheet carries a signal from a source to a load".to_string()
        } else {
            why.join("; ")
        };
        writeln!(out, "\nWhole amplifier: no signal path — {why}")?;
        return Ok(());
    }
    let c = &a.midband.chain;
    let src = a.chain.source.as_ref().map(|s| s.designator.clone());
    let load = a.chain.load.as_ref().map(|l| l.designator.clone());
    writeln!(
        out,
        "\nWhole amplifier (source {} to load {})",
        src.as_deref().unwrap_or("—"),
        load.as_deref().unwrap_or("—")
    )?;
    writeln!(
        out,
        "  Zin {} seen by the source (source resistance {}); Zout {} seen by the load ({})",
        ohm(c.input_impedance),
        ohm(c.source_resistance),
        ohm(c.output_impedance),
        ohm(c.load_impedance)
    )?;
    let db = |v: Option<f64>| v.map_or(String::new(), |d| format!(" ({} dB)", sig3(d)));
    writeln!(
        out,
        "  Avs {}{} from the source EMF; Av {}{} from the input; Ai {}",
        c.source_gain.map_or("—".into(), sig3),
        db(c.source_gain_db),
        c.voltage_gain.map_or("—".into(), sig3),
        db(c.voltage_gain_db),
        c.current_gain.map_or("—".into(), sig3)
    )?;
    if let Some(zt) = c.transimpedance {
        writeln!(
            out,
            "  Zt {} = v(load) per ampere of source current vs/Rs (the source resistance is over {}× Zin, so the source acts as a current)",
            f(zt, Unit::Ohm),
            biasline::analysis::figures::CURRENT_SOURCE_RATIO
        )?;
    }
    for u in &c.unavailable {
        writeln!(out, "  unavailable: {u}")?;
    }
    let hz =
        |v: Option<f64>| v.map_or("— (outside the sweep)".to_string(), |v| f(v, Unit::Hertz));
    if r.gain.is_some() {
        writeln!(
            out,
            "  Response: midband {}; −3 dB at {} and {}",
            r.midband_gain_db
                .map_or("—".into(), |g| format!("{} dB", sig3(g))),
            hz(r.lower_corner),
            hz(r.upper_corner)
        )?;
    }
    if let (Some(by), Some(est)) = (&r.low_corner_set_by, r.short_circuit_estimate) {
        writeln!(
            out,
            "  Low corner set by {by} (short-circuit time constants: Σ 1/(2π·R·C) ≈ {})",
            f(est, Unit::Hertz)
        )?;
    }
    for n in &r.notes {
        writeln!(out, "  note: {n}")?;
    }
    Ok(())
}

pub(super) fn sweep(file: &Path, csv: bool, out: &mut dyn Write) -> Result<i32, Failure> {
    let doc = load(file)?;
    let nl = netlist::connect(&doc);
    let assessment = biasline::analysis::assess::Assessment::of(&doc, &nl);
    let verdict = assessment.verdict();
    let op = assessment.operating_point.map_err(|e| {
        Failure::cannot(format!(
            "{}: not solvable: {}",
            file.display(),
            e.to_string().trim_end()
        ))
    })?;
    let (a, r) = biasline::results::small_signal::small_signal(&doc, &nl, &op)
        .map_err(|e| Failure::cannot(format!("{}: {e}", file.display())))?;
    let Some(g) = &r.gain else {
        let why = a
            .chain
            .notes
            .first()
            .cloned()
            .or_else(|| r.notes.first().cloned())
            .unwrap_or_else(|| "there is no signal path to sweep".into());
        return Err(Failure::cannot(format!("{}: {why}", file.display())));
    };
    if csv {
        writeln!(out, "frequency_hz,magnitude_db,phase_degrees").map_err(io)?;
        let rows = r
            .frequencies
            .iter()
            .zip(&g.magnitude_db)
            .zip(&g.phase_degrees);
        for ((fr, db), deg) in rows {
            // Shortest round-trip text; exponent form only below 1e-7 or from 1e15 (plain
            // notation of 1e-300 would be 300 digits).
            let n = |v: f64| {
                if v == 0.0 || !v.is_finite() || (1e-7..1e15).contains(&v.abs()) {
                    format!("{v}")
                } else {
                    format!("{v:e}")
                }
            };
            writeln!(out, "{},{},{}", n(*fr), n(*db), n(*deg)).map_err(io)?;
        }
    } else {
        use biasline::units::{format as f, Unit};
        writeln!(
            out,
            "{} — {} ({} points)",
            file.display(),
            g.name,
            g.magnitude_db.len()
        )
        .map_err(io)?;
        writeln!(out, "{:>12}  {:>10}  {:>10}", "frequency", "dB", "degrees").map_err(io)?;
        for (k, fr) in r.frequencies.iter().enumerate().take(g.magnitude_db.len()) {
            writeln!(
                out,
                "{:>12}  {:>10}  {:>10}",
                f(*fr, Unit::Hertz),
                biasline::units::fixed(g.magnitude_db[k], 2),
                biasline::units::fixed(g.phase_degrees[k], 1)
            )
            .map_err(io)?;
        }
    }
    Ok(verdict_code(verdict))
}

/// The blocks (groups of transistors read as one), each figure exact beside
/// its estimate or the reason there is none. Nothing when there are none.
fn blocks_text(
    a: &biasline::analysis::small_signal::Analysis,
    out: &mut dyn Write,
) -> std::io::Result<()> {
    use biasline::units::{format as f, Unit};
    if a.blocks.is_empty() {
        return Ok(());
    }
    writeln!(out, "\nBlocks (groups of transistors read as one)")?;
    for (k, b) in a.blocks.iter().enumerate() {
        writeln!(
            out,
            "  {}. {} — {}; input {}, output {}",
            k + 1,
            b.transistors.join(", "),
            b.words,
            b.input_nets.join(" and "),
            b.output_nets.join(" to ")
        )?;
        for n in &b.notes {
            writeln!(out, "     also: {n}")?;
        }
        for w in &b.warnings {
            writeln!(out, "     WARNING: {w}")?;
        }
        let value = |v: Option<f64>, u: Unit| match v {
            Some(x) if u == Unit::None => sig3(x),
            Some(x) => f(x, u),
            None => "—".into(),
        };
        writeln!(out, "     {:8} {:>12}  {:>22}", "", "exact", "estimate")?;
        for fig in &b.figures {
            let estimate = fig
                .estimate
                .map(|e| {
                    format!(
                        "{}{}",
                        value(Some(e), fig.unit),
                        fig.difference_percent
                            .map(|d| format!(
                                " ({}{} %)",
                                if d >= 0.0 { "+" } else { "−" },
                                biasline::units::fixed(d.abs(), 1)
                            ))
                            .unwrap_or_default()
                    )
                })
                .unwrap_or_else(|| "—".into());
            writeln!(
                out,
                "     {:8} {:>12}  {:>22}  {}",
                fig.label,
                value(fig.exact, fig.unit),
                estimate,
                fig.name
            )?;
            match (&fig.estimate_from, &fig.no_estimate_because) {
                (Some(from), _) => writeln!(out, "              estimate: {from}")?,
                (None, Some(why)) => writeln!(out, "              no estimate: {why}")?,
                _ => {}
            }
        }
    }
    Ok(())
}
