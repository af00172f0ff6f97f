//! Current mirror: two transistors of one kind with their bases (gates)
//! tied, one of them diode-connected (collector tied to its base) taking
//! the reference current, the other giving the output current at its
//! collector; emitters on one net, directly or each through a resistor.
//!
//! Figures: the current ratio (exact from the operating point; estimate
//! 1/(1 + 2/βF) for the plain bipolar mirror — Sedra and Smith,
//! "Microelectronic Circuits", the chapter on current mirrors), the output
//! resistance at the output collector (exact by a test current with what
//! the output drives cut away; estimate ro, or ro·(1 + gm·R'E) with an
//! emitter resistor — Gray, Hurst, Lewis and Meyer, "Analysis and Design of
//! Analog Integrated Circuits", ch. 4), and the compliance: the lowest
//! output voltage (highest for a PNP) that keeps the output transistor out
//! of saturation.

use super::{BlockFigure, BlockKind, BlockReading, BlockTopology, FigureContext, FindContext};
use crate::analysis::figures::{impedance, parts_at};
use crate::analysis::linear::Cut;
use crate::analysis::stages::Family;
use crate::document::PartKind;
use crate::units::Unit;

/// VCE(sat) of a small-signal bipolar transistor for the compliance estimate.
const VCE_SAT_ESTIMATE: f64 = 0.2; // common practice (no source)

pub(crate) fn find(cx: &FindContext) -> Vec<BlockTopology> {
    let v = cx.view;
    let doc = v.doc;
    let mut out = Vec::new();
    let transistors: Vec<usize> = (0..doc.parts.len())
        .filter(|&p| doc.parts[p].kind.is_transistor() && !cx.taken.contains(&p))
        .collect();
    for &r in &transistors {
        let Some((cr, br, er)) = v.terminals(r) else {
            continue;
        };
        // The reference side is diode-connected.
        if cr != br {
            continue;
        }
        // The output side's base is on the reference's base net (in part order).
        let mut on_base = v.parts_on(br);
        on_base.sort_unstable();
        for o in on_base {
            if o == r || cx.taken.contains(&o) || doc.parts[o].kind != doc.parts[r].kind {
                continue;
            }
            let Some((co, bo, eo)) = v.terminals(o) else {
                continue;
            };
            if bo != br || co == bo || out.iter().any(|b: &BlockTopology| b.parts.contains(&o)) {
                continue;
            }
            // Emitters on one net, or each through one resistor to one net.
            let mut members = Vec::new();
            let same_net = if er == eo {
                true
            } else {
                let via = |e| {
                    let rs: Vec<usize> = v
                        .parts_on(e)
                        .into_iter()
                        .filter(|&p| doc.parts[p].kind == PartKind::Resistor)
                        .collect();
                    (rs.len() == 1).then(|| (rs[0], v.other(rs[0], e)))
                };
                match (via(er), via(eo)) {
                    (Some((ra, Some(na))), Some((rb, Some(nb)))) if na == nb => {
                        members.extend([ra, rb]);
                        true
                    }
                    _ => false,
                }
            };
            if !same_net {
                continue;
            }
            let fet = doc.parts[r].kind.is_fet();
            out.push(BlockTopology {
                kind: BlockKind::CurrentMirror,
                words: format!(
                    "current mirror{}",
                    if members.is_empty() {
                        String::new()
                    } else {
                        format!(
                            ", {} resistors {} and {}",
                            if fet { "source" } else { "emitter" },
                            doc.parts[members[0]].label(),
                            doc.parts[members[1]].label()
                        )
                    }
                ),
                parts: vec![r, o],
                members,
                inputs: vec![cr],
                outputs: vec![co],
                notes: vec![format!(
                    "{} is diode-connected and takes the reference current; {} gives the output current",
                    doc.parts[r].label(),
                    doc.parts[o].label()
                )],
            });
            break;
        }
    }
    out
}

pub(crate) fn read(cx: &FigureContext, b: &BlockTopology) -> BlockReading {
    let (r, o) = (b.parts[0], b.parts[1]);
    let mut reading = BlockReading::default();
    let bipolar = Family::of(cx.doc.parts[r].kind) == Some(Family::Bipolar);
    let current = |p: usize| -> Option<f64> {
        if bipolar {
            cx.op.transistors().find(|t| t.part == p).map(|t| t.ic)
        } else {
            cx.op.fets().find(|t| t.part == p).map(|t| t.drain_current)
        }
    };
    // The reference current is what flows into the diode-connected node from
    // outside the block: the reference collector's current and both base currents.
    let base = |p: usize| -> f64 {
        cx.op
            .transistors()
            .find(|t| t.part == p)
            .map_or(0.0, |t| t.ib)
    };
    let ratio = match (current(r), current(o)) {
        (Some(a), Some(b)) if a + base(r) + base(o) != 0.0 => Some(b / (a + base(r) + base(o))),
        _ => None,
    };
    let ratio_name = "output current over the reference current fed to the diode-connected side";
    let tr = cx.op.transistors().find(|t| t.part == o);
    let tref = cx.op.transistors().find(|t| t.part == r);
    let early = crate::presets::effective_parameters(&cx.doc.parts[o])
        .get(crate::presets::keys::FORWARD_EARLY_VOLTAGE)
        .copied()
        .filter(|va| va.is_finite() && *va > 0.0);
    reading
        .figures
        .push(match (bipolar, b.members.is_empty(), tr, tref) {
            // source: Gray, Hurst, Lewis and Meyer, ch. 4: the simple mirror with
            // the Early effect, (1 + (VCE2 − VCE1)/VA)/(1 + 2/βF).
            (true, true, Some(t), Some(t1)) => BlockFigure::with_estimate(
                "current_ratio",
                "Io/Iref",
                ratio_name,
                Unit::None,
                ratio,
                (1.0 + early.map_or(0.0, |va| (t.vce - t1.vce) / va))
                    / (1.0 + 2.0 / t.forward_beta),
                if early.is_some() {
                    "(1 + (VCE2 − VCE1)/VA)/(1 + 2/βF), matched transistors"
                } else {
                    "1/(1 + 2/βF), matched transistors"
                },
            ),
            (true, false, _, _) => BlockFigure::exact_only(
                "current_ratio",
                "Io/Iref",
                ratio_name,
                Unit::None,
                ratio,
                "the emitter resistors set the ratio (about the inverse ratio of their values)",
            ),
            _ => BlockFigure::exact_only(
                "current_ratio",
                "Io/Iref",
                ratio_name,
                Unit::None,
                ratio,
                "a FET mirror's ratio is set by the two devices' sizes and their VDS",
            ),
        });

    // Output resistance at the output collector, what it drives cut away.
    let ss = cx.small_signal;
    let out_net = b.outputs[0];
    let node = ss.net_node.get(out_net).copied().unwrap_or(0);
    let cut: Vec<Cut> = parts_at(ss, node)
        .into_iter()
        .filter(|&p| p != o)
        .map(|part| Cut { part, node })
        .collect();
    let rout = impedance(ss, node, &cut);
    let t_ss = ss.transistor(o);
    let rout_name = "output resistance at the output collector, the load cut away";
    reading.figures.push(match (t_ss, b.members.is_empty()) {
        (Some(t), true) if t.models.hybrid_pi.go > 0.0 => BlockFigure::with_estimate(
            "output_resistance",
            "Rout",
            rout_name,
            Unit::Ohm,
            rout,
            1.0 / t.models.hybrid_pi.go,
            "ro of the output transistor",
        ),
        (Some(t), false) if t.models.hybrid_pi.go > 0.0 => {
            let hp = &t.models.hybrid_pi;
            let re = cx.doc.parts[b.members[1]]
                .parameter(crate::presets::keys::RESISTANCE)
                .unwrap_or(0.0);
            let re_eff = if hp.g_pi > 0.0 {
                re * (1.0 / hp.g_pi) / (re + 1.0 / hp.g_pi)
            } else {
                re
            };
            BlockFigure::with_estimate(
                "output_resistance",
                "Rout",
                rout_name,
                Unit::Ohm,
                rout,
                (1.0 + hp.gm * re_eff) / hp.go,
                "ro·(1 + gm·(RE ‖ rπ)); leaves out the reference side's resistance at the base",
            )
        }
        _ => BlockFigure::exact_only(
            "output_resistance",
            "Rout",
            rout_name,
            Unit::Ohm,
            rout,
            "no finite ro: the model has no Early voltage or channel-length modulation",
        ),
    });

    // Compliance: where the output transistor reaches the saturation edge.
    if let Some(t) = tr {
        let sign = if t.ic >= 0.0 { 1.0 } else { -1.0 };
        let vc = cx.op.net_voltages[out_net];
        let ve = vc - t.vce;
        reading.figures.push(BlockFigure::with_estimate(
            "compliance_voltage",
            "Vcompl",
            "lowest output voltage (highest for a PNP) before the output transistor saturates",
            Unit::Volt,
            Some(vc - sign * t.saturation_margin),
            ve + sign * VCE_SAT_ESTIMATE,
            "the output emitter's voltage + 0.2 V VCE(sat) (common practice)",
        ));
        reading.notes.push(format!(
            "the output has {} of headroom to the compliance voltage",
            crate::units::format(t.saturation_margin.abs(), Unit::Volt)
        ));
    }
    reading
}
