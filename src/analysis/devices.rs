//! Device equations, one module per device (see the reference page).
//!
//! CONTRACT (implemented in the DC work):
//! ```text
//! pub mod bjt {
//!     pub enum Polarity { Npn, Pnp }
//!     pub struct BjtModel {      // parameters at the analysis temperature
//!         pub polarity: Polarity,
//!         pub saturation_current: f64, pub forward_beta: f64, pub reverse_beta: f64,
//!         pub forward_early_voltage: f64, pub reverse_early_voltage: f64,
//!         pub forward_emission: f64, pub reverse_emission: f64,
//!         pub base_resistance: f64,
//!         pub emitter_capacitance: f64, pub collector_capacitance: f64,  // zero-bias
//!         pub emitter_potential: f64, pub collector_potential: f64,
//!         pub emitter_grading: f64, pub collector_grading: f64,
//!         pub forward_transit_time: f64,
//!         pub thermal_voltage: f64,
//!         pub ratings: BjtRatings,   // Option<f64> each: vceo, vcbo, vebo, ic, power, θJA, TJmax
//!     }
//!     /// Currents and derivatives in NPN sense (for a PNP, callers negate
//!     /// voltages in and currents out): vbe, vbc intrinsic junction voltages.
//!     pub struct BjtEval { pub ic: f64, pub ib: f64,
//!         pub dic_dvbe: f64, pub dic_dvbc: f64, pub dib_dvbe: f64, pub dib_dvbc: f64 }
//!     impl BjtModel {
//!         pub fn from_parameters(params: &BTreeMap<String, f64>, polarity: Polarity, kelvin: f64) -> Self;
//!         pub fn evaluate(&self, vbe: f64, vbc: f64) -> BjtEval;
//!         /// Cπ = τF·gm + Cje(VBE), Cμ = Cjc(VBC), NPN sense
//!         pub fn capacitances(&self, vbe: f64, vbc: f64, gm: f64) -> (f64, f64);
//!     }
//!     pub fn depletion_capacitance(c0: f64, v: f64, phi: f64, m: f64) -> f64;
//! }
//! pub mod diode { pub struct DiodeModel { .. } impl DiodeModel { pub fn evaluate(&self, v: f64) -> (f64 /*i*/, f64 /*di/dv*/); } }
//! ```
