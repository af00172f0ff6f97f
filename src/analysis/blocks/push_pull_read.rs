//! The figures of a push-pull output at its operating point: quiescent
//! current and bias voltage, idle dissipation against the rating, the
//! junction-temperature loop (drift, settled current, runaway), and the
//! class-B estimates of the largest output, output power, efficiency and
//! worst dissipation — the textbook closed forms (Sedra and Smith,
//! "Microelectronic Circuits", the output-stage chapter). The exact
//! large-signal values come from the level sweep
//! (`biasline transient FILE --levels N`, [`super::push_pull_levels`]).

use super::push_pull::{self, Bias, Feed, Roles};
use super::push_pull_thermal::{self as thermal, device, theta};
use super::{BlockFigure, BlockReading, BlockTopology, FigureContext};
use crate::analysis::circuit::{self, Circuit};
use crate::analysis::elements::per_device;
use crate::analysis::stages::view::View;
use crate::presets::keys;
use crate::units::{celsius, format, Unit};
use std::f64::consts::PI;

/// VCE(sat) of a power transistor for the swing estimate, V.
pub const VCE_SAT_ESTIMATE: f64 = 0.2; // common practice (no source)
/// VBE of a conducting output device for the swing estimate, V.
pub const VBE_ESTIMATE: f64 = 0.7; // common practice (no source)
/// Idle dissipation per device above which, with no max_power given, the
/// block warns (a device idling this hot needs a heat sink sized for it).
pub const IDLE_WITHOUT_RATING: f64 = 1.0; // common practice (no source)

/// The load's resistance, from `signal.load` when it is a resistor.
pub(crate) fn load_resistance(cx: &FigureContext) -> Option<f64> {
    let name = cx.doc.signal.load.as_ref()?;
    let part = cx.doc.part_by_designator(name)?;
    (part.kind == crate::document::PartKind::Resistor)
        .then(|| part.parameter(keys::RESISTANCE))
        .flatten()
        .filter(|r| r.is_finite() && *r > 0.0)
}

/// βF of a bipolar device in the circuit.
fn beta(c: &Circuit, part: usize) -> Option<f64> {
    per_device::bjt(c, part).map(|m| m.forward_beta)
}

fn saturation_current(c: &Circuit, part: usize) -> Option<f64> {
    per_device::bjt(c, part).map(|m| m.saturation_current)
}

/// The largest output one half gives before it clips, V (magnitude), and
/// what limits it in plain words.
struct Limit {
    peak: f64,
    words: String,
}

#[allow(clippy::too_many_arguments)]
fn half_limit(
    cx: &FigureContext,
    c: &Circuit,
    dev: usize,
    feed: &Feed,
    rail: f64,
    out_idle: f64,
    re: f64,
    rl: f64,
) -> Limit {
    let label = cx.doc.parts[dev].label();
    let head = (rail - out_idle).abs();
    // The device itself saturating: VCE(sat) plus the emitter resistor's drop.
    let sat = (head - VCE_SAT_ESTIMATE) / (1.0 + re / rl);
    let mut best = Limit {
        peak: sat.max(0.0),
        words: if cx.doc.parts[dev].kind.is_fet() {
            format!(
                "{label} reaches its rail (a FET's triode edge depends on its drive: \
                 taken as {} from the rail)",
                format(VCE_SAT_ESTIMATE, Unit::Volt)
            )
        } else {
            format!(
                "{label} saturates ({} VCE(sat) from its rail)",
                format(VCE_SAT_ESTIMATE, Unit::Volt)
            )
        },
    };
    match (feed, beta(c, dev)) {
        (Feed::Resistor(r), Some(b)) => {
            // The feed resistor carries (rail − vo − VBE − io·RE)/R and must
            // supply the base current io/(β + 1) at the peak.
            let rf = cx.doc.parts[*r]
                .parameter(keys::RESISTANCE)
                .unwrap_or(f64::NAN);
            let vo = (head - VBE_ESTIMATE) / (1.0 + re / rl + rf / (rl * (b + 1.0)));
            if vo.is_finite() && vo < best.peak {
                best = Limit {
                    peak: vo.max(0.0),
                    words: format!(
                        "{} cannot supply {label}'s base current: at the peak its \
                         current (rail − output − VBE)/{} falls to the load current/(β + 1)",
                        cx.doc.parts[*r].label(),
                        cx.doc.parts[*r].label()
                    ),
                };
            }
        }
        (Feed::Source(s), Some(b)) => {
            // A current source feeding the base: all of it can go to the
            // base at the peak, io/(β + 1) = I.
            let i = cx.doc.parts[*s]
                .parameter(keys::CURRENT)
                .unwrap_or(f64::NAN)
                .abs();
            let vo = i * (b + 1.0) * rl;
            if vo.is_finite() && vo < best.peak {
                best = Limit {
                    peak: vo,
                    words: format!(
                        "the current source {} cannot supply {label}'s base current past I·(β + 1)·RL",
                        cx.doc.parts[*s].label()
                    ),
                };
            }
        }
        (Feed::Driver(q), _) => {
            // The driver saturating: its collector reaches its emitter + VCE(sat).
            if let Some(t) = cx.op.transistors().find(|t| t.part == *q) {
                // The base follows the output; the driver's headroom (its
                // margin to saturation, nearly all taken by its collector)
                // is the swing it allows.
                let vo = t.saturation_margin.abs();
                if vo < best.peak {
                    best = Limit {
                        peak: vo,
                        words: format!(
                            "the driver {} saturates (its margin to saturation at idle, {})",
                            t.designator,
                            format(t.saturation_margin.abs(), Unit::Volt)
                        ),
                    };
                }
            }
        }
        _ => {}
    }
    best
}

pub(crate) fn read(cx: &FigureContext, b: &BlockTopology) -> BlockReading {
    let mut reading = BlockReading::default();
    let view = View::new(cx.doc, cx.netlist);
    let Some((roles, bt, bb)) = push_pull::roles(&view, b) else {
        return reading;
    };
    let Ok(c) = circuit::build_unchecked(cx.doc, cx.netlist) else {
        return reading;
    };
    let (t, bo) = (roles.top, roles.bottom);
    let (Some((pt, it)), Some((pb, ib))) = (device(cx.op, t), device(cx.op, bo)) else {
        return reading;
    };
    let iq = 0.5 * (it + ib);
    let vbias = cx.op.net_voltages[bt] - cx.op.net_voltages[bb];
    let bipolar = !cx.doc.parts[t].kind.is_fet();
    let iq_name = "quiescent current through the output pair (mean of the two devices at idle)";
    reading.figures.push(
        match (&roles.bias, roles.emitter_resistors.is_empty(), bipolar) {
            (
                Bias::Diodes(_) | Bias::Multiplier(..) | Bias::Resistors(_) | Bias::Other(_),
                true,
                true,
            ) => {
                let (Some(st), Some(sb)) = (saturation_current(&c, t), saturation_current(&c, bo))
                else {
                    return reading;
                };
                let vt = crate::analysis::thermal_voltage(c.kelvin);
                BlockFigure::with_estimate(
                    "quiescent_current",
                    "IQ",
                    iq_name,
                    Unit::Ampere,
                    Some(iq),
                    (st * sb).sqrt() * (vbias / (2.0 * vt)).exp(),
                    "√(IS,top·IS,bottom)·exp(Vbias/(2·VT)): the bias voltage split over the \
                     two base–emitter junctions; leaves out the load's share of the current",
                )
            }
            (Bias::Tied, _, _) => BlockFigure::exact_only(
                "quiescent_current",
                "IQ",
                iq_name,
                Unit::Ampere,
                Some(iq),
                "class B: no bias voltage, the pair idles near cut-off",
            ),
            _ => BlockFigure::exact_only(
                "quiescent_current",
                "IQ",
                iq_name,
                Unit::Ampere,
                Some(iq),
                "with emitter resistors (or FETs) the bias voltage divides between the \
                 junctions and the resistors: no closed form",
            ),
        },
    );
    reading.figures.push(BlockFigure::exact_only(
        "bias_voltage",
        "Vbias",
        "voltage between the two bases set by the bias network",
        Unit::Volt,
        Some(vbias),
        "",
    ));
    for (key, label, part, p) in [
        ("idle_dissipation_top", "PD,top", t, pt),
        ("idle_dissipation_bottom", "PD,bot", bo, pb),
    ] {
        reading.figures.push(BlockFigure::exact_only(
            key,
            label,
            &format!("{}'s dissipation at idle", cx.doc.parts[part].label()),
            Unit::Watt,
            Some(p),
            "",
        ));
    }
    idle_warnings(cx, &c, &roles, &mut reading);
    thermal_figures(cx, &c, &roles, iq, &mut reading);
    large_signal_estimates(cx, &c, &roles, b.outputs[0], &mut reading);
    reading
}

/// Idle dissipation over a rating, or high with no rating given.
fn idle_warnings(cx: &FigureContext, c: &Circuit, r: &Roles, reading: &mut BlockReading) {
    for part in [r.top, r.bottom] {
        let Some((p, i)) = device(cx.op, part) else {
            continue;
        };
        let d = cx.doc.parts[part].label();
        let max = per_device::ratings(c, part).and_then(|r| r.max_power);
        match max {
            Some(m) if p > m => reading.warnings.push(format!(
                "{d} idles at {} ({} quiescent), above its rating of {}: lower the bias \
                 (a smaller bias voltage or larger emitter resistors)",
                format(p, Unit::Watt),
                format(i, Unit::Ampere),
                format(m, Unit::Watt)
            )),
            None if p > IDLE_WITHOUT_RATING => reading.warnings.push(format!(
                "{d} idles at {} ({} quiescent) and has no max_power: an idle dissipation \
                 this high needs a heat sink sized for it; check the bias (a class-AB \
                 idle of tens of milliamperes is common practice) and set max_power and \
                 thermal_resistance",
                format(p, Unit::Watt),
                format(i, Unit::Ampere)
            )),
            _ => {}
        }
    }
}

/// The junction-temperature loop: settled current, junctions, drift, runaway.
fn thermal_figures(
    cx: &FigureContext,
    c: &Circuit,
    r: &Roles,
    iq: f64,
    reading: &mut BlockReading,
) {
    let ambient = c.kelvin - crate::analysis::ZERO_CELSIUS;
    // Drift: both output junctions 0.5 K below and above ambient (a
    // central difference), everything else at ambient.
    let at = |dt: f64| {
        let op = thermal::solve_at(
            cx.doc,
            c,
            &[(r.top, ambient + dt), (r.bottom, ambient + dt)],
        )?;
        Some(0.5 * (device(&op, r.top)?.1 + device(&op, r.bottom)?.1))
    };
    if let (Some(lo), Some(hi)) = (at(-0.5), at(0.5)) {
        reading.figures.push(BlockFigure::exact_only(
            "quiescent_current_drift",
            "dIQ/dT",
            "change of the quiescent current per kelvin of both output junctions, A/K",
            Unit::Ampere,
            Some(hi - lo),
            if r.emitter_resistors.is_empty() {
                "no closed form with the bias network's own resistance"
            } else {
                "the emitter resistors take up part of the falling VBE: no closed form"
            },
        ));
    }
    let devices: Vec<(usize, f64)> = [r.top, r.bottom]
        .iter()
        .filter_map(|&p| theta(c, p).map(|th| (p, th)))
        .collect();
    if devices.len() < 2 {
        reading.notes.push(format!(
            "no thermal_resistance on {} and {}: the junction-temperature loop is not run; \
             set θJA (with the heat sink) on both to see the quiescent current settle or run away",
            cx.doc.parts[r.top].label(),
            cx.doc.parts[r.bottom].label()
        ));
        return;
    }
    let th = thermal::settle(cx.doc, c, cx.op, &devices);
    let hot_iq = 0.5 * th.currents.iter().map(|c| c.1).sum::<f64>();
    reading.figures.push(BlockFigure::exact_only(
        "quiescent_current_hot",
        "IQ,hot",
        "quiescent current with each output junction at Ta + P·θJA, fed back until it settles",
        Unit::Ampere,
        th.settled.then_some(hot_iq),
        "",
    ));
    for (key, label, part) in [
        ("junction_top", "TJ,top", r.top),
        ("junction_bottom", "TJ,bot", r.bottom),
    ] {
        let tj = th.junctions.iter().find(|j| j.0 == part).map(|j| j.1);
        reading.figures.push(BlockFigure::exact_only(
            key,
            label,
            &format!(
                "{}'s settled junction temperature at idle, °C",
                cx.doc.parts[part].label()
            ),
            Unit::None,
            if th.settled { tj } else { None },
            "",
        ));
    }
    if th.runaway {
        let worst = th
            .junctions
            .iter()
            .max_by(|a, b| a.1.total_cmp(&b.1))
            .map_or(r.top, |j| j.0);
        let fix = if r.emitter_resistors.is_empty() {
            "it has no emitter resistor to take up the falling VBE: add one (a fraction of \
             an ohm to a few ohms) in each emitter"
        } else {
            "the emitter resistors are too small to take up the falling VBE: make them larger"
        };
        reading.warnings.push(format!(
            "{} runs away thermally: its heat raises its current, which raises its heat \
             (past {} after {} passes of TJ = Ta + P·θJA); {fix}, or track the bias with \
             the output devices' temperature",
            cx.doc.parts[worst].label(),
            celsius(th.junctions.iter().map(|j| j.1).fold(f64::MIN, f64::max), 0),
            th.passes
        ));
    } else {
        reading.notes.push(format!(
            "the junction-temperature loop settles in {} passes: quiescent current {} hot \
             against {} at ambient",
            th.passes,
            format(hot_iq, Unit::Ampere),
            format(iq, Unit::Ampere)
        ));
        for &(part, tj) in &th.junctions {
            let max = per_device::ratings(c, part).and_then(|r| r.max_junction_celsius);
            if let Some(m) = max.filter(|m| tj > *m) {
                reading.warnings.push(format!(
                    "{}: junction settles at {} at idle, above its maximum of {}; lower the \
                     bias or use a larger heat sink",
                    cx.doc.parts[part].label(),
                    celsius(tj, 0),
                    celsius(m, 0)
                ));
            }
        }
    }
}

/// Class-B estimates at the largest output.
fn large_signal_estimates(
    cx: &FigureContext,
    c: &Circuit,
    r: &Roles,
    output: crate::netlist::NetId,
    reading: &mut BlockReading,
) {
    let Some(rl) = load_resistance(cx) else {
        reading.notes.push(
            "no resistive load named in signal.load: no output power, efficiency or \
             dissipation estimates"
                .into(),
        );
        return;
    };
    let view = View::new(cx.doc, cx.netlist);
    let (Some((ct, _, _)), Some((cb, _, _))) = (view.terminals(r.top), view.terminals(r.bottom))
    else {
        return;
    };
    let out = cx.op.net_voltages[output];
    let (vpos, vneg) = (cx.op.net_voltages[ct], cx.op.net_voltages[cb]);
    let re = |k: usize| {
        r.emitter_resistors
            .get(k)
            .and_then(|&p| cx.doc.parts[p].parameter(keys::RESISTANCE))
            .unwrap_or(0.0)
    };
    let up = half_limit(cx, c, r.top, &r.top_feed, vpos, out, re(0), rl);
    let down = half_limit(cx, c, r.bottom, &r.bottom_feed, vneg, out, re(1), rl);
    let limit = if up.peak <= down.peak { &up } else { &down };
    let vp = limit.peak;
    let vcc = 0.5 * (vpos - vneg);
    reading.figures.push(BlockFigure::with_estimate(
        "largest_output",
        "Vo,max",
        "largest output peak before clipping (measured by the level sweep)",
        Unit::Volt,
        None,
        vp,
        &format!(
            "the smaller half: positive {} ({}), negative {} ({})",
            format(up.peak, Unit::Volt),
            up.words,
            format(down.peak, Unit::Volt),
            down.words
        ),
    ));
    reading.notes.push(format!(
        "the output clips first at about {} peak: {}",
        format(vp, Unit::Volt),
        limit.words
    ));
    reading.figures.push(BlockFigure::with_estimate(
        "output_power",
        "Po",
        "output power into the load at the largest clean swing",
        Unit::Watt,
        None,
        vp * vp / (2.0 * rl),
        "Vp²/(2·RL) at the estimated largest output",
    ));
    reading.figures.push(BlockFigure::with_estimate(
        "efficiency",
        "η",
        "output power over the power the output pair draws from the rails",
        Unit::None,
        None,
        PI / 4.0 * vp / vcc,
        "class B: (π/4)·Vp/VCC, ideal devices, no quiescent current",
    ));
    // Worst per-device dissipation over level (class B): at Vp = 2·VCC/π when
    // the swing reaches it, else at the largest swing.
    let vw = vp.min(2.0 * vcc / PI);
    let pd = vcc * vw / (PI * rl) - vw * vw / (4.0 * rl);
    reading.figures.push(BlockFigure::with_estimate(
        "worst_dissipation",
        "PD,max",
        "each device's worst dissipation over signal level",
        Unit::Watt,
        None,
        pd,
        "class B: VCC²/(π²·RL) per device at Vp = 2·VCC/π (VCC·Vp/(π·RL) − Vp²/(4·RL) below it)",
    ));
    reading.notes.push(
        "output power, efficiency and dissipation are class-B estimates; `biasline \
         transient FILE --levels 10` measures them with THD at ten levels"
            .into(),
    );
}
