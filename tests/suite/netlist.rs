//! Connectivity and the rules check on hand-made fixtures (tests/fixtures).

use biasline::document::{self, Document};
use biasline::netlist::{self, Finding, NameSource, Netlist, Severity, Subject};
use std::path::Path;

fn fixture(name: &str) -> (Document, Netlist, Vec<Finding>) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures")
        .join(format!("{name}.json"));
    let doc = document::load_file(&path).unwrap_or_else(|e| panic!("{name}: {e}"));
    let nl = netlist::connect(&doc);
    let findings = netlist::check(&doc, &nl);
    (doc, nl, findings)
}

/// The pins of the named net, as `R1.a`, sorted (grounds left out).
fn pins_of(doc: &Document, nl: &Netlist, net: &str) -> Vec<String> {
    let id = nl
        .net_by_name(net)
        .unwrap_or_else(|| panic!("no net {net}; nets are {:?}", names(nl)));
    let mut pins: Vec<String> = nl.nets[id]
        .pins
        .iter()
        .filter(|p| doc.parts[p.part].kind != document::PartKind::Ground)
        .map(|p| p.label())
        .collect();
    pins.sort();
    pins
}

fn names(nl: &Netlist) -> Vec<&str> {
    let mut v: Vec<&str> = nl.nets.iter().map(|n| n.name.as_str()).collect();
    v.sort();
    v
}

fn no_findings(findings: &[Finding]) {
    let text: Vec<String> = findings.iter().map(|f| f.to_string()).collect();
    assert_eq!(text, Vec::<String>::new());
}

/// The one finding of a fixture: its severity, subject and a message fragment.
fn only_finding(findings: &[Finding], severity: Severity, subject: Subject, fragment: &str) {
    assert_eq!(findings.len(), 1, "{findings:#?}");
    let f = &findings[0];
    assert_eq!(f.severity, severity);
    assert_eq!(f.subject, subject);
    assert!(
        f.message.contains(fragment),
        "{:?} lacks {fragment:?}",
        f.message
    );
}

#[test]
fn a_wire_ending_inside_a_segment_joins_it() {
    // invariant: a T-junction joins the drop to the run and gets a dot.
    let (doc, nl, findings) = fixture("t-junction");
    no_findings(&findings);
    assert_eq!(names(&nl), ["VCC", "ground"]);
    assert_eq!(pins_of(&doc, &nl, "VCC"), ["R1.a", "R2.a", "VCC.rail"]);
    assert_eq!(pins_of(&doc, &nl, "ground"), ["R1.b", "R2.b"]);
    assert_eq!(
        nl.nets[nl.net_by_name("VCC").unwrap()].named_by,
        NameSource::Rail
    );
    assert!(nl.junctions.contains(&[5, 0]), "{:?}", nl.junctions);
    // invariant: a wire's end on another wire's end or a pin is no junction.
    assert!(!nl.junctions.contains(&[10, 0]));
}

#[test]
fn wires_that_only_cross_stay_apart() {
    // common practice (no source): crossing wires join only at a dot (a vertex there).
    let (doc, nl, findings) = fixture("crossing-wires");
    no_findings(&findings);
    assert_eq!(pins_of(&doc, &nl, "R1.a"), ["R1.a", "R2.b"]);
    assert_eq!(pins_of(&doc, &nl, "R3.b"), ["R3.b", "R4.a"]);
    assert_eq!(nl.nets.len(), 5);
    assert!(!nl.junctions.contains(&[5, 5]));
}

#[test]
fn labels_of_one_name_join_distant_nets() {
    // invariant: two labels of one name are one net, named after the label.
    let (doc, nl, findings) = fixture("distant-labels");
    no_findings(&findings);
    assert_eq!(pins_of(&doc, &nl, "mid"), ["R1.b", "R2.a"]);
    let mid = &nl.nets[nl.net_by_name("mid").unwrap()];
    assert_eq!(mid.named_by, NameSource::Label);
    assert_eq!(mid.labels.len(), 2);
    assert!(mid.wires.is_empty());
}

#[test]
fn a_node_between_capacitors_floats() {
    // invariant: i = C·dv/dt — at DC a capacitor is open, so the node has no DC path.
    let (doc, nl, findings) = fixture("floating-capacitor-node");
    assert_eq!(pins_of(&doc, &nl, "C1.b"), ["C1.b", "C2.a"]);
    only_finding(
        &findings,
        Severity::Error,
        Subject::Net("C1.b".into()),
        "has no DC path to ground (only through C1, C2)",
    );
    assert_eq!(findings[0].position, Some([0, 6]));
}

#[test]
fn a_rail_beside_a_voltage_source_is_a_loop() {
    // invariant: two ideal sources fixing one pair of nets leave the loop current undefined (KVL).
    let (doc, nl, findings) = fixture("source-loop");
    assert_eq!(
        pins_of(&doc, &nl, "VCC"),
        ["R1.a", "V1.positive", "VCC.rail"]
    );
    only_finding(
        &findings,
        Severity::Error,
        Subject::Part("V1".into()),
        "closes a loop of voltage sources, rails and inductors (VCC, V1)",
    );
}

#[test]
fn duplicate_designators_are_named() {
    // common practice (no source): designators are unique on a sheet.
    let (_, _, findings) = fixture("duplicate-designators");
    only_finding(
        &findings,
        Severity::Error,
        Subject::Part("R1".into()),
        "designator R1 is used 2 times",
    );
    // The second one is the one pointed at.
    assert_eq!(findings[0].position, Some([0, 8]));
}

#[test]
fn an_unconnected_pin_is_named() {
    // invariant: a pin on a net of its own with no wire connects to nothing.
    let (doc, nl, findings) = fixture("unconnected-pin");
    assert_eq!(pins_of(&doc, &nl, "R1.b"), ["R1.b"]);
    only_finding(
        &findings,
        Severity::Error,
        Subject::Part("R1".into()),
        "pin R1.b is not connected",
    );
    assert_eq!(findings[0].position, Some([0, 6]));
}

#[test]
fn a_net_with_one_connection_is_named() {
    // invariant: a wire whose far end touches nothing leaves a one-pin net.
    let (doc, nl, findings) = fixture("one-connection-net");
    let id = nl.net_by_name("R1.b").unwrap();
    assert_eq!(nl.nets[id].wires.len(), 1);
    assert_eq!(pins_of(&doc, &nl, "R1.b"), ["R1.b"]);
    only_finding(
        &findings,
        Severity::Error,
        Subject::Net("R1.b".into()),
        "net R1.b reaches only R1.b: connect the wire's other end",
    );
}

#[test]
fn a_current_source_into_a_capacitor_has_nowhere_to_go() {
    // invariant: KCL at DC — an ideal current into an open circuit has no solution.
    let (doc, nl, findings) = fixture("current-source-into-capacitor");
    assert_eq!(pins_of(&doc, &nl, "I1.out"), ["C1.a", "I1.out"]);
    only_finding(
        &findings,
        Severity::Error,
        Subject::Net("I1.out".into()),
        "fed by a current source with no DC path for its current (only I1, C1)",
    );
}

#[test]
fn a_sheet_without_ground_is_refused() {
    // invariant: node voltages need a reference node.
    let (doc, nl, findings) = fixture("no-ground");
    assert_eq!(nl.ground, None);
    assert_eq!(pins_of(&doc, &nl, "R1.b"), ["R1.b", "R2.a"]);
    only_finding(
        &findings,
        Severity::Error,
        Subject::Sheet,
        "there is no ground symbol",
    );
}

#[test]
fn the_demo_nets_are_as_drawn() {
    // invariant: the common-emitter demo's bias network joins as its notes describe.
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("projects/common-emitter.json");
    let doc = document::load_file(&path).unwrap();
    let nl = netlist::connect(&doc);
    no_findings(&netlist::check(&doc, &nl));
    assert_eq!(
        pins_of(&doc, &nl, "Q1.base"),
        ["C1.positive", "Q1.base", "R1.b", "R2.a"]
    );
    assert_eq!(
        pins_of(&doc, &nl, "Q1.emitter"),
        ["CE.positive", "Q1.emitter", "RE.a"]
    );
    assert_eq!(pins_of(&doc, &nl, "vout"), ["C2.negative", "RL.a"]);
}

#[test]
fn findings_come_errors_first() {
    // invariant: the check sorts errors before warnings.
    let mut doc = biasline::generate::transistor_chain(2);
    // A rail with nothing on it (a warning) and a resistor with no value (an error).
    doc.parts.push(document::Part {
        id: "x1".into(),
        connect: Default::default(),
        designator: "VX".into(),
        kind: document::PartKind::Rail,
        symbol: String::new(),
        position: [-20, -20],
        rotation: 0,
        mirror: false,
        preset: None,
        parameters: [("voltage".to_string(), 5.0)].into_iter().collect(),
    });
    doc.parts[2].parameters.clear();
    let nl = netlist::connect(&doc);
    let f = netlist::check(&doc, &nl);
    assert_eq!(f.len(), 2, "{f:#?}");
    assert_eq!(f[0].severity, Severity::Error);
    assert!(f[0].message.contains("resistor has no resistance"));
    assert_eq!(f[1].severity, Severity::Warning);
    assert_eq!(f[1].subject, Subject::Part("VX".into()));
}

#[test]
fn the_ground_net_keeps_its_name_against_a_label() {
    // invariant: "ground" always names the reference net, even when a label on
    // another net (first in sheet order) is also called ground.
    let text = r#"{"format": "biasline-project", "version": 1, "title": "t",
        "parts": [
          {"id": "p1", "designator": "R1", "kind": "resistor", "position": [0, 4], "parameters": {"resistance": 1000}},
          {"id": "p2", "designator": "VCC", "kind": "rail", "position": [0, 2], "parameters": {"voltage": 5}},
          {"id": "p3", "kind": "ground", "position": [0, 6]},
          {"id": "p4", "designator": "R2", "kind": "resistor", "position": [4, 4], "parameters": {"resistance": 1000}},
          {"id": "p5", "kind": "ground", "position": [4, 6]}
        ],
        "wires": [{"points": [[0, 2], [4, 2]]}],
        "labels": [{"name": "ground", "position": [0, 2]}]}"#;
    let doc = document::load_str(text).unwrap();
    let nl = netlist::connect(&doc);
    let g = nl.ground.unwrap();
    assert_eq!(nl.nets[g].name, "ground");
    assert_eq!(nl.net_by_name("ground"), Some(g));
    let other = nl.pin_net(&doc, 0, "a").unwrap();
    assert_eq!(nl.nets[other].name, "ground#2");
}

#[test]
fn a_wire_without_points_is_skipped() {
    // invariant: an unfinished edit (a wire with no points) neither panics nor
    // shifts which wire belongs to which net.
    let mut doc = biasline::generate::transistor_chain(1);
    let before = netlist::connect(&doc);
    doc.wires.insert(0, document::Wire { points: Vec::new() });
    let nl = netlist::connect(&doc);
    assert_eq!(nl.nets.len(), before.nets.len());
    for (a, b) in nl.nets.iter().zip(&before.nets) {
        assert_eq!(a.name, b.name);
        let shifted: Vec<usize> = b.wires.iter().map(|w| w + 1).collect();
        assert_eq!(a.wires, shifted, "net {}", a.name);
    }
    let _ = netlist::check(&doc, &nl);
}
