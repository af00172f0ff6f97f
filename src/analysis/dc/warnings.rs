//! Designer warnings at an operating point. Each is a `Finding` with
//! severity Warning naming the part (or, for the safety caution, the nets).
//! What a part is warned of is said in its kind's home (`Model::warnings`
//! in `analysis/elements/`); this file orders them and adds the safety
//! caution.

use super::OperatingPoint;
use crate::analysis::circuit::Circuit;
use crate::analysis::elements::device_report::DeviceOperatingPoint;
use crate::analysis::elements::{with_model, At, Model};
use crate::netlist::{Finding, Severity, Subject};
use crate::units::{format, Unit};

/// Above this many volts DC between any two nets the safety caution shows
/// (the ES1 limit of IEC 62368-1 for circuits a person may touch).
pub const SAFETY_LIMIT_VOLTS: f64 = 60.0;
/// βF sensitivity above which the bias "depends strongly on βF".
pub const SENSITIVITY_LIMIT: f64 = 0.5;
/// A collector current below this is flagged as very low.
pub const LOW_COLLECTOR_CURRENT: f64 = 10e-6;
/// Saturation margin below which the collector is "close to saturation", V.
pub const NEAR_SATURATION: f64 = 1.0;
/// A polarised capacitor reversed by more than this is flagged, V.
pub const REVERSED_CAPACITOR: f64 = 0.1;

/// A warning naming `part`.
pub(crate) fn warn(part: &str, message: String) -> Finding {
    Finding {
        severity: Severity::Warning,
        subject: Subject::Part(part.to_string()),
        position: None,
        message,
    }
}

pub(crate) fn v(x: f64) -> String {
    format(x, Unit::Volt)
}
pub(crate) fn a(x: f64) -> String {
    format(x, Unit::Ampere)
}
pub(crate) fn w(x: f64) -> String {
    format(x, Unit::Watt)
}

pub fn designer_warnings(c: &Circuit, op: &OperatingPoint) -> Vec<Finding> {
    let mut out = Vec::new();
    // Devices first, kind by kind in the order the report has always
    // listed them (`DeviceOperatingPoint::warning_rank`), then every other
    // part in element order; each element's warnings come from its home
    // (`Model::warnings`).
    let mut devices: Vec<&DeviceOperatingPoint> = op.devices.iter().collect();
    devices.sort_by_key(|d| d.warning_rank());
    let mut is_device = vec![false; c.elements.len()];
    for d in devices {
        let k = d.report().element();
        is_device[k] = true;
        let at = At::new(c, k);
        with_model!(&c.elements[k].kind, |m| m.warnings(
            &at,
            op,
            Some(d),
            &mut out
        ));
    }
    for (k, e) in c.elements.iter().enumerate() {
        if !is_device[k] {
            let at = At::new(c, k);
            with_model!(&e.kind, |m| m.warnings(&at, op, None, &mut out));
        }
    }

    if op.largest_voltage > SAFETY_LIMIT_VOLTS {
        let (hi, lo) = &op.largest_voltage_nets;
        out.push(Finding {
            severity: Severity::Warning,
            subject: Subject::Net(hi.clone()),
            position: None,
            message: format!(
                "safety caution: {} DC between nets {hi} and {lo} is above {} DC, the ES1 \
                 limit of IEC 62368-1 for circuits a person may touch. Guard the circuit \
                 against contact and follow your local electrical codes; have a licensed \
                 practitioner review anything built to these voltages",
                above_limit(op.largest_voltage, &v as &dyn Fn(f64) -> String),
                v(SAFETY_LIMIT_VOLTS)
            ),
        });
    }
    out
}

/// The largest voltage as printed beside the limit: three significant figures,
/// or as many decimals as it takes not to read as the limit itself (60.01 V,
/// never "60 V … above 60 V").
fn above_limit(volts: f64, v: &dyn Fn(f64) -> String) -> String {
    let three = v(volts);
    if three != v(SAFETY_LIMIT_VOLTS) {
        return three;
    }
    for decimals in 2..=9 {
        let s = format!("{volts:.decimals$}");
        let limit = format!("{SAFETY_LIMIT_VOLTS:.decimals$}");
        if s != limit {
            return format!("{s} V");
        }
    }
    format!("{volts} V")
}
