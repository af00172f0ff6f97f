//! The shipped evaluator: one board's DC operating point (and, where the
//! small-signal analysis is available, its midband figures, the sweep's
//! corners and the phase margin at the file's `analysis.loop_break`) as named
//! quantities.

use super::{Evaluator, Outcome};
use crate::analysis::{ac, circuit, corners, dc, small_signal};
use crate::document::{Document, PartKind};
use crate::netlist::{self, Netlist};

/// Evaluates boards that share one drawing: connectivity is computed once,
/// since a spread run changes values, never wires.
pub struct Board {
    netlist: Netlist,
    /// Add the midband stage and chain figures (Zin, Zout, Av).
    pub small_signal: bool,
    /// Add the chain's −3 dB frequencies from the full sweep.
    pub sweep: bool,
    /// Add each field-effect transistor's transconductance, `gm(Q)` (the
    /// editor's spread view; the command line's rows stay as they were).
    pub device_gm: bool,
}

impl Board {
    /// DC, midband figures and the sweep's corners.
    pub fn new(doc: &Document) -> Self {
        Board {
            netlist: netlist::connect(doc),
            small_signal: true,
            sweep: true,
            device_gm: false,
        }
    }
}

impl Evaluator for Board {
    fn evaluate(&self, doc: &Document) -> Result<Outcome, String> {
        let op = dc::solve(doc, &self.netlist).map_err(|e| e.to_string())?;
        let mut values = Vec::new();
        let mut missing = Vec::new();
        for (id, net) in self.netlist.nets.iter().enumerate() {
            // Fixed nets (ground, rails) do not spread; they would only add rows.
            let fixed = Some(id) == self.netlist.ground
                || net
                    .pins
                    .iter()
                    .any(|p| doc.parts[p.part].kind == PartKind::Rail);
            if !fixed && !net.pins.is_empty() {
                values.push((format!("V({})", net.name), op.net_voltages[id]));
            }
        }
        let mut all_active = true;
        for t in op.transistors() {
            values.push((format!("IC({})", t.designator), t.ic));
            values.push((format!("VCE({})", t.designator), t.vce));
            all_active &= t.region == dc::Region::ForwardActive;
        }
        for f in op.fets() {
            values.push((format!("ID({})", f.designator), f.drain_current));
            values.push((format!("VDS({})", f.designator), f.measured_vds()));
            if self.device_gm {
                values.push((format!("gm({})", f.designator), f.gm));
            }
            all_active &= f.region == dc::FetRegion::Saturation;
        }
        if self.small_signal {
            let c = circuit::build_unchecked(doc, &self.netlist).map_err(|e| e.to_string())?;
            let a = small_signal::analyse(doc, &self.netlist, &c, &op);
            for st in &a.midband.stages {
                let t = &st.transistor;
                let figures = [
                    ("Zin", st.input_impedance.exact),
                    ("Zout", st.output_impedance.exact),
                    ("Av", st.voltage_gain.exact),
                ];
                for (what, v) in figures {
                    if let Some(v) = v {
                        values.push((format!("{what}({t})"), v));
                    }
                }
            }
            let ch = &a.midband.chain;
            let chain = [
                ("Zin(chain)", ch.input_impedance),
                ("Zout(chain)", ch.output_impedance),
                ("Avs(chain)", ch.source_gain),
                ("Avs_dB(chain)", ch.source_gain_db),
            ];
            for (name, v) in chain {
                if let Some(v) = v {
                    values.push((name.to_string(), v));
                }
            }
            if self.sweep {
                // The corners wherever they lie: a board whose corner falls
                // past the sweep's ends still counts (issue 18, item 13).
                let r = ac::sweep(&a.small_signal, &a.chain, &a.midband, &doc.analysis);
                let (lo, hi) = corners::find(&a.small_signal, &a.chain, &r);
                for (name, c) in [("f_low", lo), ("f_high", hi)] {
                    match c {
                        Ok(f) => values.push((name.into(), f)),
                        Err(why) => missing.push((name.into(), why)),
                    }
                }
                if let Some(text) = &doc.analysis.loop_break {
                    // The phase margin at the file's break point (a bad
                    // point is the stability command's to report).
                    if let Some(pm) = phase_margin_at(doc, &self.netlist, &a.small_signal, text) {
                        values.push((format!("PM({text})"), pm));
                    }
                }
            }
        }
        Ok(Outcome {
            values,
            all_active,
            missing,
        })
    }
}

/// The phase margin, degrees, of the loop gain at `text` (`PART.PIN`) over
/// the project's sweep; None when the point is bad or |T| never falls through 1.
pub fn phase_margin_at(
    doc: &Document,
    nl: &Netlist,
    ss: &small_signal::SmallSignal,
    text: &str,
) -> Option<f64> {
    use crate::analysis::stability::at_pin;
    let a = &doc.analysis;
    let freqs = crate::analysis::linear::log_frequencies(
        a.frequency_start,
        a.frequency_stop,
        a.points_per_decade,
    );
    let at = at_pin::find(doc, nl, ss, text).ok()?;
    at_pin::loop_at(ss, at, &freqs).ok()?.1.phase_margin_deg
}
