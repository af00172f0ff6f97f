//! Stage and chain figures at midband, exactly from the small-signal MNA,
//! beside the textbook estimates for the recognised configuration.
//!
//! Definitions (the usual two-port ones; Sedra and Smith, "Microelectronic
//! Circuits", the chapter on BJT amplifiers):
//! - Zin: impedance from the stage input to ground with the parts that bring
//!   the signal in disconnected, every independent source zeroed;
//! - Zout: impedance from the output to ground with the parts that carry
//!   the signal on disconnected, the driving side left connected;
//! - Av = v(o)/v(i) in the circuit as connected; Ai = i(out)/i(in) through
//!   the output and input cuts.
//!
//! Estimates are the usual re-model and h-parameter formulas; see
//! [`super::estimates`] for each one and the book it comes from.

use super::estimates::{self, Estimate, StageContext};
use super::estimates_fet::{self, FetStageContext};
use super::linear::{Cut, Drive, Mode, Node, System, Test, C64};
use super::small_signal::SmallSignal;
use super::stages::{Chain, Configuration, Family, StageTopology};
use serde::Serialize;
use std::collections::BTreeSet;

/// One figure: the exact value, the two estimates and how far each is off.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize)]
pub struct Figure {
    pub exact: Option<f64>,
    pub re_model: Option<f64>,
    pub h_model: Option<f64>,
    /// (estimate − exact)/exact × 100.
    pub re_difference_percent: Option<f64>,
    pub h_difference_percent: Option<f64>,
}

impl Figure {
    fn new(exact: Option<f64>, re: Option<f64>, h: Option<f64>) -> Self {
        let diff = |e: Option<f64>| match (e, exact) {
            (Some(e), Some(x)) if x != 0.0 && e.is_finite() && x.is_finite() => {
                Some((e - x) / x * 100.0)
            }
            _ => None,
        };
        Figure {
            exact,
            re_model: re,
            h_model: h,
            re_difference_percent: diff(re),
            h_difference_percent: diff(h),
        }
    }
}

/// How far the output can swing before the transistor saturates or cuts off
/// (a FET: before it reaches the triode edge — its `toward_saturation` — or cuts off).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Swing {
    /// Output amplitude (V) available toward saturation.
    pub toward_saturation: f64,
    /// Output amplitude (V) available toward cut-off.
    pub toward_cut_off: f64,
    /// The smaller of the two, V.
    pub limit: f64,
    /// `saturation`, `the triode edge` (a FET) or `cut-off`.
    pub limited_by: String,
    /// AC load resistance on the output the swing is taken over, Ω.
    pub ac_load: f64,
    /// Amplitude at the stage input that reaches the limit, V.
    pub input_amplitude: Option<f64>,
    /// Signal-source amplitude (open-circuit) that reaches the limit, V.
    pub source_amplitude: Option<f64>,
}

/// The Miller input-capacitance estimate of a common-emitter stage.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Miller {
    /// Cin = Cπ + Cμ(1 + gm·R'L), or the degenerated form, F.
    pub input_capacitance: f64,
    /// R'L = ro ‖ RC ‖ load, Ω.
    pub load: f64,
    /// Resistance the input capacitance sees, Ω.
    pub resistance: f64,
    /// 1/(2π·R·Cin), Hz: an estimate that ignores the other poles.
    pub upper_corner: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StageFigures {
    pub transistor: String,
    /// Bipolar or field-effect. For a FET stage the two estimate columns are
    /// the T model (in `re_model`, 1/gm in the source lead) and the FET
    /// hybrid-π with ro (in `h_model`); see `estimate_names`.
    pub family: Family,
    /// What the two estimate columns are: ["re model", "h-parameters"] or
    /// ["T model", "hybrid-π"].
    pub estimate_names: [String; 2],
    pub configuration: Configuration,
    pub configuration_words: String,
    pub input_net: String,
    pub output_net: String,
    pub notes: Vec<String>,
    pub overridden: bool,
    /// `false` when the transistor is not forward-active: the figures are then meaningless.
    pub meaningful: bool,
    /// Why the figures are meaningless or unavailable.
    pub caveats: Vec<String>,
    /// Ω.
    pub input_impedance: Figure,
    /// Ω.
    pub output_impedance: Figure,
    pub voltage_gain: Figure,
    pub current_gain: Figure,
    /// Resistance of the driving side seen from the input, Ω (exact).
    pub source_resistance: Option<f64>,
    /// Resistance loading the output (what the output cut leads to), Ω (exact).
    pub load_resistance: Option<f64>,
    /// What the re-model estimate leaves out.
    pub re_model_neglects: Vec<String>,
    /// What the h-parameter estimate leaves out.
    pub h_model_neglects: Vec<String>,
    pub ac: super::stages::AcEquivalent,
    pub swing: Option<Swing>,
    pub miller: Option<Miller>,
}

/// A source resistance this many times Zin or more drives the input as a
/// current source would (within 1 %); the chain then reports a transimpedance.
pub const CURRENT_SOURCE_RATIO: f64 = 100.0;

/// The whole amplifier, source to load.
#[derive(Debug, Clone, PartialEq, Default, Serialize)]
pub struct ChainFigures {
    /// Zin seen by the source (after the source resistance), Ω.
    pub input_impedance: Option<f64>,
    /// The source resistance seen from the amplifier input, Ω.
    pub source_resistance: Option<f64>,
    /// Zout seen by the load, Ω.
    pub output_impedance: Option<f64>,
    /// The load's impedance, Ω.
    pub load_impedance: Option<f64>,
    /// Open-circuit output voltage per volt of source EMF.
    pub open_circuit_gain: Option<f64>,
    /// From the source EMF to the load.
    pub source_gain: Option<f64>,
    /// From the amplifier input (after the source resistance) to the load.
    pub voltage_gain: Option<f64>,
    /// Load current over the current into the amplifier input.
    pub current_gain: Option<f64>,
    pub source_gain_db: Option<f64>,
    pub voltage_gain_db: Option<f64>,
    /// v(input)/vs, for the consistency check.
    pub input_fraction: Option<f64>,
    /// Zt = v(load)/(vs/Rs), Ω, when the source resistance is more than
    /// [`CURRENT_SOURCE_RATIO`] × Zin (the source acts as a current, as a
    /// photodiode does).
    pub transimpedance: Option<f64>,
    /// Figures that could not be computed, and why.
    pub unavailable: Vec<String>,
}

/// All the midband small-signal results of a document.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Midband {
    pub stages: Vec<StageFigures>,
    pub chain: ChainFigures,
}

/// Parts with an element touching `node`.
pub fn parts_at(ss: &SmallSignal, node: Node) -> BTreeSet<usize> {
    ss.circuit
        .elements
        .iter()
        .filter(|e| {
            e.a == node
                || e.b == node
                || matches!(e.kind, super::linear::LinearKind::Transconductance { cp, cn, .. } if cp == node || cn == node)
        })
        .filter_map(|e| e.part)
        .collect()
}

fn cuts(parts: impl IntoIterator<Item = usize>, node: Node) -> Vec<Cut> {
    parts.into_iter().map(|part| Cut { part, node }).collect()
}

pub use super::figures_ports::{impedance_between, load_other_node, own_resistance};

/// Impedance at `node` (to ground) with `cut` applied, midband.
pub fn impedance(ss: &SmallSignal, node: Node, cut: &[Cut]) -> Option<f64> {
    if node == 0 {
        return None;
    }
    let sys = System::new(&ss.circuit, Mode::Midband, cut, Some(Test::Current(node)));
    sys.solve(0.0, &[]).ok().map(|s| s.v(node).re)
}

fn signal_drive(ss: &SmallSignal) -> Option<[Drive; 1]> {
    ss.signal.map(|element| [Drive::unit(element)])
}

/// Midband figures of every stage and of the whole chain.
pub fn midband(ss: &SmallSignal, chain: &Chain) -> Midband {
    let drive = signal_drive(ss);
    let connected = System::new(&ss.circuit, Mode::Midband, &[], None);
    let sol = drive.and_then(|d| connected.solve(0.0, &d).ok());
    let chain_figures = chain_figures(ss, chain, sol.as_ref());
    let fast = chain.stages.len() > super::figures_cut::FAST_STAGES;
    let impedances = super::figures_cut::chain_impedances(ss, chain, fast);
    let mut stages = Vec::new();
    for (topo, z) in chain.stages.iter().zip(impedances) {
        stages.push(stage_figures(ss, chain, topo, z, &connected, sol.as_ref()));
    }
    Midband {
        stages,
        chain: chain_figures,
    }
}

fn stage_figures(
    ss: &SmallSignal,
    chain: &Chain,
    topo: &StageTopology,
    z: super::figures_cut::StageImpedances,
    connected: &System,
    sol: Option<&super::linear::Solution>,
) -> StageFigures {
    let ni = ss.net_node.get(topo.input).copied().unwrap_or(0);
    let no = ss.net_node.get(topo.output).copied().unwrap_or(0);
    let mut caveats = Vec::new();
    let tr = ss.transistor(topo.part);
    let fet = ss.fet(topo.part);
    let meaningful = match tr {
        Some(t) if t.region == super::dc::Region::ForwardActive => true,
        Some(t) => {
            caveats.push(format!(
                "{} is in {}, not forward-active: these small-signal figures are meaningless \
                 until its bias is fixed",
                topo.transistor,
                t.region.words()
            ));
            false
        }
        None => match fet {
            Some(f) if f.region == super::elements::fet_report::FetRegion::Saturation => true,
            Some(f) => {
                caveats.push(format!(
                    "{} is in {}, not saturation (its amplifying region): these small-signal \
                     figures are meaningless until its bias is fixed",
                    topo.transistor,
                    f.region.words()
                ));
                false
            }
            None => false,
        },
    };
    if ni == 0 || no == 0 {
        caveats.push(format!(
            "the stage's input net {} or output net {} is on ground",
            topo.input_net, topo.output_net
        ));
    }
    let (zin, zout, rsig, rload) = (z.zin, z.zout, z.source, z.load);
    let (av, ai, vo_over_vs) = match sol {
        Some(s) if ni != 0 && no != 0 => {
            let (vi, vo) = (s.v(ni), s.v(no));
            let iin: C64 = topo
                .input_cut
                .iter()
                .map(|&p| -connected.current_into_part(s, p, ni))
                .sum();
            let iout: C64 = topo
                .output_cut
                .iter()
                .map(|&p| connected.current_into_part(s, p, no))
                .sum();
            let av = (vi.norm() > 0.0).then(|| (vo / vi).re);
            let ai = (iin.norm() > 0.0 && !topo.output_cut.is_empty()).then(|| (iout / iin).re);
            (av, ai, Some(vo.re))
        }
        _ => {
            if ss.signal.is_none() {
                caveats.push(
                    "no signal source: Av and Ai need one (set the project's signal source)".into(),
                );
            }
            (None, None, None)
        }
    };
    let ctx = tr.map(|t| StageContext {
        models: &t.models,
        configuration: topo.configuration,
        base: topo
            .ac
            .base
            .as_ref()
            .map_or(f64::INFINITY, |l| l.resistance),
        output: topo
            .ac
            .output
            .as_ref()
            .map_or(f64::INFINITY, |l| l.resistance),
        // No emitter resistor: none in series for a common emitter, an open
        // shunt for a common base (a cascode's upper device: Zin ≈ re).
        emitter: topo.ac.emitter.as_ref().map_or(
            if matches!(topo.configuration, Configuration::CommonBase) {
                f64::INFINITY
            } else {
                0.0
            },
            |l| l.resistance,
        ),
        source: rsig.unwrap_or(0.0),
        load: rload.unwrap_or(f64::INFINITY),
    });
    let fctx = fet.map(|f| FetStageContext {
        fet: f,
        configuration: topo.configuration,
        gate: topo
            .ac
            .base
            .as_ref()
            .map_or(f64::INFINITY, |l| l.resistance),
        output: topo
            .ac
            .output
            .as_ref()
            .map_or(f64::INFINITY, |l| l.resistance),
        source_lead: topo.ac.emitter.as_ref().map_or(0.0, |l| l.resistance),
        source: rsig.unwrap_or(0.0),
        load: rload.unwrap_or(f64::INFINITY),
    });
    let why_none = super::estimates::not_applicable(topo, &|p| ss.designator(p).to_string());
    let (re, h) = match (&ctx, &fctx) {
        _ if why_none.is_some() => (Estimate::default(), Estimate::default()),
        (Some(c), _) => (estimates::re_model(c), estimates::h_model(c)),
        (None, Some(c)) => (estimates_fet::t_model(c), estimates_fet::hybrid_pi(c)),
        _ => (Estimate::default(), Estimate::default()),
    };
    caveats.extend(why_none.clone());
    // What the swing needs: the output current at the operating point, the
    // margin to saturation (a FET: to the triode edge), and the emitter
    // current over the collector current (the follower's output current).
    let device = match (tr, fet) {
        (Some(t), _) => Some(SwingDevice {
            current: t.collector_current.abs(),
            margin: t.saturation_margin,
            output_over_input: 1.0 + 1.0 / t.models.hfe().unwrap_or(f64::INFINITY),
            saturation_words: "saturation",
        }),
        (None, Some(f)) => Some(SwingDevice {
            current: f.drain_current.abs(),
            margin: f.triode_margin,
            output_over_input: 1.0,
            saturation_words: "the triode edge",
        }),
        _ => None,
    };
    let swing = device.and_then(|d| {
        swing(
            &d,
            topo,
            rload.unwrap_or(f64::INFINITY),
            av,
            vo_over_vs,
            chain,
        )
    });
    let miller = match (&ctx, &fctx) {
        _ if why_none.is_some() => None,
        (Some(c), _) => estimates::miller(c),
        (None, Some(c)) => estimates_fet::miller(c),
        _ => None,
    };
    let fet_stage = topo.family == Family::FieldEffect;
    let (re_neglects, h_neglects) = if fet_stage {
        (
            estimates_fet::t_neglects(topo.configuration),
            estimates_fet::hybrid_pi_neglects(topo.configuration),
        )
    } else {
        (
            estimates::re_neglects(topo.configuration),
            estimates::h_neglects(topo.configuration),
        )
    };
    let estimate_names = if fet_stage {
        ["T model".to_string(), "hybrid-π".to_string()]
    } else {
        ["re model".to_string(), "h-parameters".to_string()]
    };
    StageFigures {
        transistor: topo.transistor.clone(),
        family: topo.family,
        estimate_names,
        configuration: topo.configuration,
        configuration_words: topo.configuration.words_for(topo.family).to_string(),
        input_net: topo.input_net.clone(),
        output_net: topo.output_net.clone(),
        notes: topo.notes.clone(),
        overridden: topo.overridden,
        meaningful,
        caveats,
        input_impedance: Figure::new(zin, re.input_impedance, h.input_impedance),
        output_impedance: Figure::new(zout, re.output_impedance, h.output_impedance),
        voltage_gain: Figure::new(av, re.voltage_gain, h.voltage_gain),
        current_gain: Figure::new(ai, re.current_gain(rload), h.current_gain(rload)),
        source_resistance: rsig,
        load_resistance: rload,
        re_model_neglects: re_neglects,
        h_model_neglects: h_neglects,
        ac: topo.ac.clone(),
        swing,
        miller,
    }
}

/// The operating-point values the swing needs, for either family.
struct SwingDevice {
    /// Collector or drain current, A (magnitude).
    current: f64,
    /// Margin to saturation (bipolar) or to the triode edge (FET), V.
    margin: f64,
    /// Output-terminal current over the collector/drain current (IE/IC; 1 for a FET).
    output_over_input: f64,
    saturation_words: &'static str,
}

fn swing(
    t: &SwingDevice,
    topo: &StageTopology,
    rload: f64,
    av: Option<f64>,
    vo_over_vs: Option<f64>,
    chain: &Chain,
) -> Option<Swing> {
    let par = |a: f64, b: f64| {
        if a.is_infinite() {
            b
        } else if b.is_infinite() {
            a
        } else {
            a * b / (a + b)
        }
    };
    let ic = t.current;
    let sat = t.margin.max(0.0);
    let out = topo
        .ac
        .output
        .as_ref()
        .map_or(f64::INFINITY, |l| l.resistance);
    let r_ac = par(out, rload);
    let (toward_saturation, toward_cut_off) = match topo.configuration {
        Configuration::CommonEmitter(_) => {
            let re = topo.ac.emitter.as_ref().map_or(0.0, |l| l.resistance);
            // The collector–emitter swing splits between R'L and the unbypassed RE.
            (sat * r_ac / (r_ac + re), ic * r_ac)
        }
        Configuration::CommonBase => (sat, ic * r_ac),
        Configuration::CommonCollector => (sat, ic * t.output_over_input * r_ac),
    };
    if !toward_cut_off.is_finite() && !toward_saturation.is_finite() {
        return None;
    }
    let (limit, by) = if toward_saturation <= toward_cut_off {
        (toward_saturation, t.saturation_words)
    } else {
        (toward_cut_off, "cut-off")
    };
    let _ = chain;
    Some(Swing {
        toward_saturation,
        toward_cut_off,
        limit,
        limited_by: by.to_string(),
        ac_load: r_ac,
        input_amplitude: av.filter(|a| *a != 0.0).map(|a| limit / a.abs()),
        source_amplitude: vo_over_vs.filter(|a| *a != 0.0).map(|a| limit / a.abs()),
    })
}

fn chain_figures(
    ss: &SmallSignal,
    chain: &Chain,
    sol: Option<&super::linear::Solution>,
) -> ChainFigures {
    let mut f = ChainFigures {
        unavailable: chain.notes.clone(),
        ..Default::default()
    };
    let src = chain.source.as_ref();
    let nin = src.map(|s| ss.net_node.get(s.input).copied().unwrap_or(0));
    let mut vin = None;
    let mut iin = None;
    let connected = System::new(&ss.circuit, Mode::Midband, &[], None);
    if let (Some(s), Some(n)) = (src, nin) {
        f.input_impedance = impedance(
            ss,
            n,
            &[Cut {
                part: s.feed,
                node: n,
            }],
        );
        let others: Vec<usize> = parts_at(ss, n)
            .into_iter()
            .filter(|&p| p != s.feed)
            .collect();
        f.source_resistance = if s.feed == s.part {
            Some(0.0)
        } else {
            impedance(ss, n, &cuts(others, n))
        };
        if let Some(sol) = sol {
            vin = Some(sol.v(n));
            iin = Some(-connected.current_into_part(sol, s.feed, n));
            f.input_fraction = Some(sol.v(n).re);
        }
    }
    if let Some(l) = &chain.load {
        let n = ss.net_node.get(l.net).copied().unwrap_or(0);
        // A floating load: everything is taken across it, v(n) − v(m).
        let m = load_other_node(ss, l);
        let across = |s: &super::linear::Solution| match m {
            Some(m) => s.v(n) - s.v(m),
            None => s.v(n),
        };
        let load_cut: Vec<Cut> = [n]
            .into_iter()
            .chain(m)
            .map(|node| Cut { part: l.part, node })
            .collect();
        f.output_impedance = match m {
            Some(m) => impedance_between(ss, n, m, &load_cut),
            None => impedance(ss, n, &load_cut),
        };
        let others: Vec<Cut> = [n]
            .into_iter()
            .chain(m)
            .flat_map(|node| {
                parts_at(ss, node)
                    .into_iter()
                    .filter(|&p| p != l.part)
                    .map(move |part| Cut { part, node })
            })
            .collect();
        f.load_impedance = match m {
            Some(m) => impedance_between(ss, n, m, &others),
            None => impedance(ss, n, &others),
        };
        if let (Some(sol), Some(d)) = (sol, signal_drive(ss)) {
            let vl = across(sol);
            f.source_gain = Some(vl.re);
            // A zero gain has no decibel figure (never −∞ dB).
            f.source_gain_db = Some(20.0 * vl.norm().log10()).filter(|d| d.is_finite());
            if let Some(vi) = vin.filter(|v| v.norm() > 0.0) {
                f.voltage_gain = Some((vl / vi).re);
                f.voltage_gain_db = Some(20.0 * (vl / vi).norm().log10()).filter(|d| d.is_finite());
            }
            // A source resistance far above Zin makes the source a current
            // vs/Rs: the useful figure is then v(load) per ampere of it.
            if let (Some(rs), Some(zin)) = (f.source_resistance, f.input_impedance) {
                if rs > CURRENT_SOURCE_RATIO * zin && rs.is_finite() {
                    f.transimpedance = Some(vl.re * rs);
                }
            }
            if let Some(ii) = iin.filter(|v| v.norm() > 0.0) {
                f.current_gain = Some((connected.current_into_part(sol, l.part, n) / ii).re);
            }
            let open = System::new(&ss.circuit, Mode::Midband, &load_cut, None);
            f.open_circuit_gain = open.solve(0.0, &d).ok().map(|s| across(&s).re);
        }
    }
    if ss.signal.is_none() && chain.source.is_some() {
        f.unavailable
            .push("the signal source is not in the circuit, so no gain can be computed".into());
    }
    f
}
