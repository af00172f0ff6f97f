//! Textbook estimates of FET stage figures, beside the exact ones.
//!
//! Two drawings of the same device at its operating point:
//! - the T model: 1/gm in the source lead, the gate drawing no current, ro
//!   taken as infinite (Sedra and Smith, "Microelectronic Circuits", the
//!   MOSFET amplifier chapter: the T equivalent circuit and the basic
//!   configurations):
//!
//! ```text
//! CS   Av = −gm·(RD‖RL)/(1 + gm·RS)          Zin = RG          Zout = RD
//! CD   Av = gm·RS'/(1 + gm·RS'), RS' = RS‖RL  Zin = RG          Zout = 1/gm ‖ RS
//! CG   Av = gm·(RD‖RL)                        Zin = 1/gm ‖ RS   Zout = RD
//! ```
//!
//! - the FET hybrid-π with ro (gm·vgs and ro from drain to source; Cgs, Cgd
//!   open at midband), solved with every resistor and the load (B. Razavi,
//!   "Design of Analog CMOS Integrated Circuits", ch. 3, the degenerated
//!   common source, the source follower and the common gate with ro):
//!
//! ```text
//! CS   Av = −gm·ro·R'L/(R'L + ro + (1 + gm·ro)·RS)   Zout = RD ‖ (ro + (1 + gm·ro)·RS)
//! CD   Av = gm·R''/(1 + gm·R''), R'' = RS‖RL‖ro      Zout = 1/gm ‖ ro ‖ RS
//! CG   Av = (1 + gm·ro)·R'L/(ro + R'L)                Zin = RS ‖ (ro + R'L)/(1 + gm·ro)
//!      Zout = RD ‖ (ro + (1 + gm·ro)·(Rsig ‖ RS))
//! ```
//! with R'L = RD ‖ RL. The body is tied to the source (discrete parts), so
//! there is no body-effect term.
//! Miller: Sedra and Smith, the frequency-response chapter:
//! Cin = Cgs + Cgd·(1 + gm·R'L).

use super::estimates::{par, Estimate};
use super::figures::Miller;
use super::small_signal::FetSmallSignal;
use super::stages::{Configuration, Emitter};
use std::f64::consts::PI;

/// What the FET estimate formulas need about one stage (resistances in Ω).
pub struct FetStageContext<'a> {
    pub fet: &'a FetSmallSignal,
    pub configuration: Configuration,
    /// Gate bias network as one resistance (∞ when none).
    pub gate: f64,
    /// Resistors on the output net to AC ground (RD, or RS of a follower).
    pub output: f64,
    /// Unbypassed source resistance (CS), or the source resistor (CG).
    pub source_lead: f64,
    /// Driving-side resistance seen from the input, exact.
    pub source: f64,
    /// Resistance loading the output, exact.
    pub load: f64,
}

impl FetStageContext<'_> {
    fn unbypassed(&self) -> f64 {
        match self.configuration {
            Configuration::CommonEmitter(Emitter::Plain | Emitter::Bypassed) => 0.0,
            _ => self.source_lead,
        }
    }
}

/// The T-model estimate (1/gm in the source lead, ro neglected).
pub fn t_model(c: &FetStageContext) -> Estimate {
    let gm = c.fet.gm;
    if gm <= 0.0 {
        return Estimate::default();
    }
    let inv = 1.0 / gm;
    match c.configuration {
        Configuration::CommonEmitter(_) => Estimate {
            input_impedance: Some(c.gate),
            output_impedance: Some(c.output),
            voltage_gain: Some(-par(c.output, c.load) / (inv + c.unbypassed())),
        },
        Configuration::CommonCollector => {
            let rs = par(c.output, c.load);
            Estimate {
                input_impedance: Some(c.gate),
                output_impedance: Some(par(inv, c.output)),
                voltage_gain: Some(rs / (inv + rs)),
            }
        }
        Configuration::CommonBase => Estimate {
            input_impedance: Some(par(inv, c.source_lead)),
            output_impedance: Some(c.output),
            voltage_gain: Some(gm * par(c.output, c.load)),
        },
    }
}

/// The FET hybrid-π estimate with ro and every resistor (gate junctions
/// and capacitances left out).
pub fn hybrid_pi(c: &FetStageContext) -> Estimate {
    let (gm, ro) = (c.fet.gm, c.fet.ro());
    if gm <= 0.0 {
        return Estimate::default();
    }
    let rl = par(c.output, c.load);
    // ro + (1 + gm·ro)·R, the resistance looking into the drain with R in the source lead.
    let into_drain = |r: f64| {
        if ro.is_infinite() {
            f64::INFINITY
        } else {
            ro + (1.0 + gm * ro) * r
        }
    };
    match c.configuration {
        Configuration::CommonEmitter(_) => {
            let rs = c.unbypassed();
            let av = if ro.is_infinite() {
                -gm * rl / (1.0 + gm * rs)
            } else if rl.is_infinite() {
                -gm * ro
            } else {
                -gm * ro * rl / (rl + ro + (1.0 + gm * ro) * rs)
            };
            Estimate {
                input_impedance: Some(c.gate),
                output_impedance: Some(par(c.output, into_drain(rs))),
                voltage_gain: Some(av),
            }
        }
        Configuration::CommonCollector => {
            let r = par(par(c.output, c.load), ro);
            Estimate {
                input_impedance: Some(c.gate),
                output_impedance: Some(par(par(1.0 / gm, ro), c.output)),
                voltage_gain: Some(if r.is_infinite() {
                    1.0
                } else {
                    gm * r / (1.0 + gm * r)
                }),
            }
        }
        Configuration::CommonBase => {
            let (rin, av) = if ro.is_infinite() {
                (1.0 / gm, gm * rl)
            } else if rl.is_infinite() {
                (f64::INFINITY, 1.0 + gm * ro)
            } else {
                (
                    (ro + rl) / (1.0 + gm * ro),
                    (1.0 + gm * ro) * rl / (ro + rl),
                )
            };
            Estimate {
                input_impedance: Some(par(c.source_lead, rin)),
                output_impedance: Some(par(c.output, into_drain(par(c.source, c.source_lead)))),
                voltage_gain: Some(av),
            }
        }
    }
}

/// What the T-model estimate leaves out.
pub fn t_neglects(cfg: Configuration) -> Vec<String> {
    let mut v = vec![
        "ro (the channel's output resistance, taken as infinite)".to_string(),
        "the gate junction leakage (the gate taken as drawing no current)".to_string(),
    ];
    if cfg == Configuration::CommonBase {
        v.push("the gate bias network (the gate taken as solidly on AC ground)".into());
    }
    v
}

/// What the hybrid-π estimate leaves out.
pub fn hybrid_pi_neglects(cfg: Configuration) -> Vec<String> {
    let mut v =
        vec!["the gate junction leakage (the gate taken as drawing no current)".to_string()];
    if cfg == Configuration::CommonBase {
        v.push("the gate bias network (the gate taken as solidly on AC ground)".into());
    }
    v
}

/// The Miller estimate of a common-source stage's input capacitance and the
/// upper corner it sets (an estimate that ignores the other poles).
pub fn miller(c: &FetStageContext) -> Option<Miller> {
    let Configuration::CommonEmitter(_) = c.configuration else {
        return None;
    };
    let f = c.fet;
    let rl = par(f.ro(), par(c.output, c.load));
    let rs = c.unbypassed();
    // With RS: Cgs is bootstrapped by 1/(1 + gm·RS), the gain across Cgd is R'L/(1/gm + RS).
    let cin = f.cgs / (1.0 + f.gm * rs) + f.cgd * (1.0 + f.gm * rl / (1.0 + f.gm * rs));
    let r = par(c.source, c.gate);
    if cin <= 0.0 || r <= 0.0 || !r.is_finite() {
        return None;
    }
    Some(Miller {
        input_capacitance: cin,
        load: rl,
        resistance: r,
        upper_corner: 1.0 / (2.0 * PI * r * cin),
    })
}
