//! The datasheet line, as typed: what `biasline fit` takes on the command
//! line and the inspector takes in one line (`--idss 6m --vgs-off -2`),
//! read through the units parser and handed to the fits of `fit.rs`
//! (bipolar) and `fit_fet.rs` (JFET, MOSFET). The answer is a set of
//! parameter keys ready to merge into a part.

use super::devices::fet::{keys as fk, Channel};
use super::fit::{self, DatasheetFigures, OutputSlope};
use super::fit_fet::{self, CapacitanceFigures, JfetFigures};
use crate::document::{Part, PartKind};
use crate::presets::{self, keys};
use crate::units::{self, Unit};
use std::collections::BTreeMap;

/// Every figure a datasheet may give, as typed (a number with an optional
/// unit: `6m`, `6mA`, `-2V`). Which ones a kind needs is said by [`fitted`].
#[derive(Debug, Clone, Default, clap::Args)]
pub struct FitLine {
    /// Bipolar: VBE (V) at the collector current of --vbe-at.
    #[arg(long, allow_hyphen_values = true)]
    pub vbe: Option<String>,
    /// Bipolar: the collector current of --vbe (A).
    #[arg(long, allow_hyphen_values = true)]
    pub vbe_at: Option<String>,
    /// Bipolar: hFE = IC/IB at the collector current of --hfe-at.
    #[arg(long, allow_hyphen_values = true)]
    pub hfe: Option<String>,
    /// Bipolar: the collector current of --hfe (A).
    #[arg(long, allow_hyphen_values = true)]
    pub hfe_at: Option<String>,
    /// Bipolar: the Early voltage (V), or give --hoe and --hoe-at.
    #[arg(long, allow_hyphen_values = true)]
    pub early: Option<String>,
    /// Bipolar: the output admittance hoe (S) at the current of --hoe-at.
    #[arg(long, allow_hyphen_values = true)]
    pub hoe: Option<String>,
    /// Bipolar: the collector current of --hoe (A).
    #[arg(long, allow_hyphen_values = true)]
    pub hoe_at: Option<String>,
    /// Bipolar: VCE of the test conditions (default 5 V).
    #[arg(long, allow_hyphen_values = true)]
    pub vce: Option<String>,
    /// JFET: IDSS, the drain current at VGS = 0 (A).
    #[arg(long, allow_hyphen_values = true)]
    pub idss: Option<String>,
    /// JFET: VGS(off), the pinch-off voltage as the part sees it (V).
    #[arg(long, allow_hyphen_values = true)]
    pub vgs_off: Option<String>,
    /// JFET: the forward transconductance gfs (S) at the drain current of --gfs-at.
    #[arg(long, allow_hyphen_values = true)]
    pub gfs: Option<String>,
    /// JFET: the drain current of --gfs (A).
    #[arg(long, allow_hyphen_values = true)]
    pub gfs_at: Option<String>,
    /// MOSFET: VGS(th) (V, as the part sees it) at the drain current of --vgs-th-at.
    #[arg(long, allow_hyphen_values = true)]
    pub vgs_th: Option<String>,
    /// MOSFET: the drain current of --vgs-th (A).
    #[arg(long, allow_hyphen_values = true)]
    pub vgs_th_at: Option<String>,
    /// MOSFET: a drain current in full conduction (A) at the gate voltage of --id-on-at.
    #[arg(long, allow_hyphen_values = true)]
    pub id_on: Option<String>,
    /// MOSFET: the VGS of --id-on (V, as the part sees it).
    #[arg(long, allow_hyphen_values = true)]
    pub id_on_at: Option<String>,
    /// FET: the channel-length modulation λ (1/V; default 0).
    #[arg(long, allow_hyphen_values = true)]
    pub lambda: Option<String>,
    /// FET: VDS of the test conditions (default 10 V).
    #[arg(long, allow_hyphen_values = true)]
    pub vds: Option<String>,
    /// FET: input capacitance Ciss (F) at --vds.
    #[arg(long, allow_hyphen_values = true)]
    pub ciss: Option<String>,
    /// FET: reverse transfer capacitance Crss (F) at --vds.
    #[arg(long, allow_hyphen_values = true)]
    pub crss: Option<String>,
    /// FET: output capacitance Coss (F) at --vds.
    #[arg(long, allow_hyphen_values = true)]
    pub coss: Option<String>,
    /// The temperature of the datasheet's figures (default 25 °C).
    #[arg(long, allow_hyphen_values = true)]
    pub celsius: Option<String>,
}

fn read(text: &Option<String>, unit: Unit, flag: &str) -> Result<Option<f64>, String> {
    text.as_deref()
        .map(|t| units::parse(t, unit).map_err(|e| format!("--{flag}: {e}")))
        .transpose()
}

fn need(v: Option<f64>, flag: &str, kind: PartKind) -> Result<f64, String> {
    v.ok_or_else(|| format!("the {} fit needs --{flag}", kind.word()))
}

/// The flags given that `kind` does not use (named in the refusal).
fn unused(line: &FitLine, kind: PartKind) -> Vec<&'static str> {
    let l = line;
    let bipolar = [
        ("vbe", &l.vbe),
        ("vbe-at", &l.vbe_at),
        ("hfe", &l.hfe),
        ("hfe-at", &l.hfe_at),
        ("early", &l.early),
        ("hoe", &l.hoe),
        ("hoe-at", &l.hoe_at),
        ("vce", &l.vce),
    ];
    let jfet = [
        ("idss", &l.idss),
        ("vgs-off", &l.vgs_off),
        ("gfs", &l.gfs),
        ("gfs-at", &l.gfs_at),
    ];
    let mosfet = [
        ("vgs-th", &l.vgs_th),
        ("vgs-th-at", &l.vgs_th_at),
        ("id-on", &l.id_on),
        ("id-on-at", &l.id_on_at),
    ];
    let fet = [
        ("lambda", &l.lambda),
        ("vds", &l.vds),
        ("ciss", &l.ciss),
        ("crss", &l.crss),
        ("coss", &l.coss),
    ];
    let mut out = Vec::new();
    let mut refuse = |set: &[(&'static str, &Option<String>)]| {
        out.extend(set.iter().filter(|(_, v)| v.is_some()).map(|(k, _)| *k));
    };
    match kind {
        PartKind::Npn | PartKind::Pnp => {
            refuse(&jfet);
            refuse(&mosfet);
            refuse(&fet);
        }
        PartKind::NJfet | PartKind::PJfet => {
            refuse(&bipolar);
            refuse(&mosfet);
        }
        _ => {
            refuse(&bipolar);
            refuse(&jfet);
        }
    }
    out
}

/// The parameters that make a part of `kind` reproduce the typed figures,
/// with `parameter_celsius` set to the figures' temperature. `base` is the
/// part's other parameters (defaults, preset, its own values), which the
/// bipolar fit holds fixed.
pub fn fitted(
    kind: PartKind,
    line: &FitLine,
    base: &BTreeMap<String, f64>,
) -> Result<BTreeMap<String, f64>, String> {
    if !kind.is_transistor() {
        return Err(format!(
            "a datasheet fit is for transistors, not a {}",
            kind.word()
        ));
    }
    let extra = unused(line, kind);
    if !extra.is_empty() {
        return Err(format!(
            "the {} fit does not use --{}",
            kind.word(),
            extra.join(", --")
        ));
    }
    let celsius = read(&line.celsius, Unit::None, "celsius")?.unwrap_or(25.0);
    let kelvin = celsius + super::ZERO_CELSIUS;
    let mut out = match kind {
        PartKind::Npn | PartKind::Pnp => {
            let v = |t: &Option<String>, u, f| read(t, u, f);
            let output = match (
                v(&line.early, Unit::Volt, "early")?,
                v(&line.hoe, Unit::Siemens, "hoe")?,
                v(&line.hoe_at, Unit::Ampere, "hoe-at")?,
            ) {
                (Some(va), None, None) => OutputSlope::EarlyVoltage(va.abs()),
                (None, Some(hoe), Some(at)) => OutputSlope::Hoe {
                    hoe,
                    at_ic: at.abs(),
                },
                _ => {
                    return Err(format!(
                        "the {} fit needs the output slope: --early, or --hoe with --hoe-at",
                        kind.word()
                    ))
                }
            };
            let figures = DatasheetFigures {
                vbe: need(v(&line.vbe, Unit::Volt, "vbe")?, "vbe", kind)?.abs(),
                vbe_at_ic: need(v(&line.vbe_at, Unit::Ampere, "vbe-at")?, "vbe-at", kind)?.abs(),
                hfe: need(v(&line.hfe, Unit::None, "hfe")?, "hfe", kind)?,
                hfe_at_ic: need(v(&line.hfe_at, Unit::Ampere, "hfe-at")?, "hfe-at", kind)?.abs(),
                output,
                vce: v(&line.vce, Unit::Volt, "vce")?.unwrap_or(5.0).abs(),
            };
            fit::fit(&figures, base, kelvin)
                .map_err(|e| e.0)?
                .to_parameters()
        }
        _ => fet_fit(kind, line, base)?,
    };
    out.insert(keys::PARAMETER_CELSIUS.to_string(), celsius);
    Ok(out)
}

fn fet_fit(
    kind: PartKind,
    line: &FitLine,
    base: &BTreeMap<String, f64>,
) -> Result<BTreeMap<String, f64>, String> {
    let channel = match kind {
        PartKind::NJfet | PartKind::NMosfet => Channel::N,
        _ => Channel::P,
    };
    let v = |t: &Option<String>, u, f| read(t, u, f);
    // Without --lambda the part's own λ (its preset's, else 0) is kept.
    let lambda = v(&line.lambda, Unit::None, "lambda")?
        .or_else(|| base.get(fk::CHANNEL_LENGTH_MODULATION).copied())
        .unwrap_or(0.0);
    if !(lambda >= 0.0 && lambda.is_finite()) {
        return Err(format!("--lambda must not be negative (it is {lambda})"));
    }
    let vds = v(&line.vds, Unit::Volt, "vds")?.unwrap_or(10.0).abs();
    let mut out = if matches!(kind, PartKind::NJfet | PartKind::PJfet) {
        let idss = v(&line.idss, Unit::Ampere, "idss")?.map(f64::abs);
        let off = v(&line.vgs_off, Unit::Volt, "vgs-off")?;
        let gfs = v(&line.gfs, Unit::Siemens, "gfs")?;
        let at = v(&line.gfs_at, Unit::Ampere, "gfs-at")?.map(f64::abs);
        let figures = match (idss, off, gfs, at) {
            (Some(idss), Some(vgs_off), None, None) => {
                JfetFigures::ZeroGateCurrentAndCutoff { idss, vgs_off }
            }
            (Some(idss), None, Some(gfs), Some(at_id)) => {
                JfetFigures::ZeroGateCurrentAndGfs { idss, gfs, at_id }
            }
            (None, Some(vgs_off), Some(gfs), Some(at_id)) => JfetFigures::CutoffAndGfs {
                vgs_off,
                gfs,
                at_id,
            },
            _ => {
                return Err(format!(
                    "the {} fit needs two of: --idss, --vgs-off, --gfs with --gfs-at",
                    kind.word()
                ))
            }
        };
        let mut p = fit_fet::fit_jfet(figures, channel, lambda, vds).map_err(|e| e.0)?;
        // A part's IDSS key sets β = IDSS/VTO² (a preset's would override the
        // fitted β): write the one that gives the fitted β.
        let key = |k: &str| p.get(k).copied().unwrap_or(0.0);
        let vto = key(fk::THRESHOLD_VOLTAGE);
        let beta = key(fk::TRANSCONDUCTANCE_PARAMETER);
        p.insert(fk::ZERO_GATE_DRAIN_CURRENT.to_string(), beta * vto * vto);
        p
    } else {
        let th = need(v(&line.vgs_th, Unit::Volt, "vgs-th")?, "vgs-th", kind)?;
        let th_at = need(
            v(&line.vgs_th_at, Unit::Ampere, "vgs-th-at")?,
            "vgs-th-at",
            kind,
        )?
        .abs();
        let on = need(v(&line.id_on, Unit::Ampere, "id-on")?, "id-on", kind)?.abs();
        let on_at = need(v(&line.id_on_at, Unit::Volt, "id-on-at")?, "id-on-at", kind)?;
        fit_fet::fit_mosfet(channel, th, th_at, on_at, on, lambda, vds).map_err(|e| e.0)?
    };
    let caps = [
        v(&line.ciss, Unit::Farad, "ciss")?,
        v(&line.crss, Unit::Farad, "crss")?,
        v(&line.coss, Unit::Farad, "coss")?,
    ];
    match caps {
        [None, None, None] => {}
        [Some(ciss), Some(crss), Some(coss)] => {
            let c = CapacitanceFigures {
                ciss,
                crss,
                coss,
                vds,
            };
            // Checked by the fit; written as the datasheet keys, which the
            // model turns into the same junction values (and which a
            // preset's own datasheet keys would otherwise override).
            fit_fet::fit_capacitances(c, 0.75, 0.5).map_err(|e| e.0)?;
            for (k, v) in [
                (fk::INPUT_CAPACITANCE, ciss),
                (fk::REVERSE_TRANSFER_CAPACITANCE, crss),
                (fk::OUTPUT_CAPACITANCE, coss),
                (fk::CAPACITANCE_TEST_VOLTAGE, vds),
            ] {
                out.insert(k.to_string(), v);
            }
        }
        _ => return Err("give all three of --ciss, --crss and --coss, or none".into()),
    }
    Ok(out)
}

/// Fit `part` from the line and merge the result into its parameters
/// (the part's own values win over its preset's); returns the keys written.
pub fn apply(part: &mut Part, line: &FitLine) -> Result<BTreeMap<String, f64>, String> {
    let base = presets::effective_parameters(part);
    let p = fitted(part.kind, line, &base)?;
    part.parameters.extend(p.clone());
    Ok(p)
}
