//! Bipolar transistor: Gummel–Poon transport model, a subset (H. K. Gummel and H. C. Poon, Bell System Technical
//! Journal 49, 1970; J. M. Early, Proc. IRE 1952).
//!
//! NPN sense, VBE = VB − VE and VBC = VB − VC at the internal base:
//!
//! ```text
//! 1/qb = 1 − VBC/VA − VBE/VB
//! ICT  = Is·(exp(VBE/(nF·VT)) − exp(VBC/(nR·VT))) / qb
//! IBE  = (Is/βF)·(exp(VBE/(nF·VT)) − 1)
//! IBC  = (Is/βR)·(exp(VBC/(nR·VT)) − 1)
//! IC = ICT − IBC,  IB = IBE + IBC,  IE = −(IC + IB)   (currents into the pins)
//! ```
//! A PNP uses the same equations with every terminal voltage and current
//! negated; callers do that (see `dc`).
//!
//! High injection (the knee currents Ik, Ikr of Gummel and Poon, 1970), only
//! when a knee current is given:
//!
//! ```text
//! qb = (q1/2)·(1 + √(1 + 4·q2)),  q1 = 1/(1 − VBC/VA − VBE/VB),
//! q2 = (Is/Ik)·(exp(VBE/(nF·VT)) − 1) + (Is/Ikr)·(exp(VBC/(nR·VT)) − 1)
//! ```
//! and ICT is divided by this qb. With both knees infinite (absent) q2 = 0,
//! qb = q1 and [`BjtModel::evaluate`] takes the subset's code path unchanged.

use super::{critical_voltage, kelvin, limit_junction, limited_exp};
use crate::analysis::thermal_voltage;
use crate::presets::keys;
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Polarity {
    Npn,
    Pnp,
}

impl Polarity {
    /// +1 for NPN, −1 for PNP: multiply terminal voltages and currents by
    /// this to get the NPN-sense values the equations use.
    pub fn sign(self) -> f64 {
        match self {
            Polarity::Npn => 1.0,
            Polarity::Pnp => -1.0,
        }
    }
}

/// Ratings a designer checks; `None` where the part does not say.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct BjtRatings {
    pub max_collector_emitter_voltage: Option<f64>,
    pub max_collector_base_voltage: Option<f64>,
    pub max_emitter_base_voltage: Option<f64>,
    pub max_collector_current: Option<f64>,
    pub max_power: Option<f64>,
    /// Junction-to-ambient thermal resistance θJA, K/W.
    pub thermal_resistance: Option<f64>,
    pub max_junction_celsius: Option<f64>,
}

/// Model parameters at the analysis temperature.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BjtModel {
    pub polarity: Polarity,
    pub saturation_current: f64,
    pub forward_beta: f64,
    pub reverse_beta: f64,
    pub forward_early_voltage: f64,
    pub reverse_early_voltage: f64,
    pub forward_emission: f64,
    pub reverse_emission: f64,
    pub base_resistance: f64,
    pub emitter_capacitance: f64,
    pub collector_capacitance: f64,
    pub emitter_potential: f64,
    pub collector_potential: f64,
    pub emitter_grading: f64,
    pub collector_grading: f64,
    pub forward_transit_time: f64,
    /// Forward knee current Ik, A: where high injection starts to lower βF
    /// (infinite: no roll-off, the subset's equations).
    pub forward_knee_current: f64,
    /// Reverse knee current Ikr, A (infinite: none).
    pub reverse_knee_current: f64,
    pub thermal_voltage: f64,
    pub ratings: BjtRatings,
    /// Analysis temperature, K.
    pub kelvin: f64,
    /// βF as given, at the parameter temperature (before the temperature law).
    pub nominal_forward_beta: f64,
}

/// Currents into the collector and base and their derivatives, NPN sense.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BjtEval {
    pub ic: f64,
    pub ib: f64,
    pub dic_dvbe: f64,
    pub dic_dvbc: f64,
    pub dib_dvbe: f64,
    pub dib_dvbc: f64,
    /// The base–emitter diffusion part IBE (needed for the βF sensitivity).
    pub ibe: f64,
}

/// Current at which a junction counts as conducting for the region rules.
pub const ON_CURRENT: f64 = 100e-9;

/// Smallest value of 1/qb a Newton step may reach (see [`BjtModel::guard_step`]).
pub const MIN_INVERSE_QB: f64 = 0.05;

impl BjtModel {
    /// Build the model from effective parameters (defaults ← preset ← part)
    /// and apply the temperature laws published with the Gummel–Poon model for the
    /// analysis temperature `kelvin`, with T0 = `parameter_celsius`:
    /// Is(T) = Is·(T/T0)^η·exp((Eg/VT)·(T/T0 − 1)) with VT at T,
    /// βF(T) = βF·(T/T0)^ξ. βR, the Early voltages and the rest are taken
    /// as independent of temperature, and so are the knee currents.
    pub fn from_parameters(
        params: &BTreeMap<String, f64>,
        polarity: Polarity,
        kelvin_now: f64,
    ) -> Self {
        let get = |k: &str, d: f64| params.get(k).copied().unwrap_or(d);
        let opt = |k: &str| params.get(k).copied();
        let t0 = kelvin(get(keys::PARAMETER_CELSIUS, 27.0));
        let vt = thermal_voltage(kelvin_now);
        let ratio = kelvin_now / t0;
        let eta = get(keys::SATURATION_CURRENT_TEMPERATURE_EXPONENT, 3.0);
        let eg = get(keys::BAND_GAP, 1.11);
        let xi = get(keys::BETA_TEMPERATURE_EXPONENT, 1.5);
        let is0 = get(keys::SATURATION_CURRENT, 1e-14);
        let bf0 = get(keys::FORWARD_BETA, 100.0);
        BjtModel {
            polarity,
            saturation_current: is0 * ratio.powf(eta) * ((eg / vt) * (ratio - 1.0)).exp(),
            forward_beta: bf0 * ratio.powf(xi),
            reverse_beta: get(keys::REVERSE_BETA, 1.0),
            forward_early_voltage: get(keys::FORWARD_EARLY_VOLTAGE, f64::INFINITY),
            reverse_early_voltage: get(keys::REVERSE_EARLY_VOLTAGE, f64::INFINITY),
            forward_emission: get(keys::FORWARD_EMISSION, 1.0),
            reverse_emission: get(keys::REVERSE_EMISSION, 1.0),
            base_resistance: get(keys::BASE_RESISTANCE, 0.0),
            emitter_capacitance: get(keys::EMITTER_CAPACITANCE, 0.0),
            collector_capacitance: get(keys::COLLECTOR_CAPACITANCE, 0.0),
            emitter_potential: get(keys::EMITTER_POTENTIAL, 0.75),
            collector_potential: get(keys::COLLECTOR_POTENTIAL, 0.75),
            emitter_grading: get(keys::EMITTER_GRADING, 0.33),
            collector_grading: get(keys::COLLECTOR_GRADING, 0.33),
            forward_transit_time: get(keys::FORWARD_TRANSIT_TIME, 0.0),
            forward_knee_current: get(keys::FORWARD_KNEE_CURRENT, f64::INFINITY),
            reverse_knee_current: get(keys::REVERSE_KNEE_CURRENT, f64::INFINITY),
            thermal_voltage: vt,
            ratings: BjtRatings {
                max_collector_emitter_voltage: opt(keys::MAX_COLLECTOR_EMITTER_VOLTAGE),
                max_collector_base_voltage: opt(keys::MAX_COLLECTOR_BASE_VOLTAGE),
                max_emitter_base_voltage: opt(keys::MAX_EMITTER_BASE_VOLTAGE),
                max_collector_current: opt(keys::MAX_COLLECTOR_CURRENT),
                max_power: opt(keys::MAX_POWER),
                thermal_resistance: opt(keys::THERMAL_RESISTANCE),
                max_junction_celsius: opt(keys::MAX_JUNCTION_CELSIUS),
            },
            kelvin: kelvin_now,
            nominal_forward_beta: bf0,
        }
    }

    /// 1/qb = 1 − VBC/VA − VBE/VB (an infinite Early voltage drops its term).
    pub fn inverse_qb(&self, vbe: f64, vbc: f64) -> f64 {
        1.0 - early_term(vbc, self.forward_early_voltage)
            - early_term(vbe, self.reverse_early_voltage)
    }

    /// Whether a knee current is given (high injection modelled).
    pub fn has_knee(&self) -> bool {
        self.forward_knee_current.is_finite() || self.reverse_knee_current.is_finite()
    }

    /// Currents and derivatives at intrinsic junction voltages, NPN sense.
    pub fn evaluate(&self, vbe: f64, vbc: f64) -> BjtEval {
        let is = self.saturation_current;
        let nf_vt = self.forward_emission * self.thermal_voltage;
        let nr_vt = self.reverse_emission * self.thermal_voltage;
        let (ebe, debe) = limited_exp(vbe / nf_vt);
        let (ebc, debc) = limited_exp(vbc / nr_vt);
        let debe = debe / nf_vt;
        let debc = debc / nr_vt;
        let (ict, dict_dvbe, dict_dvbc) = if self.has_knee() {
            self.knee_transport(vbe, vbc, (ebe, debe), (ebc, debc))
        } else {
            // The subset (no knee): kept exactly as it was, so every figure
            // without a knee current is unchanged to the last bit.
            let q = self.inverse_qb(vbe, vbc);
            let dq_dvbe = -inv(self.reverse_early_voltage);
            let dq_dvbc = -inv(self.forward_early_voltage);
            let ict = is * (ebe - ebc) * q;
            let dict_dvbe = is * debe * q + is * (ebe - ebc) * dq_dvbe;
            let dict_dvbc = -is * debc * q + is * (ebe - ebc) * dq_dvbc;
            (ict, dict_dvbe, dict_dvbc)
        };
        let ibe = is / self.forward_beta * (ebe - 1.0);
        let dibe = is / self.forward_beta * debe;
        let ibc = is / self.reverse_beta * (ebc - 1.0);
        let dibc = is / self.reverse_beta * debc;
        BjtEval {
            ic: ict - ibc,
            ib: ibe + ibc,
            dic_dvbe: dict_dvbe,
            dic_dvbc: dict_dvbc - dibc,
            dib_dvbe: dibe,
            dib_dvbc: dibc,
            ibe,
        }
    }

    /// The transport current ICT and its derivatives (∂/∂VBE, ∂/∂VBC) with
    /// high injection, NPN sense (the diffusion charge τF·ICT uses it too).
    pub fn transport_current(&self, vbe: f64, vbc: f64) -> (f64, f64, f64) {
        let nf_vt = self.forward_emission * self.thermal_voltage;
        let nr_vt = self.reverse_emission * self.thermal_voltage;
        let (ebe, debe) = limited_exp(vbe / nf_vt);
        let (ebc, debc) = limited_exp(vbc / nr_vt);
        self.knee_transport(vbe, vbc, (ebe, debe / nf_vt), (ebc, debc / nr_vt))
    }

    /// ICT = Is·(e_be − e_bc)/qb with qb = (q1/2)·(1 + √(1 + 4·q2)), written
    /// as 1/qb = 2·(1/q1)/(1 + √(1 + 4·q2)) so that it stays finite wherever
    /// 1/q1 does (the Newton guard keeps 1/q1 above zero; 1/q1 itself is
    /// [`Self::inverse_qb`]). `be` and `bc` are each junction's exponential
    /// and its derivative by the junction voltage. Exact derivatives:
    /// ∂ICT/∂v = 2·Is·(∂e·(1/q1) + e·∂(1/q1))/D − ICT·(∂D/∂v)/D with
    /// D = 1 + √(1 + 4·q2) and ∂D/∂v = 2·(∂q2/∂v)/√(1 + 4·q2). Should
    /// 1 + 4·q2 fall to zero or below (only possible for a knee under 4·Is
    /// with a reverse-biased junction) the root is taken as 0.
    fn knee_transport(
        &self,
        vbe: f64,
        vbc: f64,
        be: (f64, f64),
        bc: (f64, f64),
    ) -> (f64, f64, f64) {
        let is = self.saturation_current;
        let (ebe, debe) = be;
        let (ebc, debc) = bc;
        let p = self.inverse_qb(vbe, vbc);
        let dp_dvbe = -inv(self.reverse_early_voltage);
        let dp_dvbc = -inv(self.forward_early_voltage);
        let kf = is * inv(self.forward_knee_current);
        let kr = is * inv(self.reverse_knee_current);
        let q2 = kf * (ebe - 1.0) + kr * (ebc - 1.0);
        let arg = 1.0 + 4.0 * q2;
        let (root, droot_dq2) = if arg > 0.0 {
            let r = arg.sqrt();
            (r, 2.0 / r)
        } else {
            (0.0, 0.0)
        };
        let d = 1.0 + root;
        let dd_dvbe = droot_dq2 * kf * debe;
        let dd_dvbc = droot_dq2 * kr * debc;
        let e = ebe - ebc;
        let ict = 2.0 * is * e * p / d;
        let dict_dvbe = (2.0 * is * (debe * p + e * dp_dvbe) - ict * dd_dvbe) / d;
        let dict_dvbc = (2.0 * is * (-debc * p + e * dp_dvbc) - ict * dd_dvbc) / d;
        (ict, dict_dvbe, dict_dvbc)
    }

    /// Critical voltages (base–emitter, base–collector) for step limiting.
    pub fn critical_voltages(&self) -> (f64, f64) {
        (
            critical_voltage(
                self.forward_emission * self.thermal_voltage,
                self.saturation_current,
            ),
            critical_voltage(
                self.reverse_emission * self.thermal_voltage,
                self.saturation_current,
            ),
        )
    }

    /// Limit one Newton step of the junction voltages from `old` to `new`
    /// (both NPN sense, (VBE, VBC)). First each junction by the critical-
    /// voltage method; then the guard on 1/qb: 1/qb is linear in the two
    /// junction voltages, so if the limited step would bring it below
    /// [`MIN_INVERSE_QB`] (or below half its old value, when that is
    /// already smaller) the step is shortened along its own direction to
    /// land exactly there. At a physical solution 1/qb is near 1, so the
    /// guard never acts there. Returns the new pair and whether anything
    /// was limited.
    pub fn guard_step(&self, old: (f64, f64), new: (f64, f64)) -> ((f64, f64), bool) {
        let (cbe, cbc) = self.critical_voltages();
        let vt = self.thermal_voltage;
        let (vbe, a) = limit_junction(new.0, old.0, self.forward_emission * vt, cbe);
        let (vbc, b) = limit_junction(new.1, old.1, self.reverse_emission * vt, cbc);
        let q_old = self.inverse_qb(old.0, old.1);
        let q_new = self.inverse_qb(vbe, vbc);
        let floor = MIN_INVERSE_QB.min(0.5 * q_old);
        if q_new < floor && q_old > floor {
            let t = (q_old - floor) / (q_old - q_new);
            let vbe2 = old.0 + t * (vbe - old.0);
            let vbc2 = old.1 + t * (vbc - old.1);
            return ((vbe2, vbc2), true);
        }
        ((vbe, vbc), a || b)
    }

    /// Junction voltage above which a junction counts as conducting:
    /// n·VT·ln(1 + [`ON_CURRENT`]/Is) — the voltage at which its diode
    /// current reaches 100 nA (about 0.42 V for Is = 1e-14 A at 27 °C).
    pub fn on_voltage_base_emitter(&self) -> f64 {
        self.forward_emission
            * self.thermal_voltage
            * (1.0 + ON_CURRENT / self.saturation_current).ln()
    }

    /// As [`Self::on_voltage_base_emitter`], for the base–collector junction.
    pub fn on_voltage_base_collector(&self) -> f64 {
        self.reverse_emission
            * self.thermal_voltage
            * (1.0 + ON_CURRENT / self.saturation_current).ln()
    }

    /// Cπ = τF·gm + Cje(VBE), Cμ = Cjc(VBC), NPN sense.
    pub fn capacitances(&self, vbe: f64, vbc: f64, gm: f64) -> (f64, f64) {
        let cpi = self.forward_transit_time * gm
            + depletion_capacitance(
                self.emitter_capacitance,
                vbe,
                self.emitter_potential,
                self.emitter_grading,
            );
        let cmu = depletion_capacitance(
            self.collector_capacitance,
            vbc,
            self.collector_potential,
            self.collector_grading,
        );
        (cpi, cmu)
    }
}

fn inv(v: f64) -> f64 {
    if v.is_finite() {
        1.0 / v
    } else {
        0.0
    }
}

fn early_term(v: f64, early: f64) -> f64 {
    if early.is_finite() {
        v / early
    } else {
        0.0
    }
}

/// Depletion capacitance C(V) = C0/(1 − V/φ)^m for V below φ/2; from φ/2
/// up, the linear continuation of C(V) from φ/2 (a standard way to avoid
/// the singularity at V = φ).
pub fn depletion_capacitance(c0: f64, v: f64, phi: f64, m: f64) -> f64 {
    if c0 == 0.0 {
        return 0.0;
    }
    let half = 0.5 * phi;
    if v < half {
        c0 / (1.0 - v / phi).powf(m)
    } else {
        // C(φ/2) = C0·2^m; dC/dV at φ/2 = C0·m/φ·2^(m+1).
        let c_half = c0 * 2f64.powf(m);
        let slope = c0 * m / phi * 2f64.powf(m + 1.0);
        c_half + slope * (v - half)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn model(params: &[(&str, f64)], celsius: f64) -> BjtModel {
        let map = params.iter().map(|(k, v)| (k.to_string(), *v)).collect();
        BjtModel::from_parameters(&map, Polarity::Npn, kelvin(celsius))
    }

    #[test]
    fn forward_active_currents_follow_the_transport_equations() {
        let m = model(&[(keys::FORWARD_EARLY_VOLTAGE, 100.0)], 27.0);
        let vt = m.thermal_voltage;
        let (vbe, vbc) = (0.65, -4.35);
        let e = m.evaluate(vbe, vbc);
        // source: Gummel and Poon, Bell System Technical Journal 49 (1970); Early, Proc. IRE
        // (1952) — ICT with 1/qb = 1 − VBC/VA.
        let ict = 1e-14 * ((vbe / vt).exp() - (vbc / vt).exp()) * (1.0 + 4.35 / 100.0);
        let ibc = 1e-14 * ((vbc / vt).exp() - 1.0);
        assert!((e.ic - (ict - ibc)).abs() < 1e-12 * e.ic.abs());
        let ibe = 1e-14 / 100.0 * ((vbe / vt).exp() - 1.0);
        assert!((e.ib - (ibe + ibc)).abs() < 1e-12 * e.ib.abs());
    }

    #[test]
    fn derivatives_match_finite_differences() {
        // invariant: the analytic Jacobian equals the numerical one.
        let m = model(
            &[
                (keys::FORWARD_EARLY_VOLTAGE, 60.0),
                (keys::REVERSE_EARLY_VOLTAGE, 20.0),
                (keys::REVERSE_BETA, 3.0),
            ],
            27.0,
        );
        for &(vbe, vbc) in &[(0.65, -3.0), (0.7, 0.6), (-1.0, 0.62)] {
            let e = m.evaluate(vbe, vbc);
            let h = 1e-7;
            let p = m.evaluate(vbe + h, vbc);
            let n = m.evaluate(vbe - h, vbc);
            let q = m.evaluate(vbe, vbc + h);
            let r = m.evaluate(vbe, vbc - h);
            let close = |a: f64, b: f64| (a - b).abs() <= 1e-5 * a.abs().max(b.abs()) + 1e-18;
            assert!(close(e.dic_dvbe, (p.ic - n.ic) / (2.0 * h)));
            assert!(close(e.dib_dvbe, (p.ib - n.ib) / (2.0 * h)));
            assert!(close(e.dic_dvbc, (q.ic - r.ic) / (2.0 * h)));
            assert!(close(e.dib_dvbc, (q.ib - r.ib) / (2.0 * h)));
        }
    }

    #[test]
    fn knee_derivatives_match_finite_differences() {
        // invariant: with both knee currents given, the analytic Jacobian equals the
        // numerical one (forward active above the knee, saturation, reverse active).
        let m = model(
            &[
                (keys::SATURATION_CURRENT, 1e-12),
                (keys::FORWARD_EARLY_VOLTAGE, 60.0),
                (keys::REVERSE_EARLY_VOLTAGE, 20.0),
                (keys::REVERSE_BETA, 3.0),
                (keys::FORWARD_KNEE_CURRENT, 1.5),
                (keys::REVERSE_KNEE_CURRENT, 0.3),
            ],
            27.0,
        );
        for &(vbe, vbc) in &[(0.65, -3.0), (0.8, -5.0), (0.75, 0.7), (-1.0, 0.72)] {
            let e = m.evaluate(vbe, vbc);
            let h = 1e-7;
            let p = m.evaluate(vbe + h, vbc);
            let n = m.evaluate(vbe - h, vbc);
            let q = m.evaluate(vbe, vbc + h);
            let r = m.evaluate(vbe, vbc - h);
            let close = |a: f64, b: f64| (a - b).abs() <= 1e-5 * a.abs().max(b.abs()) + 1e-18;
            assert!(close(e.dic_dvbe, (p.ic - n.ic) / (2.0 * h)), "{vbe} {vbc}");
            assert!(close(e.dic_dvbc, (q.ic - r.ic) / (2.0 * h)), "{vbe} {vbc}");
            let (_, dbe, dbc) = m.transport_current(vbe, vbc);
            let (tp, _, _) = m.transport_current(vbe + h, vbc);
            let (tn, _, _) = m.transport_current(vbe - h, vbc);
            let (tq, _, _) = m.transport_current(vbe, vbc + h);
            let (tr, _, _) = m.transport_current(vbe, vbc - h);
            assert!(close(dbe, (tp - tn) / (2.0 * h)));
            assert!(close(dbc, (tq - tr) / (2.0 * h)));
        }
    }

    #[test]
    fn knee_qb_follows_the_closed_form() {
        // source: Gummel and Poon, Bell System Technical Journal 49 (1970) — qb =
        // (q1/2)(1 + √(1 + 4·q2)), q2 = (Is/Ik)(exp(VBE/VT) − 1), ICT = Is·(e_be − e_bc)/qb.
        let m = model(
            &[
                (keys::FORWARD_EARLY_VOLTAGE, 50.0),
                (keys::FORWARD_KNEE_CURRENT, 0.01),
            ],
            27.0,
        );
        let vt = m.thermal_voltage;
        let (vbe, vbc) = (0.72, -4.0);
        let ebe = (vbe / vt).exp();
        let ebc = (vbc / vt).exp();
        let q1 = 1.0 / (1.0 + 4.0 / 50.0);
        let q2 = 1e-14 / 0.01 * (ebe - 1.0);
        let qb = q1 / 2.0 * (1.0 + (1.0 + 4.0 * q2).sqrt());
        let ict = 1e-14 * (ebe - ebc) / qb;
        let (t, _, _) = m.transport_current(vbe, vbc);
        assert!((t - ict).abs() < 1e-12 * ict, "{t} {ict}");
    }

    #[test]
    fn temperature_laws_match_the_reference_page() {
        let m27 = model(&[], 27.0);
        let m77 = model(&[], 77.0);
        let (t0, t) = (kelvin(27.0), kelvin(77.0));
        let vt = thermal_voltage(t);
        // from memory: the Gummel–Poon temperature laws, η = 3, Eg = 1.11 V; ξ = 1.5 is common practice.
        let is = 1e-14 * (t / t0).powi(3) * ((1.11 / vt) * (t / t0 - 1.0)).exp();
        assert!((m77.saturation_current - is).abs() < 1e-12 * is);
        assert!((m77.forward_beta - 100.0 * (t / t0).powf(1.5)).abs() < 1e-9);
        // At T = T0 nothing changes.
        assert_eq!(m27.saturation_current, 1e-14);
        assert_eq!(m27.forward_beta, 100.0);
        // source: BIPM SI Brochure, 9th ed. (2019), exact k and q — VT at 27 °C = 25.865 mV.
        assert!((m27.thermal_voltage - 25.865e-3).abs() < 1e-6);
    }

    #[test]
    fn guard_keeps_inverse_qb_positive() {
        // invariant: a guarded step never makes 1/qb ≤ 0.
        let m = model(
            &[
                (keys::FORWARD_EARLY_VOLTAGE, 10.0),
                (keys::REVERSE_EARLY_VOLTAGE, 5.0),
            ],
            27.0,
        );
        let ((vbe, vbc), hit) = m.guard_step((0.1, -1.0), (0.3, 30.0));
        assert!(hit);
        assert!(m.inverse_qb(vbe, vbc) >= MIN_INVERSE_QB - 1e-12);
    }

    #[test]
    fn depletion_capacitance_is_continuous_at_half_phi() {
        // invariant: the linear continuation joins C(V) at φ/2.
        let below = depletion_capacitance(1e-12, 0.375 - 1e-9, 0.75, 0.33);
        let above = depletion_capacitance(1e-12, 0.375, 0.75, 0.33);
        assert!((below - above).abs() < 1e-20);
        // source: Gray, Hurst, Lewis, Meyer, ch. 1, depletion capacitance C(V) = C0/(1 − V/φ)^m; at V = 0 it is C0.
        assert_eq!(depletion_capacitance(1e-12, 0.0, 0.75, 0.33), 1e-12);
    }
}
