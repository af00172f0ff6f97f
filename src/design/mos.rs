//! The MOSFET stage from targets (issue 19, item 9): an N-MOSFET common-
//! source stage biased by a gate divider from the supply, its source resistor
//! RSB bypassed (`--stage mos-cs`), designed at the typical threshold and
//! checked at both ends of the VGS(th) spread.
//!
//! Square law with channel-length modulation, exactly as the engine has it
//! (Shichman and Hodges 1968; Sedra & Smith, the MOSFET chapter, biasing by
//! a gate divider and a source resistor): in saturation
//! ID = (β/2)·(VG − ID·RSB − VTO)²·(1 + λ·VDS). For a target ID at a source
//! voltage VS = ID·RSB the gate sits at VG = VTO + Vov + VS with the
//! overdrive Vov = √(2·ID/(β·(1 + λ·VDS))). VS is the design's free choice:
//! the larger it is, the steadier ID against the threshold
//! (∂ID/∂VTO = −1/(RSB + 1/gm)), and the less room the drain has. The design
//! takes the smallest VS whose drain currents at both threshold ends (the
//! bias equation solved for each) lie inside `--id-min`/`--id-max`, or within
//! ±20 % of the target where no limit is given (common practice), as far as
//! the headroom allows; then the engine solves the preferred-value circuit at
//! both ends and says plainly which limit is missed.

use super::fet::{FetDesign, FetTargets};
use super::fet_device::{EndAt, FetDevice, MosfetData, SpreadEnd};
use super::measure::Probe;
use super::DesignError;
use crate::analysis::dc;
use crate::analysis::devices::fet::keys as fet;
use crate::document::{Document, PartKind};
use crate::netlist;
use crate::units::{echo, format as fmt, Unit};
use std::collections::BTreeMap;

/// Drain current when `--id` is not given, A (common practice for a
/// small-signal stage).
pub const DEFAULT_DRAIN_CURRENT: f64 = 1e-3;
/// Where no limit is given, the source resistor aims to hold the drain
/// current within this share of the target over the threshold spread
/// (common practice, no source).
pub const DEFAULT_CURRENT_SPREAD: f64 = 0.2;
/// VDS kept above the overdrive at the operating point, V: room for the
/// swing before the triode edge (common practice).
pub const HEADROOM: f64 = 1.0;

/// The gate divider puts the gate at most this share of the supply (a
/// divider past 10:1 is a megohm part beside a much larger one; common
/// practice, no source).
pub const GATE_SHARE: f64 = 0.9;

/// How the source voltage was chosen (printed beside the design).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct BiasChoice {
    /// VS = ID·RSB of the computed design, V.
    pub source_voltage: f64,
    /// The largest VS the headroom allows, V.
    pub source_voltage_max: f64,
    /// The drain-current window aimed at over the threshold spread, A.
    pub aim_min: f64,
    pub aim_max: f64,
    /// The bias equation's drain current at the two threshold ends for the
    /// computed values (before rounding), A: at VGS(th) max, at VGS(th) min.
    pub estimate_low: f64,
    pub estimate_high: f64,
    /// True when the headroom, not the window, set VS.
    pub headroom_limited: bool,
}

impl MosfetData {
    /// From an N-MOSFET preset: its threshold, β and λ over the kind's
    /// defaults; the threshold's `*_min`/`*_max` keys, else the spread
    /// analysis' default of ±0.5 V.
    pub fn of_preset(name: &str) -> Result<Self, DesignError> {
        let p = crate::presets::find(name).ok_or_else(|| {
            DesignError(format!(
                "no device preset '{name}'; presets: {}",
                crate::presets::names().join(", ")
            ))
        })?;
        if !p.kinds.contains(&PartKind::NMosfet) {
            return Err(DesignError(format!(
                "preset '{name}' is not an N-channel MOSFET; the MOSFET stage takes one, like \
                 small-signal-n-mosfet"
            )));
        }
        let mut m: BTreeMap<&str, f64> = crate::presets::defaults(PartKind::NMosfet)
            .iter()
            .copied()
            .collect();
        m.extend(p.parameters.iter().copied());
        let vto = m.get(fet::THRESHOLD_VOLTAGE).copied().unwrap_or(2.0);
        let d = crate::spread::variables::DEFAULT_THRESHOLD_SPREAD;
        let lo = m
            .get(fet::THRESHOLD_VOLTAGE_MIN)
            .copied()
            .unwrap_or(vto - d);
        let hi = m
            .get(fet::THRESHOLD_VOLTAGE_MAX)
            .copied()
            .unwrap_or(vto + d);
        Ok(MosfetData {
            threshold: vto,
            threshold_min: lo.min(hi),
            threshold_max: lo.max(hi),
            beta: m
                .get(fet::TRANSCONDUCTANCE_PARAMETER)
                .copied()
                .unwrap_or(1e-3),
            lambda: m
                .get(fet::CHANNEL_LENGTH_MODULATION)
                .copied()
                .unwrap_or(0.0),
            max_drain_current: m.get(fet::MAX_DRAIN_CURRENT).copied(),
        })
    }
}

/// The computed (unrounded) bias at one source voltage.
#[derive(Debug, Clone, Copy)]
struct Bias {
    rs: f64,
    rd: f64,
    vg: f64,
    vds: f64,
    vov: f64,
    gm: f64,
}

/// The nominal design for drain current `id` at source voltage `vs`: RD from
/// the gain |Av| = gm·(RD ∥ RL ∥ ro) or, with no gain asked, the drain midway
/// between the source and the supply; VDS found by fixed-point iteration
/// (λ makes Vov depend on it).
fn bias(m: &MosfetData, t: &FetTargets, id: f64, vs: f64, gain: Option<f64>) -> Bias {
    let rs = vs / id;
    let mut vds = 0.5 * (t.supply - vs);
    let mut b = Bias {
        rs,
        rd: 0.0,
        vg: 0.0,
        vds,
        vov: 0.0,
        gm: 0.0,
    };
    for _ in 0..60 {
        let k = m.beta * (1.0 + m.lambda * vds);
        let vov = (2.0 * id / k).sqrt();
        let gm = 2.0 * id / vov;
        // gds = λ·(β/2)·Vov² = λ·ID/(1 + λ·VDS) in saturation.
        let gds = m.lambda * id / (1.0 + m.lambda * vds);
        let rd = match gain {
            Some(a) => 1.0 / (gm / a - 1.0 / t.load - gds),
            None => 0.5 * (t.supply - vs) / id,
        };
        vds = t.supply - id * (rd + rs);
        b = Bias {
            rs,
            rd,
            vg: m.threshold + vov + vs,
            vds,
            vov,
            gm,
        };
    }
    b
}

/// The bias equation's drain current for threshold `vt`, saturation with
/// λ: the root of (β/2)·(VG − ID·RSB − VT)²·(1 + λ·VDS(ID)) = ID on
/// 0 < ID < (VG − VT)/RSB, by bisection (the left side falls, ID rises).
fn end_current(m: &MosfetData, supply: f64, b: &Bias, vt: f64) -> f64 {
    let top = (b.vg - vt) / b.rs;
    if top.is_nan() || top <= 0.0 {
        return 0.0;
    }
    let f = |i: f64| {
        let vov = b.vg - i * b.rs - vt;
        let vds = (supply - i * (b.rd + b.rs)).max(0.0);
        0.5 * m.beta * vov * vov * (1.0 + m.lambda * vds) - i
    };
    let (mut lo, mut hi) = (0.0, top);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if f(mid) > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

fn bad(m: String) -> Result<FetDesign, DesignError> {
    Err(DesignError(m))
}

/// Check the targets, design the stage and solve it with the engine.
pub fn design(t: &FetTargets) -> Result<FetDesign, DesignError> {
    let m = MosfetData::of_preset(&t.preset)?;
    super::fet::check_common(t)?;
    let a = |v: f64| fmt(v, Unit::Ampere);
    let v = |x: f64| fmt(x, Unit::Volt);
    let id = t.drain_current.unwrap_or(DEFAULT_DRAIN_CURRENT);
    if let Some(max) = m.max_drain_current {
        if id > 0.5 * max {
            return bad(format!(
                "--id {}: the preset {} is rated for {}; a small-signal stage runs well below \
                 that — give at most {}, or a part rated for more",
                a(id),
                t.preset,
                a(max),
                a(0.5 * max)
            ));
        }
    }
    super::fet::check_limits(t, id)?;
    let gain = match t.gain_db {
        Some(g) if !g.is_finite() || g <= 0.0 => {
            return bad(format!("gain {} dB: give a gain above 0 dB", echo(g)))
        }
        Some(g) => {
            let av = 10f64.powf(g / 20.0);
            let gm = (2.0 * m.beta * id).sqrt();
            if av / gm >= 0.9 * t.load {
                return bad(format!(
                    "gain {} dB: at {} this MOSFET's gm is {} S, and gm·RL is only {:.1} dB; \
                     raise --id (gm grows as √ID) or the load, or ask less gain",
                    echo(g),
                    a(id),
                    echo(gm),
                    20.0 * (gm * t.load).log10()
                ));
            }
            Some(av)
        }
        None => None,
    };
    // The source voltage: at least 0.1 V, at most what leaves VDS a volt
    // above the overdrive and the gate below 90 % of the supply (found by
    // bisection: VDS falls and VG rises as VS rises).
    let room = |vs: f64| {
        let b = bias(&m, t, id, vs, gain);
        b.rd > 0.0 && b.rd.is_finite() && b.vds >= b.vov + HEADROOM && b.vg <= GATE_SHARE * t.supply
    };
    let vs_floor = 0.1;
    if !room(vs_floor) {
        let b = bias(&m, t, id, vs_floor, gain);
        if b.vg > GATE_SHARE * t.supply {
            return bad(format!(
                "supply {}: the gate must sit at the threshold {} + the overdrive {} + the \
                 source voltage, {} at least, above 90 % of the supply; raise the supply, or \
                 choose a part with a lower threshold",
                v(t.supply),
                v(m.threshold),
                v(b.vov),
                v(b.vg)
            ));
        }
        return bad(format!(
            "supply {}: at {} the drain resistor {} leaves VDS = {}, below the {} the MOSFET \
             needs to stay out of its triode region with room to swing; raise the supply, \
             lower the gain or the current",
            v(t.supply),
            a(id),
            fmt(b.rd, Unit::Ohm),
            v(b.vds),
            v(b.vov + HEADROOM)
        ));
    }
    let (mut lo, mut hi) = (vs_floor, t.supply);
    for _ in 0..80 {
        let mid = 0.5 * (lo + hi);
        if room(mid) {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    let vs_max = lo;
    // The window aimed at: the limits, or ±20 % of the target, each taken a
    // tenth of the way in toward the target (room for the preferred values).
    let goal_min = t
        .drain_current_min
        .unwrap_or((1.0 - DEFAULT_CURRENT_SPREAD) * id);
    let goal_max = t
        .drain_current_max
        .unwrap_or((1.0 + DEFAULT_CURRENT_SPREAD) * id);
    let aim_min = goal_min + 0.1 * (id - goal_min);
    let aim_max = goal_max - 0.1 * (goal_max - id);
    let ends = |vs: f64| {
        let b = bias(&m, t, id, vs, gain);
        (
            end_current(&m, t.supply, &b, m.threshold_max),
            end_current(&m, t.supply, &b, m.threshold_min),
        )
    };
    let meets = |vs: f64| {
        let (l, h) = ends(vs);
        l >= aim_min && h <= aim_max
    };
    let (vs, headroom_limited) = if meets(vs_floor) {
        (vs_floor, false)
    } else if !meets(vs_max) {
        (vs_max, true)
    } else {
        let (mut lo, mut hi) = (vs_floor, vs_max);
        for _ in 0..80 {
            let mid = 0.5 * (lo + hi);
            if meets(mid) {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        (hi, false)
    };
    let b = bias(&m, t, id, vs, gain);
    let (estimate_low, estimate_high) = ends(vs);
    let choice = BiasChoice {
        source_voltage: vs,
        source_voltage_max: vs_max,
        aim_min,
        aim_max,
        estimate_low,
        estimate_high,
        headroom_limited,
    };
    let z = t.input_impedance.unwrap_or(1e6);
    let frac = b.vg / t.supply;
    let p = 0.5 * t.low_corner;
    let two_pi = 2.0 * std::f64::consts::PI;
    let mut continuous = super::Values::new();
    continuous.insert("RG1".into(), z / frac);
    continuous.insert("RG2".into(), z / (1.0 - frac));
    continuous.insert("RSB".into(), b.rs);
    continuous.insert("RD".into(), b.rd);
    // Coupling and bypass capacitors: each pole at half the low corner, as
    // the JFET stages (common practice), rounded up.
    continuous.insert("C1".into(), 1.0 / (two_pi * p * (t.source_resistance + z)));
    continuous.insert("C2".into(), 1.0 / (two_pi * p * (b.rd + t.load)));
    let r = b.rs / (1.0 + b.gm * b.rs);
    continuous.insert("CS".into(), 1.0 / (two_pi * p * r));
    let mut values: super::Values = continuous
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
    // RSB rounds up (a larger one only steadies ID); the gate voltage is
    // then taken again for the preferred RSB and RD, so the divider, rounded
    // as a pair for its ratio, brings ID back to the target.
    let rs_p = t.resistor_series.up(b.rs);
    values.insert("RSB".into(), rs_p);
    let rd_p = values.get("RD").copied().unwrap_or(b.rd);
    let vds_p = t.supply - id * (rd_p + rs_p);
    let vov_p = (2.0 * id / (m.beta * (1.0 + m.lambda * vds_p))).sqrt();
    let frac_p = (m.threshold + vov_p + id * rs_p) / t.supply;
    if let Some((r1, r2)) = divider(t, z, frac_p) {
        values.insert("RG1".into(), r1);
        values.insert("RG2".into(), r2);
    }
    let mut document = document_with(t, &values);
    let mut probe = Probe::new(document.clone());
    let mut measured = measure(&probe)?;
    // The capacitors' poles at half the corner put the corner near it, not
    // always below: while the engine's corner lies above the one asked, the
    // capacitors grow by the ratio (rounded up again), at most three times.
    for _ in 0..3 {
        let Some(fl) = measured.low_corner.filter(|&fl| fl > t.low_corner) else {
            break;
        };
        let k = 1.05 * fl / t.low_corner;
        for (name, c) in continuous.iter_mut().filter(|(n, _)| n.starts_with('C')) {
            *c *= k;
            values.insert(name.clone(), t.capacitor_series.up(*c));
        }
        document = document_with(t, &values);
        probe = Probe::new(document.clone());
        measured = measure(&probe)?;
    }
    let op = dc::solve(&probe.doc, &probe.nl).map_err(|m| DesignError(m.to_string()))?;
    let f = op
        .fets()
        .next()
        .ok_or_else(|| DesignError("the designed stage has no FET operating point".into()))?;
    let ends = [
        spread_end(&document, "low", m.threshold_max)?,
        spread_end(&document, "high", m.threshold_min)?,
    ];
    let mut d = FetDesign {
        targets: t.clone(),
        device: FetDevice::Mosfet(m),
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
        bias_choice: Some(choice),
    };
    d.document = crate::layout::tidy(&d.document);
    d.misses = misses(&d);
    Ok(d)
}

fn measure(probe: &Probe) -> Result<super::measure::Measured, DesignError> {
    probe.measure(true).map(|m| m.0).map_err(|m| {
        DesignError(format!(
            "the preferred-value design cannot be analysed: {m}"
        ))
    })
}

/// The preferred-value divider: the pair whose output fraction comes
/// nearest `frac`, each within a factor 2 of its computed value and their parallel
/// within 10 % of `z`.
fn divider(t: &FetTargets, z: f64, frac: f64) -> Option<(f64, f64)> {
    if !(frac > 0.0 && frac < 1.0) {
        return None;
    }
    let s = t.resistor_series;
    let (r1, r2) = (z / frac, z / (1.0 - frac));
    let mut best: Option<(f64, f64, f64)> = None;
    for a in s.members(r1 / 2.0, r1 * 2.0) {
        for b in s.members(r2 / 2.0, r2 * 2.0) {
            let par = a * b / (a + b);
            if (par / z - 1.0).abs() > 0.1 {
                continue;
            }
            let err = (b / (a + b) / frac - 1.0).abs();
            if best.is_none_or(|(_, _, e)| err < e) {
                best = Some((a, b, err));
            }
        }
    }
    best.map(|(a, b, _)| (a, b))
}

/// The engine's drain current of Q1 with its threshold at `vt`.
fn spread_end(doc: &Document, end: &'static str, vt: f64) -> Result<SpreadEnd, DesignError> {
    let mut d = doc.clone();
    for p in d.parts.iter_mut().filter(|p| p.designator == "Q1") {
        p.parameters.insert(fet::THRESHOLD_VOLTAGE.into(), vt);
    }
    let nl = netlist::connect(&d);
    let op = dc::solve(&d, &nl).map_err(|m| {
        DesignError(format!(
            "the design at the {end} end of the threshold spread (VGS(th) {}) cannot be \
             solved: {m}",
            fmt(vt, Unit::Volt)
        ))
    })?;
    let f = op
        .fets()
        .next()
        .ok_or_else(|| DesignError("no FET operating point".into()))?;
    Ok(SpreadEnd {
        end,
        at: EndAt::Mosfet {
            threshold: vt,
            triode_margin: f.triode_margin,
        },
        drain_current: f.drain_current,
        vds: f.vds,
    })
}

/// The limits the threshold ends miss, each in plain words with what to change.
fn misses(d: &FetDesign) -> Vec<String> {
    let t = &d.targets;
    let a = |v: f64| fmt(v, Unit::Ampere);
    let limited = d.bias_choice.is_some_and(|c| c.headroom_limited);
    let fix = if limited {
        "the source resistor already takes all the supply the drain can spare: raise the \
         supply or ask less gain (a smaller RD leaves RSB more room), widen the limits, or \
         choose a part with a tighter VGS(th) grade"
    } else {
        "the preferred values moved the bias: try a finer --series (E96), widen the limits, \
         or choose a part with a tighter VGS(th) grade"
    };
    let mut out = Vec::new();
    let [lo, hi] = &d.ends;
    if let Some(m) = t.drain_current_min {
        if lo.drain_current < m {
            out.push(format!(
                "drain current {} at the low end of the threshold spread ({}, its maximum) is \
                 below --id-min {}: {fix}",
                a(lo.drain_current),
                lo.words(),
                a(m)
            ));
        }
    }
    if let Some(m) = t.drain_current_max {
        if hi.drain_current > m {
            out.push(format!(
                "drain current {} at the high end of the threshold spread ({}, its minimum) is \
                 above --id-max {}: {fix}",
                a(hi.drain_current),
                hi.words(),
                a(m)
            ));
        }
    }
    for end in [lo, hi] {
        if let EndAt::Mosfet { triode_margin, .. } = end.at {
            if triode_margin < 0.0 {
                out.push(format!(
                    "at the {} end of the threshold spread ({}) VDS is only {}: the MOSFET \
                     enters its triode region; lower the drain resistor (less gain) or the \
                     current, or raise the supply",
                    end.end,
                    end.words(),
                    fmt(end.vds, Unit::Volt)
                ));
            }
        }
    }
    out
}

/// The drawn stage with `values` filled in: the supply bus on top, the gate
/// divider RG1/RG2 on the gate line, RD in the drain, RSB bypassed by CS in
/// the source.
pub fn document(t: &FetTargets, values: &super::Values) -> Document {
    document_with(t, values)
}

fn document_with(t: &FetTargets, values: &super::Values) -> Document {
    use super::layout::GROUND;
    let mut s = super::layout::Sheet::new(&format!("Designed {} stage", t.stage.words()));
    s.part("VDD", PartKind::Rail, [16, 2], 0);
    s.wire(&[[16, 2], [21, 2]]);
    s.wire(&[[16, 2], [16, 4]]);
    s.part("RG1", PartKind::Resistor, [16, 6], 0);
    s.wire(&[[16, 8], [16, 17]]);
    s.part("RG2", PartKind::Resistor, [16, 19], 0);
    s.wire(&[[16, 21], [16, GROUND]]);
    s.ground(16);
    s.source_from_left();
    s.wire(&[[16, 15], [18, 15]]);
    s.part("Q1", PartKind::NMosfet, [20, 15], 0);
    super::fet::drain_resistor(&mut s);
    s.part("RSB", PartKind::Resistor, [21, 21], 0);
    s.wire(&[[21, 17], [21, 19]]);
    s.wire(&[[21, 23], [21, GROUND]]);
    s.ground(21);
    super::fet::bypassed_source_and_output(&mut s);
    super::fet::finish(s, t, values)
}
