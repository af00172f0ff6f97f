//! The feedback loop marked on the sheet: around the transistor whose
//! controlled source has the largest midband return ratio, the parts the
//! loop runs through (those whose removal lowers that return ratio by more
//! than half), its loop gain, its phase margin (at the file's break point
//! when there is one, else the least of the transistors' return ratios),
//! and the gain split into what the feedback network sets and what the
//! loop gain leaves. Small circuits only (as the editor's stability lines).

use crate::analysis::dc::OperatingPoint;
use crate::analysis::linear::{log_frequencies, LinearKind, C64};
use crate::analysis::stability::{self, margins, Margins};
use crate::document::{Document, PartKind};
use crate::netlist::Netlist;
use crate::scene::{LoopCurve, LoopTag};
use crate::units::{format as si, Unit};

/// A phase margin below this is drawn as a warning (common practice (no
/// source): 45° is the usual floor for a well-damped step).
pub const MARGIN_FLOOR_DEGREES: f64 = 45.0;

/// A part is in the loop when opening it lowers the return ratio by more
/// than this fraction.
const IN_LOOP: f64 = 0.5;

/// The loop tags of a solved document (none for a circuit of more than
/// [`super::stability::EDITOR_TRANSISTORS`] transistors or without a loop
/// gain of at least [`super::stability::FEEDBACK_T0`]).
pub fn loop_tags(doc: &Document, nl: &Netlist, op: &OperatingPoint) -> Vec<LoopTag> {
    let transistors = doc.parts.iter().filter(|p| p.kind.is_transistor()).count();
    if transistors == 0 || transistors > super::stability::EDITOR_TRANSISTORS {
        return Vec::new();
    }
    let Ok(c) = crate::analysis::circuit::build_unchecked(doc, nl) else {
        return Vec::new();
    };
    let ss = crate::analysis::small_signal::linearise_by_role(doc, nl, &c, op);
    let lc = &ss.circuit;
    let a = &doc.analysis;
    let freqs = log_frequencies(a.frequency_start, a.frequency_stop, a.points_per_decade);
    let ratios = stability::return_ratios(lc, &freqs);
    let Some((part, element, g)) = ratios
        .iter()
        .filter(|(_, _, g)| g.t0.re.abs() >= super::stability::FEEDBACK_T0)
        .max_by(|x, y| x.2.t0.re.abs().total_cmp(&y.2.t0.re.abs()))
    else {
        return Vec::new();
    };
    let name = |p: usize| ss.designator(p).to_string();
    let eval = |el: usize| {
        move |fr: f64| stability::return_ratio(lc, el, &[fr]).map_or(C64::default(), |g| g.t[0])
    };
    // The margin a designer reads: at the break point, else the least.
    let (shown, at): (Option<(Margins, Vec<C64>)>, String) = match &a.loop_break {
        Some(text) => (
            stability::at_pin::find(doc, nl, &ss, text)
                .and_then(|at| stability::at_pin::loop_at(&ss, at, &freqs))
                .ok()
                .map(|(g, m)| (m, g.t)),
            format!("at {text}"),
        ),
        None => ratios
            .iter()
            .map(|(p, el, g)| (p, margins(&freqs, &g.t, &eval(*el)), g))
            .filter(|(_, m, _)| m.phase_margin_deg.is_some())
            .min_by(|x, y| {
                x.1.phase_margin_deg
                    .unwrap_or(0.0)
                    .total_cmp(&y.1.phase_margin_deg.unwrap_or(0.0))
            })
            .map_or((None, String::new()), |(p, m, g)| {
                (
                    Some((m, g.t.clone())),
                    format!("of {}'s return ratio (the least)", name(*p)),
                )
            }),
    };
    let margin = shown.as_ref().map(|(m, _)| *m);
    let curve = shown.map(|(m, t)| LoopCurve {
        frequencies: freqs.clone(),
        magnitude_db: t.iter().map(|x| 20.0 * x.norm().log10()).collect(),
        crossover_hz: m.crossover_hz,
        phase_margin_degrees: m.phase_margin_deg,
    });
    // The parts the loop runs through: the other transistors first (a loop
    // through one transistor alone — emitter degeneration — is that stage's
    // own business, not a loop to mark), then the passive parts.
    let t0 = g.t0.re;
    // Opening a part of the loop breaks it (|T| falls by more than half);
    // opening the source's or the load's parts only changes the loading.
    let changes = |opened: &crate::analysis::linear::LinearCircuit| {
        stability::return_ratio(opened, *element, &[])
            .is_none_or(|g| g.t0.re.abs() < (1.0 - IN_LOOP) * t0.abs())
    };
    let mut parts = vec![name(*part)];
    for (q, el, _) in &ratios {
        if q == part {
            continue;
        }
        let mut opened = lc.clone();
        if let LinearKind::Transconductance { gm, .. } = &mut opened.elements[*el].kind {
            *gm = 0.0;
        }
        if changes(&opened) {
            parts.push(name(*q));
        }
    }
    if parts.len() < 2 {
        return Vec::new();
    }
    for (p, doc_part) in doc.parts.iter().enumerate() {
        // The world outside the board is not marked: the source's own
        // resistance and the load.
        let outside = doc_part
            .parameter(crate::presets::keys::SOURCE_RESISTANCE_MARK)
            .is_some_and(|m| m != 0.0)
            || doc.signal.load.as_deref() == Some(doc_part.designator.as_str());
        if outside
            || !matches!(
                doc_part.kind,
                PartKind::Resistor | PartKind::Capacitor | PartKind::PolarisedCapacitor
            )
        {
            continue;
        }
        let mut opened = lc.clone();
        let mut touched = false;
        for e in opened.elements.iter_mut().filter(|e| e.part == Some(p)) {
            e.kind = match e.kind {
                LinearKind::Conductance(_) => LinearKind::Conductance(0.0),
                LinearKind::Capacitor(_) => LinearKind::DeviceCapacitance(0.0),
                k => k,
            };
            touched = true;
        }
        if !touched {
            continue;
        }
        if changes(&opened) {
            parts.push(doc_part.label());
        }
    }
    let mut lines = vec![format!(
        "loop gain T {:.1} at midband (return ratio of {})",
        t0,
        name(*part)
    )];
    let mut warning = false;
    if let Some(m) = &margin {
        if let (Some(pm), Some(fc)) = (m.phase_margin_deg, m.crossover_hz) {
            warning = pm < MARGIN_FLOOR_DEGREES;
            lines.push(format!(
                "phase margin {pm:.1}° {at} (|T| = 1 at {}){}",
                si(fc, Unit::Hertz),
                if warning {
                    ": below 45°, expect ringing"
                } else {
                    ""
                }
            ));
        }
    }
    if let Some(f) = super::stability::feedback(doc, nl, &ss, &ratios) {
        let s = &f.split;
        lines.push(
            format!(
                "gain {:.3}: the network sets {:.3}, the loop takes {:.3} away",
                s.gain.re,
                s.ideal.re,
                s.ideal.re - s.gain.re
            )
            .replace('-', "−"),
        );
    }
    vec![LoopTag {
        transistor: name(*part),
        parts,
        lines,
        warning,
        curve,
    }]
}
