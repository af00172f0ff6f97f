//! One home per element kind: every question an analysis asks of an
//! element is answered in that kind's own file, and asked through one
//! dispatch ([`with_model!`]) instead of a `match` over
//! [`ElementKind`](crate::analysis::circuit::ElementKind) in each analysis.
//!
//! The asks ([`Model`], one method each, with a "nothing to add" default):
//! - DC: the junction voltages a Newton run starts from and a nonlinear
//!   element is linearised at, the
//!   limit on a Newton step of them, the Newton companion stamp (real, into
//!   any [`Stamp<f64>`]), the exact terminal currents, the voltage a branch
//!   holds, the conductance the rounding allowance counts;
//! - small-signal: the element linearised at the operating point, as linear
//!   elements of a [`LinearCircuit`](crate::analysis::linear::LinearCircuit)
//!   (which the small-signal system stamps, complex, at jω, with the same
//!   [`mna`](crate::analysis::mna) helpers);
//! - time step: the stored charges (slots), each charge and its slopes at a
//!   Newton point, and which pins a charge current enters;
//! - noise: the element's noise generators in the small-signal network;
//! - the operating-point report of a device, into the one list of
//!   [`device_report`]s, and the designer warnings about the element.
//!
//! Files: [`resistor`], [`capacitor`], [`inductor`], [`voltage_source`],
//! [`current_source`], [`diode`], [`bjt`], [`fet`].

pub mod bjt;
mod bjt_warnings;
pub mod capacitor;
pub mod current_source;
pub mod device_report;
pub mod diode;
pub mod fet;
pub mod fet_report;
pub mod inductor;
pub mod kinds;
pub mod per_device;
pub mod resistor;
pub mod voltage_source;

use crate::analysis::circuit::{Circuit, Element};
use crate::analysis::dc::stamps::{Junction, Terminals};
use crate::analysis::dc::OperatingPoint;
use crate::analysis::mna::Stamp;
use crate::analysis::noise::build::Collect;
use crate::analysis::small_signal::Linearising;
use crate::analysis::transient::companion::{ChargeEval, Slot};
use crate::netlist::Finding;
use device_report::DeviceOperatingPoint;

/// What a device's operating-point report is made from.
pub struct ReportInputs<'a> {
    /// The solution: node `n`'s voltage at `n − 1`, then branch currents.
    pub x: &'a [f64],
    /// The element's pin currents (into the pins, A) in its pin order.
    pub pin_currents: &'a [f64],
    /// Σ v·i over its pins, W.
    pub power: f64,
    /// S = ∂IC/∂βF · βF/IC of the element (zero for all but a bipolar).
    pub beta_sensitivity: f64,
    pub ambient_celsius: f64,
}

/// Where an element sits: the circuit, its index there, the element.
#[derive(Clone, Copy)]
pub struct At<'a> {
    pub circuit: &'a Circuit,
    pub index: usize,
    pub element: &'a Element,
}

impl<'a> At<'a> {
    pub fn new(circuit: &'a Circuit, index: usize) -> Self {
        At {
            circuit,
            index,
            element: &circuit.elements[index],
        }
    }
    /// Node of pin `i` (0 when the element has no such pin).
    #[inline]
    pub fn node(&self, i: usize) -> usize {
        self.element.nodes.get(i).copied().unwrap_or(0)
    }
    /// Row of the element's branch current unknown (voltage sources,
    /// inductors).
    #[inline]
    pub fn branch_row(&self) -> usize {
        let b = self.circuit.branch_of[self.index].expect("element has a branch");
        self.circuit.branch_row(b)
    }
}

/// Every ask of an element kind. The defaults say "nothing here" (a linear
/// element has no junction, stores no charge, makes no noise, …).
pub trait Model {
    // DC.
    /// The junction voltages a Newton run starts from (a transistor's
    /// base–emitter junction at its critical voltage, a typical "on" point).
    fn start(&self) -> Junction {
        [0.0, 0.0]
    }
    /// The junction voltages the element is linearised at in `x`
    /// (NPN sense for a transistor: [VBE, VBC] at the internal base; a
    /// diode: [V, 0]).
    fn junction(&self, _e: &Element, _x: &[f64]) -> Junction {
        [0.0, 0.0]
    }
    /// A Newton step of the junction voltages from `old` to `new`, limited;
    /// and whether the limit acted. Elements without a junction keep `old`.
    fn limit(&self, old: Junction, _new: Junction) -> (Junction, bool) {
        (old, false)
    }
    /// The DC Newton companion, linearised at `j`, with every independent
    /// source multiplied by `alpha`.
    fn stamp_dc<S: Stamp<f64>>(&self, at: &At, s: &mut S, j: Junction, alpha: f64);
    /// Exact terminal currents in `x` (device equations, no linearising).
    fn terminals(&self, at: &At, x: &[f64], alpha: f64) -> Terminals;
    /// The voltage the element's branch equation holds (v(a) − v(b)).
    fn branch_voltage(&self, _alpha: f64) -> f64 {
        0.0
    }
    /// The conductance whose rounding counts in the residual allowance.
    fn rounding_conductance(&self, _e: &Element, _x: &[f64]) -> f64 {
        0.0
    }

    // Small-signal.
    /// Add the element, linearised at the operating point, to `out`.
    fn linearise(&self, at: &At, out: &mut Linearising);

    // Time step.
    /// The charges (and fluxes) the element stores.
    fn slots(&self, _at: &At, _out: &mut Vec<Slot>) {}
    /// Slot `s`'s charge and slopes at junctions `j` or solution `x`.
    fn charge(&self, _s: &Slot, _j: Junction, _x: &[f64]) -> ChargeEval {
        unreachable!("a slot belongs to an element that stores charge")
    }
    /// Add slot `s`'s current `i` to the element's pin currents `pins`.
    fn slot_pins(&self, _s: &Slot, _i: f64, _pins: &mut [f64]) {}

    /// How near its edges a transistor came over the sampled solutions
    /// `states` (the regions it visits, its nearest approach to each edge);
    /// nothing for other elements. The clip search names the first limit
    /// from these.
    fn excursions(
        &self,
        _at: &At,
        _states: &[Vec<f64>],
        _out: &mut Vec<crate::analysis::transient::clip::Excursion>,
        _near: &mut Vec<crate::analysis::transient::clip::Approach>,
    ) {
    }

    // Noise.
    /// The element's noise generators (and what the noise report keeps of it).
    fn noise(&self, _at: &At, _out: &mut Collect) {}

    /// Are its currents nonlinear in its voltages (a junction device)? The
    /// time step then iterates Newton to convergence; a circuit of linear
    /// elements alone is solved once a step.
    fn nonlinear(&self) -> bool {
        false
    }

    // Its place in the circuit (the more-than-one-DC-state check).
    /// A transistor: its junction pair when it is off and the name of its
    /// main current ("IC", "ID"); None for any other element.
    fn transistor_off(&self) -> Option<(Junction, &'static str)> {
        None
    }
    /// Does it join its pins by a DC path whose current is not controlled
    /// from elsewhere (a resistor, an inductor, a diode, a voltage source)?
    fn joins_pins_at_dc(&self) -> bool {
        false
    }
    /// Two nodes it makes one point (a bipolar's base pin and its
    /// internal base behind the base resistance).
    fn one_point(&self, _e: &Element) -> Option<(usize, usize)> {
        None
    }
    /// A voltage source (one end on ground fixes the other's voltage).
    fn is_voltage_source(&self) -> bool {
        false
    }

    // The operating point.
    /// A device's report at the solved point (None: not a device).
    fn report(&self, _at: &At, _inputs: &ReportInputs) -> Option<DeviceOperatingPoint> {
        None
    }
    /// Designer warnings about the element at the solved point `op`
    /// (`report`: its own device report, None for a part that is not a device).
    fn warnings(
        &self,
        _at: &At,
        _op: &OperatingPoint,
        _report: Option<&DeviceOperatingPoint>,
        _out: &mut Vec<Finding>,
    ) {
    }
}

pub(crate) use kinds::with_model;

#[cfg(test)]
mod tests;

#[cfg(test)]
mod fet_reference_tests;
