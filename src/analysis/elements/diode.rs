//! A diode: the Shockley junction (with its Newton step limit) behind an
//! optional series resistance; dI/dV and the junction plus diffusion
//! capacitance in the small-signal circuit; the junction charge in the time
//! step; shot noise of its current and thermal noise of the resistance.

use super::device_report::DeviceOperatingPoint;
use super::{At, Model, ReportInputs};
use crate::analysis::circuit::Element;
use crate::analysis::dc::stamps::{voltage, Junction, Terminals};
use crate::analysis::dc::warnings::{a, v, w, warn};
use crate::analysis::dc::{DiodeOperatingPoint, DiodeState, OperatingPoint};
use crate::analysis::devices::bjt::depletion_capacitance;
use crate::analysis::devices::charge::diode_charge;
use crate::analysis::devices::diode::DiodeModel;
use crate::analysis::linear::LinearKind;
use crate::analysis::mna::{self, Stamp};
use crate::analysis::noise::build::Collect;
use crate::analysis::noise::{Mechanism, NoiseSource};
use crate::analysis::small_signal::{DiodeSmallSignal, Linearising};
use crate::analysis::transient::companion::{ChargeEval, Slot, SlotKind};
use crate::netlist::Finding;

pub struct Diode<'a> {
    pub model: &'a DiodeModel,
}

impl Diode<'_> {
    /// The node the junction hangs from: the internal anode behind a series
    /// resistance, else the anode pin.
    fn junction_node(&self, e: &Element) -> usize {
        if self.model.series_resistance > 0.0 {
            e.internal_nodes[0]
        } else {
            e.nodes[0]
        }
    }
}

impl Model for Diode<'_> {
    fn nonlinear(&self) -> bool {
        true
    }
    fn joins_pins_at_dc(&self) -> bool {
        true
    }
    fn junction(&self, e: &Element, x: &[f64]) -> Junction {
        let a = self.junction_node(e);
        [voltage(x, a) - voltage(x, e.nodes[1]), 0.0]
    }

    fn limit(&self, old: Junction, new: Junction) -> (Junction, bool) {
        let (a, hit) = self.model.limit_step(old[0], new[0]);
        ([a, 0.0], hit)
    }

    fn stamp_dc<S: Stamp<f64>>(&self, at: &At, s: &mut S, j: Junction, _alpha: f64) {
        let (d, n) = (self.model, &at.element.nodes);
        let a = if d.series_resistance > 0.0 {
            let ai = at.element.internal_nodes[0];
            mna::conductance(s, n[0], ai, 1.0 / d.series_resistance);
            ai
        } else {
            n[0]
        };
        let (i, g) = d.evaluate(j[0]);
        mna::conductance(s, a, n[1], g);
        mna::current(s, a, n[1], i - g * j[0]);
    }

    fn terminals(&self, at: &At, x: &[f64], _alpha: f64) -> Terminals {
        let (d, e) = (self.model, at.element);
        let n = &e.nodes;
        let mut t = Terminals::default();
        let jv = self.junction(e, x)[0];
        let (i, _) = d.evaluate(jv);
        if d.series_resistance > 0.0 {
            let ai = e.internal_nodes[0];
            let irs = (voltage(x, n[0]) - voltage(x, ai)) / d.series_resistance;
            t.push(n[0], irs);
            t.push(n[1], -i);
            t.push(ai, i);
            t.push(ai, -irs);
        } else {
            t.push(n[0], i);
            t.push(n[1], -i);
        }
        t
    }

    fn rounding_conductance(&self, e: &Element, x: &[f64]) -> f64 {
        let d = self.model;
        let (_, g) = d.evaluate(self.junction(e, x)[0]);
        g + if d.series_resistance > 0.0 {
            1.0 / d.series_resistance
        } else {
            0.0
        }
    }

    fn linearise(&self, at: &At, out: &mut Linearising) {
        let (model, e) = (self.model, at.element);
        let (p, a, b) = (Some(e.part), at.node(0), at.node(1));
        let junction = e.internal_nodes.first().copied().unwrap_or(a);
        if model.series_resistance > 0.0 && junction != a {
            out.lc.add(
                p,
                a,
                junction,
                LinearKind::Conductance(1.0 / model.series_resistance),
            );
        }
        let vj = out.v(junction) - out.v(b);
        let (_, g) = model.evaluate(vj);
        let c = depletion_capacitance(
            model.junction_capacitance,
            vj,
            model.junction_potential,
            model.grading,
        ) + model.transit_time * g;
        out.lc.add(p, junction, b, LinearKind::Conductance(g));
        if c > 0.0 {
            out.lc.add(p, junction, b, LinearKind::DeviceCapacitance(c));
        }
        out.diodes.push(DiodeSmallSignal {
            designator: e.designator.clone(),
            conductance: g,
            capacitance: c,
            series_resistance: model.series_resistance,
        });
    }

    fn slots(&self, at: &At, out: &mut Vec<Slot>) {
        let d = self.model;
        if d.junction_capacitance > 0.0 || d.transit_time > 0.0 {
            out.push(Slot {
                element: at.index,
                kind: SlotKind::Diode,
                a: self.junction_node(at.element),
                b: at.element.nodes[1],
                c: 0,
            });
        }
    }

    fn charge(&self, s: &Slot, j: Junction, _x: &[f64]) -> ChargeEval {
        let (q, dq) = diode_charge(self.model, j[0]);
        ChargeEval {
            q,
            slope: [(s.a, s.b, dq), (0, 0, 0.0)],
            at: [j[0], 0.0],
        }
    }

    fn slot_pins(&self, _s: &Slot, i: f64, pins: &mut [f64]) {
        if self.model.series_resistance <= 0.0 {
            pins[0] += i;
        }
        pins[1] -= i;
    }

    fn report(&self, at: &At, inp: &ReportInputs) -> Option<DeviceOperatingPoint> {
        let (e, x) = (at.element, inp.x);
        let j = self.junction(e, x)[0];
        let va = voltage(x, e.nodes[0]);
        let vk = voltage(x, e.nodes[1]);
        let state = if j > self.model.on_voltage() {
            DiodeState::Forward
        } else if j < -0.1 {
            DiodeState::Reverse
        } else {
            DiodeState::Off
        };
        Some(DeviceOperatingPoint::Diode(DiodeOperatingPoint {
            part: e.part,
            element: at.index,
            designator: e.designator.clone(),
            current: inp.pin_currents[0],
            voltage: va - vk,
            state,
            power: inp.power,
        }))
    }

    fn warnings(
        &self,
        _at: &At,
        _op: &OperatingPoint,
        report: Option<&DeviceOperatingPoint>,
        out: &mut Vec<Finding>,
    ) {
        let Some(dop) = report.and_then(DeviceOperatingPoint::as_diode) else {
            return;
        };
        let m = self.model;
        let d = dop.designator.as_str();
        // Past `EXP_LIMIT`·n·VT the diode law is continued as a straight
        // line (for Newton's sake): a solution there is not a real diode's.
        let n_vt = m.emission_coefficient * m.thermal_voltage;
        let junction = dop.voltage - dop.current * m.series_resistance;
        if junction > crate::analysis::devices::EXP_LIMIT * n_vt {
            out.push(warn(
                d,
                format!(
                    "{d} is held at {} across its junction, past the {} where the diode law \
                     ends: nothing in the circuit limits its current ({} is the model's straight-line \
                     continuation, not a real diode's); add resistance in series",
                    v(junction),
                    v(crate::analysis::devices::EXP_LIMIT * n_vt),
                    a(dop.current)
                ),
            ));
        }
        if let Some(max) = m.ratings.max_forward_current {
            if dop.current > max {
                out.push(warn(
                    d,
                    format!(
                        "{d} carries {}, above its rating of {}",
                        a(dop.current),
                        a(max)
                    ),
                ));
            }
        }
        if let Some(max) = m.ratings.max_reverse_voltage {
            if -dop.voltage > max {
                out.push(warn(
                    d,
                    format!(
                        "{d} blocks {}, above its reverse rating of {}",
                        v(-dop.voltage),
                        v(max)
                    ),
                ));
            }
        }
        if let Some(max) = m.ratings.max_power {
            if dop.power > max {
                out.push(warn(
                    d,
                    format!(
                        "{d} dissipates {}, above its rating of {}",
                        w(dop.power),
                        w(max)
                    ),
                ));
            }
        }
    }

    fn noise(&self, at: &At, out: &mut Collect) {
        let (model, e) = (self.model, at.element);
        let (anode, cathode) = (at.node(0), at.node(1));
        let junction = e.internal_nodes.first().copied().unwrap_or(anode);
        if junction != anode {
            out.sources.push(NoiseSource::thermal(
                &e.designator,
                anode,
                junction,
                model.series_resistance,
                out.kelvin,
            ));
        }
        let (i, _) = model.evaluate(out.v(junction) - out.v(cathode));
        out.sources.push(NoiseSource::shot(
            &e.designator,
            Mechanism::DiodeShot,
            junction,
            cathode,
            i,
        ));
    }
}
