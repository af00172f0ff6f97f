//! The charge part of the datasheet fit: the transition frequency fT at a
//! stated IC and VCE gives the forward transit time τF, and the common-base
//! output capacitance Cob at a stated VCB gives the zero-bias base–collector
//! capacitance Cjc.
//!
//! Cob is the base–collector depletion capacitance with the emitter open:
//! Cob = Cjc(−VCB) = Cjc0/(1 + VCB/φc)^mc, so Cjc0 = Cob·(1 + VCB/φc)^mc.
//! fT = gm/(2π(Cπ + Cμ)) with Cπ = τF·gm + Cje(VBE) (the hybrid-π model at
//! the test point), so τF = (gm/(2π·fT) − Cμ − Cje(VBE))/gm.

use super::devices::bjt::{BjtModel, Polarity};
use super::fit::{vbe_for_current, FitError};
use crate::presets::keys;
use std::collections::BTreeMap;

/// fT and Cob as a datasheet gives them (NPN sense; magnitudes for a PNP).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ChargeFigures {
    /// Transition frequency (Hz) at collector current `ft_at_ic` (A) and VCE `ft_at_vce` (V).
    pub transition_frequency: f64,
    pub ft_at_ic: f64,
    pub ft_at_vce: f64,
    /// Output capacitance (F), common base, emitter open, at VCB `cob_at_vcb` (V).
    pub output_capacitance: f64,
    pub cob_at_vcb: f64,
}

/// The fitted charge parameters.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ChargeFit {
    pub collector_junction_capacitance: f64,
    pub forward_transit_time: f64,
}

impl ChargeFit {
    /// As file keys, ready to merge into a part's parameters.
    pub fn to_parameters(&self) -> BTreeMap<String, f64> {
        [
            (
                keys::COLLECTOR_CAPACITANCE,
                self.collector_junction_capacitance,
            ),
            (keys::FORWARD_TRANSIT_TIME, self.forward_transit_time),
        ]
        .into_iter()
        .map(|(k, v)| (k.to_string(), v))
        .collect()
    }
}

/// gm = y21 − y12 of the model at (VBE, VCE) (the y → hybrid-π conversion).
pub fn transconductance(model: &BjtModel, vbe: f64, vce: f64) -> f64 {
    let e = model.evaluate(vbe, vbe - vce);
    let y12 = -e.dib_dvbc;
    let y21 = e.dic_dvbe + e.dic_dvbc;
    y21 - y12
}

/// The model's fT at collector current `ic` and `vce`: gm/(2π(Cπ + Cμ)).
pub fn transition_frequency(model: &BjtModel, ic: f64, vce: f64) -> Option<f64> {
    let vbe = vbe_for_current(model, ic, vce)?;
    let gm = transconductance(model, vbe, vce);
    let (cpi, cmu) = model.capacitances(vbe, vbe - vce, gm);
    (cpi + cmu > 0.0).then(|| gm / (2.0 * std::f64::consts::PI * (cpi + cmu)))
}

/// Fit Cjc0 from Cob and then τF from fT, with every other parameter from
/// `params` (typically the DC fit merged over the preset) at `kelvin`.
pub fn fit_charge(
    figures: &ChargeFigures,
    params: &BTreeMap<String, f64>,
    kelvin: f64,
) -> Result<ChargeFit, FitError> {
    let d = figures;
    let positive = [
        d.transition_frequency,
        d.ft_at_ic,
        d.ft_at_vce,
        d.output_capacitance,
    ];
    let cob_vcb_ok = d.cob_at_vcb.is_finite() && d.cob_at_vcb >= 0.0;
    if positive.iter().any(|v| !(v.is_finite() && *v > 0.0)) || !cob_vcb_ok {
        return Err(FitError(
            "fT, its IC and VCE, and Cob must be positive numbers, and Cob's VCB not negative"
                .into(),
        ));
    }
    let get = |k: &str, default: f64| params.get(k).copied().unwrap_or(default);
    let phi_c = get(keys::COLLECTOR_POTENTIAL, 0.75);
    let m_c = get(keys::COLLECTOR_GRADING, 0.33);
    let cjc0 = d.output_capacitance * (1.0 + d.cob_at_vcb / phi_c).powf(m_c);

    let mut p = params.clone();
    p.insert(keys::COLLECTOR_CAPACITANCE.to_string(), cjc0);
    p.insert(keys::FORWARD_TRANSIT_TIME.to_string(), 0.0);
    let model = BjtModel::from_parameters(&p, Polarity::Npn, kelvin);
    let vbe = vbe_for_current(&model, d.ft_at_ic, d.ft_at_vce)
        .ok_or_else(|| FitError("no VBE gives the stated fT current".into()))?;
    let gm = transconductance(&model, vbe, d.ft_at_vce);
    // With τF = 0 the model's Cπ is Cje(VBE) alone.
    let (cje, cmu) = model.capacitances(vbe, vbe - d.ft_at_vce, gm);
    let c_total = gm / (2.0 * std::f64::consts::PI * d.transition_frequency);
    let tau = (c_total - cmu - cje) / gm;
    if tau < 0.0 {
        return Err(FitError(format!(
            "fT {:.3e} Hz is higher than the junction capacitances allow at that current \
             (Cje + Cμ alone give {:.3e} Hz): check fT, Cob and the emitter capacitance",
            d.transition_frequency,
            gm / (2.0 * std::f64::consts::PI * (cje + cmu))
        )));
    }
    Ok(ChargeFit {
        collector_junction_capacitance: cjc0,
        forward_transit_time: tau,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::devices::bjt::depletion_capacitance;

    fn preset() -> BTreeMap<String, f64> {
        let mut p: BTreeMap<String, f64> = crate::presets::defaults(crate::document::PartKind::Npn)
            .iter()
            .map(|(k, v)| (k.to_string(), *v))
            .collect();
        for (k, v) in crate::presets::find("small-signal-npn").unwrap().parameters {
            p.insert(k.to_string(), *v);
        }
        p
    }

    #[test]
    fn fitted_charge_reproduces_ft_and_cob() {
        // invariant: round trip — figures computed from a known model, fitted, give the
        // model back, and the fitted model reproduces the figures.
        let kelvin = 300.15;
        let mut p = preset();
        p.insert(keys::COLLECTOR_CAPACITANCE.into(), 3.3e-12);
        p.insert(keys::FORWARD_TRANSIT_TIME.into(), 0.35e-9);
        let model = BjtModel::from_parameters(&p, Polarity::Npn, kelvin);
        let ft = transition_frequency(&model, 10e-3, 5.0).unwrap();
        let cob = depletion_capacitance(3.3e-12, -10.0, 0.75, 0.33);
        let figures = ChargeFigures {
            transition_frequency: ft,
            ft_at_ic: 10e-3,
            ft_at_vce: 5.0,
            output_capacitance: cob,
            cob_at_vcb: 10.0,
        };
        let fit = fit_charge(&figures, &preset(), kelvin).unwrap();
        assert!((fit.collector_junction_capacitance / 3.3e-12 - 1.0).abs() < 1e-9);
        assert!((fit.forward_transit_time / 0.35e-9 - 1.0).abs() < 1e-9);
        let mut q = preset();
        q.extend(fit.to_parameters());
        let refit = BjtModel::from_parameters(&q, Polarity::Npn, kelvin);
        let ft2 = transition_frequency(&refit, 10e-3, 5.0).unwrap();
        assert!((ft2 / ft - 1.0).abs() < 1e-9);
    }

    #[test]
    fn ft_at_high_current_is_one_over_two_pi_tau() {
        // source: Gray, Hurst, Lewis, Meyer, "Analysis and Design of Analog Integrated
        // Circuits", ch. 1 — fT = gm/(2π(Cπ + Cμ)) tends to 1/(2π·τF) when τF·gm dominates.
        let mut p = preset();
        p.insert(keys::EMITTER_CAPACITANCE.into(), 0.0);
        p.insert(keys::COLLECTOR_CAPACITANCE.into(), 0.0);
        p.insert(keys::FORWARD_TRANSIT_TIME.into(), 0.4e-9);
        let model = BjtModel::from_parameters(&p, Polarity::Npn, 300.15);
        let ft = transition_frequency(&model, 10e-3, 5.0).unwrap();
        let expected = 1.0 / (2.0 * std::f64::consts::PI * 0.4e-9);
        assert!((ft / expected - 1.0).abs() < 1e-9, "{ft} vs {expected}");
    }

    #[test]
    fn an_ft_beyond_the_junction_capacitances_is_refused() {
        // invariant: τF cannot be negative; an fT the depletion capacitances alone
        // cannot reach is refused with a message that says what to check.
        let figures = ChargeFigures {
            transition_frequency: 1e12,
            ft_at_ic: 1e-3,
            ft_at_vce: 5.0,
            output_capacitance: 4e-12,
            cob_at_vcb: 10.0,
        };
        let e = fit_charge(&figures, &preset(), 300.15).unwrap_err();
        assert!(e.0.contains("check fT"), "{}", e.0);
    }
}
