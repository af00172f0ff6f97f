//! A voltage source (rail, DC source, the signal source): a branch holding
//! its DC value; in the small-signal circuit a source (a short for the
//! analyses that do not drive it); the signal source for the noise report.

use super::inductor::branch_terminals;
use super::{At, Model};
use crate::analysis::dc::stamps::{Junction, Terminals};
use crate::analysis::linear::LinearKind;
use crate::analysis::mna::{self, Stamp};
use crate::analysis::noise::build::Collect;
use crate::analysis::noise::SignalSource;
use crate::analysis::small_signal::Linearising;
use crate::presets::keys;

pub struct VoltageSource {
    pub dc: f64,
    pub ac: f64,
    pub is_signal: bool,
}

impl Model for VoltageSource {
    fn joins_pins_at_dc(&self) -> bool {
        true
    }
    fn is_voltage_source(&self) -> bool {
        true
    }
    fn stamp_dc<S: Stamp<f64>>(&self, at: &At, s: &mut S, _j: Junction, alpha: f64) {
        let n = &at.element.nodes;
        mna::voltage_branch(s, n[0], n[1], at.branch_row(), alpha * self.dc, 0.0);
    }

    fn terminals(&self, at: &At, x: &[f64], _alpha: f64) -> Terminals {
        branch_terminals(at, x)
    }

    fn branch_voltage(&self, alpha: f64) -> f64 {
        alpha * self.dc
    }

    fn linearise(&self, at: &At, out: &mut Linearising) {
        let e = at.element;
        let k = out.lc.add(
            Some(e.part),
            at.node(0),
            at.node(1),
            LinearKind::VoltageSource,
        );
        out.source_of_part[e.part] = Some(k);
        if self.is_signal {
            out.signal = Some(k);
        } else {
            out.supplies.push((e.designator.clone(), k));
        }
    }

    fn noise(&self, at: &At, out: &mut Collect) {
        let e = at.element;
        let is_the_signal = self.is_signal
            && out.wanted_signal.is_none_or(|d| d == e.designator)
            && out.signal.is_none();
        if is_the_signal {
            let frequency = out.doc.parts[e.part]
                .parameter(keys::FREQUENCY)
                .filter(|f| f.is_finite() && *f > 0.0)
                .unwrap_or(1e3);
            out.signal = Some(SignalSource {
                designator: e.designator.clone(),
                element: out.first(at.index),
                amplitude: self.ac.abs(),
                frequency,
                nodes: (at.node(0), at.node(1)),
            });
        }
    }
}
