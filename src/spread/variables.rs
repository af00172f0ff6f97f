//! What varies from board to board: each part's value within its tolerance,
//! each transistor's βF over its range and VBE through Is, and the ambient
//! temperature. Defaults by kind are common practice (see `default_tolerance`).

use crate::document::{Document, PartKind};
use crate::presets::{effective_parameters, keys};

/// Which number of the document a variable moves.
#[derive(Debug, Clone, PartialEq)]
pub enum Target {
    /// A part parameter, scaled: value = nominal × factor.
    Parameter { part: usize, key: &'static str },
    /// A transistor's VBE shift in volts, applied through its saturation current.
    VbeShift { part: usize },
    /// The ambient temperature, °C.
    Ambient,
}

/// One source of spread, with its limits in its own unit.
#[derive(Debug, Clone, PartialEq)]
pub struct Variable {
    /// How the variable is named in reports: `R1`, `βF(Q1)`, `VBE(Q1)`, `ambient`.
    pub name: String,
    pub target: Target,
    pub nominal: f64,
    pub low: f64,
    pub high: f64,
    /// Index of the matched group the part belongs to, if any.
    pub group: Option<usize>,
}

/// Tolerance by kind when a part gives none, as (minus, plus) fractions.
/// common practice: resistors 5 %, film capacitors 10 %, electrolytics −20 %/+80 %.
pub fn default_tolerance(kind: PartKind) -> Option<(f64, f64)> {
    kind.info().tolerance
}

/// Default VBE spread at fixed IC when a transistor gives none, ± volts.
/// common practice: a few tens of millivolts between parts of one type; 10 mV
/// is taken as the ± limit.
pub const DEFAULT_VBE_SPREAD: f64 = 0.010;

/// Collect every variable of a document, in sheet order, temperature last.
pub fn collect(doc: &Document) -> Vec<Variable> {
    let mut out = Vec::new();
    let group_of = |designator: &str| {
        doc.spread
            .matched
            .iter()
            .position(|g| g.parts.iter().any(|p| p == designator))
    };
    let off_board = off_board_parts(doc);
    for (i, part) in doc.parts.iter().enumerate() {
        let params = effective_parameters(part);
        let group = group_of(&part.designator);
        if let Some(key) = value_key(part.kind) {
            let Some(nominal) = params.get(key).copied() else {
                continue;
            };
            let (minus, plus) = match (
                params.get(keys::TOLERANCE_MINUS),
                params.get(keys::TOLERANCE_PLUS),
                params.get(keys::TOLERANCE),
            ) {
                (Some(m), Some(p), _) => (*m, *p),
                (_, _, Some(t)) => (*t, *t),
                // The signal source's own resistance and the load stand for the
                // world outside the board: no default tolerance for them.
                _ if off_board.contains(&i) => continue,
                _ => match default_tolerance(part.kind) {
                    Some(t) => t,
                    None => continue,
                },
            };
            if minus == 0.0 && plus == 0.0 {
                continue;
            }
            out.push(Variable {
                name: part.designator.clone(),
                target: Target::Parameter { part: i, key },
                nominal,
                low: nominal * (1.0 - minus),
                high: nominal * (1.0 + plus),
                group,
            });
        }
        if part.kind.is_fet() {
            fet_variables(i, part, &params, group, &mut out);
        }
        if part.kind.is_bipolar() {
            let beta = params.get(keys::FORWARD_BETA).copied().unwrap_or(100.0);
            // common practice: β of one part type spans about 3:1, so by default
            // half to one and a half times the typical value.
            let low = params
                .get(keys::FORWARD_BETA_MIN)
                .copied()
                .unwrap_or(beta * 0.5);
            let high = params
                .get(keys::FORWARD_BETA_MAX)
                .copied()
                .unwrap_or(beta * 1.5);
            out.push(Variable {
                name: format!("βF({})", part.designator),
                target: Target::Parameter {
                    part: i,
                    key: keys::FORWARD_BETA,
                },
                nominal: beta,
                low,
                high,
                group,
            });
            let dv = params
                .get(keys::BASE_EMITTER_VOLTAGE_SPREAD)
                .copied()
                .unwrap_or(DEFAULT_VBE_SPREAD);
            if dv > 0.0 {
                out.push(Variable {
                    name: format!("VBE({})", part.designator),
                    target: Target::VbeShift { part: i },
                    nominal: 0.0,
                    low: -dv,
                    high: dv,
                    group,
                });
            }
        }
    }
    let (tmin, tmax) = (
        doc.spread.ambient_min_celsius,
        doc.spread.ambient_max_celsius,
    );
    if tmax > tmin {
        out.push(Variable {
            name: "ambient".into(),
            target: Target::Ambient,
            nominal: doc.analysis.ambient_celsius,
            low: tmin,
            high: tmax,
            group: None,
        });
    }
    out
}

/// Default spread of a JFET's IDSS when the part gives no limits, as
/// fractions of the typical value (common practice: one JFET type's IDSS
/// spans 3:1 or more — 0.5× to 1.5× is 3:1).
pub const DEFAULT_IDSS_SPREAD: (f64, f64) = (0.5, 1.5);
/// Default spread of a JFET's pinch-off voltage, fractions of the typical
/// (common practice: about 2:1 within one type).
pub const DEFAULT_PINCH_OFF_SPREAD: (f64, f64) = (0.65, 1.35);
/// Default spread of a MOSFET's threshold, ± volts (common practice: a
/// datasheet's VGS(th) runs about a volt from its minimum to its maximum).
pub const DEFAULT_THRESHOLD_SPREAD: f64 = 0.5;

/// A FET's spread: a JFET's IDSS and pinch-off voltage (from
/// `zero_gate_drain_current_min/max` and `threshold_voltage_min/max`, else
/// the defaults above), a MOSFET's threshold; each as its own variable so
/// the worst case reaches the corners a datasheet's minimum and maximum
/// allow.
fn fet_variables(
    i: usize,
    part: &crate::document::Part,
    params: &std::collections::BTreeMap<String, f64>,
    group: Option<usize>,
    out: &mut Vec<Variable>,
) {
    use crate::analysis::devices::fet::keys as fet;
    let d = &part.designator;
    let jfet = matches!(part.kind, PartKind::NJfet | PartKind::PJfet);
    let vto = params
        .get(fet::THRESHOLD_VOLTAGE)
        .copied()
        .unwrap_or(if jfet { -2.0 } else { 2.0 });
    if jfet {
        let beta = params
            .get(fet::TRANSCONDUCTANCE_PARAMETER)
            .copied()
            .unwrap_or(1e-3);
        let idss = params
            .get(fet::ZERO_GATE_DRAIN_CURRENT)
            .copied()
            .unwrap_or(beta * vto * vto);
        let (lo, hi) = DEFAULT_IDSS_SPREAD;
        out.push(Variable {
            name: format!("IDSS({d})"),
            target: Target::Parameter {
                part: i,
                key: fet::ZERO_GATE_DRAIN_CURRENT,
            },
            nominal: idss,
            low: params
                .get(fet::ZERO_GATE_DRAIN_CURRENT_MIN)
                .copied()
                .unwrap_or(idss * lo),
            high: params
                .get(fet::ZERO_GATE_DRAIN_CURRENT_MAX)
                .copied()
                .unwrap_or(idss * hi),
            group,
        });
        let (lo, hi) = DEFAULT_PINCH_OFF_SPREAD;
        let (a, b) = (vto * lo, vto * hi);
        out.push(Variable {
            name: format!("VP({d})"),
            target: Target::Parameter {
                part: i,
                key: fet::THRESHOLD_VOLTAGE,
            },
            nominal: vto,
            low: params
                .get(fet::THRESHOLD_VOLTAGE_MIN)
                .copied()
                .unwrap_or(a.min(b)),
            high: params
                .get(fet::THRESHOLD_VOLTAGE_MAX)
                .copied()
                .unwrap_or(a.max(b)),
            group,
        });
    } else {
        out.push(Variable {
            name: format!("VGS(th)({d})"),
            target: Target::Parameter {
                part: i,
                key: fet::THRESHOLD_VOLTAGE,
            },
            nominal: vto,
            low: params
                .get(fet::THRESHOLD_VOLTAGE_MIN)
                .copied()
                .unwrap_or(vto - DEFAULT_THRESHOLD_SPREAD),
            high: params
                .get(fet::THRESHOLD_VOLTAGE_MAX)
                .copied()
                .unwrap_or(vto + DEFAULT_THRESHOLD_SPREAD),
            group,
        });
    }
}

/// Parts that model what is outside the board: the resistors in series with
/// the signal source (its own resistance) and the named load. They get a
/// spread only when the file gives them a tolerance.
fn off_board_parts(doc: &Document) -> Vec<usize> {
    if doc.signal.source.is_none() && doc.signal.load.is_none() {
        return Vec::new();
    }
    let nl = crate::netlist::connect(doc);
    let chain = crate::analysis::stages::recognise(doc, &nl);
    let mut out: Vec<usize> = chain
        .source
        .iter()
        .flat_map(|s| s.series_parts.iter().copied())
        .collect();
    out.extend(chain.load.iter().map(|l| l.part));
    out
}

/// The value that carries a tolerance: a passive part's main parameter.
fn value_key(kind: PartKind) -> Option<&'static str> {
    let info = kind.info();
    (info.role == crate::document::Role::Passive)
        .then_some(info.value)
        .flatten()
        .map(|v| v.0)
}

/// A copy of the document with each variable set to the given value.
pub fn apply(doc: &Document, vars: &[Variable], values: &[f64]) -> Document {
    let mut d = doc.clone();
    for (v, &x) in vars.iter().zip(values) {
        match &v.target {
            Target::Parameter { part, key } => {
                d.parts[*part].parameters.insert(key.to_string(), x);
            }
            Target::VbeShift { part } => {
                if x != 0.0 {
                    let params = effective_parameters(&doc.parts[*part]);
                    let is = params
                        .get(keys::SATURATION_CURRENT)
                        .copied()
                        .unwrap_or(1e-14);
                    let n = params.get(keys::FORWARD_EMISSION).copied().unwrap_or(1.0);
                    // Is is given at the parameter temperature T0, so VT is taken there.
                    let t0 = params.get(keys::PARAMETER_CELSIUS).copied().unwrap_or(27.0);
                    let vt = crate::analysis::thermal_voltage(t0 + crate::analysis::ZERO_CELSIUS);
                    // A VBE higher by x at the same IC means Is smaller by exp(x/(n·VT)).
                    d.parts[*part]
                        .parameters
                        .insert(keys::SATURATION_CURRENT.into(), is * (-x / (n * vt)).exp());
                }
            }
            Target::Ambient => d.analysis.ambient_celsius = x,
        }
    }
    d
}

impl Variable {
    /// The unit the variable is shown in.
    pub fn unit(&self) -> super::report::VariableUnit {
        use super::report::VariableUnit;
        use crate::units::Unit;
        match &self.target {
            Target::Ambient => VariableUnit::Celsius,
            Target::VbeShift { .. } => VariableUnit::Si(Unit::Volt),
            Target::Parameter { key, .. } => match *key {
                crate::analysis::devices::fet::keys::ZERO_GATE_DRAIN_CURRENT => {
                    VariableUnit::Si(Unit::Ampere)
                }
                crate::analysis::devices::fet::keys::THRESHOLD_VOLTAGE => {
                    VariableUnit::Si(Unit::Volt)
                }
                // A kind's main value (resistance, capacitance, …) in the
                // unit its descriptor row gives it.
                k => crate::document::kinds::KINDS
                    .iter()
                    .find_map(|i| i.value.filter(|(name, _)| *name == k))
                    .map_or(VariableUnit::Plain, |(_, unit)| VariableUnit::Si(unit)),
            },
        }
    }
}
