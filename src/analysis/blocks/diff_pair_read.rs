//! Figures of a differential pair: exact from the small-signal circuit with
//! each base driven by an ideal test source (the base disconnected from its
//! bias network and driven alone), beside the half-circuit estimates of
//! Sedra and Smith, "Microelectronic Circuits" (the chapter on differential
//! amplifiers) and Gray, Hurst, Lewis and Meyer, "Analysis and Design of
//! Analog Integrated Circuits" (ch. 3 and 4).
//!
//! Differential drive: vb1 = +½ V, vb2 = −½ V (vid = vb1 − vb2 = 1 V);
//! common-mode drive: vb1 = vb2 = 1 V. Everything else — collector
//! resistors, the load, a mirror, the tail — stays as connected.

use super::diff_pair::{pair_of_block, Pair, Tail};
use super::{BlockFigure, BlockReading, BlockTopology, FigureContext};
use crate::analysis::figures::impedance;
use crate::analysis::linear::{Cut, Drive, LinearKind, Mode, Node, System, C64};
use crate::analysis::small_signal::SmallSignal;
use crate::analysis::stages::view::View;
use crate::presets::keys;
use crate::units::Unit;
use std::collections::BTreeSet;

/// The mismatch assumed for the offset estimate: 1 % in IS and 1 % in the
/// collector resistors.
const MISMATCH: f64 = 0.01; // common practice (no source)

/// One transistor's small-signal values for the estimates.
#[derive(Debug, Clone, Copy)]
struct Device {
    gm: f64,
    /// rπ (infinite for a FET).
    r_pi: f64,
    /// ro (infinite without Early effect).
    ro: f64,
}

impl Device {
    fn of(ss: &SmallSignal, q: usize) -> Option<Self> {
        let inv = |g: f64| if g > 0.0 { 1.0 / g } else { f64::INFINITY };
        if let Some(t) = ss.transistor(q) {
            let h = &t.models.hybrid_pi;
            return Some(Device {
                gm: h.gm,
                r_pi: inv(h.g_pi),
                ro: inv(h.go),
            });
        }
        ss.fet(q).map(|f| Device {
            gm: f.gm,
            r_pi: f64::INFINITY,
            ro: f.ro(),
        })
    }
    /// β = gm·rπ (infinite for a FET).
    fn beta(&self) -> f64 {
        self.gm * self.r_pi
    }
    /// α = β/(β + 1).
    fn alpha(&self) -> f64 {
        let b = self.beta();
        if b.is_finite() {
            b / (b + 1.0)
        } else {
            1.0
        }
    }
    /// re = α/gm.
    fn re(&self) -> f64 {
        self.alpha() / self.gm
    }
}

fn par(a: f64, b: f64) -> f64 {
    if a.is_infinite() {
        b
    } else if b.is_infinite() {
        a
    } else {
        a * b / (a + b)
    }
}

/// The pair's test solves: the linear circuit with each base pin moved off
/// its net onto a fresh node driven by its own voltage source.
struct Solves {
    diff: Option<crate::analysis::linear::Solution>,
    cm: Option<crate::analysis::linear::Solution>,
    /// Element index of each base's test source.
    sources: [usize; 2],
}

fn solve(ss: &SmallSignal, p: &Pair) -> Option<Solves> {
    let mut lc = ss.circuit.clone();
    let mut sources = [0; 2];
    for (source, &q) in sources.iter_mut().zip(&p.q) {
        let base: Node = ss
            .transistor(q)
            .map(|t| t.nodes[1])
            .or_else(|| ss.fet(q).map(|f| f.nodes[1]))?;
        let fresh = lc.add_node();
        for e in lc.elements.iter_mut().filter(|e| e.part == Some(q)) {
            if e.a == base {
                e.a = fresh;
            }
            if e.b == base {
                e.b = fresh;
            }
            if let LinearKind::Transconductance { cp, cn, .. } = &mut e.kind {
                if *cp == base {
                    *cp = fresh;
                }
                if *cn == base {
                    *cn = fresh;
                }
            }
        }
        *source = lc.add(None, fresh, 0, LinearKind::VoltageSource);
    }
    let sys = System::new(&lc, Mode::Midband, &[], None);
    let half = |k: usize, v: f64| Drive {
        element: sources[k],
        value: C64::new(v, 0.0),
        node: None,
    };
    let diff = [half(0, 0.5), half(1, -0.5)];
    let cm = [half(0, 1.0), half(1, 1.0)];
    let mut sols = sys.solve_each(0.0, &[&diff, &cm]).ok()?.into_iter();
    Some(Solves {
        diff: sols.next(),
        cm: sols.next(),
        sources,
    })
}

pub(crate) fn read(cx: &FigureContext, b: &BlockTopology) -> BlockReading {
    let mut reading = BlockReading::default();
    let view = View::new(cx.doc, cx.netlist);
    let Some(p) = pair_of_block(&view, b) else {
        return reading;
    };
    let ss = cx.small_signal;
    let node = |net: usize| ss.net_node.get(net).copied().unwrap_or(0);
    let label = |q: usize| cx.doc.parts[q].label();
    let (Some(d1), Some(d2)) = (Device::of(ss, p.q[0]), Device::of(ss, p.q[1])) else {
        return reading;
    };
    let dev = [d1, d2];
    let fet = cx.doc.parts[p.q[0]].kind.is_fet();
    let s = solve(ss, &p);
    let k = p.output_side;
    let out_net = &cx.netlist.nets[p.c[k]].name;
    let (n1, n2, no) = (node(p.c[0]), node(p.c[1]), node(p.c[k]));
    let v_at = |sol: &Option<crate::analysis::linear::Solution>, n: Node| -> Option<f64> {
        sol.as_ref().map(|s| s.v(n).re)
    };
    let ad_se = s.as_ref().and_then(|s| v_at(&s.diff, no));
    let acm = s.as_ref().and_then(|s| v_at(&s.cm, no));
    let ad_diff = s
        .as_ref()
        .and_then(|s| Some(v_at(&s.diff, n2)? - v_at(&s.diff, n1)?));
    let base_current = |sol: &Option<crate::analysis::linear::Solution>, k: usize| {
        let s = s.as_ref()?;
        sol.as_ref().map(|x| -x.currents[s.sources[k]].re)
    };

    // The estimates' parts: emitter resistors, collector loads, the tail.
    let r_of = |q: usize| cx.doc.parts[q].parameter(keys::RESISTANCE).unwrap_or(0.0);
    let re_ext = p
        .degeneration
        .map_or([0.0, 0.0], |d| [r_of(d[0]), r_of(d[1])]);
    let rc = |j: usize| {
        let rs = view.resistors_to_ground(p.c[j], &BTreeSet::new());
        let r = view.parallel(&rs).map_or(f64::INFINITY, |l| l.resistance);
        par(r, dev[j].ro)
    };
    let rl_half = p.floating_load.map_or(f64::INFINITY, |l| r_of(l) / 2.0);
    let cut_parts: Vec<usize> = p.degeneration.map_or(p.q.to_vec(), |d| d.to_vec());
    let tail_node = node(p.tail_net);
    let ree = impedance(
        ss,
        tail_node,
        &cut_parts
            .iter()
            .map(|&part| Cut {
                part,
                node: tail_node,
            })
            .collect::<Vec<_>>(),
    );
    let ree_name = "the tail's output resistance REE, the pair cut away";
    let (ree_figure, ree_est) = match p.tail {
        Tail::Resistor(r) => (
            BlockFigure::with_estimate(
                "tail_resistance",
                "REE",
                ree_name,
                Unit::Ohm,
                ree,
                r_of(r),
                "the tail resistor",
            ),
            r_of(r),
        ),
        // The tail holds only the source (recognition asks for one part on
        // it): with the pair cut the net is an island, and REE is infinite.
        Tail::CurrentSource(_) => (
            BlockFigure::exact_only(
                "tail_resistance",
                "REE",
                ree_name,
                Unit::Ohm,
                None,
                "an ideal current source alone on the tail: REE is infinite",
            ),
            f64::INFINITY,
        ),
        Tail::Transistor(t) => match (Device::of(ss, t), view.terminals(t)) {
            (Some(d), Some((_, bt, e))) if d.ro.is_finite() => {
                let rs = view.resistors_to_ground(e, &BTreeSet::new());
                let r = if view.ac_grounded(e) {
                    0.0
                } else {
                    view.parallel(&rs).map_or(0.0, |l| l.resistance)
                };
                // What drives its base, the transistor cut away (R1 ‖ R2 of a divider).
                let nb = node(bt);
                let rb = if nb == 0 {
                    0.0
                } else {
                    impedance(ss, nb, &[Cut { part: t, node: nb }]).unwrap_or(0.0)
                };
                let rpi_b = d.r_pi + rb;
                let est = if rpi_b.is_finite() {
                    d.ro + par(r, rpi_b) * (1.0 + d.gm * d.ro * d.r_pi / rpi_b)
                } else {
                    d.ro * (1.0 + d.gm * r)
                };
                (
                    BlockFigure::with_estimate(
                        "tail_resistance",
                        "REE",
                        ree_name,
                        Unit::Ohm,
                        ree,
                        est,
                        "ro + (RE ‖ (rπ + RB))·(1 + gm·ro·rπ/(rπ + RB)) of the tail transistor, RB \
                         what drives its base; ≈ ro·(1 + gm·(RE ‖ rπ)) with RB = 0 (Gray et al., \
                         ch. 4); leaves out rb and rμ",
                    ),
                    est,
                )
            }
            _ => (
                BlockFigure::exact_only(
                    "tail_resistance",
                    "REE",
                    ree_name,
                    Unit::Ohm,
                    ree,
                    "no finite ro: the tail transistor's model has no Early voltage",
                ),
                ree.unwrap_or(f64::INFINITY),
            ),
        },
    };

    let re_sum = dev[0].re() + dev[1].re() + re_ext[0] + re_ext[1];
    let sign = if k == 1 { 1.0 } else { -1.0 };
    let se_name = format!("differential gain to {out_net}, v({out_net})/(vb1 − vb2)");
    let vid = format!(
        "vid = vb1 − vb2 (the bases of {} and {})",
        label(p.q[0]),
        label(p.q[1])
    );
    if let Some((_, o)) = p.mirror {
        let ro4 = Device::of(ss, o).map_or(f64::INFINITY, |d| d.ro);
        let rs = view.resistors_to_ground(p.c[k], &BTreeSet::new());
        let rext = view.parallel(&rs).map_or(f64::INFINITY, |l| l.resistance);
        // The mirror doubles the differential current at the output: Gm = 2/(re1 + re2 + RE1 + RE2).
        let est = sign * 2.0 * par(par(dev[k].ro, ro4), rext) / re_sum;
        reading.figures.push(BlockFigure::with_estimate(
            "differential_gain_single_ended",
            "Ad",
            &se_name,
            Unit::None,
            ad_se,
            est,
            "gm·(ro2 ‖ ro4 ‖ RL) with the mirror-loaded pair's Gm = gm (Sedra and Smith); \
             leaves out the mirror's β error and the tail",
        ));
    } else {
        let est = sign * dev[k].alpha() * par(rc(k), rl_half) / re_sum;
        reading.figures.push(BlockFigure::with_estimate(
            "differential_gain_single_ended",
            "Ad",
            &se_name,
            Unit::None,
            ad_se,
            est,
            "half-circuit α·R'C/(re1 + re2 + RE1 + RE2), R'C = RC ‖ ro ‖ what loads the collector \
             (Sedra and Smith: gm·RC/2 for a matched pair); leaves out ro's path to the tail",
        ));
        let c1 = &cx.netlist.nets[p.c[0]].name;
        let c2 = &cx.netlist.nets[p.c[1]].name;
        let est_d =
            (dev[0].alpha() * par(rc(0), rl_half) + dev[1].alpha() * par(rc(1), rl_half)) / re_sum;
        reading.figures.push(BlockFigure::with_estimate(
            "differential_gain",
            "Ad(diff)",
            &format!("differential gain between the collectors, (v({c2}) − v({c1}))/(vb1 − vb2)"),
            Unit::None,
            ad_diff,
            est_d,
            "half-circuit (α1·R'C1 + α2·R'C2)/(re1 + re2 + RE1 + RE2), a floating load counted \
             as half its value to the virtual ground at its middle (Sedra and Smith: gm·RC)",
        ));
    }
    let acm_name = format!("common-mode gain to {out_net}, both inputs driven together");
    // Both emitter branches feed REE: with unequal re the tail's signal
    // splits as their conductances, 1/(re + RE) each; a matched pair gives
    // the textbook −α·R'C/(re + RE + 2·REE).
    let g_sum: f64 = (0..2).map(|j| 1.0 / (dev[j].re() + re_ext[j])).sum();
    let acm_est = -dev[k].alpha() * rc(k) / ((dev[k].re() + re_ext[k]) * (1.0 + g_sum * ree_est));
    let cmrr = match (ad_se, acm) {
        (Some(a), Some(c)) if c != 0.0 => Some(20.0 * (a / c).abs().log10()),
        _ => None,
    };
    let cmrr_name = "common-mode rejection |Ad/Acm| at the single-ended output, dB";
    if p.mirror.is_some() {
        reading.figures.push(BlockFigure::exact_only(
            "common_mode_gain",
            "Acm",
            &acm_name,
            Unit::None,
            acm,
            "the mirror cancels the common-mode current to first order; what is left \
             depends on its β error and ro, which the half-circuit does not model",
        ));
        reading.figures.push(BlockFigure::exact_only(
            "cmrr",
            "CMRR dB",
            cmrr_name,
            Unit::None,
            cmrr,
            "no half-circuit form for the mirror-loaded pair's common-mode gain",
        ));
    } else if ree_est.is_finite() {
        reading.figures.push(BlockFigure::with_estimate(
            "common_mode_gain",
            "Acm",
            &acm_name,
            Unit::None,
            acm,
            acm_est,
            "half-circuit −α·R'C/((re + RE)·(1 + REE·Σ 1/(re + RE))), for a matched pair \
             −α·R'C/(re + RE + 2·REE) (Sedra and Smith: ≈ −RC/(2·REE)); leaves out ro's path \
             to the tail",
        ));
        let ad_est = dev[k].alpha() * par(rc(k), rl_half) / re_sum;
        let est = 20.0 * (ad_est / acm_est).abs().log10();
        reading.figures.push(BlockFigure::with_estimate(
            "cmrr",
            "CMRR dB",
            cmrr_name,
            Unit::None,
            cmrr,
            est,
            "|Ad/Acm| of the two half-circuit estimates; for a matched pair \
             (re + RE + 2·REE)/(2·(re + RE)), ≈ gm·REE without emitter resistors (Sedra and Smith)",
        ));
    } else {
        reading.figures.push(BlockFigure::exact_only(
            "common_mode_gain",
            "Acm",
            &acm_name,
            Unit::None,
            acm,
            "an ideal tail current source: the half-circuit gives 0",
        ));
        reading.figures.push(BlockFigure::exact_only(
            "cmrr",
            "CMRR dB",
            cmrr_name,
            Unit::None,
            cmrr,
            "an ideal tail current source: the half-circuit gives no finite CMRR",
        ));
    }

    // Input resistances.
    let rid = s
        .as_ref()
        .and_then(|x| base_current(&x.diff, 0))
        .filter(|i| *i != 0.0)
        .map(|i| 1.0 / i);
    let ric = s
        .as_ref()
        .and_then(|x| Some(base_current(&x.cm, 0)? + base_current(&x.cm, 1)?))
        .filter(|i| *i != 0.0)
        .map(|i| 1.0 / i);
    let rid_name =
        format!("differential input resistance between the bases, {vid} over the base current");
    let ric_name = "common-mode input resistance, both bases together to ground";
    if fet {
        let why = "a FET's gate draws no current at midband";
        reading.figures.push(BlockFigure::exact_only(
            "differential_input_resistance",
            "Rid",
            &rid_name,
            Unit::Ohm,
            rid,
            why,
        ));
        reading.figures.push(BlockFigure::exact_only(
            "common_mode_input_resistance",
            "Ric",
            ric_name,
            Unit::Ohm,
            ric,
            why,
        ));
    } else {
        let est = dev[0].r_pi
            + dev[1].r_pi
            + (dev[0].beta() + 1.0) * re_ext[0]
            + (dev[1].beta() + 1.0) * re_ext[1];
        reading.figures.push(BlockFigure::with_estimate(
            "differential_input_resistance",
            "Rid",
            &rid_name,
            Unit::Ohm,
            rid,
            est,
            "rπ1 + rπ2 + (β1 + 1)·RE1 + (β2 + 1)·RE2 (Sedra and Smith: 2·rπ + 2(β + 1)·RE); \
             leaves out ro",
        ));
        // Each base sees h = rπ + (β + 1)·RE down to the tail; the tail
        // carries both emitter currents: Ric = (1 + REE·Σ(β + 1)/h)/Σ(1/h),
        // for a matched pair (rπ + (β + 1)·(RE + 2·REE))/2.
        let h = |j: usize| dev[j].r_pi + (dev[j].beta() + 1.0) * re_ext[j];
        let s_sum: f64 = (0..2).map(|j| (dev[j].beta() + 1.0) / h(j)).sum();
        // Each ro also leads from the tail to what loads its collector (measured
        // at the collector with the transistor cut away): in parallel with REE
        // it sets the tail's resistance for a common-mode signal (Gray et al.,
        // ch. 3: ro limits Ric once REE is large).
        let r_tail = (0..2).fold(ree_est, |r, j| {
            let nc = node(p.c[j]);
            let rcoll = impedance(
                ss,
                nc,
                &[Cut {
                    part: p.q[j],
                    node: nc,
                }],
            )
            .unwrap_or(0.0);
            par(r, dev[j].ro + rcoll)
        });
        let ric_est = (1.0 + s_sum * r_tail) / (1.0 / h(0) + 1.0 / h(1));
        reading.figures.push(if ric_est.is_finite() {
            BlockFigure::with_estimate(
                "common_mode_input_resistance",
                "Ric",
                ric_name,
                Unit::Ohm,
                ric,
                ric_est,
                "both half-circuits on one tail, for a matched pair (rπ + (β + 1)·(RE + 2·REE))/2 \
                 (Sedra and Smith), REE in parallel with each ro + what loads its collector \
                 (Gray et al., ch. 3); leaves out the collector's own movement",
            )
        } else {
            BlockFigure::exact_only(
                "common_mode_input_resistance",
                "Ric",
                ric_name,
                Unit::Ohm,
                ric,
                "an ideal tail and no Early effect: the half-circuit gives no finite value",
            )
        });
    }
    reading.figures.push(ree_figure);

    // Offset from mismatch (estimates only).
    if !fet {
        let kelvin = cx.doc.analysis.ambient_celsius + crate::analysis::ZERO_CELSIUS;
        let vt = crate::analysis::thermal_voltage(kelvin);
        let (vos, from) = if p.mirror.is_some() {
            (
                vt * MISMATCH * 2.0,
                "VT·(ΔIS/IS + Δ of the mirror's ratio), 1 % each assumed (common practice)",
            )
        } else {
            (
                vt * MISMATCH * 2.0,
                "VT·ΔIS/IS + VT·ΔRC/RC with 1 % mismatch in IS and in the collector resistors \
                 assumed (common practice; Gray et al., ch. 3)",
            )
        };
        reading.figures.push(BlockFigure::with_estimate(
            "input_offset_voltage",
            "VOS",
            "input offset voltage from mismatch",
            Unit::Volt,
            None,
            vos,
            from,
        ));
        reading.figures.push(BlockFigure::with_estimate(
            "offset_drift",
            "ΔVOS per K",
            "drift of the offset voltage, per kelvin",
            Unit::Volt,
            None,
            vos / kelvin,
            "VOS/T: the offset from mismatch scales with absolute temperature (Gray et al., ch. 3)",
        ));
    }
    if let Some(l) = p.floating_load {
        reading.notes.push(format!(
            "{} floats between the collectors: the output is the voltage across it",
            label(l)
        ));
    }
    reading
}
