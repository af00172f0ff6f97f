//! One list of device reports: the operating point keeps every nonlinear
//! device's report (bipolar transistor, field-effect transistor, diode) in
//! one list in element order, each made in its kind's own home through
//! [`Model::report`](super::Model::report). What every kind answers alike
//! — its part, designator, power, junction temperature, the state in words
//! and the lines the editor's hover shows — is the [`DeviceReport`] trait,
//! so a reader that treats devices alike needs no change for a new kind;
//! a reader that needs one kind's own figures asks for that kind
//! ([`OperatingPoint::transistors`](crate::analysis::dc::OperatingPoint::transistors)
//! and its siblings).

pub use super::kinds::DeviceOperatingPoint;
use crate::analysis::dc::{DiodeOperatingPoint, DiodeState, TransistorOperatingPoint};
use crate::analysis::elements::fet_report::FetOperatingPoint;
use crate::units::{format as u, Unit};

/// What every device's operating-point report answers, whatever its kind.
pub trait DeviceReport {
    /// The document part it was made from.
    fn part(&self) -> usize;
    /// Index into `Circuit::elements`.
    fn element(&self) -> usize;
    fn designator(&self) -> &str;
    /// Power absorbed, W.
    fn power(&self) -> f64;
    /// Junction temperature, °C, when a thermal resistance is given.
    fn junction_celsius(&self) -> Option<f64>;
    /// Region or state in plain words ("forward active", "conducting").
    fn state_words(&self) -> &'static str;
    /// The bias lines the editor's hover readout shows under the state.
    fn readout(&self) -> Vec<String>;
}

/// The getters every report answers from its own fields of the same names
/// (`part`, `element`, `designator`, `power`).
macro_rules! report_fields {
    () => {
        fn part(&self) -> usize {
            self.part
        }
        fn element(&self) -> usize {
            self.element
        }
        fn designator(&self) -> &str {
            &self.designator
        }
        fn power(&self) -> f64 {
            self.power
        }
    };
}

impl DeviceReport for TransistorOperatingPoint {
    report_fields!();
    fn junction_celsius(&self) -> Option<f64> {
        self.junction_celsius
    }
    fn state_words(&self) -> &'static str {
        self.region.words()
    }
    fn readout(&self) -> Vec<String> {
        vec![
            format!(
                "VBE {}, VCE {}, hFE {:.0}",
                u(self.vbe, Unit::Volt),
                u(self.vce, Unit::Volt),
                self.dc_current_gain
            ),
            format!(
                "margin to saturation {}, above cut-off {}",
                u(self.saturation_margin, Unit::Volt),
                u(self.cutoff_margin, Unit::Volt)
            ),
        ]
    }
}

impl DeviceReport for FetOperatingPoint {
    report_fields!();
    fn junction_celsius(&self) -> Option<f64> {
        self.junction_celsius
    }
    fn state_words(&self) -> &'static str {
        self.region.words()
    }
    fn readout(&self) -> Vec<String> {
        vec![
            format!(
                "VGS {}, VDS {}, gm {}",
                u(self.measured_vgs(), Unit::Volt),
                u(self.measured_vds(), Unit::Volt),
                u(self.gm, Unit::Siemens)
            ),
            format!(
                "margin to the triode edge {}",
                u(self.triode_margin, Unit::Volt)
            ),
        ]
    }
}

impl DeviceReport for DiodeOperatingPoint {
    report_fields!();
    fn junction_celsius(&self) -> Option<f64> {
        None
    }
    fn state_words(&self) -> &'static str {
        match self.state {
            DiodeState::Forward => "conducting",
            DiodeState::Off => "off",
            DiodeState::Reverse => "reverse-biased",
        }
    }
    fn readout(&self) -> Vec<String> {
        Vec::new()
    }
}
