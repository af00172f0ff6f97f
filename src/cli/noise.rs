//! `biasline noise FILE [--band 20..20k] [--csv]`: output and input-referred
//! noise, the noise figure at the real source resistance, the largest
//! contributors and the better collector current.

use super::{io, load, Failure, EXIT_CLEAN, EXIT_FINDINGS};
use biasline::analysis::noise::{self, BuildOptions, NoiseReport};
use biasline::units::{format as f, Unit};
use std::io::Write;
use std::path::Path;

/// What the better-current scan does not weigh, said where it is shown.
pub const CURRENT_HINT_IGNORES: &str =
    "(noise alone: the scan ignores the current each stage must \
     deliver — its load, the next stage's base current, the swing; check those before choosing)";

/// Parse a frequency such as `20`, `20k`, `1.5M`, `20kHz` (SI prefixes
/// f p n u µ m k M G; an optional trailing `Hz`).
pub fn parse_frequency(text: &str) -> Result<f64, String> {
    match biasline::units::parse(text, biasline::units::Unit::Hertz) {
        Ok(v) if v > 0.0 => {
            biasline::document::limits::check_frequency(&format!("{text:?}"), v).map(|()| v)
        }
        Ok(_) => Err(format!("{text:?}: a frequency must be above zero")),
        Err(e) => Err(e.to_string()),
    }
}

/// Parse a band `LOW..HIGH`, e.g. `20..20k`.
pub fn parse_band(text: &str) -> Result<(f64, f64), String> {
    let Some((lo, hi)) = text.split_once("..") else {
        return Err(format!(
            "{text:?} is not a band: write LOW..HIGH, e.g. 20..20k"
        ));
    };
    let (lo, hi) = (parse_frequency(lo)?, parse_frequency(hi)?);
    if hi <= lo {
        return Err(format!(
            "the band {text:?} ends below where it starts: write the lower frequency first"
        ));
    }
    Ok((lo, hi))
}

/// Build and compute the noise report of a project (see
/// [`noise::report_for_document`]).
pub fn report_for(
    doc: &biasline::document::Document,
    band: (f64, f64),
    spot_frequency: f64,
    opts: &BuildOptions,
) -> Result<NoiseReport, biasline::analysis::AnalysisError> {
    noise::report_for_document(doc, band, spot_frequency, opts)
}

/// Run the command.
pub fn run(
    file: &Path,
    band: &str,
    at: &str,
    csv: bool,
    opts: &BuildOptions,
    out: &mut dyn Write,
) -> Result<i32, Failure> {
    let band = parse_band(band).map_err(|m| Failure {
        message: format!("--band: {m}"),
        code: super::EXIT_CANNOT,
    })?;
    let spot = parse_frequency(at).map_err(|m| Failure {
        message: format!("--at: {m}"),
        code: super::EXIT_CANNOT,
    })?;
    let doc = load(file)?;
    let r = report_for(&doc, band, spot, opts).map_err(|e| {
        Failure::cannot(format!(
            "{}: no noise result: {}",
            file.display(),
            e.to_string().trim_end()
        ))
    })?;
    if csv {
        write_csv(&r, out).map_err(io)?;
    } else {
        write_text(&doc.title, &r, out).map_err(io)?;
    }
    let nl = biasline::netlist::connect(&doc);
    let verdict =
        super::verdict_code(biasline::analysis::assess::Assessment::of(&doc, &nl).verdict());
    Ok(verdict.max(if r.source_resistance.is_some() {
        EXIT_CLEAN
    } else {
        EXIT_FINDINGS
    }))
}

fn density(v: f64, unit: Unit) -> String {
    biasline::units::format_density(v, unit)
}

fn write_text(title: &str, r: &NoiseReport, out: &mut dyn Write) -> std::io::Result<()> {
    writeln!(
        out,
        "noise of {title}: output {}, {:.2} K",
        r.output, r.kelvin
    )?;
    let band = format!("{}–{}", f(r.band.0, Unit::Hertz), f(r.band.1, Unit::Hertz));
    writeln!(out, "band {band}:")?;
    writeln!(
        out,
        "  output noise           {} rms",
        f(r.band_output_rms, Unit::Volt)
    )?;
    if r.signal_source.is_some() {
        writeln!(
            out,
            "  input-referred noise   {} rms (at the signal source)",
            f(r.band_input_rms, Unit::Volt)
        )?;
    } else {
        writeln!(
            out,
            "  input-referred noise   — (no signal source: name one in the project's signal.source)"
        )?;
    }
    match (&r.source_resistance, r.source_resistance_ohms, r.band_figure_db) {
        (Some(name), Some(ohms), Some(nf)) => writeln!(
            out,
            "  noise figure           {nf:.2} dB (noise factor {}) at the real source resistance {name} = {}",
            f(r.band_noise_factor.unwrap_or(f64::NAN), Unit::None),
            f(ohms, Unit::Ohm)
        )?,
        _ if r.signal_source.is_none() => writeln!(
            out,
            "  noise figure           — (no signal source)"
        )?,
        _ => writeln!(
            out,
            "  noise figure           — (no resistor marked as the source's own resistance: set source_resistance_mark on it or pass --source-resistor)"
        )?,
    }
    if let Some(snr) = &r.signal_to_noise {
        writeln!(
            out,
            "  signal-to-noise        {:.1} dB for {} peak ({} rms, RMS = peak/√2) at {}",
            snr.snr_db,
            f(snr.amplitude_peak, Unit::Volt),
            f(snr.amplitude_rms, Unit::Volt),
            f(snr.frequency, Unit::Hertz)
        )?;
    }
    let spot = f(r.spot_frequency, Unit::Hertz);
    writeln!(out, "at {spot}:")?;
    writeln!(
        out,
        "  output density         {}",
        density(r.spot_output_density, Unit::Volt)
    )?;
    if r.signal_source.is_some() {
        writeln!(
            out,
            "  input-referred density {}",
            density(r.spot_input_density, Unit::Volt)
        )?;
    }
    if let Some(nf) = r.spot_figure_db {
        writeln!(out, "  spot noise figure      {nf:.2} dB")?;
    }
    if let Some(c) = &r.chain_input_noise {
        writeln!(
            out,
            "  chain en {}, in {}; optimum source resistance en/in = {}, NF there {:.2} dB",
            density(c.voltage_density, Unit::Volt),
            density(c.current_density, Unit::Ampere),
            f(c.optimum_source_resistance, Unit::Ohm),
            c.optimum_figure_db
        )?;
    }
    for s in &r.stages {
        writeln!(
            out,
            "  stage {}: en {}, in {}",
            s.transistor,
            density(s.voltage_density, Unit::Volt),
            density(s.current_density, Unit::Ampere)
        )?;
    }
    writeln!(out, "top contributors over the band:")?;
    for (n, &i) in r.ranked().iter().take(3).enumerate() {
        let c = &r.contributors[i];
        writeln!(
            out,
            "  {}. {:<40} {:5.1} %  {} rms at the output",
            n + 1,
            c.label,
            100.0 * c.share,
            f(c.band_output_rms, Unit::Volt)
        )?;
    }
    let parts: Vec<String> = r
        .by_part
        .iter()
        .filter(|p| p.share >= 0.005)
        .map(|p| format!("{} {:.1} %", p.designator, 100.0 * p.share))
        .collect();
    writeln!(out, "by part: {}", parts.join(", "))?;
    if !r.current_hints.is_empty() {
        writeln!(
            out,
            "better collector current (chain noise figure over the band):"
        )?;
        writeln!(out, "  {CURRENT_HINT_IGNORES}")?;
        for h in &r.current_hints {
            let classic = if h.is_input && h.classic_current.is_finite() {
                format!(
                    " (classic estimate VT·√β/(Rs + rb) = {})",
                    f(h.classic_current, Unit::Ampere)
                )
            } else {
                String::new()
            };
            if h.present_figure_db - h.better_figure_db < 0.05 {
                writeln!(
                    out,
                    "  {}{}: now {} → NF {:.2} dB; no current does better by 0.05 dB{classic}",
                    h.designator,
                    if h.field_effect {
                        " (drain current)"
                    } else {
                        ""
                    },
                    f(h.present_current, Unit::Ampere),
                    h.present_figure_db,
                )?;
            } else {
                writeln!(
                    out,
                    "  {}{}: now {} → NF {:.2} dB; {} would give {:.2} dB{classic}",
                    h.designator,
                    if h.field_effect {
                        " (drain current)"
                    } else {
                        ""
                    },
                    f(h.present_current, Unit::Ampere),
                    h.present_figure_db,
                    f(h.better_current, Unit::Ampere),
                    h.better_figure_db,
                )?;
            }
        }
    }
    for n in &r.notes {
        writeln!(out, "note: {n}")?;
    }
    Ok(())
}

fn csv_field(s: &str) -> String {
    if s.contains([',', '"']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn number(v: f64) -> String {
    if v.is_finite() {
        format!("{v:.6e}")
    } else {
        String::new()
    }
}

fn write_csv(r: &NoiseReport, out: &mut dyn Write) -> std::io::Result<()> {
    let mut head = vec![
        "frequency_hz".to_string(),
        "output_density_v_per_root_hz".to_string(),
        "input_density_v_per_root_hz".to_string(),
    ];
    head.extend(r.contributors.iter().map(|c| csv_field(&c.label)));
    writeln!(out, "{}", head.join(","))?;
    for (k, fr) in r.frequencies.iter().enumerate() {
        let mut row = vec![
            number(*fr),
            number(r.output_density[k]),
            number(r.input_density[k]),
        ];
        row.extend(r.contribution_density[k].iter().map(|v| number(*v)));
        writeln!(out, "{}", row.join(","))?;
    }
    Ok(())
}

/// The short noise paragraph of the `analyze` text report (the same result
/// as the `noise` keys of `analyze --json`): the chain's noise figure at the
/// real source resistance, the input-referred density at 1 kHz and the top
/// contributor. Nothing is written when no noise result can be had.
pub fn analyze_text(
    report: &Result<NoiseReport, biasline::analysis::AnalysisError>,
    out: &mut dyn Write,
) -> std::io::Result<()> {
    let Ok(r) = report else {
        return Ok(());
    };
    writeln!(
        out,
        "\nNoise (band 20 Hz–20 kHz, spot {}):",
        f(r.spot_frequency, Unit::Hertz)
    )?;
    match (
        &r.source_resistance,
        r.source_resistance_ohms,
        r.band_figure_db,
    ) {
        (Some(name), Some(ohms), Some(nf)) if nf.is_finite() => {
            let spot = r
                .spot_figure_db
                .filter(|v| v.is_finite())
                .map(|v| format!(", {v:.2} dB at {}", f(r.spot_frequency, Unit::Hertz)))
                .unwrap_or_default();
            writeln!(
                out,
                "  noise figure {nf:.2} dB over the band{spot}, at the real source resistance {name} = {}",
                f(ohms, Unit::Ohm)
            )?
        }
        _ if r.signal_source.is_none() => writeln!(out, "  noise figure — (no signal source)")?,
        _ => writeln!(
            out,
            "  noise figure — (no resistor marked as the source's own resistance)"
        )?,
    }
    if r.signal_source.is_some() && r.spot_input_density.is_finite() {
        writeln!(
            out,
            "  input-referred density {} at {}",
            density(r.spot_input_density, Unit::Volt),
            f(r.spot_frequency, Unit::Hertz)
        )?;
    }
    if let Some(&i) = r.ranked().first() {
        let c = &r.contributors[i];
        writeln!(
            out,
            "  top contributor {} ({:.1} % of the output noise power)",
            c.label,
            100.0 * c.share
        )?;
    }
    writeln!(out, "  (details: biasline noise)")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn band_text_parses_with_prefixes() {
        // common practice (no source): engineering notation, k = 10³, M = 10⁶
        assert_eq!(parse_band("20..20k").unwrap(), (20.0, 20e3));
        assert_eq!(parse_band("1k..1.5MHz").unwrap(), (1e3, 1.5e6));
        assert!(parse_band("20k..20").is_err());
        assert!(parse_band("20-20k").is_err());
        assert!(parse_band("20..20q").is_err());
    }
}
