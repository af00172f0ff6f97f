//! A capacitor: open at DC, a capacitance in the small-signal circuit, a
//! linear charge C·v in the time step.

use super::device_report::DeviceOperatingPoint;
use super::{At, Model};
use crate::analysis::dc::stamps::{voltage, Junction, Terminals};
use crate::analysis::dc::warnings::{v, warn, REVERSED_CAPACITOR};
use crate::analysis::dc::OperatingPoint;
use crate::analysis::linear::LinearKind;
use crate::analysis::mna::Stamp;
use crate::analysis::small_signal::Linearising;
use crate::analysis::transient::companion::{ChargeEval, Slot, SlotKind};
use crate::netlist::Finding;

pub struct Capacitor {
    pub capacitance: f64,
}

impl Model for Capacitor {
    fn warnings(
        &self,
        at: &At,
        op: &OperatingPoint,
        _report: Option<&DeviceOperatingPoint>,
        out: &mut Vec<Finding>,
    ) {
        let e = at.element;
        let d = e.designator.as_str();
        let volts = |n: usize| op.node_voltages[n];
        let across = volts(e.nodes[0]) - volts(e.nodes[1]);
        if e.polarised && across < -REVERSED_CAPACITOR {
            out.push(warn(
                d,
                format!(
                    "{d} is polarised but sits reversed ({} from its positive to its \
                     negative pin): turn it round",
                    v(across)
                ),
            ));
        }
        if let Some(max) = e.voltage_rating {
            if across.abs() > max {
                out.push(warn(
                    d,
                    format!(
                        "{d} has {} across it, above its voltage rating of {}",
                        v(across.abs()),
                        v(max)
                    ),
                ));
            }
        }
    }

    fn stamp_dc<S: Stamp<f64>>(&self, _at: &At, _s: &mut S, _j: Junction, _alpha: f64) {}

    fn terminals(&self, at: &At, _x: &[f64], _alpha: f64) -> Terminals {
        let n = &at.element.nodes;
        let mut t = Terminals::default();
        t.push(n[0], 0.0);
        t.push(n[1], 0.0);
        t
    }

    fn linearise(&self, at: &At, out: &mut Linearising) {
        let (p, a, b) = (Some(at.element.part), at.node(0), at.node(1));
        out.lc.add(p, a, b, LinearKind::Capacitor(self.capacitance));
    }

    fn slots(&self, at: &At, out: &mut Vec<Slot>) {
        let n = &at.element.nodes;
        out.push(Slot {
            element: at.index,
            kind: SlotKind::Capacitor(self.capacitance),
            a: n[0],
            b: n[1],
            c: 0,
        });
    }

    fn charge(&self, s: &Slot, _j: Junction, x: &[f64]) -> ChargeEval {
        let SlotKind::Capacitor(cap) = s.kind else {
            unreachable!("a capacitor's slot")
        };
        let v = voltage(x, s.a) - voltage(x, s.b);
        ChargeEval {
            q: cap * v,
            slope: [(s.a, s.b, cap), (0, 0, 0.0)],
            at: [v, 0.0],
        }
    }

    fn slot_pins(&self, _s: &Slot, i: f64, pins: &mut [f64]) {
        pins[0] += i;
        pins[1] -= i;
    }
}
