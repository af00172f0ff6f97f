//! Junction diode: Shockley equation I = Is·(exp(V/(n·VT)) − 1) with an
//! optional series resistance (stamped by the circuit as a resistor to an
//! internal anode node).

use super::{critical_voltage, kelvin, limit_junction, limited_exp};
use crate::analysis::thermal_voltage;
use crate::presets::keys;
use serde::Serialize;
use std::collections::BTreeMap;

/// Ratings a designer checks; `None` where the part does not say.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct DiodeRatings {
    pub max_forward_current: Option<f64>,
    pub max_reverse_voltage: Option<f64>,
    pub max_power: Option<f64>,
}

/// Diode parameters at the analysis temperature.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DiodeModel {
    pub saturation_current: f64,
    pub emission_coefficient: f64,
    pub series_resistance: f64,
    pub junction_capacitance: f64,
    pub junction_potential: f64,
    pub grading: f64,
    pub transit_time: f64,
    pub thermal_voltage: f64,
    pub ratings: DiodeRatings,
}

impl DiodeModel {
    /// Build from effective parameters and apply the usual diode temperature law
    /// Is(T) = Is·(T/T0)^(η/n)·exp((Eg/(n·VT))·(T/T0 − 1)), VT at T.
    pub fn from_parameters(params: &BTreeMap<String, f64>, kelvin_now: f64) -> Self {
        let get = |k: &str, d: f64| params.get(k).copied().unwrap_or(d);
        let opt = |k: &str| params.get(k).copied();
        let t0 = kelvin(get(keys::PARAMETER_CELSIUS, 27.0));
        let vt = thermal_voltage(kelvin_now);
        let ratio = kelvin_now / t0;
        let n = get(keys::EMISSION_COEFFICIENT, 1.0);
        let eta = get(keys::SATURATION_CURRENT_TEMPERATURE_EXPONENT, 3.0);
        let eg = get(keys::BAND_GAP, 1.11);
        let is0 = get(keys::SATURATION_CURRENT, 1e-14);
        DiodeModel {
            saturation_current: is0 * ratio.powf(eta / n) * ((eg / (n * vt)) * (ratio - 1.0)).exp(),
            emission_coefficient: n,
            series_resistance: get(keys::SERIES_RESISTANCE, 0.0),
            junction_capacitance: get(keys::JUNCTION_CAPACITANCE, 0.0),
            junction_potential: get(keys::JUNCTION_POTENTIAL, 0.75),
            grading: get(keys::GRADING, 0.33),
            transit_time: get(keys::TRANSIT_TIME, 0.0),
            thermal_voltage: vt,
            ratings: DiodeRatings {
                max_forward_current: opt(keys::MAX_FORWARD_CURRENT),
                max_reverse_voltage: opt(keys::MAX_REVERSE_VOLTAGE),
                max_power: opt(keys::MAX_POWER),
            },
        }
    }

    /// Current from anode to cathode through the junction, and its slope.
    pub fn evaluate(&self, v: f64) -> (f64, f64) {
        let n_vt = self.emission_coefficient * self.thermal_voltage;
        let (e, de) = limited_exp(v / n_vt);
        (
            self.saturation_current * (e - 1.0),
            self.saturation_current * de / n_vt,
        )
    }

    /// Critical-voltage limiting of a Newton step (Nagel 1975).
    pub fn limit_step(&self, old: f64, new: f64) -> (f64, bool) {
        let n_vt = self.emission_coefficient * self.thermal_voltage;
        limit_junction(
            new,
            old,
            n_vt,
            critical_voltage(n_vt, self.saturation_current),
        )
    }

    /// Junction voltage at which the diode carries 100 nA (the "on" rule).
    pub fn on_voltage(&self) -> f64 {
        self.emission_coefficient
            * self.thermal_voltage
            * (1.0 + super::bjt::ON_CURRENT / self.saturation_current).ln()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shockley_equation_and_temperature_law() {
        let mut p = BTreeMap::new();
        p.insert(keys::EMISSION_COEFFICIENT.to_string(), 2.0);
        let t = kelvin(60.0);
        let d = DiodeModel::from_parameters(&p, t);
        let t0 = kelvin(27.0);
        let vt = thermal_voltage(t);
        // from memory: the usual diode temperature law, Is(T) = Is·(T/T0)^(η/n)·exp((Eg/(n·VT))·(T/T0 − 1)).
        let is = 1e-14 * (t / t0).powf(1.5) * ((1.11 / (2.0 * vt)) * (t / t0 - 1.0)).exp();
        assert!((d.saturation_current - is).abs() < 1e-12 * is);
        // source: W. Shockley, Bell System Technical Journal 28 (1949) — I = Is·(exp(V/(n·VT)) − 1).
        let (i, g) = d.evaluate(0.9);
        let want = is * ((0.9 / (2.0 * vt)).exp() - 1.0);
        assert!((i - want).abs() < 1e-12 * want);
        assert!((g - is * (0.9 / (2.0 * vt)).exp() / (2.0 * vt)).abs() < 1e-12 * g);
    }
}
