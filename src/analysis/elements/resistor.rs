//! A resistor: a conductance at DC and small-signal, thermal noise.

use super::device_report::DeviceOperatingPoint;
use super::{At, Model};
use crate::analysis::circuit::Element;
use crate::analysis::dc::stamps::{voltage, Junction, Terminals};
use crate::analysis::dc::warnings::{w, warn};
use crate::analysis::dc::OperatingPoint;
use crate::analysis::linear::LinearKind;
use crate::analysis::mna::{self, Stamp};
use crate::analysis::noise::build::Collect;
use crate::analysis::noise::NoiseSource;
use crate::analysis::small_signal::Linearising;
use crate::netlist::Finding;

pub struct Resistor {
    pub resistance: f64,
}

impl Model for Resistor {
    fn joins_pins_at_dc(&self) -> bool {
        true
    }
    fn warnings(
        &self,
        at: &At,
        op: &OperatingPoint,
        _report: Option<&DeviceOperatingPoint>,
        out: &mut Vec<Finding>,
    ) {
        let e = at.element;
        let d = e.designator.as_str();
        if let Some(max) = e.power_rating {
            let p = op.parts.get(e.part).map_or(0.0, |p| p.power);
            if p > max {
                out.push(warn(
                    d,
                    format!(
                        "{d} dissipates {}, above its power rating of {}: choose a \
                         larger resistor",
                        w(p),
                        w(max)
                    ),
                ));
            }
        }
    }

    fn stamp_dc<S: Stamp<f64>>(&self, at: &At, s: &mut S, _j: Junction, _alpha: f64) {
        let n = &at.element.nodes;
        mna::conductance(s, n[0], n[1], 1.0 / self.resistance)
    }

    fn terminals(&self, at: &At, x: &[f64], _alpha: f64) -> Terminals {
        let n = &at.element.nodes;
        let mut t = Terminals::default();
        let i = (voltage(x, n[0]) - voltage(x, n[1])) / self.resistance;
        t.push(n[0], i);
        t.push(n[1], -i);
        t
    }

    fn rounding_conductance(&self, _e: &Element, _x: &[f64]) -> f64 {
        1.0 / self.resistance
    }

    fn linearise(&self, at: &At, out: &mut Linearising) {
        let (p, a, b) = (Some(at.element.part), at.node(0), at.node(1));
        // A zero resistance is a short: a zero-volt source keeps it exact.
        if self.resistance > 0.0 {
            out.lc
                .add(p, a, b, LinearKind::Conductance(1.0 / self.resistance));
        } else {
            out.lc.add(p, a, b, LinearKind::VoltageSource);
        }
    }

    fn noise(&self, at: &At, out: &mut Collect) {
        let e = at.element;
        let (a, b) = (at.node(0), at.node(1));
        if self.resistance > 0.0 {
            let first = out.first(at.index);
            out.resistor_element[e.part] = Some((first, out.sources.len(), self.resistance, a, b));
            let s = NoiseSource::thermal(&e.designator, a, b, self.resistance, out.kelvin);
            out.sources.push(s);
        }
    }
}
