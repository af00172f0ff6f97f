//! Fit the transistor model to three datasheet figures: VBE at a stated
//! IC, hFE at a stated IC, and the output slope (hoe at a stated IC, or the
//! Early voltage itself), all at one stated VCE. Returns
//! `saturation_current`, `forward_beta` and `forward_early_voltage`; every
//! other parameter is taken from the given base parameters.
//!
//! The fit is exact for the model (not the textbook approximations):
//! - Is from VBE: IC is linear in Is at fixed junction voltages, so
//!   Is = IC / [(e^{VBE/nFVT} − e^{VBC/nRVT})/qb − (e^{VBC/nRVT} − 1)/βR];
//! - βF from hFE: at the VBE that gives the stated IC, IB is linear in 1/βF;
//! - VA from hoe = y22 − y12·y21/y11 (the output admittance with the input
//!   open, from the model's Jacobian), starting from VA ≈ IC/hoe − VCB and
//!   corrected by fixed-point steps until the model reproduces hoe.
//!
//! Base resistance is not part of the fit: VBE is taken as the intrinsic
//! junction voltage (at datasheet currents the drop IB·rb is a few µV).

use super::devices::bjt::{BjtModel, Polarity};
use crate::presets::keys;
use std::collections::BTreeMap;

/// The output slope a datasheet gives.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum OutputSlope {
    /// hoe (S) at a collector current (A).
    Hoe { hoe: f64, at_ic: f64 },
    /// The forward Early voltage directly (V).
    EarlyVoltage(f64),
}

/// Datasheet figures, NPN sense (give magnitudes for a PNP).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DatasheetFigures {
    /// VBE (V) at collector current `vbe_at_ic` (A).
    pub vbe: f64,
    pub vbe_at_ic: f64,
    /// hFE = IC/IB at collector current `hfe_at_ic` (A).
    pub hfe: f64,
    pub hfe_at_ic: f64,
    pub output: OutputSlope,
    /// VCE of the test conditions (V).
    pub vce: f64,
}

/// The fitted parameters.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FittedParameters {
    pub saturation_current: f64,
    pub forward_beta: f64,
    pub forward_early_voltage: f64,
}

impl FittedParameters {
    /// As file keys, ready to merge into a part's parameters.
    pub fn to_parameters(&self) -> BTreeMap<String, f64> {
        [
            (keys::SATURATION_CURRENT, self.saturation_current),
            (keys::FORWARD_BETA, self.forward_beta),
            (keys::FORWARD_EARLY_VOLTAGE, self.forward_early_voltage),
        ]
        .into_iter()
        .map(|(k, v)| (k.to_string(), v))
        .collect()
    }
}

#[derive(Debug, Clone, PartialEq)]
pub struct FitError(pub String);

impl std::fmt::Display for FitError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

/// The datasheet figures of a model (the inverse of [`fit`]): VBE at
/// `vbe_at_ic`, hFE at `hfe_at_ic`, hoe at `hoe_at_ic`, all at `vce`.
pub fn figures_of(
    model: &BjtModel,
    vbe_at_ic: f64,
    hfe_at_ic: f64,
    hoe_at_ic: f64,
    vce: f64,
) -> Option<(f64, f64, f64)> {
    let vbe = vbe_for_current(model, vbe_at_ic, vce)?;
    let v2 = vbe_for_current(model, hfe_at_ic, vce)?;
    let e = model.evaluate(v2, v2 - vce);
    let v3 = vbe_for_current(model, hoe_at_ic, vce)?;
    Some((vbe, e.ic / e.ib, hoe(model, v3, vce)))
}

/// hoe = y22 − y12·y21/y11 at (VBE, VCE), common emitter (the standard y → h
/// two-port conversion).
pub fn hoe(model: &BjtModel, vbe: f64, vce: f64) -> f64 {
    let e = model.evaluate(vbe, vbe - vce);
    // With VBC = VBE − VCE: ∂/∂VBE|VCE = ∂/∂vbe + ∂/∂vbc, ∂/∂VCE|VBE = −∂/∂vbc.
    let y11 = e.dib_dvbe + e.dib_dvbc;
    let y12 = -e.dib_dvbc;
    let y21 = e.dic_dvbe + e.dic_dvbc;
    let y22 = -e.dic_dvbc;
    y22 - y12 * y21 / y11
}

/// The VBE at which the model carries collector current `ic` at `vce`.
pub fn vbe_for_current(model: &BjtModel, ic: f64, vce: f64) -> Option<f64> {
    let f = |v: f64| model.evaluate(v, v - vce).ic - ic;
    let (mut lo, mut hi) = (0.0, 1.5);
    if !(f(lo) < 0.0 && f(hi) > 0.0) {
        return None;
    }
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if f(mid) > 0.0 {
            hi = mid;
        } else {
            lo = mid;
        }
        if hi - lo < 1e-15 {
            break;
        }
    }
    Some(0.5 * (lo + hi))
}

/// Fit saturation current, forward beta and forward Early voltage at
/// analysis temperature `kelvin` (the figures' temperature), with every
/// other parameter from `base` (defaults where absent).
pub fn fit(
    figures: &DatasheetFigures,
    base: &BTreeMap<String, f64>,
    kelvin: f64,
) -> Result<FittedParameters, FitError> {
    let d = figures;
    let positive = [d.vbe, d.vbe_at_ic, d.hfe, d.hfe_at_ic, d.vce];
    if positive.iter().any(|v| !(v.is_finite() && *v > 0.0)) {
        return Err(FitError(
            "every datasheet figure must be a positive number (VBE, its IC, hFE, its IC, VCE)"
                .into(),
        ));
    }
    if d.vce <= d.vbe {
        return Err(FitError(format!(
            "the test VCE ({} V) must be above VBE ({} V), in forward active",
            d.vce, d.vbe
        )));
    }
    let mut params = base.clone();
    // Fit at the figures' temperature: no temperature law applied here.
    params.insert(
        keys::PARAMETER_CELSIUS.to_string(),
        kelvin - super::ZERO_CELSIUS,
    );
    let mut va = match d.output {
        OutputSlope::EarlyVoltage(va) if va.is_finite() && va > 0.0 => va,
        OutputSlope::Hoe { hoe, at_ic } if hoe > 0.0 && at_ic > 0.0 => {
            (at_ic / hoe - (d.vce - d.vbe)).max(1.0)
        }
        _ => {
            return Err(FitError(
                "the output slope must be a positive hoe at a positive IC, or a positive \
                 Early voltage"
                    .into(),
            ))
        }
    };
    let mut beta = d.hfe;
    let mut is = 1e-14;
    for _ in 0..100 {
        params.insert(keys::FORWARD_EARLY_VOLTAGE.to_string(), va);
        params.insert(keys::FORWARD_BETA.to_string(), beta);
        params.insert(keys::SATURATION_CURRENT.to_string(), 1.0);
        // Is from VBE (IC is linear in Is).
        let unit = BjtModel::from_parameters(&params, Polarity::Npn, kelvin);
        is = d.vbe_at_ic / unit.evaluate(d.vbe, d.vbe - d.vce).ic;
        if unit.has_knee() {
            // With a knee current IC is not linear in Is (q2 ∝ Is) but grows as Is^a with
            // ½ ≤ a ≤ 1, so Is ← Is·(IC wanted / IC got) at least halves the error in ln Is
            // each time.
            for _ in 0..200 {
                params.insert(keys::SATURATION_CURRENT.to_string(), is);
                let m = BjtModel::from_parameters(&params, Polarity::Npn, kelvin);
                let r = d.vbe_at_ic / m.evaluate(d.vbe, d.vbe - d.vce).ic;
                is *= r;
                if !r.is_finite() || (r - 1.0).abs() < 1e-15 {
                    break;
                }
            }
        }
        params.insert(keys::SATURATION_CURRENT.to_string(), is);
        // βF from hFE: IB = IBE(βF) + IBC, IBE ∝ 1/βF.
        let m = BjtModel::from_parameters(&params, Polarity::Npn, kelvin);
        let v = vbe_for_current(&m, d.hfe_at_ic, d.vce)
            .ok_or_else(|| FitError("no VBE gives the stated hFE current".into()))?;
        let e = m.evaluate(v, v - d.vce);
        let ibc = e.ib - e.ibe;
        let want_ibe = d.hfe_at_ic / d.hfe - ibc;
        if want_ibe <= 0.0 {
            return Err(FitError("hFE is too high for this model to reach".into()));
        }
        let new_beta = beta * e.ibe / want_ibe;
        // VA from hoe by a fixed-point step on hoe ∝ 1/(VA + VCB).
        let new_va = match d.output {
            OutputSlope::EarlyVoltage(va) => va,
            OutputSlope::Hoe { hoe: want, at_ic } => {
                let v = vbe_for_current(&m, at_ic, d.vce)
                    .ok_or_else(|| FitError("no VBE gives the stated hoe current".into()))?;
                let got = hoe(&m, v, d.vce);
                let vcb = d.vce - v;
                ((va + vcb) * got / want - vcb).max(1e-3)
            }
        };
        let done = ((new_beta - beta) / beta).abs() < 1e-14 && ((new_va - va) / va).abs() < 1e-14;
        beta = new_beta;
        va = new_va;
        if done {
            break;
        }
    }
    let out = FittedParameters {
        saturation_current: is,
        forward_beta: beta,
        forward_early_voltage: va,
    };
    if [is, beta, va].iter().any(|v| !(v.is_finite() && *v > 0.0)) {
        return Err(FitError(
            "the figures do not fit this model: check VBE, hFE and hoe".into(),
        ));
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn model_with(p: &FittedParameters, base: &BTreeMap<String, f64>, kelvin: f64) -> BjtModel {
        let mut params = base.clone();
        params.extend(p.to_parameters());
        params.insert(keys::PARAMETER_CELSIUS.to_string(), kelvin - 273.15);
        BjtModel::from_parameters(&params, Polarity::Npn, kelvin)
    }

    #[test]
    fn fitted_model_reproduces_the_given_figures() {
        // Typical small-signal figures (common practice: VBE ≈ 0.65 V at 2 mA, hFE ≈ 250,
        // hoe ≈ 20 µS at 1 mA, VCE = 5 V).
        let d = DatasheetFigures {
            vbe: 0.66,
            vbe_at_ic: 2e-3,
            hfe: 250.0,
            hfe_at_ic: 2e-3,
            output: OutputSlope::Hoe {
                hoe: 20e-6,
                at_ic: 1e-3,
            },
            vce: 5.0,
        };
        let base = BTreeMap::from([(keys::REVERSE_BETA.to_string(), 2.0)]);
        let t = 298.15;
        let p = fit(&d, &base, t).expect("fits");
        let m = model_with(&p, &base, t);
        let (vbe, hfe, h) = figures_of(&m, 2e-3, 2e-3, 1e-3, 5.0).expect("figures");
        // invariant: round trip — the fitted model gives back the figures it was fitted to.
        assert!((vbe - 0.66).abs() < 1e-9, "{vbe}");
        assert!((hfe - 250.0).abs() < 1e-8, "{hfe}");
        assert!((h - 20e-6).abs() < 1e-14, "{h}");
        // source: Gray, Hurst, Lewis, Meyer, "Analysis and Design of Analog Integrated
        // Circuits", ch. 1 — ro = (VA + VCB)/IC for this model, so VA ≈ IC/hoe − VCB.
        assert!((p.forward_early_voltage - (1e-3 / 20e-6 - (5.0 - 0.64))).abs() < 2.0);
    }

    #[test]
    fn fitting_a_models_own_figures_recovers_its_parameters() {
        // invariant: round trip — parameters → figures → fit → the same parameters.
        let base = BTreeMap::new();
        let t = 300.15;
        let truth = FittedParameters {
            saturation_current: 2e-14,
            forward_beta: 180.0,
            forward_early_voltage: 80.0,
        };
        let m = model_with(&truth, &base, t);
        let (vbe, hfe, h) = figures_of(&m, 1e-3, 5e-3, 1e-3, 6.0).expect("figures");
        let d = DatasheetFigures {
            vbe,
            vbe_at_ic: 1e-3,
            hfe,
            hfe_at_ic: 5e-3,
            output: OutputSlope::Hoe {
                hoe: h,
                at_ic: 1e-3,
            },
            vce: 6.0,
        };
        let p = fit(&d, &base, t).expect("fits");
        assert!((p.saturation_current / 2e-14 - 1.0).abs() < 1e-7, "{p:?}");
        assert!((p.forward_beta / 180.0 - 1.0).abs() < 1e-7, "{p:?}");
        assert!((p.forward_early_voltage / 80.0 - 1.0).abs() < 1e-7, "{p:?}");
        // With the Early voltage given directly the other two come back as well.
        let d2 = DatasheetFigures {
            output: OutputSlope::EarlyVoltage(80.0),
            ..d
        };
        let p2 = fit(&d2, &base, t).expect("fits");
        assert!((p2.forward_beta / 180.0 - 1.0).abs() < 1e-7);
    }

    #[test]
    fn fitting_with_a_knee_current_recovers_the_parameters() {
        // invariant: round trip with a knee current in the other parameters (IC is then not
        // linear in Is) — a power part's figures at amperes give back its Is, βF and VA.
        let base = BTreeMap::from([(keys::FORWARD_KNEE_CURRENT.to_string(), 1.5)]);
        let t = 300.15;
        let truth = FittedParameters {
            saturation_current: 1e-12,
            forward_beta: 100.0,
            forward_early_voltage: 100.0,
        };
        let m = model_with(&truth, &base, t);
        let (vbe, hfe, h) = figures_of(&m, 3.0, 2.0, 0.5, 4.0).expect("figures");
        let d = DatasheetFigures {
            vbe,
            vbe_at_ic: 3.0,
            hfe,
            hfe_at_ic: 2.0,
            output: OutputSlope::Hoe { hoe: h, at_ic: 0.5 },
            vce: 4.0,
        };
        // Above the knee hFE is well under βF.
        assert!(hfe < 60.0, "{hfe}");
        let p = fit(&d, &base, t).expect("fits");
        assert!((p.saturation_current / 1e-12 - 1.0).abs() < 1e-7, "{p:?}");
        assert!((p.forward_beta / 100.0 - 1.0).abs() < 1e-7, "{p:?}");
        assert!(
            (p.forward_early_voltage / 100.0 - 1.0).abs() < 1e-6,
            "{p:?}"
        );
    }

    #[test]
    fn nonsense_figures_are_refused_with_a_message() {
        let d = DatasheetFigures {
            vbe: 0.65,
            vbe_at_ic: -1e-3,
            hfe: 100.0,
            hfe_at_ic: 1e-3,
            output: OutputSlope::EarlyVoltage(100.0),
            vce: 5.0,
        };
        assert!(fit(&d, &BTreeMap::new(), 300.0).is_err());
    }
}
