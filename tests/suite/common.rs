//! Test fixtures: circuits described by net names instead of drawn wires.
//! Each part is placed on its own spot of the sheet and every pin gets a
//! net label with the net's name (a ground symbol for net "0"), so the
//! normal connectivity code joins them.
#![allow(dead_code)]

use biasline::analysis::circuit::{self, Circuit};
use biasline::analysis::dc::stamps::{rounding_floor, terminal_currents, voltage, Conditions};
use biasline::analysis::dc::{self, OperatingPoint};
use biasline::document::{Document, NetLabel, Part, PartKind};
use biasline::netlist::{self, Netlist};
use biasline::symbols;
use std::collections::BTreeMap;

/// One part: designator, kind, nets by pin order, parameters, preset.
pub struct P<'a> {
    pub designator: &'a str,
    pub kind: PartKind,
    pub nets: &'a [&'a str],
    pub params: &'a [(&'a str, f64)],
    pub preset: Option<&'a str>,
}

pub fn p<'a>(
    designator: &'a str,
    kind: PartKind,
    nets: &'a [&'a str],
    params: &'a [(&'a str, f64)],
) -> P<'a> {
    P {
        designator,
        kind,
        nets,
        params,
        preset: None,
    }
}

pub fn with_preset<'a>(mut part: P<'a>, preset: &'a str) -> P<'a> {
    part.preset = Some(preset);
    part
}

pub fn document(parts: &[P<'_>]) -> Document {
    document_at(parts, 27.0)
}

pub fn document_at(parts: &[P<'_>], celsius: f64) -> Document {
    let lib = symbols::library();
    let mut doc = Document::new("fixture");
    doc.analysis.ambient_celsius = celsius;
    let mut id = 0;
    for (i, part) in parts.iter().enumerate() {
        let origin = [10 * i as i32, 0];
        id += 1;
        let mut params = BTreeMap::new();
        for (k, v) in part.params {
            params.insert(k.to_string(), *v);
        }
        let pd = Part {
            id: format!("p{id}"),
            connect: Default::default(),
            designator: part.designator.to_string(),
            kind: part.kind,
            symbol: String::new(),
            position: origin,
            rotation: 0,
            mirror: false,
            preset: part.preset.map(str::to_string),
            parameters: params,
        };
        let symbol = lib.get(pd.symbol_name()).expect("symbol");
        for (pin, net) in part.kind.pin_names().iter().zip(part.nets.iter()) {
            let pos = symbols::pin_position(symbol.pin(pin).expect("pin"), origin, 0, false);
            if *net == "0" {
                id += 1;
                doc.parts.push(Part {
                    id: format!("p{id}"),
                    connect: Default::default(),
                    designator: String::new(),
                    kind: PartKind::Ground,
                    symbol: String::new(),
                    position: pos,
                    rotation: 0,
                    mirror: false,
                    preset: None,
                    parameters: BTreeMap::new(),
                });
            } else {
                doc.labels.push(NetLabel {
                    name: net.to_string(),
                    position: pos,
                });
            }
        }
        doc.parts.push(pd);
    }
    doc
}

pub fn solve(doc: &Document) -> Result<OperatingPoint, biasline::analysis::AnalysisError> {
    let nl = netlist::connect(doc);
    dc::solve(doc, &nl)
}

pub fn solved(doc: &Document) -> (Netlist, Circuit, OperatingPoint) {
    let nl = netlist::connect(doc);
    let c = circuit::build(doc, &nl).expect("builds");
    let op = dc::solve(doc, &nl).unwrap_or_else(|e| panic!("solves: {e}"));
    (nl, c, op)
}

pub fn net_v(doc: &Document, op: &OperatingPoint, name: &str) -> f64 {
    let nl = netlist::connect(doc);
    op.net_voltages[nl.net_by_name(name).unwrap_or_else(|| panic!("net {name}"))]
}

pub fn transistor<'a>(op: &'a OperatingPoint, d: &str) -> &'a dc::TransistorOperatingPoint {
    op.transistors()
        .find(|t| t.designator == d)
        .expect("transistor")
}

/// The reported solution as an MNA vector (node voltages, then branch currents).
pub fn solution_vector(c: &Circuit, op: &OperatingPoint) -> Vec<f64> {
    let mut x = op.node_voltages[1..].to_vec();
    x.extend_from_slice(&op.branch_currents);
    assert_eq!(x.len(), c.size());
    x
}

/// Check Kirchhoff's current law at every node and Tellegen's theorem,
/// with currents recomputed from the device equations at the reported
/// node voltages (sources' currents taken from the report).
pub fn assert_kcl_and_tellegen(c: &Circuit, op: &OperatingPoint, what: &str) {
    let x = solution_vector(c, op);
    let mut sum = vec![0.0; c.node_count + 1];
    let mut largest = vec![0.0f64; c.node_count + 1];
    let mut power = 0.0;
    let mut total = 0.0;
    for k in 0..c.elements.len() {
        let t = terminal_currents(c, k, &x, 1.0);
        let mut p = 0.0;
        for (n, i) in t.iter() {
            sum[n] += i;
            largest[n] = largest[n].max(i.abs());
            p += voltage(&x, n) * i;
        }
        power += p;
        total += p.abs();
        // The report's pin currents agree with the recomputed ones.
        for (r, q) in op
            .parts
            .iter()
            .filter(|q| q.designator == c.elements[k].designator)
            .zip([k])
        {
            for (a, b) in r.pin_currents.iter().zip(t.current.iter()) {
                assert!(
                    (a - b).abs() <= 1e-12 * b.abs() + 1e-18,
                    "{what}: {} pin current {a} vs {b}",
                    c.elements[q].designator
                );
            }
        }
    }
    // The rounding floor: what f64 can resolve in each row at all (a small resistance carrying
    // a small current at a high voltage); zero for ground, which is not a row.
    let floor = rounding_floor(c, &x, Conditions::PLAIN);
    let floor_of = |n: usize| if n == 0 { 0.0 } else { floor[n - 1] };
    let mut tellegen_tol = 1e-9 * total + 1e-18;
    // Ground's residual is minus the sum of all the others, so it may carry their rounding.
    let ground_floor: f64 = floor[..c.node_count].iter().sum();
    for n in 0..=c.node_count {
        // invariant: Kirchhoff's current law, residual < 1e-9 × largest + 1e-15 A (the bound in DEVELOPERS.md)
        // plus the rounding floor of the row.
        let tol = 1e-9 * largest[n] + 1e-15 + if n == 0 { ground_floor } else { floor_of(n) };
        assert!(
            sum[n].abs() < tol,
            "{what}: KCL at {} off by {} A (largest {})",
            c.node_names[n],
            sum[n],
            largest[n]
        );
        assert!(sum[n].is_finite());
        tellegen_tol += voltage(&x, n).abs() * tol;
    }
    // invariant: Tellegen's theorem, Σ v·i = 0 to 1e-9 of the total power. Σ v·i equals
    // Σ over nodes of v(node)·(KCL residual there), so the KCL tolerances times |v| are
    // allowed on top (they matter only when almost no power flows).
    assert!(
        power.abs() <= tellegen_tol,
        "{what}: Tellegen {power} of {total}"
    );
    assert!((op.tellegen_residual - power).abs() <= tellegen_tol);
    for v in &op.node_voltages {
        assert!(v.is_finite());
    }
}

/// The circuit of `doc` without the rules check (time-domain tests).
pub fn build(doc: &Document) -> Circuit {
    let nl = netlist::connect(doc);
    circuit::build_unchecked(doc, &nl).expect("circuit")
}

/// The circuit node of net `net`.
pub fn node(doc: &Document, c: &Circuit, net: &str) -> usize {
    let nl = netlist::connect(doc);
    c.net_node[nl.net_by_name(net).expect("net")]
}

/// The element index of the signal source.
pub fn signal(c: &Circuit) -> usize {
    c.elements
        .iter()
        .position(|e| {
            matches!(
                e.kind,
                biasline::analysis::circuit::ElementKind::VoltageSource {
                    is_signal: true,
                    ..
                }
            )
        })
        .expect("signal source")
}
