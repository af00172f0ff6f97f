//! The element-kind table: the analysis half of a part kind's descriptor
//! (the document half is `document::kinds`; the layers keep them apart).
//! A new kind adds one row to each list here — its [`ElementKind`]
//! variant, how a part becomes one ([`element_kind`]), its [`Model`] in the
//! one dispatch ([`with_model!`]) and, when it reports as a device, its
//! [`DeviceOperatingPoint`] variant — and everything else in its own
//! files (`devices/KIND.rs`, `elements/KIND.rs`, its symbol).

use super::device_report::DeviceReport;
use super::fet_report::FetOperatingPoint;
use crate::analysis::circuit::Node;
use crate::analysis::dc::{DiodeOperatingPoint, TransistorOperatingPoint};
use crate::analysis::devices::bjt::{BjtModel, Polarity};
use crate::analysis::devices::diode::DiodeModel;
use crate::analysis::devices::fet::{Channel, FetKind, FetModel};
use crate::analysis::AnalysisError;
use crate::document::PartKind;
use crate::presets::keys;
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Debug, Clone, PartialEq)]
pub enum ElementKind {
    Resistor {
        resistance: f64,
    },
    Capacitor {
        capacitance: f64,
    },
    Inductor {
        inductance: f64,
    },
    /// Rails, DC sources and the signal source (dc = its DC offset, ac = amplitude).
    VoltageSource {
        dc: f64,
        ac: f64,
        is_signal: bool,
        is_rail: bool,
    },
    /// Drives `dc` amperes out of its `out` pin (into the circuit there).
    CurrentSource {
        dc: f64,
    },
    Diode(DiodeModel),
    /// `internal_base` is the node behind the base resistance (== the base
    /// pin's node when rb = 0).
    Bjt {
        model: BjtModel,
        internal_base: Node,
    },
    /// A JFET or MOSFET, pins (drain, gate, source).
    Fet(FetModel),
}

impl ElementKind {
    /// Does this element own a branch current unknown at DC?
    pub fn has_dc_branch(&self) -> bool {
        matches!(
            self,
            ElementKind::VoltageSource { .. } | ElementKind::Inductor { .. }
        )
    }
}

/// What the circuit builder hands a kind's row: the part, its parameters
/// (defaults ← preset ← part) and its nodes, which a row may extend (a
/// rail's ground, an internal node behind a series resistance).
pub struct Building<'a> {
    pub label: &'a str,
    pub kind: PartKind,
    pub params: &'a BTreeMap<String, f64>,
    /// Analysis temperature, K.
    pub kelvin: f64,
    pub nodes: &'a mut Vec<Node>,
    pub internal_nodes: &'a mut Vec<Node>,
    pub node_names: &'a mut Vec<String>,
}

impl Building<'_> {
    fn get(&self, k: &str) -> Option<f64> {
        self.params.get(k).copied()
    }
    /// A value the kind cannot do without.
    fn value(&self, k: &str) -> Result<f64, AnalysisError> {
        match self.get(k) {
            Some(v) if v.is_finite() => Ok(v),
            _ => Err(AnalysisError::Singular {
                message: format!("{} has no usable {k}: set a finite value", self.label),
            }),
        }
    }
    /// A new internal node named `name`.
    fn new_node(&mut self, name: String) -> Node {
        self.node_names.push(name);
        self.node_names.len() - 1
    }
}

/// The element a part becomes (ground symbols make none; the builder skips them).
pub fn element_kind(b: &mut Building) -> Result<ElementKind, AnalysisError> {
    Ok(match b.kind {
        PartKind::Ground => unreachable!("skipped above"),
        PartKind::Resistor => ElementKind::Resistor {
            resistance: b.value(keys::RESISTANCE)?,
        },
        PartKind::Capacitor | PartKind::PolarisedCapacitor => ElementKind::Capacitor {
            capacitance: b.value(keys::CAPACITANCE)?,
        },
        PartKind::Inductor => ElementKind::Inductor {
            inductance: b.value(keys::INDUCTANCE)?,
        },
        PartKind::VoltageSource => ElementKind::VoltageSource {
            dc: b.value(keys::VOLTAGE)?,
            ac: 0.0,
            is_signal: false,
            is_rail: false,
        },
        PartKind::Rail => {
            b.nodes.push(0);
            ElementKind::VoltageSource {
                dc: b.value(keys::VOLTAGE)?,
                ac: 0.0,
                is_signal: false,
                is_rail: true,
            }
        }
        PartKind::SignalSource => ElementKind::VoltageSource {
            dc: b.get(keys::DC_OFFSET).unwrap_or(0.0),
            ac: b.get(keys::AMPLITUDE).unwrap_or(0.0),
            is_signal: true,
            is_rail: false,
        },
        PartKind::CurrentSource => ElementKind::CurrentSource {
            dc: b.value(keys::CURRENT)?,
        },
        PartKind::Diode => {
            let model = DiodeModel::from_parameters(b.params, b.kelvin);
            if model.series_resistance > 0.0 {
                let n = b.new_node(format!("{}.anode'", b.label));
                b.internal_nodes.push(n);
            }
            ElementKind::Diode(model)
        }
        PartKind::NJfet | PartKind::PJfet | PartKind::NMosfet | PartKind::PMosfet => {
            let (kind, channel) = match b.kind {
                PartKind::NJfet => (FetKind::Jfet, Channel::N),
                PartKind::PJfet => (FetKind::Jfet, Channel::P),
                PartKind::NMosfet => (FetKind::Mosfet, Channel::N),
                _ => (FetKind::Mosfet, Channel::P),
            };
            ElementKind::Fet(FetModel::from_parameters(b.params, kind, channel, b.kelvin))
        }
        PartKind::Npn | PartKind::Pnp => {
            let polarity = if b.kind == PartKind::Npn {
                Polarity::Npn
            } else {
                Polarity::Pnp
            };
            let model = BjtModel::from_parameters(b.params, polarity, b.kelvin);
            let internal_base = if model.base_resistance > 0.0 {
                let n = b.new_node(format!("{}.base'", b.label));
                b.internal_nodes.push(n);
                n
            } else {
                b.nodes[1]
            };
            ElementKind::Bjt {
                model,
                internal_base,
            }
        }
    })
}

/// The one dispatch: bind `$m` to the [`Model`] of element kind `$kind`
/// (a `&ElementKind`) and evaluate `$body`.
macro_rules! with_model {
    ($kind:expr, |$m:ident| $body:expr) => {{
        use $crate::analysis::elements as el;
        use $crate::analysis::elements::kinds::ElementKind as K;
        match $kind {
            K::Resistor { resistance } => {
                let $m = el::resistor::Resistor {
                    resistance: *resistance,
                };
                $body
            }
            K::Capacitor { capacitance } => {
                let $m = el::capacitor::Capacitor {
                    capacitance: *capacitance,
                };
                $body
            }
            K::Inductor { inductance } => {
                let $m = el::inductor::Inductor {
                    inductance: *inductance,
                };
                $body
            }
            K::VoltageSource {
                dc, ac, is_signal, ..
            } => {
                let $m = el::voltage_source::VoltageSource {
                    dc: *dc,
                    ac: *ac,
                    is_signal: *is_signal,
                };
                $body
            }
            K::CurrentSource { dc } => {
                let $m = el::current_source::CurrentSource { dc: *dc };
                $body
            }
            K::Diode(model) => {
                let $m = el::diode::Diode { model };
                $body
            }
            K::Bjt {
                model,
                internal_base,
            } => {
                let $m = el::bjt::Bjt {
                    model,
                    internal_base: *internal_base,
                };
                $body
            }
            K::Fet(model) => {
                let $m = el::fet::Fet { model };
                $body
            }
        }
    }};
}
pub(crate) use with_model;

/// One device's report, by kind.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum DeviceOperatingPoint {
    Bipolar(TransistorOperatingPoint),
    FieldEffect(FetOperatingPoint),
    Diode(DiodeOperatingPoint),
}

impl DeviceOperatingPoint {
    /// The report as the trait every kind answers.
    pub fn report(&self) -> &dyn DeviceReport {
        match self {
            DeviceOperatingPoint::Bipolar(t) => t,
            DeviceOperatingPoint::FieldEffect(f) => f,
            DeviceOperatingPoint::Diode(d) => d,
        }
    }
    /// Where the kind's warnings stand among the designer warnings: the
    /// order the report has always listed them in (field-effect, bipolar,
    /// diodes), the devices of one kind in element order. A new kind takes
    /// its place here.
    pub fn warning_rank(&self) -> u8 {
        match self {
            DeviceOperatingPoint::FieldEffect(_) => 0,
            DeviceOperatingPoint::Bipolar(_) => 1,
            DeviceOperatingPoint::Diode(_) => 2,
        }
    }
    pub fn as_bipolar(&self) -> Option<&TransistorOperatingPoint> {
        match self {
            DeviceOperatingPoint::Bipolar(t) => Some(t),
            _ => None,
        }
    }
    pub fn as_field_effect(&self) -> Option<&FetOperatingPoint> {
        match self {
            DeviceOperatingPoint::FieldEffect(f) => Some(f),
            _ => None,
        }
    }
    pub fn as_diode(&self) -> Option<&DiodeOperatingPoint> {
        match self {
            DeviceOperatingPoint::Diode(d) => Some(d),
            _ => None,
        }
    }
}
