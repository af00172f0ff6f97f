//! The target line of a stage design, as typed: the words `biasline design`
//! takes on the command line and the editor's "design a stage" dialog
//! takes in one line (`--stage ce --supply 12 --gain 30dB …`), read into
//! [`Targets`] through the units parser, and the spread limits that turn
//! the targets into a yield.

use super::{eseries, targets::Topology, Targets};
use crate::document::SpecLimit;
use crate::units::{self, Unit};

/// The target line, as typed.
#[derive(Debug, Clone, clap::Args)]
pub struct TargetLine {
    /// ce, cc, cb or ce-cc; jfet-cs or jfet-sf for a self-biased JFET
    /// common-source stage or source follower; mos-cs for an N-MOSFET
    /// common-source stage on a gate divider.
    #[arg(long, default_value = "ce")]
    pub stage: String,
    /// Supply voltage (V), like 12.
    #[arg(long, allow_hyphen_values = true)]
    pub supply: String,
    /// Voltage gain from the stage's input (after the source resistance) to
    /// the load, like 30dB — not from the source EMF (not for cc).
    #[arg(long, allow_hyphen_values = true)]
    pub gain: Option<String>,
    /// Input impedance at midband, like 20k.
    #[arg(long, allow_hyphen_values = true)]
    pub zin: Option<String>,
    /// Output level the stage must reach at the load before clipping, in
    /// volts peak, like 2V; the design warns when it cannot.
    #[arg(long, allow_hyphen_values = true)]
    pub swing: Option<String>,
    /// Share of boards that must meet the design's own targets (gain ±1 dB,
    /// Zin ±20 %, VCE ≥ 1 V) at the chosen tolerances, like 95% (a spread
    /// run over the designed project); when the design misses it, it is
    /// designed again until it meets it, or says plainly it cannot.
    #[arg(long = "yield", allow_hyphen_values = true)]
    pub yield_target: Option<String>,
    /// Load resistance, like 10k.
    #[arg(long, allow_hyphen_values = true)]
    pub load: String,
    /// Lower −3 dB corner of the response at most, like 20 (Hz).
    #[arg(long, allow_hyphen_values = true)]
    pub low: String,
    /// Collector current of the first transistor, or `low-noise` for the
    /// quietest at the source resistance (default: the largest of 2m … 20µ
    /// that meets every target).
    #[arg(long, allow_hyphen_values = true)]
    pub ic: Option<String>,
    /// Drain current of a JFET stage at the typical IDSS and pinch-off
    /// (default IDSS/4), or of the MOSFET stage at the typical threshold
    /// (default 1m), like 1m.
    #[arg(long, allow_hyphen_values = true)]
    pub id: Option<String>,
    /// Least drain current of a FET stage over the spread of IDSS and
    /// pinch-off (JFET) or of the threshold (MOSFET); the design says
    /// plainly when the spread leaves it.
    #[arg(long, allow_hyphen_values = true)]
    pub id_min: Option<String>,
    /// Largest drain current of a FET stage over the spread.
    #[arg(long, allow_hyphen_values = true)]
    pub id_max: Option<String>,
    /// Collector current of the follower in ce-cc (default: as --ic).
    #[arg(long, allow_hyphen_values = true)]
    pub ic2: Option<String>,
    /// Resistance of the signal source (default 1k).
    #[arg(long, default_value = "1k", allow_hyphen_values = true)]
    pub source: String,
    /// Largest βF sensitivity S = ∂IC/∂βF · βF/IC allowed (default 0.2).
    #[arg(long, default_value = "0.2", allow_hyphen_values = true)]
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
}

fn value(text: &str, unit: Unit, what: &str) -> Result<f64, String> {
    units::parse(text, unit).map_err(|e| format!("--{what}: {e}"))
}

fn series(name: &str) -> Result<eseries::Series, String> {
    eseries::find(name).ok_or_else(|| eseries::unknown(name))
}

/// A gain in dB: `30dB`, `30 dB` or `30`.
fn gain_db(text: &str) -> Result<f64, String> {
    let t = text.trim();
    let t = t
        .strip_suffix("dB")
        .or_else(|| t.strip_suffix("db"))
        .or_else(|| t.strip_suffix("DB"))
        .unwrap_or(t);
    value(t.trim_end(), Unit::None, "gain")
}

/// A share of boards: `95%`, `95 %` or `0.95`.
fn share(text: &str) -> Result<f64, String> {
    let t = text.trim();
    match t.strip_suffix('%') {
        Some(p) => value(p.trim_end(), Unit::None, "yield").map(|v| v / 100.0),
        None => value(t, Unit::None, "yield"),
    }
}

/// The targets from the arguments (every value through the units parser).
pub fn targets(a: &TargetLine) -> Result<Targets, String> {
    let topology = Topology::parse(&a.stage).map_err(|e| e.0)?;
    if a.id.is_some() || a.id_min.is_some() || a.id_max.is_some() {
        return Err(format!(
            "--id, --id-min and --id-max are for the JFET stages (jfet-cs, jfet-sf) and the \
             MOSFET stage (mos-cs); a {} stage takes --ic",
            topology.words()
        ));
    }
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
    t.swing = a
        .swing
        .as_deref()
        .map(|v| value(v, Unit::Volt, "swing"))
        .transpose()?;
    t.yield_target = a.yield_target.as_deref().map(share).transpose()?;
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

/// The targets of a JFET stage, when `--stage` names one.
pub fn fet_targets(a: &TargetLine) -> Option<Result<super::fet::FetTargets, String>> {
    let stage = super::fet::FetStage::parse(&a.stage)?;
    let current = |t: &Option<String>, what: &str| {
        t.as_deref()
            .map(|z| value(z, Unit::Ampere, what))
            .transpose()
    };
    Some((|| {
        let resistor_series = series(&a.series)?;
        Ok(super::fet::FetTargets {
            stage,
            supply: value(&a.supply, Unit::Volt, "supply")?,
            preset: if a.preset == "small-signal-npn" {
                stage.default_preset().into()
            } else {
                a.preset.clone()
            },
            drain_current: current(&a.id, "id")?,
            drain_current_min: current(&a.id_min, "id-min")?,
            drain_current_max: current(&a.id_max, "id-max")?,
            gain_db: a.gain.as_deref().map(gain_db).transpose()?,
            input_impedance: a
                .zin
                .as_deref()
                .map(|z| value(z, Unit::Ohm, "zin"))
                .transpose()?,
            load: value(&a.load, Unit::Ohm, "load")?,
            source_resistance: value(&a.source, Unit::Ohm, "source")?,
            low_corner: value(&a.low, Unit::Hertz, "low")?,
            resistor_series,
            capacitor_series: match &a.capacitor_series {
                Some(s) => series(s)?,
                None => eseries::capacitor_default(resistor_series),
            },
        })
    })())
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
