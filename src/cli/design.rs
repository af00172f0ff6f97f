//! `biasline design --stage ce --supply 12 --gain 30dB --zin 20k --load 10k
//! --low 20 [-o new.json]` and `biasline snap FILE --series E24 [-o OUT]`.

use super::*;
use crate::design::{self, eseries, report, snap, targets::Topology, Targets};
use crate::document::SpecLimit;
use crate::units::{self, Unit};

/// Arguments of `design`, as typed.
#[derive(Debug, Clone, clap::Args)]
pub struct DesignArgs {
    /// ce, cc, cb or ce-cc.
    #[arg(long, default_value = "ce")]
    pub stage: String,
    /// Supply voltage (V), like 12.
    #[arg(long, allow_hyphen_values = true)]
    pub supply: String,
    /// Voltage gain from the amplifier input to the load, like 30dB (not for cc).
    #[arg(long, allow_hyphen_values = true)]
    pub gain: Option<String>,
    /// Input impedance at midband, like 20k.
    #[arg(long)]
    pub zin: Option<String>,
    /// Load resistance, like 10k.
    #[arg(long)]
    pub load: String,
    /// Lower −3 dB corner of the response at most, like 20 (Hz).
    #[arg(long)]
    pub low: String,
    /// Collector current of the first transistor, or `low-noise` for the
    /// quietest at the source resistance (default: the largest of 2m … 20µ
    /// that meets every target).
    #[arg(long)]
    pub ic: Option<String>,
    /// Collector current of the follower in ce-cc (default: as --ic).
    #[arg(long)]
    pub ic2: Option<String>,
    /// Resistance of the signal source (default 1k).
    #[arg(long, default_value = "1k")]
    pub source: String,
    /// Largest βF sensitivity S = ∂IC/∂βF · βF/IC allowed (default 0.2).
    #[arg(long, default_value = "0.2")]
    pub stability: String,
    /// Device preset of the transistors.
    #[arg(long, default_value = "small-signal-npn")]
    pub preset: String,
    /// Preferred-value series of the resistors.
    #[arg(long, default_value = "E24")]
    pub series: String,
    /// Series of the capacitors (default E12, or E6 with --series E6).
    #[arg(long)]
    pub capacitor_series: Option<String>,
    /// Write the designed project (preferred values) here.
    #[arg(short, long)]
    pub output: Option<PathBuf>,
    /// Print the design as JSON.
    #[arg(long)]
    pub json: bool,
}

fn value(text: &str, unit: Unit, what: &str) -> Result<f64, Failure> {
    units::parse(text, unit).map_err(|e| Failure::cannot(format!("--{what}: {e}")))
}

fn series(name: &str) -> Result<eseries::Series, Failure> {
    eseries::find(name).ok_or_else(|| Failure::cannot(eseries::unknown(name)))
}

/// A gain in dB: `30dB`, `30 dB` or `30`.
fn gain_db(text: &str) -> Result<f64, Failure> {
    let t = text.trim();
    let t = t
        .strip_suffix("dB")
        .or_else(|| t.strip_suffix("db"))
        .or_else(|| t.strip_suffix("DB"))
        .unwrap_or(t);
    value(t.trim_end(), Unit::None, "gain")
}

/// The targets from the arguments (every value through the units parser).
pub fn targets(a: &DesignArgs) -> Result<Targets, Failure> {
    let topology = Topology::parse(&a.stage).map_err(|e| Failure::cannot(e.0))?;
    let supply = value(&a.supply, Unit::Volt, "supply")?;
    let load = value(&a.load, Unit::Ohm, "load")?;
    let low = value(&a.low, Unit::Hertz, "low")?;
    let mut t = Targets::new(topology, supply, load, low);
    t.gain_db = a.gain.as_deref().map(gain_db).transpose()?;
    t.input_impedance = a
        .zin
        .as_deref()
        .map(|z| value(z, Unit::Ohm, "zin"))
        .transpose()?;
    if a.ic.as_deref().map(str::trim) == Some("low-noise") {
        t.low_noise = true;
    } else {
        t.collector_current =
            a.ic.as_deref()
                .map(|z| value(z, Unit::Ampere, "ic"))
                .transpose()?;
    }
    t.follower_current = a
        .ic2
        .as_deref()
        .map(|z| value(z, Unit::Ampere, "ic2"))
        .transpose()?;
    t.source_resistance = value(&a.source, Unit::Ohm, "source")?;
    t.stability = value(&a.stability, Unit::None, "stability")?;
    t.preset = a.preset.clone();
    t.resistor_series = series(&a.series)?;
    t.capacitor_series = match &a.capacitor_series {
        Some(s) => series(s)?,
        None => eseries::capacitor_default(t.resistor_series),
    };
    Ok(t)
}

/// The spread limits that turn the targets into a yield: gain ±1 dB (as the
/// source-to-load gain the spread run reports), Zin ±20 %, VCE ≥ 1 V.
pub fn spread_limits(t: &Targets) -> Vec<SpecLimit> {
    let mut v = Vec::new();
    if let (Some(g), Some(z)) = (t.gain_db, t.input_impedance) {
        let avs = g + 20.0 * (z / (z + t.source_resistance)).log10();
        v.push(SpecLimit {
            quantity: "Avs_dB(chain)".into(),
            min: Some(avs - 1.0),
            max: Some(avs + 1.0),
        });
    }
    if let Some(z) = t.input_impedance {
        v.push(SpecLimit {
            quantity: "Zin(chain)".into(),
            min: Some(0.8 * z),
            max: Some(1.2 * z),
        });
    }
    v.push(SpecLimit {
        quantity: "VCE(Q1)".into(),
        min: Some(1.0),
        max: None,
    });
    v
}

pub(super) fn run_design(a: &DesignArgs, out: &mut dyn Write) -> Result<i32, Failure> {
    let t = targets(a)?;
    let d = design::design(&t).map_err(|e| Failure::cannot(e.0))?;
    let m = d.snapped.measured.as_ref().map_err(|e| {
        Failure::cannot(format!(
            "the preferred-value design cannot be analysed: {e}"
        ))
    })?;
    if json_or_text(a.json, &d, out).is_err() {
        return Err(Failure::cannot("cannot write the report"));
    }
    if let Some(path) = &a.output {
        let mut doc = d.snapped.document.clone();
        doc.notes = format!(
            "Designed by `biasline design` (not a demo scenario): {} on {} V, gain {}, Zin {}, load {}, \
             low corner ≤ {}, S ≤ {}, {} resistors. The spread limits turn the targets into a yield: \
             run `biasline spread` on this file.",
            t.topology.words(),
            t.supply,
            t.gain_db.map_or("—".into(), |g| format!("{g} dB")),
            t.input_impedance
                .map_or("—".into(), |z| units::format(z, Unit::Ohm)),
            units::format(t.load, Unit::Ohm),
            units::format(t.low_corner, Unit::Hertz),
            t.stability,
            t.resistor_series.name
        );
        doc.spread.limits = spread_limits(&t);
        document::save_file(&doc, path).map_err(|e| Failure::cannot(e.to_string()))?;
        if !a.json {
            writeln!(
                out,
                "\nWrote {} ({} parts). Next: `biasline export {} -o stage.png`, \
                 `biasline spread {}` for the yield against the targets.",
                path.display(),
                doc.parts.len(),
                path.display(),
                path.display()
            )
            .map_err(io)?;
        }
    }
    Ok(if m.warnings.is_empty() {
        EXIT_CLEAN
    } else {
        EXIT_FINDINGS
    })
}

fn json_or_text(json: bool, d: &design::Design, out: &mut dyn Write) -> std::io::Result<()> {
    if json {
        writeln!(
            out,
            "{}",
            serde_json::to_string_pretty(&report::json(d)).expect("json")
        )
    } else {
        write!(out, "{}", report::text(d))
    }
}

pub(super) fn run_snap(
    file: &Path,
    series_name: &str,
    capacitor_series: Option<&str>,
    output: Option<&Path>,
    json: bool,
    out: &mut dyn Write,
) -> Result<i32, Failure> {
    let rs = series(series_name)?;
    let cs = match capacitor_series {
        Some(s) => series(s)?,
        None => eseries::capacitor_default(rs),
    };
    let doc = load(file)?;
    let (snapped, rep) = snap::snap_document(&doc, rs, cs);
    if let Some(path) = output {
        document::save_file(&snapped, path).map_err(|e| Failure::cannot(e.to_string()))?;
    }
    if json {
        writeln!(out, "{}", serde_json::to_string_pretty(&rep).expect("json")).map_err(io)?;
    } else {
        snap_text(&rep, file, output, out).map_err(io)?;
    }
    Ok(EXIT_CLEAN)
}

fn snap_text(
    rep: &snap::SnapReport,
    file: &Path,
    output: Option<&Path>,
    out: &mut dyn Write,
) -> std::io::Result<()> {
    writeln!(
        out,
        "{}: resistors to {}, capacitors to {} (nearest by ratio)",
        file.display(),
        rep.resistor_series,
        rep.capacitor_series
    )?;
    if rep.changes.is_empty() {
        writeln!(out, "every value is already in the series")?;
    }
    for c in &rep.changes {
        let u = if c.parameter == "resistance" {
            Unit::Ohm
        } else {
            Unit::Farad
        };
        writeln!(
            out,
            "  {:<8} {:>10} → {:<10} ({:+.2} %)",
            c.designator,
            units::format(c.before, u),
            units::format(c.after, u),
            c.relative * 100.0
        )?;
    }
    if !rep.kept.is_empty() {
        writeln!(
            out,
            "kept (the source's own resistance and the load): {}",
            rep.kept.join(", ")
        )?;
    }
    if !rep.figures.is_empty() {
        writeln!(
            out,
            "\n{:<24} {:>12} {:>12} {:>9}",
            "figure", "before", "after", "change"
        )?;
    }
    for fc in &rep.figures {
        let show = |v: Option<f64>| {
            v.map_or("—".to_string(), |v| match fc.unit.as_str() {
                "A" => units::format(v, Unit::Ampere),
                "V" => units::format(v, Unit::Volt),
                "Ω" => units::format(v, Unit::Ohm),
                "Hz" => units::format(v, Unit::Hertz),
                "dB" => format!("{v:.2} dB"),
                _ if v.is_finite() && v != 0.0 && !(1e-6..1e6).contains(&v.abs()) => {
                    units::plain(v)
                }
                _ => {
                    let digits = (3 - v.abs().max(1e-300).log10().floor() as i32).max(0) as usize;
                    format!("{v:.digits$}")
                }
            })
        };
        let change = match (fc.before, fc.after) {
            (Some(b), Some(a)) if fc.unit == "dB" => format!("{:+.2} dB", a - b),
            (Some(b), Some(a)) if b != 0.0 => format!("{:+.2} %", (a / b - 1.0) * 100.0),
            _ => String::new(),
        };
        writeln!(
            out,
            "{:<24} {:>12} {:>12} {:>9}",
            fc.quantity,
            show(fc.before),
            show(fc.after),
            change
        )?;
    }
    for n in &rep.notes {
        writeln!(out, "note: {n}")?;
    }
    if let Some(p) = output {
        writeln!(out, "wrote {}", p.display())?;
    } else {
        writeln!(
            out,
            "(nothing written: give -o OUT.json to write the rounded project)"
        )?;
    }
    Ok(())
}
