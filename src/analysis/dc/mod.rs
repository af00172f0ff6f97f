//! DC operating point: every net's voltage, every pin's current, every
//! part's power, and per transistor and diode the figures a designer reads.
//!
//! At DC capacitors are open, inductors are shorts (zero-volt branches),
//! rails are voltage sources from their net to ground and the signal source
//! contributes its `dc_offset`. The equations are solved by Newton–Raphson
//! with junction limiting (see [`newton`] for the tolerances and the aids).
//!
//! Sign conventions: a pin current is positive INTO the pin; a part's power
//! is Σ v(pin)·i(pin), positive when it absorbs power, negative when it
//! delivers it. Ground symbols carry no current in the report (the return
//! currents flow in the ground net itself); a rail's current is the current
//! into its pin, so a rail that supplies the circuit shows a negative
//! current and a negative power.

pub mod multistate;
pub mod newton;
mod sensitivity;
pub mod stamps;
pub(crate) mod warnings;

use super::circuit::{self, Circuit, ElementKind};
use super::devices::bjt::Polarity;
use super::AnalysisError;
use crate::analysis::elements::device_report::DeviceOperatingPoint;
pub use crate::analysis::elements::device_report::DeviceReport;
pub use crate::analysis::elements::fet_report::{FetOperatingPoint, FetRegion};
use crate::analysis::elements::{with_model, At, Model, ReportInputs};
use crate::document::Document;
use crate::netlist::{Finding, Netlist};
use newton::{Engine, RunError, State};
use serde::Serialize;
use stamps::{terminal_currents, voltage};

pub use warnings::{SAFETY_LIMIT_VOLTS, SENSITIVITY_LIMIT};

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OperatingPoint {
    /// By circuit Node (index 0 = ground = 0 V), V.
    pub node_voltages: Vec<f64>,
    /// By NetId, V.
    pub net_voltages: Vec<f64>,
    /// By Document part index (every part, grounds included).
    pub parts: Vec<PartOperatingPoint>,
    /// Every device's report (bipolar and field-effect transistors,
    /// diodes), in element order; see [`DeviceReport`] for what each
    /// answers alike and [`Self::transistors`] and its siblings for one kind.
    pub devices: Vec<DeviceOperatingPoint>,
    /// Newton iterations, aids included.
    pub iterations: usize,
    /// Plain words: "ramped the supplies up from zero".
    pub aids: Vec<String>,
    /// Designer warnings, each naming the part.
    pub warnings: Vec<Finding>,
    /// Σ v·i over every branch (W); zero to rounding (Tellegen's theorem).
    pub tellegen_residual: f64,
    /// Branch current unknowns by `Circuit::branch_of` index, A (into the
    /// element's first pin).
    pub branch_currents: Vec<f64>,
    /// Largest voltage between any two nets, V, and the two nets (names).
    pub largest_voltage: f64,
    pub largest_voltage_nets: (String, String),
}

impl OperatingPoint {
    /// The bipolar transistors' reports, in element order.
    pub fn transistors(&self) -> impl Iterator<Item = &TransistorOperatingPoint> + Clone {
        self.devices
            .iter()
            .filter_map(DeviceOperatingPoint::as_bipolar)
    }
    /// The field-effect transistors' reports (region, triode margin, gm,
    /// ro, power), in element order.
    pub fn fets(&self) -> impl Iterator<Item = &FetOperatingPoint> + Clone {
        self.devices
            .iter()
            .filter_map(DeviceOperatingPoint::as_field_effect)
    }
    /// The diodes' reports, in element order.
    pub fn diodes(&self) -> impl Iterator<Item = &DiodeOperatingPoint> + Clone {
        self.devices
            .iter()
            .filter_map(DeviceOperatingPoint::as_diode)
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PartOperatingPoint {
    pub designator: String,
    /// A, positive INTO the pin, `pin_names()` order.
    pub pin_currents: Vec<f64>,
    /// W absorbed (negative: delivered).
    pub power: f64,
}

/// Region of operation by the rules of [`region_of`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Region {
    ForwardActive,
    Saturation,
    CutOff,
    ReverseActive,
}

impl Region {
    pub fn words(self) -> &'static str {
        match self {
            Region::ForwardActive => "forward active",
            Region::Saturation => "saturation",
            Region::CutOff => "cut-off",
            Region::ReverseActive => "reverse active",
        }
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TransistorOperatingPoint {
    pub part: usize,
    /// Index into `Circuit::elements`.
    pub element: usize,
    pub designator: String,
    pub polarity: Polarity,
    /// Into the pins, A.
    pub ic: f64,
    pub ib: f64,
    pub ie: f64,
    /// Terminal voltages, V (VBE = V(base) − V(emitter), as measured).
    pub vbe: f64,
    pub vce: f64,
    pub vcb: f64,
    /// NPN sense, at the internal base (behind the base resistance).
    pub vbe_intrinsic: f64,
    pub vbc_intrinsic: f64,
    pub region: Region,
    /// hFE = IC/IB at this point (not the model's βF, not the small-signal hfe).
    pub dc_current_gain: f64,
    /// VCE − VCE,sat, V, NPN sense: how far the collector can swing toward
    /// the emitter before the base–collector junction conducts.
    pub saturation_margin: f64,
    /// VBE − VBE,on, V, NPN sense: how far the base–emitter junction is
    /// above the voltage at which it conducts (negative: cut off).
    pub cutoff_margin: f64,
    /// S = ∂IC/∂βF · βF/IC: how strongly the collector current depends on βF.
    pub beta_sensitivity: f64,
    /// W.
    pub power: f64,
    /// The model's βF at the analysis temperature.
    pub forward_beta: f64,
    /// Junction temperature Tamb + P·θJA, °C, when θJA is given.
    pub junction_celsius: Option<f64>,
}

/// Diode state by its junction voltage: conducting above the voltage at
/// which it carries 100 nA, reverse-biased below −0.1 V, off between.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum DiodeState {
    Forward,
    Off,
    Reverse,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DiodeOperatingPoint {
    pub part: usize,
    /// Index into `Circuit::elements`.
    pub element: usize,
    pub designator: String,
    /// Anode to cathode, A.
    pub current: f64,
    /// V(anode) − V(cathode), V.
    pub voltage: f64,
    pub state: DiodeState,
    pub power: f64,
}

/// Region rules (NPN sense, intrinsic junction voltages): a junction
/// conducts when its voltage is above the voltage at which its diode
/// current reaches 100 nA (`BjtModel::on_voltage_*`, ≈ 0.42 V for
/// Is = 1e-14 A at 27 °C). Base–emitter on and base–collector off: forward
/// active; both on: saturation; only base–collector on: reverse active
/// (collector and emitter swapped in effect); neither: cut-off.
pub fn region_of(be_on: bool, bc_on: bool) -> Region {
    match (be_on, bc_on) {
        (true, false) => Region::ForwardActive,
        (true, true) => Region::Saturation,
        (false, true) => Region::ReverseActive,
        (false, false) => Region::CutOff,
    }
}

/// Solve a document: rules check, circuit, operating point, warnings.
pub fn solve(doc: &Document, nl: &Netlist) -> Result<OperatingPoint, AnalysisError> {
    let c = circuit::build(doc, nl)?;
    let mut op = solve_circuit(&c)?;
    for w in &mut op.warnings {
        if w.position.is_none() {
            match &w.subject {
                crate::netlist::Subject::Part(name) => {
                    w.position = doc.part_by_designator(name).map(|p| p.position);
                }
                crate::netlist::Subject::Net(name) => {
                    w.position = nl.net_by_name(name).and_then(|n| nl.nets[n].anchor(doc));
                }
                crate::netlist::Subject::Sheet => {}
            }
        }
    }
    op.parts = full_parts(doc, &c, &op);
    Ok(op)
}

/// Every document part, grounds included (zero current, zero power).
fn full_parts(doc: &Document, c: &Circuit, op: &OperatingPoint) -> Vec<PartOperatingPoint> {
    let mut out: Vec<PartOperatingPoint> = doc
        .parts
        .iter()
        .map(|p| PartOperatingPoint {
            designator: p.label(),
            pin_currents: vec![0.0; p.kind.pin_names().len()],
            power: 0.0,
        })
        .collect();
    for e in &c.elements {
        if let (Some(slot), Some(found)) = (out.get_mut(e.part), op.parts.get(e.part)) {
            *slot = found.clone();
        }
    }
    out
}

/// Solve a built circuit. `parts` is indexed by document part index as
/// well (`Element::part`); parts without an element (ground symbols) get an
/// empty entry, which the document-level [`solve`] fills in.
pub fn solve_circuit(c: &Circuit) -> Result<OperatingPoint, AnalysisError> {
    let mut engine = Engine::new(c);
    let (state, aids) = match engine.solve() {
        Ok(v) => v,
        Err(e) => return Err(failure(c, e)),
    };
    let states = multistate::other_states(c, &mut engine, &state);
    let here = multistate::describe(c, &state.x);
    let mut op = report(c, &mut engine, state, aids)?;
    if let Some(states) = states {
        op.warnings.push(multistate_warning(&here, &states));
    }
    Ok(op)
}

fn multistate_warning(here: &multistate::DcState, states: &[multistate::DcState]) -> Finding {
    use crate::units::{format, Unit};
    let list = |s: &multistate::DcState| {
        s.collector_currents
            .iter()
            .zip(&s.current_names)
            .map(|((d, i), name)| format!("{d} {name} {}", format(*i, Unit::Ampere)))
            .collect::<Vec<_>>()
            .join(", ")
    };
    let found = if states.is_empty() {
        "the seeded solves did not settle on them".to_string()
    } else {
        states
            .iter()
            .enumerate()
            .map(|(k, s)| format!("state {}: {}", k + 1, list(s)))
            .collect::<Vec<_>>()
            .join("; ")
    };
    Finding {
        severity: crate::netlist::Severity::Warning,
        subject: crate::netlist::Subject::Sheet,
        position: None,
        message: format!(
            "this circuit has more than one DC state: the point shown ({}) is an unstable \
             in-between point (the Jacobian's determinant has the opposite sign to the one \
             the supply ramp starts from), so the circuit settles in another state; {found}. \
             Add a resistor or a start-up path that sets one state, or read the figures as \
             those of the in-between point",
            list(here)
        ),
    }
}

/// Turn a failed solve into an error naming nets and parts.
fn failure(c: &Circuit, e: RunError) -> AnalysisError {
    match e {
        RunError::Singular(unknown) => {
            let what = unknown.map(|r| describe_unknown(c, r)).unwrap_or_default();
            AnalysisError::Singular {
                message: format!(
                    "the circuit equations have no unique solution{what}. Look for a net \
                     held only by capacitors, current sources or junctions that are off, a \
                     loop of voltage sources or inductors, or current sources in series; \
                     add a resistor to give that net a DC path"
                ),
            }
        }
        RunError::NoConvergence { worst_row } => AnalysisError::NoConvergence {
            message: format!(
                "the operating point did not converge, even after adding small conductances \
                 to ground and ramping the supplies up from zero; Kirchhoff's current law \
                 stayed furthest from balance at {}. Check that every transistor has a \
                 sensible bias path; a circuit with positive feedback (a latch) may have \
                 several operating points: add a resistor that sets one state, or break the \
                 loop and solve each half",
                describe_unknown(c, worst_row).trim_start_matches(" at ")
            ),
        },
        RunError::Budget => AnalysisError::NoConvergence {
            message: format!(
                "the operating point did not converge within {} Newton iterations; \
                 check the bias paths of the transistors and any positive-feedback loop",
                newton::MAX_TOTAL_ITERATIONS
            ),
        },
    }
}

/// " at net X (parts A, B)" for a row of the system.
fn describe_unknown(c: &Circuit, row: usize) -> String {
    if row >= c.size() {
        return String::new();
    }
    let name = c.unknown_name(row);
    if row < c.node_count {
        let node = row + 1;
        let parts: Vec<&str> = c
            .elements
            .iter()
            .filter(|e| e.nodes.contains(&node) || e.internal_nodes.contains(&node))
            .map(|e| e.designator.as_str())
            .collect();
        format!(" at {name} (parts on it: {})", parts.join(", "))
    } else {
        format!(" at {name}")
    }
}

/// Build the report from a converged state.
fn report(
    c: &Circuit,
    engine: &mut Engine<'_>,
    state: State,
    aids: Vec<String>,
) -> Result<OperatingPoint, AnalysisError> {
    let x = &state.x;
    if let Some(r) = x.iter().position(|v| !v.is_finite()) {
        return Err(AnalysisError::NoConvergence {
            message: format!(
                "the solution is not a finite number{}: check the part values there",
                describe_unknown(c, r)
            ),
        });
    }
    let mut node_voltages = vec![0.0; c.node_count + 1];
    node_voltages[1..].copy_from_slice(&x[..c.node_count]);
    let net_voltages = c.net_node.iter().map(|&n| node_voltages[n]).collect();
    let branch_currents = x[c.node_count..].to_vec();

    let mut parts = Vec::with_capacity(c.elements.len());
    let mut tellegen = 0.0;
    for (k, e) in c.elements.iter().enumerate() {
        let t = terminal_currents(c, k, x, 1.0);
        let power: f64 = t.iter().map(|(n, i)| voltage(x, n) * i).sum();
        tellegen += power;
        let pins = e.nodes.len().min(t.count);
        let pins = if matches!(e.kind, ElementKind::VoltageSource { is_rail: true, .. }) {
            1
        } else {
            pins
        };
        parts.push(PartOperatingPoint {
            designator: e.designator.clone(),
            pin_currents: t.current[..pins].to_vec(),
            power,
        });
    }

    // βF sensitivity from the Jacobian at the solution: J·s = −∂F/∂βF.
    let sensitivities =
        sensitivity::beta_sensitivities(c, engine, &state, sensitivity::SELECTED_FROM);

    let ambient_celsius = c.kelvin - super::ZERO_CELSIUS;
    let mut devices = Vec::new();
    for (k, e) in c.elements.iter().enumerate() {
        let inputs = ReportInputs {
            x,
            pin_currents: &parts[k].pin_currents,
            power: parts[k].power,
            beta_sensitivity: sensitivities[k],
            ambient_celsius,
        };
        let at = At::new(c, k);
        devices.extend(with_model!(&e.kind, |m| m.report(&at, &inputs)));
    }

    let (largest_voltage, a, b) = largest_between_nets(c, &node_voltages);
    let mut op = OperatingPoint {
        node_voltages,
        net_voltages,
        parts: by_part(c, parts),
        devices,
        iterations: engine.iterations,
        aids,
        warnings: Vec::new(),
        tellegen_residual: tellegen,
        branch_currents,
        largest_voltage,
        largest_voltage_nets: (a, b),
    };
    op.warnings = warnings::designer_warnings(c, &op);
    Ok(op)
}

/// Spread per-element results over document part indices.
fn by_part(c: &Circuit, per_element: Vec<PartOperatingPoint>) -> Vec<PartOperatingPoint> {
    let len = c.elements.iter().map(|e| e.part + 1).max().unwrap_or(0);
    let mut out = vec![
        PartOperatingPoint {
            designator: String::new(),
            pin_currents: Vec::new(),
            power: 0.0,
        };
        len
    ];
    for (e, p) in c.elements.iter().zip(per_element) {
        out[e.part] = p;
    }
    out
}

/// The largest voltage between any two nets (highest minus lowest node).
fn largest_between_nets(c: &Circuit, v: &[f64]) -> (f64, String, String) {
    let mut hi = 0;
    let mut lo = 0;
    for n in 0..v.len() {
        // Internal nodes are not nets; skip them.
        if c.node_names[n].ends_with('\'') {
            continue;
        }
        if v[n] > v[hi] {
            hi = n;
        }
        if v[n] < v[lo] {
            lo = n;
        }
    }
    (
        v[hi] - v[lo],
        c.node_names[hi].clone(),
        c.node_names[lo].clone(),
    )
}
