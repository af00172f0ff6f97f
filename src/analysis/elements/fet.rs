//! A field-effect transistor (JFET or MOSFET, N or P; pins drain, gate,
//! source): the square-law channel with its gate junctions (JFET) or body
//! diode (MOSFET) from [`FetModel`]; the Newton companion from the exact
//! pin-current Jacobian, VGS/VDS step limiting, and the small-signal
//! gm·vgs, gds, junction conductances and Cgs/Cgd/Cds.
//!
//! The junction pair is (VGS, VDS) in channel sense (P-channel negated).

use super::device_report::DeviceOperatingPoint;
use super::{At, Model, ReportInputs};
use crate::analysis::circuit::Element;
use crate::analysis::dc::stamps::{junction_of, voltage, Junction, Terminals};
use crate::analysis::dc::warnings::warn;
use crate::analysis::dc::OperatingPoint;
use crate::analysis::devices::fet::{FetKind, FetModel};
use crate::analysis::elements::fet_report::FetRegion;
use crate::analysis::linear::LinearKind;
use crate::analysis::mna::{row, Stamp};
use crate::analysis::noise::build::Collect;
use crate::analysis::noise::{CurrentLaw, Mechanism, NoiseSource, TransistorNoise};
use crate::analysis::small_signal::{FetElements, FetSmallSignal, Linearising};
use crate::analysis::transient::clip::{Approach, Excursion};
use crate::analysis::transient::companion::{ChargeEval, Slot, SlotKind};
use crate::netlist::Finding;

/// Gate junction conductances at or below this (a 10¹⁸ Ω leak) stay out of
/// the small-signal circuit, S.
pub const NEGLIGIBLE_GATE_CONDUCTANCE: f64 = 1e-18;

pub struct Fet<'a> {
    pub model: &'a FetModel,
}

impl Fet<'_> {
    /// Pin voltages (drain, gate, source) relative to the source, part sense,
    /// from the channel-sense junction pair.
    fn pins_of(&self, j: Junction) -> [f64; 3] {
        let s = self.model.channel.sign();
        [s * j[1], s * j[0], 0.0]
    }
}

impl Model for Fet<'_> {
    fn nonlinear(&self) -> bool {
        true
    }
    fn transistor_off(&self) -> Option<(Junction, &'static str)> {
        Some(([self.model.threshold - 1.0, 0.0], "ID"))
    }
    fn start(&self) -> Junction {
        // Just past the threshold (a channel that conducts), VDS = 1 V.
        [self.model.threshold + 0.5, 1.0]
    }

    fn junction(&self, e: &Element, x: &[f64]) -> Junction {
        let s = self.model.channel.sign();
        let v = |k: usize| voltage(x, e.nodes[k]);
        [s * (v(1) - v(2)), s * (v(0) - v(2))]
    }

    fn limit(&self, old: Junction, new: Junction) -> (Junction, bool) {
        let ((a, b), hit) = self.model.limit_step((old[0], old[1]), (new[0], new[1]));
        ([a, b], hit)
    }

    fn stamp_dc<S: Stamp<f64>>(&self, at: &At, s: &mut S, j: Junction, _alpha: f64) {
        let n = &at.element.nodes;
        let v0 = self.pins_of(j);
        let (i0, jac) = self.model.pin_currents(v0[0], v0[1], v0[2]);
        // Pin current r ≈ i0[r] + Σc J[r][c]·(v[c] − v0[c]); A·x − b is the
        // current from the node into the element.
        for r in 0..3 {
            let Some(rr) = row(n[r]) else { continue };
            let mut rhs = -i0[r];
            for c in 0..3 {
                rhs += jac[r][c] * v0[c];
                if let Some(cc) = row(n[c]) {
                    s.add(rr, cc, jac[r][c]);
                }
            }
            s.add_rhs(rr, rhs);
        }
    }

    fn terminals(&self, at: &At, x: &[f64], _alpha: f64) -> Terminals {
        let n = &at.element.nodes;
        let v = |k: usize| voltage(x, n[k]);
        let (i, _) = self.model.pin_currents(v(0), v(1), v(2));
        let mut t = Terminals::default();
        for k in 0..3 {
            t.push(n[k], i[k]);
        }
        t
    }

    fn rounding_conductance(&self, e: &Element, x: &[f64]) -> f64 {
        let n = &e.nodes;
        let v = |k: usize| voltage(x, n[k]);
        let (_, jac) = self.model.pin_currents(v(0), v(1), v(2));
        jac.iter().flatten().map(|g| g.abs()).fold(0.0, f64::max)
    }

    fn linearise(&self, at: &At, out: &mut Linearising) {
        let (m, e) = (self.model, at.element);
        let p = Some(e.part);
        let (d, g, src) = (at.node(0), at.node(1), at.node(2));
        let sgn = m.channel.sign();
        let (vgs, vds) = (sgn * (out.v(g) - out.v(src)), sgn * (out.v(d) - out.v(src)));
        let c = m.channel(vgs, vds);
        // Channel: gm·vgs from drain to source, gds between them.
        let gm = out.lc.add(
            p,
            d,
            src,
            LinearKind::Transconductance {
                gm: c.did_dvgs,
                cp: g,
                cn: src,
            },
        );
        let gds = out.lc.add(p, d, src, LinearKind::Conductance(c.did_dvds));
        let (mut ggs, mut ggd) = (0.0, 0.0);
        match m.kind {
            FetKind::Jfet => {
                ggs = m.junction.evaluate(vgs).1;
                ggd = m.junction.evaluate(vgs - vds).1;
                // A reverse-biased gate junction's conductance (1e-30 S at
                // VGS = −1 V) is far below any board's leakage: left out, the
                // gate reads as open when a cut takes its drive away, instead
                // of a node held by nothing a solver can pivot on.
                for (other, gj) in [(src, ggs), (d, ggd)] {
                    if gj > NEGLIGIBLE_GATE_CONDUCTANCE {
                        out.lc.add(p, g, other, LinearKind::Conductance(gj));
                    }
                }
            }
            FetKind::Mosfet => {
                let gb = m.junction.evaluate(-vds).1;
                out.lc.add(p, src, d, LinearKind::Conductance(gb));
            }
        }
        let (cgs, cgd, cds) = m.capacitances(vgs, vds);
        for (a, b, cap) in [(g, src, cgs), (g, d, cgd), (d, src, cds)] {
            if cap > 0.0 {
                out.lc.add(p, a, b, LinearKind::DeviceCapacitance(cap));
            }
        }
        let top = out.op.fets().find(|f| f.part == e.part);
        out.fets.push(FetSmallSignal {
            designator: e.designator.clone(),
            part: e.part,
            kind: m.kind,
            channel: m.channel,
            region: top.map_or(FetRegion::CutOff, |t| t.region),
            drain_current: c.id,
            vgs,
            vds,
            threshold: m.threshold,
            triode_margin: top.map_or(vds - m.saturation_voltage(vgs), |t| t.triode_margin),
            gm: c.did_dvgs,
            gds: c.did_dvds,
            cgs,
            cgd,
            cds,
            g_gate_source: ggs,
            g_gate_drain: ggd,
            nodes: [d, g, src],
            elements: FetElements { gm, gds },
        });
    }

    /// Gate–source, gate–drain and drain–source charges (junction depletion
    /// charges for a JFET; fixed Cgs and Cds and the depletion Cgd for a
    /// MOSFET), each where its capacitance is above zero.
    fn slots(&self, at: &At, out: &mut Vec<Slot>) {
        let (m, n) = (self.model, &at.element.nodes);
        let (d, g, src) = (n[0], n[1], n[2]);
        for (kind, cap, a, b) in [
            (SlotKind::GateSource, m.gate_source_capacitance, g, src),
            (SlotKind::GateDrain, m.gate_drain_capacitance, g, d),
            (SlotKind::DrainSource, m.drain_source_capacitance, d, src),
        ] {
            if cap > 0.0 {
                out.push(Slot {
                    element: at.index,
                    kind,
                    a,
                    b,
                    c: 0,
                });
            }
        }
    }

    /// The slot's charge in part sense: q = s·q(channel voltages), whose
    /// slope against its own part-sense pair voltage is the capacitance.
    fn charge(&self, s: &Slot, j: Junction, _x: &[f64]) -> ChargeEval {
        let m = self.model;
        let sign = m.channel.sign();
        let (vgs, vds) = (j[0], j[1]);
        let (qgs, qgd, qds) = m.charges(vgs, vds);
        let (cgs, cgd, cds) = m.capacitances(vgs, vds);
        let (q, c, v) = match s.kind {
            SlotKind::GateSource => (qgs, cgs, vgs),
            SlotKind::GateDrain => (qgd, cgd, vgs - vds),
            _ => (qds, cds, vds),
        };
        ChargeEval {
            q: sign * q,
            slope: [(s.a, s.b, c), (0, 0, 0.0)],
            at: [sign * v, 0.0],
        }
    }

    fn slot_pins(&self, s: &Slot, i: f64, pins: &mut [f64]) {
        // Pins: drain 0, gate 1, source 2; the current flows a → b.
        let (a, b) = match s.kind {
            SlotKind::GateSource => (1, 2),
            SlotKind::GateDrain => (1, 0),
            _ => (0, 2),
        };
        pins[a] += i;
        pins[b] -= i;
    }

    /// Channel thermal noise 4·k·T·γ·gm (triode: the long-channel form, see
    /// [`FetModel::noise`]) between drain and source, its flicker part
    /// Kf·ID^Af/f as a corner frequency; JFET gate shot noise 2·q·IG
    /// across each gate junction.
    fn report(&self, at: &At, inp: &ReportInputs) -> Option<DeviceOperatingPoint> {
        Some(DeviceOperatingPoint::FieldEffect(
            super::fet_report::report_of(at.circuit, at.index, self.model, inp.x),
        ))
    }

    fn warnings(
        &self,
        _at: &At,
        _op: &OperatingPoint,
        report: Option<&DeviceOperatingPoint>,
        out: &mut Vec<Finding>,
    ) {
        if let Some(f) = report.and_then(DeviceOperatingPoint::as_field_effect) {
            out.extend(f.warnings.iter().map(|m| warn(&f.designator, m.clone())));
        }
    }

    fn excursions(
        &self,
        at: &At,
        states: &[Vec<f64>],
        out: &mut Vec<Excursion>,
        near: &mut Vec<Approach>,
    ) {
        fet_excursions(at.element, self.model, states, out, near);
    }

    fn noise(&self, at: &At, out: &mut Collect) {
        let (m, e) = (self.model, at.element);
        let (d, g, src) = (at.node(0), at.node(1), at.node(2));
        let sgn = m.channel.sign();
        let (vgs, vds) = (sgn * (out.v(g) - out.v(src)), sgn * (out.v(d) - out.v(src)));
        // Densities at 1 Hz: the flicker term there is the corner × white.
        let (thermal, flicker_1hz, _) = m.noise(vgs, vds, 1.0);
        if thermal > 0.0 {
            // The drain-current what-if scales this generator and gm, gds.
            if let Some(t) = out.ss.fet(e.part).filter(|t| t.gm > 0.0) {
                out.transistors.push(TransistorNoise {
                    designator: e.designator.clone(),
                    law: CurrentLaw::SquareLaw,
                    collector_current: t.drain_current.abs(),
                    base_current: 0.0,
                    gm: t.gm,
                    gpi: 0.0,
                    go: t.gds,
                    base_resistance: 0.0,
                    cpi_diffusion: 0.0,
                    cpi_depletion: 0.0,
                    pi_element: None,
                    cpi_element: None,
                    gm_element: t.elements.gm,
                    go_element: t.elements.gds,
                    collector_shot: out.sources.len(),
                    base_shot: None,
                });
            }
            out.sources.push(NoiseSource {
                designator: e.designator.clone(),
                mechanism: Mechanism::ChannelThermal,
                a: d,
                b: src,
                white: thermal,
                flicker_corner: flicker_1hz / thermal,
                is_source_resistance: false,
            });
        }
        if m.kind == FetKind::Jfet {
            let (igs, igd) = m.gate_currents(vgs, vds);
            for (b, i) in [(src, igs), (d, igd)] {
                out.sources.push(NoiseSource::shot(
                    &e.designator,
                    Mechanism::GateShot,
                    g,
                    b,
                    i,
                ));
            }
        }
    }
}

/// A FET's excursions (cut-off, the triode region) and its nearest
/// approaches: cut-off by its lowest drain current over the mean, the
/// triode edge by its smallest VDS − VDS(sat) over the mean (channel sense).
fn fet_excursions(
    e: &Element,
    m: &FetModel,
    states: &[Vec<f64>],
    out: &mut Vec<Excursion>,
    near: &mut Vec<Approach>,
) {
    use crate::analysis::devices::fet::ChannelRegion;
    let mut count = [0usize; 2];
    let (mut id_min, mut id_sum) = (f64::INFINITY, 0.0);
    let (mut margin_min, mut margin_sum) = (f64::INFINITY, 0.0);
    for x in states {
        let j = junction_of(e, x);
        let (vgs, vds) = (j[0], j[1]);
        match m.region(vgs, vds) {
            ChannelRegion::Triode => count[0] += 1,
            ChannelRegion::CutOff => count[1] += 1,
            ChannelRegion::Saturation => {}
        }
        let id = m.channel(vgs, vds).id;
        id_min = id_min.min(id);
        id_sum += id;
        let margin = vds - m.saturation_voltage(vgs);
        margin_min = margin_min.min(margin);
        margin_sum += margin;
    }
    let n = states.len().max(1) as f64;
    for (k, region) in [(0, "the triode region"), (1, "cut-off")] {
        if count[k] > 0 {
            out.push(Excursion {
                transistor: e.designator.clone(),
                region: region.to_string(),
                fraction: count[k] as f64 / n,
            });
        }
    }
    let (id_mean, margin_mean) = (id_sum / n, margin_sum / n);
    if id_mean > 0.0 {
        near.push(Approach {
            transistor: e.designator.clone(),
            region: "cut-off".to_string(),
            remaining: (id_min / id_mean).max(0.0),
        });
    }
    if margin_mean > 0.0 {
        near.push(Approach {
            transistor: e.designator.clone(),
            region: "the triode edge".to_string(),
            remaining: (margin_min / margin_mean).max(0.0),
        });
    }
}
