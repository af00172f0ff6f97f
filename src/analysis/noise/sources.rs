//! Noise sources: each one a current-noise generator between two nodes of
//! the linearised network, with its one-sided power spectral density.
//!
//! - Thermal noise of a resistance R: current density 4kT/R (A²/Hz)
//!   (J. B. Johnson, "Thermal agitation of electricity in conductors",
//!   Phys. Rev. 32, 1928; H. Nyquist, "Thermal agitation of electric charge
//!   in conductors", Phys. Rev. 32, 1928).
//! - Shot noise of a current I crossing a junction: 2q·|I| (A²/Hz)
//!   (W. Schottky, "Über spontane Stromschwankungen in verschiedenen
//!   Elektrizitätsleitern", Ann. Phys. 57, 1918).
//! - Flicker noise of a transistor's base current, optional: the base shot
//!   noise times `(1 + fc/f)` with `fc` the part's
//!   `flicker_corner_frequency` (the frequency where flicker and shot noise
//!   of the base current are equal); zero or absent means no flicker noise.
//!
//! All sources are taken as uncorrelated with one another (the usual
//! small-signal noise model; the collector and base shot noises of one
//! transistor are uncorrelated at frequencies well below fT).

use super::network::Node;
use crate::analysis::{BOLTZMANN, ELEMENTARY_CHARGE};
use serde::Serialize;

/// The physical mechanism of a noise source.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Mechanism {
    /// Thermal noise of a resistor's resistance.
    Thermal,
    /// Thermal noise of a transistor's base resistance.
    BaseResistance,
    /// Shot noise of a transistor's collector current.
    CollectorShot,
    /// Shot noise (and optional flicker noise) of a transistor's base current.
    BaseShot,
    /// Shot noise of a diode's current.
    DiodeShot,
    /// Shot noise of a current source marked as a junction current
    /// (a photocurrent).
    SourceShot,
    /// Thermal noise of a field-effect transistor's channel (and its flicker noise).
    ChannelThermal,
    /// Shot noise of a JFET's gate leakage.
    GateShot,
}

impl Mechanism {
    /// Plain words for reports.
    pub fn words(self) -> &'static str {
        match self {
            Mechanism::Thermal => "thermal",
            Mechanism::BaseResistance => "base resistance thermal",
            Mechanism::CollectorShot => "collector shot",
            Mechanism::BaseShot => "base current shot",
            Mechanism::DiodeShot => "diode shot",
            Mechanism::SourceShot => "photocurrent shot",
            Mechanism::ChannelThermal => "channel thermal",
            Mechanism::GateShot => "gate leakage shot",
        }
    }
}

/// One current-noise generator between nodes `a` and `b`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NoiseSource {
    /// The part it belongs to (designator).
    pub designator: String,
    pub mechanism: Mechanism,
    #[serde(skip)]
    pub a: Node,
    #[serde(skip)]
    pub b: Node,
    /// White current density, A²/Hz.
    pub white: f64,
    /// Flicker corner frequency, Hz (0: none).
    pub flicker_corner: f64,
    /// True for the signal source's own resistance.
    pub is_source_resistance: bool,
}

impl NoiseSource {
    /// Thermal noise of `resistance` (Ω) at `kelvin`.
    pub fn thermal(designator: &str, a: Node, b: Node, resistance: f64, kelvin: f64) -> Self {
        NoiseSource {
            designator: designator.to_string(),
            mechanism: Mechanism::Thermal,
            a,
            b,
            white: 4.0 * BOLTZMANN * kelvin / resistance,
            flicker_corner: 0.0,
            is_source_resistance: false,
        }
    }

    /// Shot noise of a current `current` (A, sign ignored).
    pub fn shot(designator: &str, mechanism: Mechanism, a: Node, b: Node, current: f64) -> Self {
        NoiseSource {
            designator: designator.to_string(),
            mechanism,
            a,
            b,
            white: 2.0 * ELEMENTARY_CHARGE * current.abs(),
            flicker_corner: 0.0,
            is_source_resistance: false,
        }
    }

    /// Current density at `frequency`, A²/Hz.
    pub fn density(&self, frequency: f64) -> f64 {
        if self.flicker_corner > 0.0 && frequency > 0.0 {
            self.white * (1.0 + self.flicker_corner / frequency)
        } else {
            self.white
        }
    }

    /// How the source is named in reports, e.g. `Q1 collector shot`.
    pub fn label(&self) -> String {
        if self.is_source_resistance {
            format!("{} thermal (source resistance)", self.designator)
        } else if self.mechanism == Mechanism::BaseShot && self.flicker_corner > 0.0 {
            format!("{} base current shot + flicker", self.designator)
        } else {
            format!("{} {}", self.designator, self.mechanism.words())
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn johnson_density_of_one_kilohm_at_300_kelvin() {
        // source: Johnson (1928) / Nyquist (1928): vn = √(4kTR); 1 kΩ at 300 K ≈ 4.07 nV/√Hz
        // (common practice: "4 nV/√Hz per kΩ at room temperature").
        let s = NoiseSource::thermal("R1", 1, 0, 1e3, 300.0);
        let vn = (s.white * 1e3 * 1e3).sqrt();
        assert!((vn - 4.070e-9).abs() < 0.005e-9, "{vn}");
    }

    #[test]
    fn shot_density_of_one_milliamp() {
        // source: Schottky (1918): in = √(2qI); 1 mA → 17.9 pA/√Hz.
        let s = NoiseSource::shot("D1", Mechanism::DiodeShot, 1, 0, -1e-3);
        assert!((s.white.sqrt() - 17.90e-12).abs() < 0.01e-12);
    }

    #[test]
    fn flicker_doubles_the_density_at_the_corner() {
        // invariant: the corner frequency is defined as where flicker equals shot noise.
        let mut s = NoiseSource::shot("Q1", Mechanism::BaseShot, 1, 0, 1e-6);
        s.flicker_corner = 100.0;
        assert!((s.density(100.0) / s.white - 2.0).abs() < 1e-12);
        assert!((s.density(1e6) / s.white - 1.0).abs() < 1e-3);
    }
}
