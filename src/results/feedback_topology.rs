//! The textbook estimate of a feedback amplifier beside its exact figure,
//! for the two topologies a resistor from the output back to the first
//! stage makes (Sedra and Smith, "Microelectronic Circuits", the feedback
//! chapter):
//! - series–shunt: the resistor returns to the first transistor's emitter
//!   (source), where R'E goes to AC ground: the voltage gain from its base
//!   is about 1/β = 1 + RF/R'E;
//! - shunt–shunt: the resistor returns to the first transistor's base
//!   (gate): the transresistance v(out)/i(in) is about −RF.
//!
//! Series–series and shunt–series loops (sampling a current) are named
//! only as "no textbook form here".

use crate::analysis::figures::impedance;
use crate::analysis::linear::{Cut, Drive, Mode, System, Test};
use crate::analysis::small_signal::SmallSignal;
use crate::analysis::stages::Chain;
use crate::document::{Document, PartKind};
use crate::netlist::Netlist;
use crate::presets::keys;

/// One textbook figure beside the exact one.
#[derive(Debug, Clone, PartialEq)]
pub struct Textbook {
    /// `series–shunt` or `shunt–shunt`.
    pub topology: &'static str,
    /// What is compared, in words.
    pub figure: String,
    pub exact: f64,
    pub estimate: f64,
    /// The formula with its values, in words.
    pub formula: String,
}

impl Textbook {
    /// (estimate − exact)/exact × 100.
    pub fn difference_percent(&self) -> f64 {
        (self.estimate - self.exact) / self.exact * 100.0
    }
}

/// The textbook reading of a chain whose output returns through one
/// resistor to its first stage, if it does.
pub fn textbook(doc: &Document, nl: &Netlist, ss: &SmallSignal, chain: &Chain) -> Option<Textbook> {
    let first = chain.stages.first()?;
    let load = chain.load.as_ref()?;
    if load.other_net.is_some() {
        return None;
    }
    let pins = crate::analysis::stages::Family::of(doc.parts[first.part].kind)?.pins();
    let pin = |name: &str| {
        let k = doc.parts[first.part]
            .kind
            .pin_names()
            .iter()
            .position(|p| *p == name)?;
        nl.part_nets.get(first.part)?.get(k).copied()
    };
    let (base, emitter) = (pin(pins[1])?, pin(pins[2])?);
    // The resistor from the output (the load's net, or the last stage's
    // output ahead of its coupling capacitor) back to the first stage.
    let last = chain.stages.last()?.output;
    let back = |to: usize| {
        (0..doc.parts.len()).find(|&r| {
            doc.parts[r].kind == PartKind::Resistor
                && nl.part_nets.get(r).is_some_and(|n| {
                    n.len() == 2
                        && [load.net, last].iter().any(|&o| {
                            o != to && (n[0] == o && n[1] == to || n[1] == o && n[0] == to)
                        })
                })
        })
    };
    let node = |n: usize| ss.net_node.get(n).copied().unwrap_or(0);
    let (nb, ne, no) = (node(base), node(emitter), node(load.net));
    if no == 0 {
        return None;
    }
    let rf_of = |r: usize| doc.parts[r].parameter(keys::RESISTANCE);
    let connected = System::new(&ss.circuit, Mode::Midband, &[], None);
    if let Some(rf) = back(emitter).filter(|_| ne != 0 && nb != 0) {
        let rf_value = rf_of(rf)?;
        // R'E: what the emitter sees to AC ground besides RF and the transistor.
        let cut: Vec<Cut> = crate::analysis::figures::parts_at(ss, ne)
            .into_iter()
            .filter(|&p| p == rf || p == first.part)
            .map(|part| Cut { part, node: ne })
            .collect();
        let re = impedance(ss, ne, &cut)?;
        let sol = connected.solve(0.0, &[Drive::unit(ss.signal?)]).ok()?;
        let (vb, vo) = (sol.v(nb).re, sol.v(no).re);
        if vb == 0.0 || !re.is_finite() || re <= 0.0 {
            return None;
        }
        return Some(Textbook {
            topology: "series–shunt",
            figure: format!(
                "voltage gain from {}'s {} to the load",
                first.transistor, pins[1]
            ),
            exact: vo / vb,
            estimate: 1.0 + rf_value / re,
            formula: format!(
                "1/β = 1 + RF/R'E with RF = {} and R'E = {} (the {} to AC ground without RF): \
                 the loop gain taken as infinite",
                doc.parts[rf].label(),
                crate::units::format(re, crate::units::Unit::Ohm),
                pins[2]
            ),
        });
    }
    if let Some(rf) = back(base).filter(|_| nb != 0) {
        let rf_value = rf_of(rf)?;
        // Transresistance: 1 A into the input with the source's feed cut.
        let src = chain.source.as_ref()?;
        let ni = node(src.input);
        let sys = System::new(
            &ss.circuit,
            Mode::Midband,
            &[Cut {
                part: src.feed,
                node: ni,
            }],
            Some(Test::Current(ni)),
        );
        let vo = sys.solve(0.0, &[]).ok()?.v(no).re;
        return Some(Textbook {
            topology: "shunt–shunt",
            figure: "transresistance v(load)/i(input), Ω".into(),
            exact: vo,
            estimate: -rf_value,
            formula: format!(
                "−RF with RF = {}: the loop gain taken as infinite",
                doc.parts[rf].label()
            ),
        });
    }
    None
}
