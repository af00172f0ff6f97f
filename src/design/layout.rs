//! A designed stage as a drawn document: parts placed and wired on the grid
//! in the geometry of the demo projects (supply bus on top, grounds on one
//! line at the bottom, signal from left to right).

use super::targets::{Targets, Topology};
use super::Values;
use crate::document::{Document, NetLabel, Part, PartKind, SignalPath, Wire};
use std::collections::BTreeMap;

/// The y of every ground symbol.
pub(super) const GROUND: i32 = 30;

pub(super) struct Sheet {
    doc: Document,
}

impl Sheet {
    pub(super) fn new(title: &str) -> Self {
        Sheet {
            doc: Document::new(title),
        }
    }
    pub(super) fn into_document(self) -> Document {
        self.doc
    }
    pub(super) fn part(&mut self, designator: &str, kind: PartKind, at: [i32; 2], rotation: u16) {
        let id = format!("p{}", self.doc.parts.len() + 1);
        self.doc.parts.push(Part {
            id,
            connect: Default::default(),
            designator: designator.to_string(),
            kind,
            symbol: String::new(),
            position: at,
            rotation,
            mirror: false,
            preset: None,
            parameters: BTreeMap::new(),
        });
    }
    pub(super) fn ground(&mut self, x: i32) {
        self.part("", PartKind::Ground, [x, GROUND], 0);
    }
    pub(super) fn wire(&mut self, points: &[[i32; 2]]) {
        self.doc.wires.push(Wire {
            points: points.to_vec(),
        });
    }
    pub(super) fn label(&mut self, name: &str, at: [i32; 2]) {
        self.doc.labels.push(NetLabel {
            name: name.into(),
            position: at,
        });
    }

    /// Supply rail at (16, 2) with the bus to `bus_end`, divider R1/R2 on x = 16
    /// meeting the base line y = 15.
    fn supply_and_divider(&mut self, bus_end: i32) {
        self.part("VCC", PartKind::Rail, [16, 2], 0);
        self.wire(&[[16, 2], [bus_end, 2]]);
        self.wire(&[[16, 2], [16, 4]]);
        self.part("R1", PartKind::Resistor, [16, 6], 0);
        self.wire(&[[16, 8], [16, 17]]);
        self.part("R2", PartKind::Resistor, [16, 19], 0);
        self.wire(&[[16, 21], [16, GROUND]]);
        self.ground(16);
        self.part("Q1", PartKind::Npn, [20, 15], 0);
        self.wire(&[[16, 15], [18, 15]]);
    }

    /// Source VS with RS and coupling capacitor C1 into the base line from the left.
    pub(super) fn source_from_left(&mut self) {
        self.part("C1", PartKind::PolarisedCapacitor, [12, 15], 90);
        self.wire(&[[14, 15], [16, 15]]);
        self.part("RS", PartKind::Resistor, [7, 15], 90);
        self.part("VS", PartKind::SignalSource, [4, 19], 0);
        self.wire(&[[4, 17], [4, 15], [5, 15]]);
        self.wire(&[[9, 15], [10, 15]]);
        self.wire(&[[4, 21], [4, GROUND]]);
        self.ground(4);
        self.label("vin", [10, 15]);
    }

    /// Collector resistor RC from the bus to the collector of Q1.
    fn collector_resistor(&mut self) {
        self.part("RC", PartKind::Resistor, [21, 7], 0);
        self.wire(&[[21, 2], [21, 5]]);
        self.wire(&[[21, 9], [21, 13]]);
    }

    /// RE1 (unbypassed) over RE2 bypassed by CE, from the emitter of Q1.
    fn split_emitter(&mut self) {
        self.part("RE1", PartKind::Resistor, [21, 20], 0);
        self.wire(&[[21, 17], [21, 18]]);
        self.part("RE2", PartKind::Resistor, [21, 26], 0);
        self.wire(&[[21, 22], [21, 24]]);
        self.wire(&[[21, 28], [21, GROUND]]);
        self.ground(21);
        self.part("CE", PartKind::PolarisedCapacitor, [25, 26], 0);
        self.wire(&[[21, 23], [25, 23], [25, 24]]);
        self.wire(&[[25, 28], [25, GROUND]]);
        self.ground(25);
    }

    /// Output capacitor C2 at (`x`, `y`) from a tap at (`from`, `y`) into RL
    /// standing at x = `load_x`.
    pub(super) fn output(&mut self, from: i32, x: i32, y: i32, load_x: i32) {
        self.part("C2", PartKind::PolarisedCapacitor, [x, y], 270);
        self.wire(&[[from, y], [x - 2, y]]);
        self.wire(&[[x + 2, y], [load_x, y], [load_x, y + 2]]);
        self.part("RL", PartKind::Resistor, [load_x, y + 4], 0);
        self.wire(&[[load_x, y + 6], [load_x, GROUND]]);
        self.ground(load_x);
        self.label("vout", [load_x, y]);
    }
}

/// Designators of the parts whose values the design chooses, per topology.
pub fn designed_parts(topology: Topology) -> &'static [&'static str] {
    match topology {
        Topology::CommonEmitter => &["R1", "R2", "RC", "RE1", "RE2", "C1", "C2", "CE"],
        Topology::CommonCollector => &["R1", "R2", "RE", "C1", "C2"],
        Topology::CommonBase => &["R1", "R2", "RC", "RE", "C1", "C2", "CB"],
        Topology::EmitterIntoFollower => &["R1", "R2", "RC", "RE1", "RE2", "RE3", "C1", "C2", "CE"],
    }
}

/// The drawn stage with `values` (Ω, F by designator) filled in.
pub fn document(t: &Targets, values: &Values) -> Document {
    let mut s = Sheet {
        doc: Document::new(&format!("Designed {} stage", t.topology.words())),
    };
    match t.topology {
        Topology::CommonEmitter => {
            s.supply_and_divider(21);
            s.source_from_left();
            s.collector_resistor();
            s.split_emitter();
            s.output(21, 25, 11, 30);
        }
        Topology::CommonCollector => {
            s.supply_and_divider(21);
            s.source_from_left();
            s.wire(&[[21, 2], [21, 13]]);
            s.part("RE", PartKind::Resistor, [21, 21], 0);
            s.wire(&[[21, 17], [21, 19]]);
            s.wire(&[[21, 23], [21, GROUND]]);
            s.ground(21);
            s.output(21, 25, 18, 30);
        }
        Topology::CommonBase => {
            s.supply_and_divider(21);
            s.part("CB", PartKind::PolarisedCapacitor, [12, 19], 0);
            s.wire(&[[12, 17], [12, 15], [16, 15]]);
            s.wire(&[[12, 21], [12, GROUND]]);
            s.ground(12);
            s.collector_resistor();
            s.part("RE", PartKind::Resistor, [21, 21], 0);
            s.wire(&[[21, 17], [21, 19]]);
            s.wire(&[[21, 23], [21, GROUND]]);
            s.ground(21);
            // Signal into the emitter from the right.
            s.part("C1", PartKind::PolarisedCapacitor, [25, 18], 270);
            s.wire(&[[21, 18], [23, 18]]);
            s.part("RS", PartKind::Resistor, [30, 18], 90);
            s.wire(&[[27, 18], [28, 18]]);
            s.part("VS", PartKind::SignalSource, [34, 22], 0);
            s.wire(&[[32, 18], [34, 18], [34, 20]]);
            s.wire(&[[34, 24], [34, GROUND]]);
            s.ground(34);
            s.label("vin", [27, 18]);
            s.output(21, 25, 11, 38);
        }
        Topology::EmitterIntoFollower => {
            s.supply_and_divider(31);
            s.source_from_left();
            s.collector_resistor();
            s.split_emitter();
            s.part("Q2", PartKind::Npn, [30, 10], 0);
            s.wire(&[[21, 10], [28, 10]]);
            s.wire(&[[31, 2], [31, 8]]);
            s.part("RE3", PartKind::Resistor, [31, 18], 0);
            s.wire(&[[31, 12], [31, 16]]);
            s.wire(&[[31, 20], [31, GROUND]]);
            s.ground(31);
            s.output(31, 35, 14, 40);
        }
    }
    let mut doc = s.doc;
    doc.signal = SignalPath {
        source: Some("VS".into()),
        load: Some("RL".into()),
        waveform: None,
    };
    fill(&mut doc, t, values);
    doc
}

/// Voltage rating of a polarised capacitor: the next common rating at or
/// above 1.5 × the supply (common practice).
pub(super) fn voltage_rating(supply: f64) -> f64 {
    [6.3, 10.0, 16.0, 25.0, 35.0, 50.0, 63.0, 100.0]
        .into_iter()
        .find(|&v| v >= 1.5 * supply)
        .unwrap_or(100.0)
}

/// Tolerance that goes with a series (IEC 60063: E6 20 %, E12 10 %, E24 5 %,
/// E48 2 %, E96 1 %, E192 0.5 %).
pub fn series_tolerance(name: &str) -> f64 {
    match name {
        "E6" => 0.2,
        "E12" => 0.1,
        "E24" => 0.05,
        "E48" => 0.02,
        "E96" => 0.01,
        _ => 0.005,
    }
}

/// Put the values, the fixed parts (supply, source, load) and the ratings
/// into the parameters.
fn fill(doc: &mut Document, t: &Targets, values: &Values) {
    let rtol = series_tolerance(t.resistor_series.name);
    for p in &mut doc.parts {
        let d = p.designator.clone();
        let set = |p: &mut Part, k: &str, v: f64| {
            p.parameters.insert(k.to_string(), v);
        };
        match p.kind {
            PartKind::Rail => set(p, "voltage", t.supply),
            PartKind::SignalSource => {
                set(p, "amplitude", 0.01);
                set(p, "frequency", 1000.0);
            }
            PartKind::Npn => p.preset = Some(t.preset.clone()),
            PartKind::Resistor if d == "RS" => {
                // The generator's own resistance: outside the stage, and the
                // file says so (an unmarked series resistor is the stage's).
                set(p, "resistance", t.source_resistance.max(1e-3));
                set(p, crate::presets::keys::SOURCE_RESISTANCE_MARK, 1.0);
            }
            PartKind::Resistor if d == "RL" => set(p, "resistance", t.load),
            PartKind::Resistor => {
                set(p, "resistance", values.get(&d).copied().unwrap_or(1e3));
                set(p, "tolerance", rtol);
                set(p, "power_rating", 0.25);
            }
            PartKind::PolarisedCapacitor => {
                set(p, "capacitance", values.get(&d).copied().unwrap_or(1e-6));
                set(p, "tolerance", 0.2);
                set(p, "voltage_rating", voltage_rating(t.supply));
            }
            _ => {}
        }
    }
}

/// Write `values` into an existing designed document (same geometry).
pub fn set_values(doc: &mut Document, values: &Values) {
    for p in &mut doc.parts {
        if let (Some(v), Some(key)) = (values.get(&p.designator), p.kind.main_parameter()) {
            p.parameters.insert(key.to_string(), *v);
        }
    }
}
