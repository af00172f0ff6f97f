//! A bipolar transistor (Gummel–Poon subset, `devices::bjt`): the
//! linearised transport and base currents behind the base resistance at DC
//! (with the 1/qb step guard), the hybrid-π model in the small-signal
//! circuit, the base–emitter and base–collector charges in the time step,
//! and its collector shot, base shot (and flicker) and base-resistance
//! thermal noise.

use super::device_report::DeviceOperatingPoint;
use super::{At, Model, ReportInputs};
use crate::analysis::circuit::{Element, Node};
use crate::analysis::dc::stamps::{junction_of, voltage, Junction, Terminals};
use crate::analysis::dc::{region_of, OperatingPoint, Region, TransistorOperatingPoint};
use crate::analysis::devices::bjt::BjtModel;
use crate::analysis::devices::charge::bjt_charges;
use crate::analysis::linear::LinearKind;
use crate::analysis::mna::{self, Stamp};
use crate::analysis::noise::build::Collect;
use crate::analysis::noise::{CurrentLaw, Mechanism, NoiseSource, TransistorNoise};
use crate::analysis::small_signal::{Linearising, TransistorElements, TransistorSmallSignal};
use crate::analysis::transient::clip::{Approach, Excursion};
use crate::analysis::transient::companion::{ChargeEval, Slot, SlotKind};
use crate::analysis::two_port::{TransistorModels, YParameters};
use crate::netlist::Finding;
use crate::presets::{effective_parameters, keys};

pub struct Bjt<'a> {
    pub model: &'a BjtModel,
    /// The node behind the base resistance (== the base pin's node when
    /// rb = 0).
    pub internal_base: Node,
}

impl Model for Bjt<'_> {
    fn nonlinear(&self) -> bool {
        true
    }
    fn transistor_off(&self) -> Option<(Junction, &'static str)> {
        Some(([0.0, 0.0], "IC"))
    }
    fn one_point(&self, e: &Element) -> Option<(usize, usize)> {
        Some((e.nodes[1], self.internal_base))
    }
    fn start(&self) -> Junction {
        [self.model.critical_voltages().0, 0.0]
    }

    fn junction(&self, e: &Element, x: &[f64]) -> Junction {
        let s = self.model.polarity.sign();
        let vb = voltage(x, self.internal_base);
        [
            s * (vb - voltage(x, e.nodes[2])),
            s * (vb - voltage(x, e.nodes[0])),
        ]
    }

    fn limit(&self, old: Junction, new: Junction) -> (Junction, bool) {
        let ((a, b), hit) = self.model.guard_step((old[0], old[1]), (new[0], new[1]));
        ([a, b], hit)
    }

    fn stamp_dc<S: Stamp<f64>>(&self, at: &At, s: &mut S, j: Junction, _alpha: f64) {
        let (model, n) = (self.model, &at.element.nodes);
        let (c_, b, em, bi) = (n[0], n[1], n[2], self.internal_base);
        if bi != b {
            mna::conductance(s, b, bi, 1.0 / model.base_resistance);
        }
        let sign = model.polarity.sign();
        let ev = model.evaluate(j[0], j[1]);
        // Pin current into the collector, linearised (s² = 1):
        // IC = s·(ic0 − gbe·vbe0 − gbc·vbc0) + gbe·(v_bi − v_e) + gbc·(v_bi − v_c).
        mna::transconductance(s, c_, em, bi, em, ev.dic_dvbe);
        mna::transconductance(s, c_, em, bi, c_, ev.dic_dvbc);
        let ic0 = sign * (ev.ic - ev.dic_dvbe * j[0] - ev.dic_dvbc * j[1]);
        mna::current(s, c_, em, ic0);
        // Base current from the internal base to the emitter, likewise.
        mna::transconductance(s, bi, em, bi, em, ev.dib_dvbe);
        mna::transconductance(s, bi, em, bi, c_, ev.dib_dvbc);
        let ib0 = sign * (ev.ib - ev.dib_dvbe * j[0] - ev.dib_dvbc * j[1]);
        mna::current(s, bi, em, ib0);
    }

    fn terminals(&self, at: &At, x: &[f64], _alpha: f64) -> Terminals {
        let (model, e) = (self.model, at.element);
        let (n, ib_node) = (&e.nodes, self.internal_base);
        let mut t = Terminals::default();
        let j = self.junction(e, x);
        let ev = model.evaluate(j[0], j[1]);
        let sign = model.polarity.sign();
        let (ic, ib) = (sign * ev.ic, sign * ev.ib);
        if ib_node != n[1] {
            let irb = (voltage(x, n[1]) - voltage(x, ib_node)) / model.base_resistance;
            t.push(n[0], ic);
            t.push(n[1], irb);
            t.push(n[2], -(ic + ib));
            t.push(ib_node, ib);
            t.push(ib_node, -irb);
        } else {
            t.push(n[0], ic);
            t.push(n[1], ib);
            t.push(n[2], -(ic + ib));
        }
        t
    }

    fn rounding_conductance(&self, e: &Element, x: &[f64]) -> f64 {
        let model = self.model;
        let j = self.junction(e, x);
        let ev = model.evaluate(j[0], j[1]);
        ev.dic_dvbe.abs()
            + ev.dic_dvbc.abs()
            + ev.dib_dvbe.abs()
            + ev.dib_dvbc.abs()
            + if model.base_resistance > 0.0 {
                1.0 / model.base_resistance
            } else {
                0.0
            }
    }

    fn linearise(&self, at: &At, out: &mut Linearising) {
        let (model, e) = (self.model, at.element);
        let p = Some(e.part);
        let (c, bp, em) = (at.node(0), at.node(1), at.node(2));
        let bi = self.internal_base;
        let top = out.op.transistors().find(|t| t.part == e.part);
        let (vbe, vbc) = top
            .map(|t| (t.vbe_intrinsic, t.vbc_intrinsic))
            .unwrap_or((0.0, 0.0));
        let ev = model.evaluate(vbe, vbc);
        let y = YParameters::from_junction_derivatives(
            ev.dib_dvbe,
            ev.dib_dvbc,
            ev.dic_dvbe,
            ev.dic_dvbc,
        );
        let gm = y.y21 - y.y12;
        let (c_pi, c_mu) = model.capacitances(vbe, vbc, gm);
        let models = TransistorModels::new(y, c_pi, c_mu, model.base_resistance);
        let hp = models.hybrid_pi;
        let lc = &mut out.lc;
        // The incremental model of a PNP has the same form and signs as an
        // NPN's: both currents and voltages flip, so their ratios do not.
        let base_resistance = (bi != bp && model.base_resistance > 0.0).then(|| {
            lc.add(
                p,
                bp,
                bi,
                LinearKind::Conductance(1.0 / model.base_resistance),
            )
        });
        let g_pi = lc.add(p, bi, em, LinearKind::Conductance(hp.g_pi));
        let g_mu = (hp.g_mu != 0.0).then(|| lc.add(p, bi, c, LinearKind::Conductance(hp.g_mu)));
        let go = lc.add(p, c, em, LinearKind::Conductance(hp.go));
        let gm = lc.add(
            p,
            c,
            em,
            LinearKind::Transconductance {
                gm: hp.gm,
                cp: bi,
                cn: em,
            },
        );
        let c_pi = (c_pi > 0.0).then(|| lc.add(p, bi, em, LinearKind::DeviceCapacitance(c_pi)));
        let c_mu = (c_mu > 0.0).then(|| lc.add(p, bi, c, LinearKind::DeviceCapacitance(c_mu)));
        out.transistors.push(TransistorSmallSignal {
            designator: e.designator.clone(),
            part: e.part,
            region: top.map_or(Region::CutOff, |t| t.region),
            collector_current: ev.ic,
            collector_emitter_voltage: vbe - vbc,
            saturation_margin: top.map_or(0.0, |t| t.saturation_margin),
            models,
            nodes: [c, bp, em, bi],
            elements: TransistorElements {
                base_resistance,
                g_pi,
                g_mu,
                go,
                gm,
                c_pi,
                c_mu,
            },
        });
    }

    fn slots(&self, at: &At, out: &mut Vec<Slot>) {
        let (model, n) = (self.model, &at.element.nodes);
        let mut push = |kind, a, b, third| {
            out.push(Slot {
                element: at.index,
                kind,
                a,
                b,
                c: third,
            })
        };
        if model.emitter_capacitance > 0.0 || model.forward_transit_time > 0.0 {
            push(SlotKind::BaseEmitter, self.internal_base, n[2], n[0]);
        }
        if model.collector_capacitance > 0.0 {
            push(SlotKind::BaseCollector, self.internal_base, n[0], 0);
        }
    }

    fn charge(&self, s: &Slot, j: Junction, _x: &[f64]) -> ChargeEval {
        let sign = self.model.polarity.sign();
        let q = bjt_charges(self.model, j[0], j[1]);
        if s.kind == SlotKind::BaseEmitter {
            ChargeEval {
                q: sign * q.qbe,
                // (bi − e) and (bi − c).
                slope: [(s.a, s.b, q.dqbe_dvbe), (s.a, s.c, q.dqbe_dvbc)],
                at: [sign * j[0], sign * j[1]],
            }
        } else {
            ChargeEval {
                q: sign * q.qbc,
                slope: [(s.a, s.b, q.dqbc_dvbc), (0, 0, 0.0)],
                at: [sign * j[1], 0.0],
            }
        }
    }

    fn slot_pins(&self, s: &Slot, i: f64, pins: &mut [f64]) {
        if self.model.base_resistance <= 0.0 {
            pins[1] += i;
        }
        match s.kind {
            SlotKind::BaseEmitter => pins[2] -= i,
            SlotKind::BaseCollector => pins[0] -= i,
            _ => {}
        }
    }

    fn report(&self, at: &At, inp: &ReportInputs) -> Option<DeviceOperatingPoint> {
        let (e, x, model) = (at.element, inp.x, self.model);
        let j = self.junction(e, x);
        let v = |n| voltage(x, n);
        let (vc, vb, ve) = (v(e.nodes[0]), v(e.nodes[1]), v(e.nodes[2]));
        let p = inp.pin_currents;
        let (ic, ib, ie) = (p[0], p[1], p[2]);
        let von_be = model.on_voltage_base_emitter();
        let von_bc = model.on_voltage_base_collector();
        let hfe = ic / ib;
        let junction_celsius = model
            .ratings
            .thermal_resistance
            .map(|th| inp.ambient_celsius + inp.power * th);
        Some(DeviceOperatingPoint::Bipolar(TransistorOperatingPoint {
            part: e.part,
            element: at.index,
            designator: e.designator.clone(),
            polarity: model.polarity,
            ic,
            ib,
            ie,
            vbe: vb - ve,
            vce: vc - ve,
            vcb: vc - vb,
            vbe_intrinsic: j[0],
            vbc_intrinsic: j[1],
            region: region_of(j[0] > von_be, j[1] > von_bc),
            dc_current_gain: if hfe.is_finite() { hfe } else { 0.0 },
            saturation_margin: von_bc - j[1],
            cutoff_margin: j[0] - von_be,
            beta_sensitivity: inp.beta_sensitivity,
            power: inp.power,
            forward_beta: model.forward_beta,
            junction_celsius,
        }))
    }

    fn warnings(
        &self,
        at: &At,
        _op: &OperatingPoint,
        report: Option<&DeviceOperatingPoint>,
        out: &mut Vec<Finding>,
    ) {
        if let Some(t) = report.and_then(DeviceOperatingPoint::as_bipolar) {
            super::bjt_warnings::warnings(self.model, at, t, out);
        }
    }

    fn excursions(
        &self,
        at: &At,
        states: &[Vec<f64>],
        out: &mut Vec<Excursion>,
        near: &mut Vec<Approach>,
    ) {
        let (e, model) = (at.element, self.model);
        let (von_be, von_bc) = (
            model.on_voltage_base_emitter(),
            model.on_voltage_base_collector(),
        );
        let mut count = [0usize; 4];
        let (mut ic_min, mut ic_sum) = (f64::INFINITY, 0.0);
        let (mut vbc_max, mut vbc_sum) = (f64::NEG_INFINITY, 0.0);
        for x in states {
            let j = junction_of(e, x);
            let r = region_of(j[0] >= von_be, j[1] >= von_bc);
            let k = match r {
                Region::ForwardActive => 0,
                Region::Saturation => 1,
                Region::CutOff => 2,
                Region::ReverseActive => 3,
            };
            count[k] += 1;
            let ic = model.evaluate(j[0], j[1]).ic;
            ic_min = ic_min.min(ic);
            ic_sum += ic;
            vbc_max = vbc_max.max(j[1]);
            vbc_sum += j[1];
        }
        let n = states.len().max(1) as f64;
        for (k, r) in [
            (1, Region::Saturation),
            (2, Region::CutOff),
            (3, Region::ReverseActive),
        ] {
            if count[k] > 0 {
                out.push(Excursion {
                    transistor: e.designator.clone(),
                    region: r.words().to_string(),
                    fraction: count[k] as f64 / n,
                });
            }
        }
        let (ic_mean, vbc_mean) = (ic_sum / n, vbc_sum / n);
        if ic_mean > 0.0 {
            near.push(Approach {
                transistor: e.designator.clone(),
                region: Region::CutOff.words().to_string(),
                remaining: (ic_min / ic_mean).max(0.0),
            });
        }
        if von_bc > vbc_mean {
            near.push(Approach {
                transistor: e.designator.clone(),
                region: Region::Saturation.words().to_string(),
                remaining: ((von_bc - vbc_max) / (von_bc - vbc_mean)).max(0.0),
            });
        }
    }

    fn noise(&self, at: &At, out: &mut Collect) {
        let (model, e) = (self.model, at.element);
        let top = out
            .op
            .transistors()
            .find(|t| t.part == e.part)
            .expect("checked before collecting");
        let t = out.ss.transistor(e.part).expect("linearised");
        let hp = &t.models.hybrid_pi;
        let (c, b, em, bi) = (at.node(0), at.node(1), at.node(2), self.internal_base);
        let rb = model.base_resistance;
        let designator = &e.designator;
        if rb > 0.0 && bi != b {
            let mut s = NoiseSource::thermal(designator, b, bi, rb, out.kelvin);
            s.mechanism = Mechanism::BaseResistance;
            out.sources.push(s);
        }
        let collector_shot = out.sources.len();
        let s = NoiseSource::shot(designator, Mechanism::CollectorShot, c, em, top.ic);
        out.sources.push(s);
        let base_shot = out.sources.len();
        let mut s = NoiseSource::shot(designator, Mechanism::BaseShot, bi, em, top.ib);
        s.flicker_corner = effective_parameters(&out.doc.parts[e.part])
            .get(keys::FLICKER_CORNER_FREQUENCY)
            .copied()
            .filter(|f| f.is_finite() && *f > 0.0)
            .unwrap_or(0.0);
        out.sources.push(s);
        let diffusion = model.forward_transit_time * hp.gm;
        out.transistors.push(TransistorNoise {
            designator: designator.clone(),
            law: CurrentLaw::Bipolar,
            collector_current: top.ic.abs(),
            base_current: top.ib.abs(),
            gm: hp.gm,
            gpi: hp.g_pi,
            go: hp.go,
            base_resistance: rb,
            cpi_diffusion: diffusion,
            cpi_depletion: hp.c_pi - diffusion,
            pi_element: Some(t.elements.g_pi),
            cpi_element: t.elements.c_pi,
            gm_element: t.elements.gm,
            go_element: t.elements.go,
            collector_shot,
            base_shot: Some(base_shot),
        });
    }
}
