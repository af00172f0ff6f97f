//! The rules check run before any analysis. Every finding names the part or
//! net, where it is on the sheet, and what to do.

use super::{NetId, Netlist};
use crate::document::{Document, GridPoint, PartKind};
use crate::presets::{effective_parameters, keys};
use petgraph::unionfind::UnionFind;
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Severity {
    /// The analysis cannot run until this is fixed.
    Error,
    /// The analysis runs, but the result may not be what was meant.
    Warning,
}

/// What a finding is about.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Subject {
    Part(String),
    Net(String),
    Sheet,
}

impl std::fmt::Display for Subject {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Subject::Part(p) => write!(f, "{p}"),
            Subject::Net(n) => write!(f, "net {n}"),
            Subject::Sheet => write!(f, "sheet"),
        }
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Finding {
    pub severity: Severity,
    pub subject: Subject,
    /// Where to look on the sheet.
    pub position: Option<GridPoint>,
    /// A plain sentence: what is wrong and what to do.
    pub message: String,
}

impl std::fmt::Display for Finding {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let sev = match self.severity {
            Severity::Error => "error",
            Severity::Warning => "warning",
        };
        write!(f, "{sev}: {}", self.subject)?;
        if let Some([x, y]) = self.position {
            write!(f, " at ({x}, {y})")?;
        }
        write!(f, ": {}", self.message)
    }
}

/// Run every rule; errors first, then warnings, each in sheet order.
pub fn check(doc: &Document, nl: &Netlist) -> Vec<Finding> {
    let mut out = Vec::new();
    let part = |i: usize| Subject::Part(doc.parts[i].label());

    if nl.ground.is_none() {
        out.push(Finding {
            severity: Severity::Error,
            subject: Subject::Sheet,
            position: None,
            message:
                "there is no ground symbol: place one on the 0 V net so voltages have a reference"
                    .into(),
        });
    }

    // Duplicate designators.
    let mut by_name: BTreeMap<&str, Vec<usize>> = BTreeMap::new();
    for (i, p) in doc.parts.iter().enumerate() {
        if !p.designator.is_empty() {
            by_name.entry(&p.designator).or_default().push(i);
        }
    }
    for (name, idx) in &by_name {
        if idx.len() > 1 {
            for &i in &idx[1..] {
                out.push(Finding {
                    severity: Severity::Error,
                    subject: Subject::Part(name.to_string()),
                    position: Some(doc.parts[i].position),
                    message: format!(
                        "designator {name} is used {} times: give each part its own",
                        idx.len()
                    ),
                });
            }
        }
    }

    // Values.
    for (i, p) in doc.parts.iter().enumerate() {
        value_rules(doc, i, &mut out);
        let _ = p;
    }

    // Unconnected pins and one-connection nets.
    for net in &nl.nets {
        let is_ground_only = net
            .pins
            .iter()
            .all(|p| doc.parts[p.part].kind == PartKind::Ground);
        if net.pins.len() == 1 && !is_ground_only {
            let p = &net.pins[0];
            let kind = doc.parts[p.part].kind;
            if matches!(kind, PartKind::Rail) && net.wires.is_empty() && net.labels.is_empty() {
                out.push(Finding {
                    severity: Severity::Warning,
                    subject: part(p.part),
                    position: Some(p.position),
                    message: "this rail connects to nothing: wire it to the circuit or delete it"
                        .into(),
                });
            } else if net.wires.is_empty() && net.labels.is_empty() {
                out.push(Finding {
                    severity: Severity::Error,
                    subject: part(p.part),
                    position: Some(p.position),
                    message: format!("pin {} is not connected: draw a wire from it", p.label()),
                });
            } else {
                out.push(Finding {
                    severity: Severity::Error,
                    subject: Subject::Net(net.name.clone()),
                    position: Some(p.position),
                    message: format!(
                        "net {} reaches only {}: connect the wire's other end",
                        net.name,
                        p.label()
                    ),
                });
            }
        } else if net.pins.is_empty() {
            let pos = net
                .wires
                .first()
                .and_then(|w| doc.wires[*w].points.first().copied())
                .or_else(|| net.labels.first().map(|l| doc.labels[*l].position));
            out.push(Finding {
                severity: Severity::Warning,
                subject: Subject::Net(net.name.clone()),
                position: pos,
                message: "this wire or label touches no pin: connect it or delete it".into(),
            });
        }
        if !net.other_names.is_empty() {
            out.push(Finding {
                severity: Severity::Warning,
                subject: Subject::Net(net.name.clone()),
                position: net.labels.first().map(|l| doc.labels[*l].position),
                message: format!(
                    "this net also carries the label(s) {}: one net should have one name",
                    net.other_names.join(", ")
                ),
            });
        }
    }

    voltage_loops(doc, nl, &mut out);
    dc_paths(doc, nl, &mut out);
    super::sheet_rules::sheet_rules(doc, nl, &mut out);

    out.sort_by_key(|f| f.severity);
    out
}

fn value_rules(doc: &Document, i: usize, out: &mut Vec<Finding>) {
    let p = &doc.parts[i];
    let params = effective_parameters(p);
    let mut bad = |message: String| {
        out.push(Finding {
            severity: Severity::Error,
            subject: Subject::Part(p.label()),
            position: Some(p.position),
            message,
        })
    };
    if let Some(key) = p.kind.main_parameter() {
        match params.get(key) {
            None => bad(format!("{} has no {key}: set its value", p.kind)),
            Some(v) => {
                let must_be_positive = matches!(
                    p.kind,
                    PartKind::Resistor
                        | PartKind::Capacitor
                        | PartKind::PolarisedCapacitor
                        | PartKind::Inductor
                );
                if must_be_positive && *v <= 0.0 {
                    bad(format!(
                        "{key} must be above zero (it is {}); a wire is a better short",
                        crate::units::echo(*v)
                    ))
                }
                if p.kind == PartKind::SignalSource && *v < 0.0 {
                    bad(format!(
                        "amplitude must not be negative (it is {})",
                        crate::units::echo(*v)
                    ))
                }
            }
        }
    }
    if p.kind.is_bipolar() || p.kind == PartKind::Diode {
        let positive = [
            keys::SATURATION_CURRENT,
            keys::FORWARD_BETA,
            keys::REVERSE_BETA,
            keys::FORWARD_EARLY_VOLTAGE,
            keys::REVERSE_EARLY_VOLTAGE,
            keys::FORWARD_EMISSION,
            keys::REVERSE_EMISSION,
            keys::EMISSION_COEFFICIENT,
            keys::FORWARD_KNEE_CURRENT,
            keys::REVERSE_KNEE_CURRENT,
        ];
        for key in positive {
            if let Some(v) = params.get(key) {
                if *v <= 0.0 || v.is_nan() {
                    bad(format!(
                        "{key} must be above zero (it is {})",
                        crate::units::echo(*v)
                    ));
                }
            }
        }
        let non_negative = [
            keys::BASE_RESISTANCE,
            keys::SERIES_RESISTANCE,
            keys::EMITTER_CAPACITANCE,
            keys::COLLECTOR_CAPACITANCE,
            keys::JUNCTION_CAPACITANCE,
            keys::FORWARD_TRANSIT_TIME,
            keys::TRANSIT_TIME,
        ];
        for key in non_negative {
            if let Some(v) = params.get(key) {
                if *v < 0.0 {
                    bad(format!(
                        "{key} must not be negative (it is {})",
                        crate::units::echo(*v)
                    ));
                }
            }
        }
    }
    if p.kind.is_fet() {
        fet_value_rules(p.kind, &params, &mut bad);
    }
    if let Some(t) = params.get(keys::TOLERANCE) {
        if !(0.0..1.0).contains(t) {
            bad(format!(
                "tolerance {} is outside 0 to 1 (write 5 % as 0.05)",
                crate::units::echo(*t)
            ));
        }
    }
}

/// A field-effect part's parameters: a JFET's pinch-off of the channel's
/// sign, β and IDSS above zero, λ and capacitances not negative.
fn fet_value_rules(
    kind: PartKind,
    params: &std::collections::BTreeMap<String, f64>,
    bad: &mut impl FnMut(String),
) {
    use crate::analysis::devices::fet::keys as fet;
    if let Some(&vto) = params.get(fet::THRESHOLD_VOLTAGE) {
        let (wrong, want) = match kind {
            PartKind::NJfet => (vto >= 0.0, "below zero for an N-channel JFET (e.g. -2)"),
            PartKind::PJfet => (vto <= 0.0, "above zero for a P-channel JFET (e.g. 2)"),
            _ => (false, ""),
        };
        if wrong || !vto.is_finite() {
            bad(format!(
                "{} (the pinch-off voltage) must be {want} (it is {vto})",
                fet::THRESHOLD_VOLTAGE
            ));
        }
    }
    for key in [
        fet::TRANSCONDUCTANCE_PARAMETER,
        fet::ZERO_GATE_DRAIN_CURRENT,
        fet::GATE_SATURATION_CURRENT,
        fet::GATE_EMISSION_COEFFICIENT,
        fet::BODY_DIODE_SATURATION_CURRENT,
        fet::BODY_DIODE_EMISSION_COEFFICIENT,
        fet::GATE_JUNCTION_POTENTIAL,
    ] {
        if let Some(&v) = params.get(key) {
            if v <= 0.0 || v.is_nan() {
                bad(format!(
                    "{key} must be above zero (it is {})",
                    crate::units::echo(v)
                ));
            }
        }
    }
    for key in [
        fet::CHANNEL_LENGTH_MODULATION,
        fet::GATE_SOURCE_CAPACITANCE,
        fet::GATE_DRAIN_CAPACITANCE,
        fet::DRAIN_SOURCE_CAPACITANCE,
        fet::INPUT_CAPACITANCE,
        fet::REVERSE_TRANSFER_CAPACITANCE,
        fet::OUTPUT_CAPACITANCE,
        fet::FLICKER_COEFFICIENT,
    ] {
        if let Some(&v) = params.get(key) {
            if v < 0.0 || v.is_nan() {
                bad(format!(
                    "{key} must not be negative (it is {})",
                    crate::units::echo(v)
                ));
            }
        }
    }
    if let (Some(&ciss), Some(&crss)) = (
        params.get(fet::INPUT_CAPACITANCE),
        params.get(fet::REVERSE_TRANSFER_CAPACITANCE),
    ) {
        if crss > ciss {
            bad(format!(
                "{} ({crss}) must not exceed {} ({ciss}): Ciss = Cgs + Cgd",
                fet::REVERSE_TRANSFER_CAPACITANCE,
                fet::INPUT_CAPACITANCE
            ));
        }
    }
    if let Some(&g) = params.get(fet::GATE_JUNCTION_GRADING) {
        if !(0.0..1.0).contains(&g) {
            bad(format!(
                "{} must be from 0 to below 1 (it is {g})",
                fet::GATE_JUNCTION_GRADING
            ));
        }
    }
}

/// Branches that fix a voltage at DC: voltage sources, signal sources,
/// rails (to ground) and inductors (shorts at DC).
fn voltage_branches(doc: &Document, nl: &Netlist) -> Vec<(usize, NetId, Option<NetId>)> {
    let mut v = Vec::new();
    for (i, p) in doc.parts.iter().enumerate() {
        let nets = &nl.part_nets[i];
        match p.kind {
            PartKind::VoltageSource | PartKind::SignalSource | PartKind::Inductor => {
                v.push((i, nets[0], Some(nets[1])))
            }
            PartKind::Rail => v.push((i, nets[0], nl.ground)),
            _ => {}
        }
    }
    v
}

fn voltage_loops(doc: &Document, nl: &Netlist, out: &mut Vec<Finding>) {
    let n = nl.nets.len() + 1; // last index stands for a missing ground
    let mut uf = UnionFind::<usize>::new(n);
    let mut members: Vec<Vec<usize>> = vec![Vec::new(); n];
    for (i, a, b) in voltage_branches(doc, nl) {
        let b = b.unwrap_or(n - 1);
        let (ra, rb) = (uf.find(a), uf.find(b));
        if ra == rb {
            let mut parts: Vec<String> =
                members[ra].iter().map(|&k| doc.parts[k].label()).collect();
            parts.push(doc.parts[i].label());
            let what = if a == b {
                format!(
                    "{} has both pins on net {}: it is shorted",
                    doc.parts[i].label(),
                    nl.nets[a].name
                )
            } else {
                format!(
                    "{} closes a loop of voltage sources, rails and inductors ({}): \
                     the loop has no resistance, so its current is undefined; add a resistor \
                     or remove one source",
                    doc.parts[i].label(),
                    parts.join(", ")
                )
            };
            out.push(Finding {
                severity: Severity::Error,
                subject: Subject::Part(doc.parts[i].label()),
                position: Some(doc.parts[i].position),
                message: what,
            });
        } else {
            uf.union(ra, rb);
            let r = uf.find(ra);
            let mut m = std::mem::take(&mut members[ra]);
            m.extend(std::mem::take(&mut members[rb]));
            m.push(i);
            members[r] = m;
        }
    }
}

/// Every net needs a DC path to ground through something other than
/// capacitors or current sources.
fn dc_paths(doc: &Document, nl: &Netlist, out: &mut Vec<Finding>) {
    let Some(ground) = nl.ground else { return };
    let mut uf = UnionFind::<usize>::new(nl.nets.len());
    for (i, p) in doc.parts.iter().enumerate() {
        let nets = &nl.part_nets[i];
        match p.kind {
            PartKind::Capacitor | PartKind::PolarisedCapacitor | PartKind::CurrentSource => {}
            PartKind::Rail => {
                uf.union(nets[0], ground);
            }
            // An insulated gate carries no DC current: only drain and
            // source (through the channel and the body diode) connect.
            PartKind::NMosfet | PartKind::PMosfet => {
                uf.union(nets[0], nets[2]);
            }
            _ => {
                for w in nets.windows(2) {
                    uf.union(w[0], w[1]);
                }
            }
        }
    }
    let g = uf.find(ground);
    for (id, net) in nl.nets.iter().enumerate() {
        if uf.find(id) == g || net.pins.is_empty() {
            continue;
        }
        let through: Vec<String> = net
            .pins
            .iter()
            .filter(|p| {
                matches!(
                    doc.parts[p.part].kind,
                    PartKind::Capacitor | PartKind::PolarisedCapacitor | PartKind::CurrentSource
                )
            })
            .map(|p| doc.parts[p.part].label())
            .collect();
        let has_current_source = net
            .pins
            .iter()
            .any(|p| doc.parts[p.part].kind == PartKind::CurrentSource);
        let message = if has_current_source {
            format!(
                "net {} is fed by a current source with no DC path for its current \
                 (only {}): add a resistor to ground or to a rail",
                net.name,
                through.join(", ")
            )
        } else if through.is_empty() {
            format!(
                "net {} has no DC path to ground: connect it to the rest of the circuit",
                net.name
            )
        } else {
            format!(
                "net {} has no DC path to ground (only through {}): its DC voltage is \
                 undefined; add a bias resistor to ground or to a rail",
                net.name,
                through.join(", ")
            )
        };
        out.push(Finding {
            severity: Severity::Error,
            subject: Subject::Net(net.name.clone()),
            position: net.anchor(doc),
            message,
        });
    }
}
