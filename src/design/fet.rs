//! JFET stages from targets (issue 19, item 9): a self-biased common-source
//! stage (`--stage jfet-cs`) and a self-biased source follower
//! (`--stage jfet-sf`), designed for a drain current at the datasheet's
//! typical IDSS and pinch-off voltage and checked at the ends of their spread.
//!
//! Self-bias (Shockley's square law, as in every FET chapter, e.g. Sedra &
//! Smith): ID = IDSS·(1 − VGS/VP)²·(1 + λ·VDS) and VGS = −ID·RSB, so for a
//! target ID the source resistor is RSB = −VGS/ID with
//! VGS = VP·(1 − √(ID/(IDSS·(1 + λ·VDS)))). The drain resistor sets the gain
//! (gm·(RD ∥ RL)) or, with no gain asked, puts the drain midway between the
//! source and the supply. The gate resistor RG is the input impedance.
//! Preferred values, then the engine solves the designed circuit for every
//! figure printed, and for the drain current at both ends of the spread.

use super::eseries::Series;
pub use super::fet_device::{EndAt, FetDevice, MosfetData, SpreadEnd};
use super::measure::{Measured, Probe};
use super::DesignError;
use crate::analysis::dc;
use crate::analysis::devices::fet::keys as fet;
use crate::document::{Document, Part, PartKind, SignalPath};
use crate::netlist;
use std::collections::BTreeMap;

/// The JFET stages.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FetStage {
    /// Common source, self-biased, source resistor bypassed.
    JfetCommonSource,
    /// Source follower, self-biased by its source resistor.
    JfetFollower,
    /// N-MOSFET common source, gate divider from the supply, source
    /// resistor bypassed (`mos.rs`).
    MosfetCommonSource,
}

impl FetStage {
    pub fn parse(s: &str) -> Option<Self> {
        match s.trim().to_ascii_lowercase().as_str() {
            "jfet-cs" => Some(FetStage::JfetCommonSource),
            "jfet-sf" => Some(FetStage::JfetFollower),
            "mos-cs" => Some(FetStage::MosfetCommonSource),
            _ => None,
        }
    }
    pub fn word(self) -> &'static str {
        match self {
            FetStage::JfetCommonSource => "jfet-cs",
            FetStage::JfetFollower => "jfet-sf",
            FetStage::MosfetCommonSource => "mos-cs",
        }
    }
    pub fn words(self) -> &'static str {
        match self {
            FetStage::JfetCommonSource => "JFET common source, self-biased, bypassed source",
            FetStage::JfetFollower => "JFET source follower, self-biased",
            FetStage::MosfetCommonSource => "N-MOSFET common source, gate divider, bypassed source",
        }
    }
    /// The device preset a stage takes when none is given.
    pub fn default_preset(self) -> &'static str {
        match self {
            FetStage::MosfetCommonSource => "small-signal-n-mosfet",
            _ => "small-signal-n-jfet",
        }
    }
    /// True for the JFET stages.
    pub fn is_jfet(self) -> bool {
        self != FetStage::MosfetCommonSource
    }
}

/// What the designer asks of a JFET stage (SI units, dB for the gain).
#[derive(Debug, Clone, PartialEq)]
pub struct FetTargets {
    pub stage: FetStage,
    pub supply: f64,
    pub preset: String,
    /// Drain current at the typical IDSS and VP (`None`: IDSS/4), or at the
    /// typical threshold of a MOSFET (`None`: 1 mA).
    pub drain_current: Option<f64>,
    /// Limits the drain current must stay within over the spread.
    pub drain_current_min: Option<f64>,
    pub drain_current_max: Option<f64>,
    pub gain_db: Option<f64>,
    /// Input impedance = the gate resistor, or the gate divider's RG1 ∥ RG2
    /// (`None`: 1 MΩ).
    pub input_impedance: Option<f64>,
    pub load: f64,
    pub source_resistance: f64,
    pub low_corner: f64,
    pub resistor_series: Series,
    pub capacitor_series: Series,
}

/// The datasheet figures of the JFET the design uses: typical and the ends.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct JfetData {
    pub idss: f64,
    pub idss_min: f64,
    pub idss_max: f64,
    /// |VP|, V (typical, smallest, largest).
    pub pinch_off: f64,
    pub pinch_off_min: f64,
    pub pinch_off_max: f64,
    pub lambda: f64,
}

impl JfetData {
    /// From an N-JFET preset: its IDSS and pinch-off, their `*_min`/`*_max`
    /// keys, else the spread analysis' defaults.
    pub fn of_preset(name: &str) -> Result<Self, DesignError> {
        let p = crate::presets::find(name).ok_or_else(|| {
            DesignError(format!(
                "no device preset '{name}'; presets: {}",
                crate::presets::names().join(", ")
            ))
        })?;
        if !p.kinds.contains(&PartKind::NJfet) {
            return Err(DesignError(format!(
                "preset '{name}' is not an N-channel JFET; the JFET stages take one, like small-signal-n-jfet"
            )));
        }
        let m: BTreeMap<&str, f64> = p.parameters.iter().copied().collect();
        let vto = m.get(fet::THRESHOLD_VOLTAGE).copied().unwrap_or(-2.0);
        let beta = m
            .get(fet::TRANSCONDUCTANCE_PARAMETER)
            .copied()
            .unwrap_or(1e-3);
        let idss = m
            .get(fet::ZERO_GATE_DRAIN_CURRENT)
            .copied()
            .unwrap_or(beta * vto * vto);
        let (lo, hi) = crate::spread::variables::DEFAULT_IDSS_SPREAD;
        let (plo, phi) = crate::spread::variables::DEFAULT_PINCH_OFF_SPREAD;
        let vmin = m
            .get(fet::THRESHOLD_VOLTAGE_MIN)
            .copied()
            .unwrap_or(vto * phi);
        let vmax = m
            .get(fet::THRESHOLD_VOLTAGE_MAX)
            .copied()
            .unwrap_or(vto * plo);
        Ok(JfetData {
            idss,
            idss_min: m
                .get(fet::ZERO_GATE_DRAIN_CURRENT_MIN)
                .copied()
                .unwrap_or(idss * lo),
            idss_max: m
                .get(fet::ZERO_GATE_DRAIN_CURRENT_MAX)
                .copied()
                .unwrap_or(idss * hi),
            pinch_off: vto.abs(),
            pinch_off_min: vmin.abs().min(vmax.abs()),
            pinch_off_max: vmin.abs().max(vmax.abs()),
            lambda: m
                .get(fet::CHANNEL_LENGTH_MODULATION)
                .copied()
                .unwrap_or(0.0),
        })
    }
}

/// Source resistor of a self-biased N-JFET for drain current `id` at `vds`:
/// RSB = −VGS/ID with VGS = −VP·(1 − √(ID/(IDSS·(1 + λ·VDS)))).
pub fn self_bias_resistor(j: &JfetData, id: f64, vds: f64) -> f64 {
    let k = j.idss * (1.0 + j.lambda * vds);
    j.pinch_off * (1.0 - (id / k).sqrt()) / id
}

/// The designed stage: continuous and preferred values, the engine's figures.
#[derive(Debug, Clone)]
pub struct FetDesign {
    pub targets: FetTargets,
    pub device: FetDevice,
    /// The target drain current, A.
    pub drain_current: f64,
    /// Values before rounding (Ω, F by designator).
    pub continuous: super::Values,
    /// Preferred values.
    pub values: super::Values,
    pub document: Document,
    pub measured: Measured,
    /// Drain current, VGS and VDS of the preferred-value design by the engine.
    pub drain_current_achieved: f64,
    pub vgs: f64,
    pub vds: f64,
    pub gm: f64,
    pub ends: [SpreadEnd; 2],
    /// Limits missed, each in plain words with what to change.
    pub misses: Vec<String>,
    /// How a MOSFET stage's source voltage was chosen (`None` for a JFET).
    pub bias_choice: Option<super::mos::BiasChoice>,
}

fn bad<T>(m: String) -> Result<T, DesignError> {
    Err(DesignError(m))
}

/// The checks every FET stage makes of its targets: the supply, positive
/// values, the source resistance and the currents.
pub(super) fn check_common(t: &FetTargets) -> Result<(), DesignError> {
    let positive = |v: f64| v.is_finite() && v > 0.0;
    if !positive(t.supply) || t.supply > 60.0 {
        return bad(format!(
            "supply {} V: give a positive supply up to 60 V (above 60 V a circuit a person may \
             touch needs the precautions of local electrical codes and licensed practice)",
            e(t.supply)
        ));
    }
    for (name, v) in [
        ("load", Some(t.load)),
        ("zin", t.input_impedance),
        ("low", Some(t.low_corner)),
    ] {
        if let Some(v) = v {
            if !positive(v) {
                return bad(format!("--{name} {}: give a positive value", e(v)));
            }
        }
    }
    if !(t.source_resistance.is_finite() && t.source_resistance >= 0.0) {
        return bad(format!(
            "--source {}: give zero or a positive resistance",
            e(t.source_resistance)
        ));
    }
    for (name, v) in [
        ("id", t.drain_current),
        ("id-min", t.drain_current_min),
        ("id-max", t.drain_current_max),
    ] {
        if let Some(v) = v {
            if !positive(v) {
                return bad(format!("--{name} {} A: give a positive current", e(v)));
            }
        }
    }
    Ok(())
}

/// The drain-current limits are in order and hold the target `id`.
pub(super) fn check_limits(t: &FetTargets, id: f64) -> Result<(), DesignError> {
    if let (Some(a), Some(b)) = (t.drain_current_min, t.drain_current_max) {
        if a >= b {
            return bad(format!(
                "--id-min {} A is not below --id-max {} A",
                e(a),
                e(b)
            ));
        }
    }
    if t.drain_current_min.is_some_and(|a| a > id) || t.drain_current_max.is_some_and(|b| b < id) {
        return bad(format!(
            "--id {} A lies outside its own limits --id-min/--id-max",
            e(id)
        ));
    }
    Ok(())
}

fn e(v: f64) -> String {
    crate::units::echo(v)
}

/// Check the targets, design the stage and solve it with the engine.
pub fn design(t: &FetTargets) -> Result<FetDesign, DesignError> {
    if !t.stage.is_jfet() {
        return super::mos::design(t);
    }
    let j = JfetData::of_preset(&t.preset)?;
    check_common(t)?;
    let id = t.drain_current.unwrap_or(j.idss / 4.0);
    if id >= 0.95 * j.idss {
        return bad(format!(
            "--id {} A: a self-biased JFET runs below its IDSS ({} A typical for {}); give a \
             current below {} A, or a part with a larger IDSS",
            e(id),
            e(j.idss),
            t.preset,
            e(0.95 * j.idss)
        ));
    }
    check_limits(t, id)?;
    let gm = 2.0 * (id * j.idss).sqrt() / j.pinch_off;
    let rl = t.load;
    // RD from the gain: gm·(RD ∥ RL) = A.
    let rd_gain = match (t.stage, t.gain_db) {
        (FetStage::JfetFollower, Some(g)) if g > 0.0 => {
            return bad(format!(
                "gain {} dB: a source follower's gain is below 1 (0 dB); choose --stage jfet-cs \
                 for gain, or leave --gain out",
                e(g)
            ))
        }
        (FetStage::JfetFollower, _) => None,
        (_, Some(g)) if !g.is_finite() || g <= 0.0 => {
            return bad(format!("gain {} dB: give a gain above 0 dB", e(g)))
        }
        (_, Some(g)) => {
            let r = 10f64.powf(g / 20.0) / gm;
            if r >= 0.9 * rl {
                return bad(format!(
                    "gain {} dB: at {} A this JFET's gm is {} S, and gm·RL is only {:.1} dB; \
                     raise --id (gm grows as √ID) or the load, or ask less gain",
                    e(g),
                    e(id),
                    e(gm),
                    20.0 * (gm * rl).log10()
                ));
            }
            Some(10f64.powf(g / 20.0))
        }
        (_, None) => None,
    };
    let mut vds = 0.5 * t.supply;
    let (mut rsb, mut rd) = (0.0, 0.0);
    for _ in 0..50 {
        rsb = self_bias_resistor(&j, id, vds);
        rd = match t.stage {
            FetStage::JfetFollower => 0.0,
            FetStage::JfetCommonSource | FetStage::MosfetCommonSource => {
                // gm with the channel-length factor at this VDS, as the engine has it.
                let gm = 2.0 * (id * j.idss * (1.0 + j.lambda * vds)).sqrt() / j.pinch_off;
                rd_gain.map_or(0.5 * (t.supply - id * rsb) / id, |a| {
                    let r = a / gm;
                    r * rl / (rl - r)
                })
            }
        };
        vds = t.supply - id * (rd + rsb);
    }
    let vov = j.pinch_off * (id / (j.idss * (1.0 + j.lambda * vds))).sqrt();
    if vds < vov + 0.5 {
        return bad(format!(
            "supply {} V: at {} A the drain resistor {} Ω and the source resistor {} Ω leave \
             VDS = {} V, below the {} V the JFET needs to stay out of its triode region; raise \
             the supply, lower the gain or the current",
            e(t.supply),
            e(id),
            e(rd),
            e(rsb),
            e(vds),
            e(vov + 0.5)
        ));
    }
    let rg = t.input_impedance.unwrap_or(1e6);
    // Coupling and bypass capacitors: each pole at half the low corner
    // (three or two coincident poles give a −3 dB corner about 1.6–2× above;
    // common practice), rounded up.
    let p = 0.5 * t.low_corner;
    let two_pi = 2.0 * std::f64::consts::PI;
    let mut continuous = super::Values::new();
    continuous.insert("RG".into(), rg);
    continuous.insert("RSB".into(), rsb);
    continuous.insert("C1".into(), 1.0 / (two_pi * p * (t.source_resistance + rg)));
    match t.stage {
        FetStage::JfetCommonSource | FetStage::MosfetCommonSource => {
            continuous.insert("RD".into(), rd);
            continuous.insert("C2".into(), 1.0 / (two_pi * p * (rd + rl)));
            let r = rsb / (1.0 + gm * rsb);
            continuous.insert("CS".into(), 1.0 / (two_pi * p * r));
        }
        FetStage::JfetFollower => {
            let r = rsb / (1.0 + gm * rsb);
            continuous.insert("C2".into(), 1.0 / (two_pi * p * (r + rl)));
        }
    }
    let values: super::Values = continuous
        .iter()
        .map(|(k, &v)| {
            let s = if k.starts_with('C') {
                t.capacitor_series.up(v)
            } else {
                t.resistor_series.nearest(v)
            };
            (k.clone(), s)
        })
        .collect();
    let document = document(t, &values);
    let probe = Probe::new(document.clone());
    let (measured, _) = probe.measure(true).map_err(|m| {
        DesignError(format!(
            "the preferred-value design cannot be analysed: {m}"
        ))
    })?;
    let op = dc::solve(&probe.doc, &probe.nl).map_err(|m| DesignError(m.to_string()))?;
    let f = op
        .fets()
        .next()
        .ok_or_else(|| DesignError("the designed stage has no FET operating point".into()))?;
    let ends = [
        spread_end(&document, "low", j.idss_min, j.pinch_off_min)?,
        spread_end(&document, "high", j.idss_max, j.pinch_off_max)?,
    ];
    let mut d = FetDesign {
        targets: t.clone(),
        device: FetDevice::Jfet(j),
        drain_current: id,
        continuous,
        values,
        measured,
        drain_current_achieved: f.drain_current,
        vgs: f.vgs,
        vds: f.vds,
        gm: f.gm,
        document,
        ends,
        misses: Vec::new(),
        bias_choice: None,
    };
    // Drawn by the layout engine, as every sheet the program places (the
    // engine's figures above were taken on the same nets).
    d.document = crate::layout::tidy(&d.document);
    d.misses = misses(&d);
    Ok(d)
}

/// The engine's drain current of Q1 with IDSS and |VP| set to one end.
fn spread_end(
    doc: &Document,
    end: &'static str,
    idss: f64,
    pinch_off: f64,
) -> Result<SpreadEnd, DesignError> {
    let mut d = doc.clone();
    for p in d.parts.iter_mut().filter(|p| p.designator == "Q1") {
        p.parameters
            .insert(fet::ZERO_GATE_DRAIN_CURRENT.into(), idss);
        p.parameters
            .insert(fet::THRESHOLD_VOLTAGE.into(), -pinch_off);
    }
    let nl = netlist::connect(&d);
    let op = dc::solve(&d, &nl).map_err(|m| {
        DesignError(format!(
            "the design at the {end} end of the spread (IDSS {} A, |VP| {} V) cannot be solved: {m}",
            e(idss),
            e(pinch_off)
        ))
    })?;
    let f = op
        .fets()
        .next()
        .ok_or_else(|| DesignError("no FET operating point".into()))?;
    Ok(SpreadEnd {
        end,
        at: EndAt::Jfet { idss, pinch_off },
        drain_current: f.drain_current,
        vds: f.vds,
    })
}

/// The limits the spread ends miss, each with what to change.
fn misses(d: &FetDesign) -> Vec<String> {
    let t = &d.targets;
    let mut out = Vec::new();
    let [lo, hi] = &d.ends;
    let jfet = |end: &SpreadEnd| match end.at {
        EndAt::Jfet { idss, pinch_off } => (idss, pinch_off),
        EndAt::Mosfet { .. } => (f64::NAN, f64::NAN),
    };
    let ((lo_idss, lo_vp), (hi_idss, hi_vp)) = (jfet(lo), jfet(hi));
    if let Some(m) = t.drain_current_min {
        if lo.drain_current < m {
            out.push(format!(
                "drain current {} A at the low end of the spread (IDSS {} A, |VP| {} V) is below \
                 --id-min {} A: raise --id, widen the limits, or choose a part with a tighter \
                 IDSS grade",
                e(lo.drain_current),
                e(lo_idss),
                e(lo_vp),
                e(m)
            ));
        }
    }
    if let Some(m) = t.drain_current_max {
        if hi.drain_current > m {
            out.push(format!(
                "drain current {} A at the high end of the spread (IDSS {} A, |VP| {} V) is above \
                 --id-max {} A: lower --id (a larger source resistor holds the current steadier), \
                 widen the limits, or choose a part with a tighter IDSS grade",
                e(hi.drain_current),
                e(hi_idss),
                e(hi_vp),
                e(m)
            ));
        }
    }
    for end in [lo, hi] {
        if end.vds < 0.5 {
            out.push(format!(
                "at the {} end of the spread VDS is only {} V: the JFET leaves saturation; \
                 lower the drain resistor or the current",
                end.end,
                e(end.vds)
            ));
        }
    }
    out
}

/// The drawn stage with `values` filled in.
pub fn document(t: &FetTargets, values: &super::Values) -> Document {
    if !t.stage.is_jfet() {
        return super::mos::document(t, values);
    }
    let mut s = super::layout::Sheet::new(&format!("Designed {} stage", t.stage.words()));
    s.part("VDD", PartKind::Rail, [16, 2], 0);
    s.wire(&[[16, 2], [21, 2]]);
    s.source_from_left();
    s.wire(&[[16, 15], [18, 15]]);
    s.part("RG", PartKind::Resistor, [16, 19], 0);
    s.wire(&[[16, 15], [16, 17]]);
    s.wire(&[[16, 21], [16, super::layout::GROUND]]);
    s.ground(16);
    s.part("Q1", PartKind::NJfet, [20, 15], 0);
    s.part("RSB", PartKind::Resistor, [21, 21], 0);
    s.wire(&[[21, 17], [21, 19]]);
    s.wire(&[[21, 23], [21, super::layout::GROUND]]);
    s.ground(21);
    match t.stage {
        FetStage::JfetCommonSource | FetStage::MosfetCommonSource => {
            drain_resistor(&mut s);
            bypassed_source_and_output(&mut s);
        }
        FetStage::JfetFollower => {
            s.wire(&[[21, 2], [21, 13]]);
            s.output(21, 25, 18, 30);
        }
    }
    finish(s, t, values)
}

/// RD from the supply bus to the drain (at x = 21).
pub(super) fn drain_resistor(s: &mut super::layout::Sheet) {
    s.part("RD", PartKind::Resistor, [21, 7], 0);
    s.wire(&[[21, 2], [21, 5]]);
    s.wire(&[[21, 9], [21, 13]]);
}

/// CS across the source resistor, and the output coupled from the drain.
pub(super) fn bypassed_source_and_output(s: &mut super::layout::Sheet) {
    s.part("CS", PartKind::PolarisedCapacitor, [25, 21], 0);
    s.wire(&[[21, 18], [25, 18], [25, 19]]);
    s.wire(&[[25, 23], [25, super::layout::GROUND]]);
    s.ground(25);
    s.output(21, 25, 11, 30);
}

/// The drawn sheet as a document: the signal path marked, every part's
/// values filled in.
pub(super) fn finish(s: super::layout::Sheet, t: &FetTargets, values: &super::Values) -> Document {
    let mut doc = s.into_document();
    doc.signal = SignalPath {
        source: Some("VS".into()),
        load: Some("RL".into()),
        waveform: None,
    };
    let rtol = super::layout::series_tolerance(t.resistor_series.name);
    for p in &mut doc.parts {
        fill(p, t, values, rtol);
    }
    doc
}

fn fill(p: &mut Part, t: &FetTargets, values: &super::Values, rtol: f64) {
    let d = p.designator.clone();
    let mut set = |k: &str, v: f64| {
        p.parameters.insert(k.to_string(), v);
    };
    match p.kind {
        PartKind::Rail => set("voltage", t.supply),
        PartKind::SignalSource => {
            set("amplitude", 0.01);
            set("frequency", 1000.0);
        }
        PartKind::Resistor if d == "RS" => {
            set("resistance", t.source_resistance.max(1e-3));
            set(crate::presets::keys::SOURCE_RESISTANCE_MARK, 1.0);
        }
        PartKind::Resistor if d == "RL" => set("resistance", t.load),
        PartKind::Resistor => {
            set("resistance", values.get(&d).copied().unwrap_or(1e3));
            set("tolerance", rtol);
            set("power_rating", 0.25);
        }
        PartKind::PolarisedCapacitor => {
            set("capacitance", values.get(&d).copied().unwrap_or(1e-6));
            set("tolerance", 0.2);
            set("voltage_rating", super::layout::voltage_rating(t.supply));
        }
        PartKind::NJfet | PartKind::NMosfet => p.preset = Some(t.preset.clone()),
        _ => {}
    }
}
