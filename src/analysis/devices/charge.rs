//! Stored charges of the junctions, for the time-domain analysis: the
//! depletion charge whose derivative is `bjt::depletion_capacitance`
//! (q = Cj0·φ/(1−m)·(1 − (1 − v/φ)^(1−m)) below φ/2, its integral along
//! the linear continuation above), and the diffusion charge τF·ICT of the
//! transport current (divided by the high-injection qb when a knee current is given) (D. E. Ward and R. W. Dutton, IEEE J. Solid-State
//! Circuits 13, 1978, on
//! charge-based modelling: currents are the time derivatives of these
//! charges, so charge is conserved).

use super::bjt::{depletion_capacitance, BjtModel};
use super::diode::DiodeModel;
use super::limited_exp;

/// Depletion charge of a junction with zero-bias capacitance `c0`,
/// potential `phi` and grading `m`, at junction voltage `v`, and its
/// derivative (= `depletion_capacitance`).
pub fn depletion_charge(c0: f64, v: f64, phi: f64, m: f64) -> (f64, f64) {
    if c0 == 0.0 {
        return (0.0, 0.0);
    }
    let half = 0.5 * phi;
    let below = |v: f64| c0 * phi / (1.0 - m) * (1.0 - (1.0 - v / phi).powf(1.0 - m));
    let c = depletion_capacitance(c0, v, phi, m);
    if v < half {
        (below(v), c)
    } else {
        let c_half = c0 * 2f64.powf(m);
        let slope = c0 * m / phi * 2f64.powf(m + 1.0);
        let d = v - half;
        (below(half) + c_half * d + 0.5 * slope * d * d, c)
    }
}

/// A transistor's charges at intrinsic junction voltages (NPN sense):
/// base–emitter (depletion + diffusion) and base–collector (depletion).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BjtCharges {
    pub qbe: f64,
    pub dqbe_dvbe: f64,
    pub dqbe_dvbc: f64,
    pub qbc: f64,
    pub dqbc_dvbc: f64,
}

/// The charges of `m` at (vbe, vbc), NPN sense.
pub fn bjt_charges(m: &BjtModel, vbe: f64, vbc: f64) -> BjtCharges {
    let (qje, cje) = depletion_charge(
        m.emitter_capacitance,
        vbe,
        m.emitter_potential,
        m.emitter_grading,
    );
    let (qjc, cjc) = depletion_charge(
        m.collector_capacitance,
        vbc,
        m.collector_potential,
        m.collector_grading,
    );
    let (mut qd, mut dqd_be, mut dqd_bc) = (0.0, 0.0, 0.0);
    if m.forward_transit_time > 0.0 && m.has_knee() {
        // High injection: ICT over the knee's qb (`BjtModel::transport_current`).
        let (ict, dict_be, dict_bc) = m.transport_current(vbe, vbc);
        let tf = m.forward_transit_time;
        qd = tf * ict;
        dqd_be = tf * dict_be;
        dqd_bc = tf * dict_bc;
    } else if m.forward_transit_time > 0.0 {
        let nf_vt = m.forward_emission * m.thermal_voltage;
        let nr_vt = m.reverse_emission * m.thermal_voltage;
        let (ebe, debe) = limited_exp(vbe / nf_vt);
        let (ebc, debc) = limited_exp(vbc / nr_vt);
        let q = m.inverse_qb(vbe, vbc);
        let inv = |v: f64| if v.is_finite() { 1.0 / v } else { 0.0 };
        let is = m.saturation_current;
        let ict = is * (ebe - ebc) * q;
        let dict_be = is * debe / nf_vt * q - is * (ebe - ebc) * inv(m.reverse_early_voltage);
        let dict_bc = -is * debc / nr_vt * q - is * (ebe - ebc) * inv(m.forward_early_voltage);
        let tf = m.forward_transit_time;
        qd = tf * ict;
        dqd_be = tf * dict_be;
        dqd_bc = tf * dict_bc;
    }
    BjtCharges {
        qbe: qje + qd,
        dqbe_dvbe: cje + dqd_be,
        dqbe_dvbc: dqd_bc,
        qbc: qjc,
        dqbc_dvbc: cjc,
    }
}

/// A diode's charge (depletion + transit time × current) and its slope.
pub fn diode_charge(d: &DiodeModel, v: f64) -> (f64, f64) {
    let (qj, cj) = depletion_charge(d.junction_capacitance, v, d.junction_potential, d.grading);
    let (i, g) = d.evaluate(v);
    (qj + d.transit_time * i, cj + d.transit_time * g)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn depletion_charge_is_the_integral_of_the_capacitance() {
        // invariant: dq/dv = C(v) on both sides of φ/2 (central differences).
        for v in [-5.0, -0.3, 0.0, 0.2, 0.37, 0.38, 0.6, 0.9] {
            let h = 1e-6;
            let (qp, _) = depletion_charge(2e-12, v + h, 0.75, 0.33);
            let (qm, _) = depletion_charge(2e-12, v - h, 0.75, 0.33);
            let c = depletion_capacitance(2e-12, v, 0.75, 0.33);
            assert!(((qp - qm) / (2.0 * h) - c).abs() < 1e-6 * c, "at {v} V");
        }
        // invariant: the depletion charge is the integral of C(v) from 0, so q(0) = 0.
        assert_eq!(depletion_charge(2e-12, 0.0, 0.75, 0.33).0, 0.0);
    }

    #[test]
    fn diffusion_charge_above_the_knee_is_transit_time_times_ict() {
        // invariant: with a knee the diffusion charge is τF·ICT of the same transport current
        // the DC model uses (IC + IBC), and its slopes are its derivatives (central differences).
        use crate::analysis::devices::bjt::Polarity;
        use crate::presets::keys;
        let params = [
            (keys::SATURATION_CURRENT, 1e-12),
            (keys::FORWARD_EARLY_VOLTAGE, 100.0),
            (keys::FORWARD_KNEE_CURRENT, 1.5),
            (keys::FORWARD_TRANSIT_TIME, 3e-8),
            (keys::EMITTER_CAPACITANCE, 3e-10),
        ]
        .iter()
        .map(|(k, v)| (k.to_string(), *v))
        .collect();
        let m = BjtModel::from_parameters(&params, Polarity::Npn, 300.15);
        for (vbe, vbc) in [(0.7, -5.0), (0.8, -4.0), (0.85, 0.5)] {
            let q = bjt_charges(&m, vbe, vbc);
            let (qje, _) = depletion_charge(3e-10, vbe, 0.75, 0.33);
            let ev = m.evaluate(vbe, vbc);
            let ibc =
                m.saturation_current / m.reverse_beta * ((vbc / m.thermal_voltage).exp() - 1.0);
            let ict = ev.ic + ibc;
            assert!((q.qbe - qje - 3e-8 * ict).abs() < 1e-12 * (3e-8 * ict).abs());
            let h = 1e-7;
            let d_be =
                (bjt_charges(&m, vbe + h, vbc).qbe - bjt_charges(&m, vbe - h, vbc).qbe) / (2.0 * h);
            let d_bc =
                (bjt_charges(&m, vbe, vbc + h).qbe - bjt_charges(&m, vbe, vbc - h).qbe) / (2.0 * h);
            assert!(
                (q.dqbe_dvbe - d_be).abs() < 1e-5 * d_be.abs(),
                "{vbe} {vbc}"
            );
            assert!(
                (q.dqbe_dvbc - d_bc).abs() < 1e-5 * d_bc.abs() + 1e-18,
                "{vbe} {vbc}"
            );
        }
    }
}
