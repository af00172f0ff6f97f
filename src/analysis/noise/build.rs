//! Build the noise problem from a document: circuit, DC operating point,
//! the small-signal values of every device there, and the noise generator
//! of every resistance and junction current.
//!
//! The network is the small-signal circuit of
//! [`crate::analysis::small_signal::linearise`], unchanged: transistors as
//! their hybrid-π model (rb from the base pin to the internal base, gπ ∥ Cπ
//! from there to the emitter, gμ ∥ Cμ to the collector, go and gm·v(b′e)
//! from collector to emitter), diodes as dI/dV with their junction and
//! diffusion capacitance behind their series resistance, supplies as
//! shorts, current sources open. Here only the noise generators are added,
//! and each transistor's element handles kept.

use super::network::{Network, Node};
use super::setup::{NoiseSetup, SignalSource, SourceResistance, StageNoise, TransistorNoise};
use super::sources::NoiseSource;
use crate::analysis::circuit::{self, Circuit};
use crate::analysis::dc::{self, OperatingPoint};
use crate::analysis::elements::{with_model, At, Model};
use crate::analysis::small_signal;
use crate::analysis::stages::{self, Chain};
use crate::analysis::AnalysisError;
use crate::document::{Document, PartKind};
use crate::netlist::Netlist;
use crate::presets::keys;

/// Choices the user can make about the noise problem.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct BuildOptions {
    /// Designator of the resistor to count as the signal source's own
    /// resistance (default: resistors marked `source_resistance_mark` = 1,
    /// else the resistors in series with the signal source).
    pub source_resistor: Option<String>,
    /// Net to measure the output noise at, against ground (default: across
    /// the load part, `signal.load`).
    pub output_net: Option<String>,
}

/// Everything from the document: circuit, operating point, chain, setup.
pub fn setup(
    doc: &Document,
    nl: &Netlist,
    opts: &BuildOptions,
) -> Result<NoiseSetup, AnalysisError> {
    let circuit = circuit::build(doc, nl)?;
    let op = dc::solve_circuit(&circuit)?;
    let chain = stages::recognise(doc, nl);
    setup_from(doc, &circuit, &op, &chain, opts)
}

fn problem(message: String) -> AnalysisError {
    AnalysisError::Singular { message }
}

/// A resistor in the noise problem: (its linear element, its noise
/// source, resistance, node a, node b).
pub type ResistorEntry = (usize, usize, f64, Node, Node);

/// The noise problem while it is being collected: what each element kind
/// adds its noise generators to ([`crate::analysis::elements::Model::noise`]).
pub struct Collect<'a> {
    pub doc: &'a Document,
    pub op: &'a OperatingPoint,
    pub ss: &'a small_signal::SmallSignal,
    pub kelvin: f64,
    /// The signal source the project names, if it names one.
    pub wanted_signal: Option<&'a str>,
    pub sources: Vec<NoiseSource>,
    pub transistors: Vec<TransistorNoise>,
    pub signal: Option<SignalSource>,
    /// By document part, a resistor's entry.
    pub resistor_element: Vec<Option<ResistorEntry>>,
}

impl Collect<'_> {
    /// Operating-point voltage of node `n`.
    pub fn v(&self, n: Node) -> f64 {
        self.op.node_voltages.get(n).copied().unwrap_or(0.0)
    }
    /// The first small-signal element circuit element `k` became.
    pub fn first(&self, k: usize) -> usize {
        self.ss.handles[k].start
    }
}

/// Build from results already computed. The network is the small-signal
/// circuit of [`small_signal::linearise`] itself; this adds the noise
/// generators and keeps each transistor's element handles for the
/// collector-current scan.
pub fn setup_from(
    doc: &Document,
    circuit: &Circuit,
    op: &OperatingPoint,
    chain: &Chain,
    opts: &BuildOptions,
) -> Result<NoiseSetup, AnalysisError> {
    let kelvin = circuit.kelvin;
    for e in &circuit.elements {
        let transistor = with_model!(&e.kind, |m| m.transistor_off()).is_some();
        if transistor && !op.devices.iter().any(|d| d.report().part() == e.part) {
            return Err(problem(format!(
                "{} has no operating point: solve the DC first",
                e.designator
            )));
        }
    }
    let ss = small_signal::linearise(circuit, op);
    let mut out = Collect {
        doc,
        op,
        ss: &ss,
        kelvin,
        wanted_signal: doc.signal.source.as_deref(),
        sources: Vec::new(),
        transistors: Vec::new(),
        signal: None,
        resistor_element: vec![None; doc.parts.len()],
    };
    for (k, e) in circuit.elements.iter().enumerate() {
        let at = At::new(circuit, k);
        with_model!(&e.kind, |m| m.noise(&at, &mut out));
    }
    let Collect {
        mut sources,
        transistors,
        signal,
        resistor_element,
        ..
    } = out;
    let net = Network {
        signal: signal.as_ref().map(|s| s.element),
        circuit: ss.circuit,
    };

    // The signal source's own resistance.
    let mut source_resistance = None;
    let marked: Vec<usize> = match &opts.source_resistor {
        Some(d) => {
            let Some(p) = doc.parts.iter().position(|p| &p.designator == d) else {
                return Err(problem(format!(
                    "there is no part {d} to count as the source resistance: give a resistor's designator"
                )));
            };
            if doc.parts[p].kind != PartKind::Resistor || resistor_element[p].is_none() {
                return Err(problem(format!(
                    "{d} is not a resistor with a resistance above zero: the source resistance must be one"
                )));
            }
            vec![p]
        }
        None => {
            let in_file: Vec<usize> = (0..doc.parts.len())
                .filter(|&p| {
                    resistor_element[p].is_some()
                        && doc.parts[p]
                            .parameter(keys::SOURCE_RESISTANCE_MARK)
                            .is_some_and(|x| x != 0.0)
                })
                .collect();
            if in_file.is_empty() {
                chain
                    .source
                    .as_ref()
                    .map(|s| s.series_parts.clone())
                    .unwrap_or_default()
                    .into_iter()
                    .filter(|p| resistor_element[*p].is_some())
                    .collect()
            } else {
                in_file
            }
        }
    };
    let found_in_series = opts.source_resistor.is_none()
        && chain
            .source
            .as_ref()
            .is_some_and(|s| s.series_parts == marked);
    if !marked.is_empty() {
        let mut elements = Vec::new();
        let mut gens = Vec::new();
        let mut total = 0.0;
        for &p in &marked {
            let (k, s, r, _, _) = resistor_element[p].expect("filtered");
            elements.push(k);
            gens.push(s);
            sources[s].is_source_resistance = true;
            total += r;
        }
        let amplifier_node = match (found_in_series, &chain.source) {
            (true, Some(side)) => circuit.net_node[side.input],
            _ => {
                let (_, _, _, a, b) = resistor_element[marked[0]].expect("filtered");
                let on_source = signal
                    .as_ref()
                    .is_some_and(|s| s.nodes.0 == a || s.nodes.1 == a);
                if on_source {
                    b
                } else {
                    a
                }
            }
        };
        source_resistance = Some(SourceResistance {
            designator: marked
                .iter()
                .map(|&p| doc.parts[p].label())
                .collect::<Vec<_>>()
                .join(" + "),
            elements,
            sources: gens,
            resistance: total,
            amplifier_node,
        });
    }

    // The output.
    let (output, output_name) = if let Some(name) = &opts.output_net {
        let Some(id) = circuit.net_names.iter().position(|n| n == name) else {
            return Err(problem(format!(
                "there is no net named {name} to measure the output noise at: use a net name from `nets`"
            )));
        };
        if circuit.net_node[id] == 0 {
            return Err(problem(format!(
                "the net {name} is ground (or touches no pin): choose the net the output is taken at"
            )));
        }
        ((circuit.net_node[id], 0), format!("net {name}"))
    } else if let Some(load) = &doc.signal.load {
        let Some(e) = circuit.elements.iter().find(|e| &e.designator == load) else {
            return Err(problem(format!(
                "the load {load} named in the project is not a part of the circuit: fix signal.load"
            )));
        };
        (
            (e.nodes[0], e.nodes.get(1).copied().unwrap_or(0)),
            format!("across {load}"),
        )
    } else if let Some(last) = chain.stages.last() {
        (
            (circuit.net_node[last.output], 0),
            format!("net {}", last.output_net),
        )
    } else {
        return Err(problem(
            "no output to measure the noise at: name the load in the project (signal.load) or pass an output net"
                .into(),
        ));
    };

    let stages = chain
        .stages
        .iter()
        .map(|s| StageNoise {
            transistor: s.transistor.clone(),
            input: circuit.net_node[s.input],
            output: circuit.net_node[s.output],
            input_cut: s.input_cut.clone(),
        })
        .collect();

    Ok(NoiseSetup {
        network: net,
        sources,
        output,
        output_name,
        kelvin,
        signal,
        source_resistance,
        transistors,
        stages,
    })
}
