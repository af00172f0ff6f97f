//! Compound pairs read as one transistor or one stage: the cascode (a
//! common-emitter stage into a common-base stage), the Darlington pair (the
//! first emitter drives the second base, collectors joined) and the
//! complementary feedback pair (Sziklai: the first collector drives the
//! second base of the other polarity, whose collector returns to the first
//! emitter).
//!
//! Figures, exact from the small-signal circuit: the voltage gain from the
//! block's input net to its output net, Zin and Zout with the parts that
//! bring the signal in and carry it on cut away (as the stages cut them),
//! and the upper −3 dB frequency of that gain. Estimates (named in each
//! figure): the cascode by the re model and the open-circuit time
//! constants (Sedra and Smith, "Microelectronic Circuits", the cascode
//! amplifier); the Darlington and complementary pairs as followers with the
//! composite current gain β1·β2 (Sedra and Smith; Horowitz and Hill, "The
//! Art of Electronics", the Darlington and Sziklai connections).

use super::{BlockFigure, BlockKind, BlockReading, BlockTopology, FigureContext, FindContext};
use crate::analysis::figures::impedance;
use crate::analysis::linear::{Cut, Drive, Mode, Node, System, Test};
use crate::analysis::small_signal::SmallSignal;
use crate::analysis::stages::{Configuration, Emitter};
use crate::units::Unit;

/// Above this many circuit nodes the bandwidth scan (about 200 complex
/// solves) is left out and said so.
const BANDWIDTH_NODE_LIMIT: usize = 400;

pub(crate) fn find_cascodes(cx: &FindContext) -> Vec<BlockTopology> {
    let stages = &cx.chain.stages;
    let mut out = Vec::new();
    for (k, lower) in stages.iter().enumerate() {
        let Some(upper) = stages.get(k + 1) else {
            continue;
        };
        if !matches!(lower.configuration, Configuration::CommonEmitter(_))
            || upper.configuration != Configuration::CommonBase
            || lower.output != upper.input
            || cx.taken.contains(&lower.part)
            || cx.taken.contains(&upper.part)
        {
            continue;
        }
        let fet = |p: usize| cx.view.doc.parts[p].kind.is_fet();
        out.push(BlockTopology {
            kind: BlockKind::Cascode,
            words: format!(
                "cascode, {} into {}",
                lower.configuration.words_for(lower.family),
                upper.configuration.words_for(upper.family)
            ),
            parts: vec![lower.part, upper.part],
            members: Vec::new(),
            inputs: vec![lower.input],
            outputs: vec![upper.output],
            notes: vec![format!(
                "{} drives the {} of {}, whose {} is on AC ground",
                lower.transistor,
                if fet(upper.part) { "source" } else { "emitter" },
                upper.transistor,
                if fet(upper.part) { "gate" } else { "base" }
            )],
        });
    }
    out
}

pub(crate) fn find_pairs(cx: &FindContext) -> Vec<BlockTopology> {
    let v = cx.view;
    let doc = v.doc;
    let mut out = Vec::new();
    let bipolar: Vec<usize> = (0..doc.parts.len())
        .filter(|&p| doc.parts[p].kind.is_bipolar() && !cx.taken.contains(&p))
        .collect();
    let used = |out: &Vec<BlockTopology>, p: usize| out.iter().any(|b| b.parts.contains(&p));
    for &q1 in &bipolar {
        let Some((c1, b1, e1)) = v.terminals(q1) else {
            continue;
        };
        // The second transistor's base is on the first's emitter
        // (Darlington) or collector (complementary pair).
        let mut near = v.parts_on(e1);
        near.extend(v.parts_on(c1));
        near.sort_unstable();
        near.dedup();
        for q2 in near {
            if q1 == q2
                || !doc.parts[q2].kind.is_bipolar()
                || cx.taken.contains(&q2)
                || used(&out, q1)
                || used(&out, q2)
            {
                continue;
            }
            let Some((c2, b2, e2)) = v.terminals(q2) else {
                continue;
            };
            let same = doc.parts[q1].kind == doc.parts[q2].kind;
            let (n1, n2) = (doc.parts[q1].label(), doc.parts[q2].label());
            if same && e1 == b2 && c1 == c2 && !v.ac_ground[e1] {
                // Darlington: a follower when the joined collectors are on AC ground.
                let follower = v.ac_grounded(c1);
                out.push(BlockTopology {
                    kind: BlockKind::Darlington,
                    words: format!(
                        "Darlington pair, {}",
                        if follower {
                            "as a follower"
                        } else {
                            "as a common-emitter stage"
                        }
                    ),
                    parts: vec![q1, q2],
                    members: Vec::new(),
                    inputs: vec![b1],
                    outputs: vec![if follower { e2 } else { c2 }],
                    notes: vec![format!(
                        "{n1}'s emitter drives {n2}'s base; the collectors are joined"
                    )],
                });
            } else if !same && c1 == b2 && c2 == e1 && !v.ac_ground[c1] {
                // Complementary feedback pair: the composite emitter is e1 = c2,
                // the composite collector e2.
                let follower = v.ac_grounded(e2);
                out.push(BlockTopology {
                    kind: BlockKind::ComplementaryFeedbackPair,
                    words: format!(
                        "complementary feedback pair, {}",
                        if follower {
                            "as a follower"
                        } else {
                            "as a common-emitter stage"
                        }
                    ),
                    parts: vec![q1, q2],
                    members: Vec::new(),
                    inputs: vec![b1],
                    outputs: vec![if follower { e1 } else { e2 }],
                    notes: vec![format!(
                        "{n1}'s collector drives {n2}'s base; {n2}'s collector returns to {n1}'s emitter"
                    )],
                });
            }
        }
    }
    out
}

/// v(output)/v(input) at midband with 1 V held at the input node.
fn gain(ss: &SmallSignal, ni: Node, no: Node) -> Option<f64> {
    let sys = System::new(&ss.circuit, Mode::Midband, &[], Some(Test::Voltage(ni)));
    Some(sys.solve(0.0, &[]).ok()?.v(no).re)
}

/// |v(no)| at `frequency` per volt of the signal source's EMF when there is
/// one (the source resistance and the input pole count), else per volt held
/// at the input node.
fn response(ss: &SmallSignal, ni: Node, no: Node, frequency: f64) -> Option<f64> {
    let s = match ss.signal {
        Some(sig) => System::new(&ss.circuit, Mode::Frequency, &[], None)
            .solve(frequency, &[Drive::unit(sig)])
            .ok()?,
        None => System::new(&ss.circuit, Mode::Frequency, &[], Some(Test::Voltage(ni)))
            .solve(frequency, &[])
            .ok()?,
    };
    Some(s.v(no).norm())
}

/// The upper −3 dB frequency of [`response`]: the first frequency above the
/// band's peak where it falls to peak/√2 (a log scan of 20 points a decade
/// from 1 Hz to 10 GHz, then bisection).
fn upper_corner(ss: &SmallSignal, ni: Node, no: Node) -> Option<f64> {
    let f = |k: usize| 10f64.powf(k as f64 / 20.0);
    let a: Vec<f64> = (0..=200)
        .map(|k| response(ss, ni, no, f(k)).unwrap_or(f64::NAN))
        .collect();
    let (peak_k, peak) =
        a.iter()
            .enumerate()
            .filter(|(_, x)| x.is_finite())
            .fold(
                (0, 0.0),
                |best, (k, &x)| if x > best.1 { (k, x) } else { best },
            );
    if peak <= 0.0 {
        return None;
    }
    let target = peak / 2f64.sqrt();
    let k = (peak_k..a.len()).find(|&k| a[k] < target)?;
    let (mut lo, mut hi) = (f(k - 1).log10(), f(k).log10());
    for _ in 0..40 {
        let mid = 0.5 * (lo + hi);
        if response(ss, ni, no, 10f64.powf(mid))? < target {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    Some(10f64.powf(0.5 * (lo + hi)))
}

/// The exact figures every compound block has: gain, Zin, Zout, bandwidth.
struct Exact {
    gain: Option<f64>,
    zin: Option<f64>,
    zout: Option<f64>,
    upper_corner: Option<f64>,
    too_large: bool,
}

fn exact(cx: &FigureContext, b: &BlockTopology) -> Exact {
    let ss = cx.small_signal;
    let node = |n| ss.net_node.get(n).copied().unwrap_or(0);
    let (ni, no) = (node(b.inputs[0]), node(b.outputs[0]));
    // Cut as the chain's stages cut: what brings the signal into the first
    // transistor's input, what carries it on from the last one's output.
    let first = cx.chain.stages.iter().find(|s| s.part == b.parts[0]);
    let last = cx
        .chain
        .stages
        .iter()
        .rev()
        .find(|s| b.parts.contains(&s.part) && s.output == b.outputs[0]);
    let cut_in: Vec<Cut> = first
        .filter(|s| s.input == b.inputs[0])
        .map(|s| {
            s.input_cut
                .iter()
                .map(|&part| Cut { part, node: ni })
                .collect()
        })
        .unwrap_or_default();
    let cut_out: Vec<Cut> = last
        .map(|s| {
            s.output_cut
                .iter()
                .map(|&part| Cut { part, node: no })
                .collect()
        })
        .unwrap_or_default();
    let too_large = ss.circuit.node_count > BANDWIDTH_NODE_LIMIT;
    Exact {
        gain: (ni != 0 && no != 0).then(|| gain(ss, ni, no)).flatten(),
        zin: impedance(ss, ni, &cut_in),
        zout: impedance(ss, no, &cut_out),
        upper_corner: (!too_large && ni != 0 && no != 0)
            .then(|| upper_corner(ss, ni, no))
            .flatten(),
        too_large,
    }
}

const AV: (&str, &str, &str) = (
    "voltage_gain",
    "Av",
    "voltage gain from the block's input net to its output net",
);
const ZIN: (&str, &str, &str) = (
    "input_impedance",
    "Zin",
    "input impedance, what brings the signal in cut away",
);
const ZOUT: (&str, &str, &str) = (
    "output_impedance",
    "Zout",
    "output impedance, what carries the signal on cut away",
);
const FH: (&str, &str, &str) = (
    "upper_corner",
    "fH",
    "upper −3 dB frequency from the signal source to the block's output",
);

fn est(f: (&str, &str, &str), unit: Unit, exact: Option<f64>, e: f64, from: &str) -> BlockFigure {
    BlockFigure::with_estimate(f.0, f.1, f.2, unit, exact, e, from)
}

fn none(f: (&str, &str, &str), unit: Unit, exact: Option<f64>, why: &str) -> BlockFigure {
    BlockFigure::exact_only(f.0, f.1, f.2, unit, exact, why)
}

fn bandwidth_without_estimate(x: &Exact, why: &str) -> BlockFigure {
    none(
        FH,
        Unit::Hertz,
        x.upper_corner,
        if x.too_large {
            "the circuit is too large for the bandwidth scan (over 400 nodes)"
        } else {
            why
        },
    )
}

pub(crate) fn read_cascode(cx: &FigureContext, b: &BlockTopology) -> BlockReading {
    let x = exact(cx, b);
    let mut r = BlockReading::default();
    let ss = cx.small_signal;
    let (t1, t2) = (ss.transistor(b.parts[0]), ss.transistor(b.parts[1]));
    let lower = cx.chain.stages.iter().find(|s| s.part == b.parts[0]);
    let upper = cx.chain.stages.iter().find(|s| s.part == b.parts[1]);
    let (Some(t1), Some(t2), Some(lower), Some(upper)) = (t1, t2, lower, upper) else {
        let why = "the estimates here are for a bipolar cascode";
        r.figures = vec![
            none(AV, Unit::None, x.gain, why),
            none(ZIN, Unit::Ohm, x.zin, why),
            none(ZOUT, Unit::Ohm, x.zout, why),
            bandwidth_without_estimate(&x, why),
        ];
        return r;
    };
    let (Some(m1), Some(m2)) = (&t1.models.t, &t2.models.t) else {
        return r;
    };
    let lump = |l: &Option<crate::analysis::stages::Lumped>| {
        l.as_ref().map_or(f64::INFINITY, |l| l.resistance)
    };
    let par = |a: f64, b: f64| {
        if a.is_infinite() {
            b
        } else if b.is_infinite() {
            a
        } else {
            a * b / (a + b)
        }
    };
    let re_unbypassed = match lower.configuration {
        Configuration::CommonEmitter(Emitter::Degenerated | Emitter::PartlyBypassed) => {
            lump(&lower.ac.emitter)
        }
        _ => 0.0,
    };
    let re_unbypassed = if re_unbypassed.is_finite() {
        re_unbypassed
    } else {
        0.0
    };
    // R'L: the upper collector's resistors ‖ what loads it (the stage's
    // exact load resistance, past its output cut).
    let r_c = lump(&upper.ac.output);
    let load_r = cx
        .chain
        .stages
        .iter()
        .position(|s| s.part == upper.part)
        .and_then(|k| cx.midband.stages.get(k))
        .and_then(|f| f.load_resistance)
        .unwrap_or(f64::INFINITY);
    let r_load = par(r_c, load_r);
    // source: Sedra and Smith, the BJT cascode: Av ≈ −α1·α2·R'L/(re1 + RE)
    // (ro neglected: the cascode's own output resistance ≈ β·ro ≫ R'L).
    if r_load.is_finite() {
        r.figures.push(est(
            AV,
            Unit::None,
            x.gain,
            -m1.alpha * m2.alpha * r_load / (m1.re + re_unbypassed),
            "−α1·α2·R'L/(re1 + RE): re model, ro neglected",
        ));
    } else {
        r.figures.push(none(
            AV,
            Unit::None,
            x.gain,
            "no resistor sets the collector load: the gain is set by the output resistances",
        ));
    }
    let beta1 = m1.alpha / (1.0 - m1.alpha);
    let r_base = lump(&lower.ac.base);
    r.figures.push(est(
        ZIN,
        Unit::Ohm,
        x.zin,
        par(r_base, (beta1 + 1.0) * (m1.re + re_unbypassed)),
        "RB ‖ (β1 + 1)(re1 + RE): re model",
    ));
    if r_c.is_finite() {
        r.figures.push(est(
            ZOUT,
            Unit::Ohm,
            x.zout,
            r_c,
            "RC: the cascode's own output resistance (about β·ro) is taken as open",
        ));
    } else {
        r.figures.push(none(
            ZOUT,
            Unit::Ohm,
            x.zout,
            "no collector resistor: Zout is the cascode's own output resistance",
        ));
    }
    // source: Sedra and Smith, the cascode's open-circuit time constants:
    // Cπ1·R'sig + Cμ1·(R'sig·(1 + gm1·re2) + re2) + Cπ2·re2 + Cμ2·R'L.
    let h1 = &t1.models.hybrid_pi;
    let h2 = &t2.models.hybrid_pi;
    let r_sig = lump(&lower.ac.source);
    if re_unbypassed == 0.0 && r_sig.is_finite() && r_load.is_finite() && !x.too_large {
        let r_pi1 = if h1.g_pi > 0.0 {
            1.0 / h1.g_pi
        } else {
            f64::INFINITY
        };
        let rs = par(par(r_sig, r_base), r_pi1);
        let tau = h1.c_pi * rs
            + h1.c_mu * (rs * (1.0 + h1.gm * m2.re) + m2.re)
            + h2.c_pi * m2.re
            + h2.c_mu * r_load;
        if tau > 0.0 {
            r.figures.push(est(
                FH,
                Unit::Hertz,
                x.upper_corner,
                1.0 / (2.0 * std::f64::consts::PI * tau),
                "1/(2π·Σ open-circuit time constants) of Cπ1, Cμ1, Cπ2, Cμ2; other capacitances left out",
            ));
            return r;
        }
    }
    r.figures.push(bandwidth_without_estimate(
        &x,
        "the time-constant form here is for a lower emitter on AC ground and a known source and load",
    ));
    r
}

pub(crate) fn read_pair(cx: &FigureContext, b: &BlockTopology) -> BlockReading {
    let x = exact(cx, b);
    let mut r = BlockReading::default();
    let ss = cx.small_signal;
    let (t1, t2) = (ss.transistor(b.parts[0]), ss.transistor(b.parts[1]));
    let follower = b.words.ends_with("as a follower");
    let models = t1
        .and_then(|t| t.models.t.as_ref())
        .zip(t2.and_then(|t| t.models.t.as_ref()));
    let beta = |a: f64| a / (1.0 - a);
    // The composite's current gain, for the note.
    if let Some((m1, m2)) = models {
        r.notes.push(format!(
            "composite current gain about β1·β2 = {:.0}",
            beta(m1.alpha) * beta(m2.alpha)
        ));
    }
    match (models, follower) {
        (Some((m1, m2)), true) => {
            // R'E: what the output sees to AC ground, from the exact Zout
            // side — the resistance at the output with the pair cut away.
            let no = ss.net_node.get(b.outputs[0]).copied().unwrap_or(0);
            let cut: Vec<Cut> = b.parts.iter().map(|&part| Cut { part, node: no }).collect();
            let r_e = impedance(ss, no, &cut).unwrap_or(f64::INFINITY);
            let (b1, b2) = (beta(m1.alpha), beta(m2.alpha));
            let (av, zin, from_av, from_zin) = if b.kind == BlockKind::Darlington {
                // source: Sedra and Smith, the Darlington follower:
                // Av ≈ R'E/(R'E + re2 + re1/(β2 + 1)), Zin ≈ (β1 + 1)(β2 + 1)(re2 + R'E).
                (
                    r_e / (r_e + m2.re + m1.re / (b2 + 1.0)),
                    (b1 + 1.0) * (b2 + 1.0) * (m2.re + r_e),
                    "R'E/(R'E + re2 + re1/(β2 + 1)): re model",
                    "RB ‖ (β1 + 1)(β2 + 1)(re2 + R'E): re model",
                )
            } else {
                // source: Horowitz and Hill, the complementary feedback pair: a
                // follower with gm ≈ gm1·β2, so Av ≈ gm1·β2·R'E/(1 + gm1·β2·R'E)
                // and Zin ≈ β1·(re1 + β2·R'E)… to first order (β1 + 1)·β2·R'E.
                let loop_gain = m1.gm * b2 * r_e;
                (
                    loop_gain / (1.0 + loop_gain),
                    (b1 + 1.0) * (m1.re + b2 * r_e),
                    "gm1·β2·R'E/(1 + gm1·β2·R'E): the pair as one follower with gm1·β2",
                    "RB ‖ (β1 + 1)(re1 + β2·R'E): the pair as one follower",
                )
            };
            // The bias network on the first base, as the stage reading lumps it.
            let r_bias = cx
                .chain
                .stages
                .iter()
                .find(|s| s.part == b.parts[0] && s.input == b.inputs[0])
                .and_then(|s| s.ac.base.as_ref())
                .map_or(f64::INFINITY, |l| l.resistance);
            let zin = if r_bias.is_finite() {
                zin * r_bias / (zin + r_bias)
            } else {
                zin
            };
            if r_e.is_finite() {
                r.figures.push(est(AV, Unit::None, x.gain, av, from_av));
            } else {
                r.figures.push(none(
                    AV,
                    Unit::None,
                    x.gain,
                    "nothing loads the output to AC ground",
                ));
            }
            // Zin is measured with the bias network connected unless a stage cut it.
            r.figures.push(if r_e.is_finite() {
                est(ZIN, Unit::Ohm, x.zin, zin, from_zin)
            } else {
                none(
                    ZIN,
                    Unit::Ohm,
                    x.zin,
                    "nothing loads the output to AC ground",
                )
            });
            r.figures.push(none(
                ZOUT,
                Unit::Ohm,
                x.zout,
                "the follower's output resistance depends on the source driving it; see the exact value",
            ));
        }
        _ => {
            let why = if models.is_none() {
                "a transistor of the pair is not forward-active"
            } else {
                "the textbook forms here are for the pair as a follower"
            };
            r.figures.push(none(AV, Unit::None, x.gain, why));
            r.figures.push(none(ZIN, Unit::Ohm, x.zin, why));
            r.figures.push(none(ZOUT, Unit::Ohm, x.zout, why));
        }
    }
    r.figures.push(bandwidth_without_estimate(
        &x,
        "no single time constant dominates a compound pair reliably",
    ));
    r
}
