//! Textbook estimates of stage figures, beside the exact ones.
//!
//! re-model forms: Sedra and Smith, "Microelectronic Circuits", the BJT
//! amplifier chapter (sections on the common-emitter amplifier, the CE
//! amplifier with an emitter resistance, the common-base amplifier and the
//! emitter follower); the same results appear in Horowitz and Hill, "The
//! Art of Electronics", ch. 2.
//! h-parameter forms: the standard analysis of a transistor two-port with a
//! source resistance Rs and a load ZL (e.g. Millman and Halkias,
//! "Integrated Electronics", the chapter on small-signal low-frequency
//! transistor amplifiers):
//!
//! ```text
//! AI = −h21/(1 + h22·ZL)          (current into the load over input current)
//! Zi = h11 − h12·h21·ZL/(1 + h22·ZL)
//! AV = AI·ZL/Zi
//! Yo = h22 − h12·h21/(h11 + Rs)
//! ```
//!
//! A base resistance rb in series with the input port adds to h11 only.
//! Miller: Sedra and Smith, the frequency-response chapter; Gray, Hurst,
//! Lewis and Meyer, "Analysis and Design of Analog Integrated Circuits".

use super::stages::{Configuration, Emitter};
use super::two_port::{HParameters, TransistorModels};
use serde::Serialize;
use std::f64::consts::PI;

/// What the estimate formulas need about one stage (resistances in Ω).
pub struct StageContext<'a> {
    pub models: &'a TransistorModels,
    pub configuration: Configuration,
    /// Bias network on the base as one resistance (∞ when none).
    pub base: f64,
    /// Resistors on the output net to AC ground (RC, or RE of a follower).
    pub output: f64,
    /// Unbypassed emitter resistance (CE), or the emitter resistor (CB).
    pub emitter: f64,
    /// Driving-side resistance seen from the input, exact.
    pub source: f64,
    /// Resistance loading the output, exact.
    pub load: f64,
}

#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct Estimate {
    pub input_impedance: Option<f64>,
    pub output_impedance: Option<f64>,
    pub voltage_gain: Option<f64>,
}

impl Estimate {
    /// Ai = Av·Zin/Zload: the output current is v(o)/Zload, the input current v(i)/Zin.
    pub fn current_gain(&self, load: Option<f64>) -> Option<f64> {
        Some(self.voltage_gain? * self.input_impedance? / load?)
    }
}

/// a ‖ b, with ∞ treated as open.
pub fn par(a: f64, b: f64) -> f64 {
    if a.is_infinite() {
        b
    } else if b.is_infinite() {
        a
    } else if a + b == 0.0 {
        0.0
    } else {
        a * b / (a + b)
    }
}

/// The re-model estimate (ro, rb neglected).
pub fn re_model(c: &StageContext) -> Estimate {
    let Some(t) = c.models.t else {
        return Estimate::default();
    };
    let Some(beta) = c.models.hfe() else {
        return Estimate::default();
    };
    let (re, alpha) = (t.re, t.alpha);
    match c.configuration {
        Configuration::CommonEmitter(e) => {
            let r_e = match e {
                Emitter::Plain | Emitter::Bypassed => 0.0,
                Emitter::Degenerated | Emitter::PartlyBypassed => c.emitter,
            };
            let rl = par(c.output, c.load);
            Estimate {
                input_impedance: Some(par(c.base, (beta + 1.0) * (re + r_e))),
                output_impedance: Some(c.output),
                voltage_gain: Some(-alpha * rl / (re + r_e)),
            }
        }
        Configuration::CommonCollector => {
            let r_e = par(c.output, c.load);
            let rs = par(c.source, c.base);
            Estimate {
                input_impedance: Some(par(c.base, (beta + 1.0) * (re + r_e))),
                output_impedance: Some(par(c.output, re + rs / (beta + 1.0))),
                voltage_gain: Some(r_e / (re + r_e)),
            }
        }
        Configuration::CommonBase => {
            let rl = par(c.output, c.load);
            Estimate {
                input_impedance: Some(par(c.emitter, re)),
                output_impedance: Some(c.output),
                voltage_gain: Some(alpha * rl / re),
            }
        }
    }
}

/// Input impedance, voltage gain and output impedance of a two-port with
/// `extra` ohms in series with its input, load `zl` and source `rs`.
pub fn two_port_stage(h: &HParameters, extra: f64, zl: f64, rs: f64) -> (f64, f64, f64) {
    let h11 = h.h11 + extra;
    let (ai, zi) = if zl.is_infinite() {
        // Open output: AI → 0, Zi → h11 − h12·h21/h22.
        (0.0, h11 - h.h12 * h.h21 / h.h22)
    } else {
        let ai = -h.h21 / (1.0 + h.h22 * zl);
        (ai, h11 + h.h12 * ai * zl)
    };
    let av = if zl.is_infinite() {
        -h.h21 / (h11 * h.h22 - h.h12 * h.h21)
    } else {
        ai * zl / zi
    };
    let yo = h.h22 - h.h12 * h.h21 / (h11 + rs);
    (zi, av, 1.0 / yo)
}

/// The h-parameter estimate.
pub fn h_model(c: &StageContext) -> Estimate {
    let Some(h) = c.models.h else {
        return Estimate::default();
    };
    let rb = c.models.hybrid_pi.rb;
    match c.configuration {
        Configuration::CommonEmitter(Emitter::Plain | Emitter::Bypassed) => {
            let rl = par(c.output, c.load);
            let (zi, av, zo) = two_port_stage(&h.common_emitter, rb, rl, par(c.source, c.base));
            Estimate {
                input_impedance: Some(par(c.base, zi)),
                output_impedance: Some(par(c.output, zo)),
                voltage_gain: Some(av),
            }
        }
        Configuration::CommonEmitter(_) => {
            // The approximate h analysis with an emitter resistance: hre and hoe dropped.
            let hie = h.common_emitter.h11 + rb;
            let hfe = h.common_emitter.h21;
            let rl = par(c.output, c.load);
            let zb = hie + (1.0 + hfe) * c.emitter;
            Estimate {
                input_impedance: Some(par(c.base, zb)),
                output_impedance: Some(c.output),
                voltage_gain: Some(-hfe * rl / zb),
            }
        }
        Configuration::CommonCollector => {
            let rl = par(c.output, c.load);
            let (zi, av, zo) = two_port_stage(&h.common_collector, rb, rl, par(c.source, c.base));
            Estimate {
                input_impedance: Some(par(c.base, zi)),
                output_impedance: Some(par(c.output, zo)),
                voltage_gain: Some(av),
            }
        }
        Configuration::CommonBase => {
            let rl = par(c.output, c.load);
            let (zi, av, zo) = two_port_stage(&h.common_base, 0.0, rl, par(c.source, c.emitter));
            Estimate {
                input_impedance: Some(par(c.emitter, zi)),
                output_impedance: Some(par(c.output, zo)),
                voltage_gain: Some(av),
            }
        }
    }
}

/// What the re-model estimate leaves out, by configuration.
pub fn re_neglects(cfg: Configuration) -> Vec<String> {
    let mut v = vec![
        "ro (the transistor's output resistance, taken as infinite)".to_string(),
        "rb (the base resistance)".to_string(),
        "hre (reverse transmission, taken as zero)".to_string(),
    ];
    match cfg {
        Configuration::CommonEmitter(_) => {}
        Configuration::CommonCollector => {}
        Configuration::CommonBase => {
            v.push("the base bias network's loading (the base is taken as solidly grounded)".into())
        }
    }
    v
}

/// What the h-parameter estimate leaves out, by configuration.
pub fn h_neglects(cfg: Configuration) -> Vec<String> {
    match cfg {
        Configuration::CommonEmitter(Emitter::Plain | Emitter::Bypassed)
        | Configuration::CommonCollector => {
            vec!["nothing at midband: the full two-port with rb added to h11".into()]
        }
        Configuration::CommonEmitter(_) => vec![
            "hre and hoe (the approximate formulas with an emitter resistance)".into(),
            "source loading of the output (Zout taken as RC)".into(),
        ],
        Configuration::CommonBase => vec!["rb (it sits in the common base lead)".into()],
    }
}

/// The Miller estimate of a common-emitter stage's input capacitance and the
/// upper corner it sets (an estimate that ignores the other poles).
pub fn miller(c: &StageContext) -> Option<super::figures::Miller> {
    let Configuration::CommonEmitter(e) = c.configuration else {
        return None;
    };
    let p = &c.models.hybrid_pi;
    let t = c.models.t?;
    let rl = par(p.ro(), par(c.output, c.load));
    let r_drive = par(c.source, c.base) + p.rb;
    let (cin, r_in) = match e {
        Emitter::Plain | Emitter::Bypassed => (p.c_pi + p.c_mu * (1.0 + p.gm * rl), p.r_pi()),
        Emitter::Degenerated | Emitter::PartlyBypassed => (
            p.c_pi / (1.0 + p.gm * c.emitter) + p.c_mu * (1.0 + rl / (t.re + c.emitter)),
            p.r_pi() * (1.0 + p.gm * c.emitter),
        ),
    };
    let r = par(r_drive, r_in);
    if cin <= 0.0 || r <= 0.0 {
        return None;
    }
    Some(super::figures::Miller {
        input_capacitance: cin,
        load: rl,
        resistance: r,
        upper_corner: 1.0 / (2.0 * PI * r * cin),
    })
}

/// Why no single-transistor estimate applies to a stage, when none does: one
/// side of a differential pair (its emitter also looks into the other's), or
/// the input side of a feedback pair (the loop through the next stage moves
/// its emitter). `name` gives a part's designator.
pub(crate) fn not_applicable(
    topo: &super::stages::StageTopology,
    name: &dyn Fn(usize) -> String,
) -> Option<String> {
    let (emitter, base) = match topo.family {
        super::stages::Family::FieldEffect => ("source", "gate"),
        _ => ("emitter", "base"),
    };
    if let Some(other) = topo.pair_with {
        return Some(format!(
            "{} is one side of a differential pair with {}: its {emitter} also looks into {}'s \
             {emitter}, so no single-transistor estimate applies (no Miller estimate either); \
             the pair's figures, with both {base}s driven, are in its block",
            topo.transistor,
            name(other),
            name(other),
        ));
    }
    topo.feedback_from.map(|next| {
        format!(
            "{} is the input side of a feedback pair with {}: {}'s output returns to its \
             {emitter}, so the single-stage estimates, which leave the loop out, do not apply \
             (no Miller estimate either); the exact figures include the loop, and `stability` \
             splits the gain into what the feedback network sets and what the loop gain leaves",
            topo.transistor,
            name(next),
            name(next),
        )
    })
}
