//! The analysis engine: DC operating point, small-signal models, stage
//! figures and frequency response. No GUI types here.
//!
//! Contract between the pieces (keep it true when changing them):
//! - [`circuit::Circuit`] is built once from a document and its netlist; its
//!   node 0 is ground, nodes `1..=node_count` are unknowns. Every net maps to
//!   a node; a transistor with a base resistance adds an internal base node.
//! - [`dc::solve`] returns an [`dc::OperatingPoint`] holding every net's
//!   voltage, every pin's current (positive *into* the pin), every part's
//!   power, and for each transistor its intrinsic junction voltages, so the
//!   small-signal code can evaluate the device model there.
//! - Device equations live in [`devices`], one file per device, exactly as in
//!   the published models (Gummel–Poon subset: H. K. Gummel and H. C. Poon,
//!   Bell System Technical Journal 49, 1970; Shockley diode: W. Shockley,
//!   Bell System Technical Journal 28, 1949).
//! - [`mna`] is the circuit core every analysis builds on: the element-kind
//!   stamp helpers, generic over real and complex scalars (DC stamps its
//!   companion models with them, the small-signal and noise systems their
//!   admittances at jω, a time step its charge companions); `mna::fold`, the
//!   one routine that takes nodes held by grounded sources out of a system;
//!   and one solver choice (dense LU up to `Scalar::DENSE_LIMIT` unknowns,
//!   sparse LU with reused symbolic analysis above), with `mna::Transposed`
//!   for adjoint solves.
//! - [`dc::newton`] states the convergence tolerances (update and KCL
//!   residual both) and the iteration caps; [`dc::stamps`] asks every
//!   element for its DC companion model and its exact terminal currents.
//! - [`elements`] is the one home of each element kind (resistor,
//!   capacitor, inductor, voltage source, current source, diode,
//!   transistor): one trait, [`elements::Model`], answers every ask — DC
//!   companion, terminal currents, junction start and step limit,
//!   small-signal linearisation, charges for the time step, noise
//!   generators — and the analyses ask through one dispatch,
//!   `elements::with_model!`.
//! - [`fit`] fits saturation current, βF and VA to datasheet figures.
//! - [`small_signal::linearise`] turns a circuit and its operating point into
//!   a [`linear::LinearCircuit`] (hybrid-π per transistor, g and C per diode);
//!   [`stages::recognise`] reads the signal chain from the topology alone;
//!   [`figures::midband`] computes Zin, Zout, Av, Ai exactly by the cuts the
//!   stages name, beside the [`estimates`]; [`ac::sweep`] gives the response.
//! - [`noise`] puts the noise generators of every resistance and junction
//!   current on the small-signal circuit of [`small_signal::linearise`]
//!   and finds each one's output density by one transposed solve per
//!   frequency; noise figure, en/in, the better collector current (one
//!   transistor scaled through its element handles).

pub mod ac;
pub mod assess;
pub mod blocks;
pub mod circuit;
pub mod corners;
pub mod dc;
pub mod devices;
pub(crate) mod elements;
pub(crate) mod estimates;
pub(crate) mod estimates_fet;
pub mod figures;
pub mod figures_cut;
pub(crate) mod figures_ports;
pub mod fit;
pub mod fit_charge;
pub mod fit_fet;
pub mod fit_line;
pub mod linear;
pub(crate) mod mna;
/// Below this many unknowns the real solves use dense LU, above it sparse LU.
pub use mna::DENSE_LIMIT;
pub mod noise;
pub mod small_signal;
pub mod stability;
pub mod stages;
pub mod transient;
pub mod two_port;

/// Boltzmann constant, J/K (exact, SI 2019).
pub const BOLTZMANN: f64 = 1.380649e-23;
/// Elementary charge, C (exact, SI 2019).
pub const ELEMENTARY_CHARGE: f64 = 1.602176634e-19;
/// 0 °C in kelvin.
pub const ZERO_CELSIUS: f64 = 273.15;

/// Thermal voltage k·T/q at `kelvin`.
pub fn thermal_voltage(kelvin: f64) -> f64 {
    BOLTZMANN * kelvin / ELEMENTARY_CHARGE
}

/// Why an analysis could not produce a result. Every variant names the parts
/// or nets involved and says what to try.
#[derive(Debug, Clone, PartialEq)]
pub enum AnalysisError {
    /// The rules check found errors; they are listed.
    Rules(Vec<crate::netlist::Finding>),
    /// The circuit equations have no unique solution.
    Singular { message: String },
    /// Newton iterations did not converge even with every aid.
    NoConvergence { message: String },
}

impl std::fmt::Display for AnalysisError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            AnalysisError::Rules(findings) => {
                writeln!(f, "the rules check found errors:")?;
                for x in findings {
                    writeln!(f, "  {x}")?;
                }
                Ok(())
            }
            AnalysisError::Singular { message } | AnalysisError::NoConvergence { message } => {
                f.write_str(message)
            }
        }
    }
}

impl std::error::Error for AnalysisError {}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn thermal_voltage_at_27_and_25_celsius() {
        // source: BIPM, The International System of Units (SI Brochure, 9th ed., 2019) — exact
        // k and q give VT = 25.865 mV at 27 °C, 25.693 mV at 25 °C.
        assert!((thermal_voltage(27.0 + ZERO_CELSIUS) - 25.865e-3).abs() < 0.5e-6);
        assert!((thermal_voltage(25.0 + ZERO_CELSIUS) - 25.693e-3).abs() < 0.5e-6);
    }
}
