//! An inductor: a zero-volt branch at DC, an inductance in the
//! small-signal circuit, a flux L·i in its branch equation in the time step.

use super::{At, Model};
use crate::analysis::dc::stamps::{Junction, Terminals};
use crate::analysis::linear::LinearKind;
use crate::analysis::mna::{self, Stamp};
use crate::analysis::small_signal::Linearising;
use crate::analysis::transient::companion::{ChargeEval, Slot, SlotKind};

pub struct Inductor {
    pub inductance: f64,
}

/// Terminal currents of an element whose current is its branch unknown.
pub(super) fn branch_terminals(at: &At, x: &[f64]) -> Terminals {
    let n = &at.element.nodes;
    let mut t = Terminals::default();
    let j = x[at.branch_row()];
    t.push(n[0], j);
    if n.len() > 1 {
        t.push(n[1], -j);
    }
    t
}

impl Model for Inductor {
    fn joins_pins_at_dc(&self) -> bool {
        true
    }
    fn stamp_dc<S: Stamp<f64>>(&self, at: &At, s: &mut S, _j: Junction, _alpha: f64) {
        let n = &at.element.nodes;
        mna::voltage_branch(s, n[0], n[1], at.branch_row(), 0.0, 0.0);
    }

    fn terminals(&self, at: &At, x: &[f64], _alpha: f64) -> Terminals {
        branch_terminals(at, x)
    }

    fn linearise(&self, at: &At, out: &mut Linearising) {
        let (p, a, b) = (Some(at.element.part), at.node(0), at.node(1));
        out.lc.add(p, a, b, LinearKind::Inductor(self.inductance));
    }

    fn slots(&self, at: &At, out: &mut Vec<Slot>) {
        let n = &at.element.nodes;
        out.push(Slot {
            element: at.index,
            kind: SlotKind::Flux(self.inductance, at.branch_row()),
            a: n[0],
            b: n[1],
            c: 0,
        });
    }

    fn charge(&self, s: &Slot, _j: Junction, x: &[f64]) -> ChargeEval {
        let SlotKind::Flux(l, row) = s.kind else {
            unreachable!("an inductor's slot")
        };
        ChargeEval {
            q: l * x[row],
            slope: [(0, 0, 0.0); 2],
            at: [0.0; 2],
        }
    }
}
