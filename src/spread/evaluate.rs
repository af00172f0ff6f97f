//! The shipped evaluator: one board's DC operating point (and, where the
//! small-signal analysis is available, its midband figures) as named quantities.

use super::{Evaluator, Outcome};
use crate::analysis::dc;
use crate::document::{Document, PartKind};
use crate::netlist::{self, Netlist};

/// Evaluates boards that share one drawing: connectivity is computed once,
/// since a spread run changes values, never wires.
pub struct Board {
    netlist: Netlist,
}

impl Board {
    pub fn new(doc: &Document) -> Self {
        Board {
            netlist: netlist::connect(doc),
        }
    }
}

impl Evaluator for Board {
    fn evaluate(&self, doc: &Document) -> Result<Outcome, String> {
        let op = dc::solve(doc, &self.netlist).map_err(|e| e.to_string())?;
        let mut values = Vec::new();
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
        for t in &op.transistors {
            values.push((format!("IC({})", t.designator), t.ic));
            values.push((format!("VCE({})", t.designator), t.vce));
            all_active &= t.region == dc::Region::ForwardActive;
        }
        Ok(Outcome { values, all_active })
    }
}
