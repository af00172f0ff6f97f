//! Compound pairs read as blocks: the cascode, the Darlington follower and
//! the complementary feedback (Sziklai) follower, each with gain, Zin, Zout
//! and bandwidth exact beside the textbook estimate.

use crate::common::{document, p, with_preset};
use crate::ss_common::{analyse, stage};
use biasline::analysis::blocks::{Block, BlockKind};
use biasline::document::{Document, PartKind::*};
use biasline::presets::keys as k;

fn block(a: &biasline::analysis::small_signal::Analysis, kind: BlockKind) -> &Block {
    let b: Vec<&Block> = a.blocks.iter().filter(|b| b.kind == kind).collect();
    assert_eq!(b.len(), 1, "{:?}", a.blocks);
    b[0]
}

/// A bypassed common-emitter stage into a common-base stage, source and
/// load named (also the fixture of the cascode estimate test).
pub fn cascode() -> Document {
    let mut doc = document(&[
        p("VCC", Rail, &["vcc"], &[(k::VOLTAGE, 15.0)]),
        p("VS", SignalSource, &["src", "0"], &[(k::AMPLITUDE, 1e-3)]),
        p(
            "RS",
            Resistor,
            &["src", "a"],
            &[(k::RESISTANCE, 600.0), (k::SOURCE_RESISTANCE_MARK, 1.0)],
        ),
        p("C1", Capacitor, &["a", "b1"], &[(k::CAPACITANCE, 10e-6)]),
        p("R1", Resistor, &["vcc", "b1"], &[(k::RESISTANCE, 100e3)]),
        p("R2", Resistor, &["b1", "0"], &[(k::RESISTANCE, 15e3)]),
        with_preset(p("Q1", Npn, &["mid", "b1", "e1"], &[]), "small-signal-npn"),
        p("RE", Resistor, &["e1", "0"], &[(k::RESISTANCE, 1000.0)]),
        p("CE", Capacitor, &["e1", "0"], &[(k::CAPACITANCE, 100e-6)]),
        with_preset(p("Q2", Npn, &["out", "b2", "mid"], &[]), "small-signal-npn"),
        p("R3", Resistor, &["vcc", "b2"], &[(k::RESISTANCE, 47e3)]),
        p("R4", Resistor, &["b2", "0"], &[(k::RESISTANCE, 33e3)]),
        p("CB", Capacitor, &["b2", "0"], &[(k::CAPACITANCE, 10e-6)]),
        p("RC", Resistor, &["vcc", "out"], &[(k::RESISTANCE, 4700.0)]),
        p(
            "C2",
            Capacitor,
            &["out", "load"],
            &[(k::CAPACITANCE, 10e-6)],
        ),
        p("RL", Resistor, &["load", "0"], &[(k::RESISTANCE, 10e3)]),
    ]);
    doc.signal.source = Some("VS".into());
    doc.signal.load = Some("RL".into());
    doc
}

fn close(what: &str, b: &Block, key: &str, tolerance_percent: f64) {
    let f = b.figure(key).unwrap_or_else(|| panic!("{what}: no {key}"));
    eprintln!(
        "{what} {key}: exact {:?} estimate {:?} ({:?} %)",
        f.exact, f.estimate, f.difference_percent
    );
    let d = f
        .difference_percent
        .unwrap_or_else(|| panic!("{what} {key}: no estimate ({:?})", f.no_estimate_because));
    assert!(
        d.abs() < tolerance_percent,
        "{what} {key}: exact {:?}, estimate {:?} ({d:+.2} %)",
        f.exact,
        f.estimate
    );
}

#[test]
fn the_cascode_is_one_block_with_its_gain_the_product_of_its_stages() {
    let a = analyse(&cascode());
    let b = block(&a, BlockKind::Cascode);
    assert_eq!(b.transistors, ["Q1", "Q2"]);
    assert_eq!(b.stages.len(), 2, "takes in both stages");
    // invariant: v(out)/v(b1) = (v(mid)/v(b1))·(v(out)/v(mid)).
    let product =
        stage(&a, "Q1").voltage_gain.exact.unwrap() * stage(&a, "Q2").voltage_gain.exact.unwrap();
    let av = b.figure("voltage_gain").unwrap().exact.unwrap();
    assert!((av / product - 1.0).abs() < 1e-9, "{av} vs {product}");
    // invariant: Zin and Zout are the first stage's Zin and the last stage's Zout
    // (the same cuts).
    let zin = b.figure("input_impedance").unwrap().exact.unwrap();
    let zout = b.figure("output_impedance").unwrap().exact.unwrap();
    assert!((zin / stage(&a, "Q1").input_impedance.exact.unwrap() - 1.0).abs() < 1e-9);
    assert!((zout / stage(&a, "Q2").output_impedance.exact.unwrap() - 1.0).abs() < 1e-9);
    // source: Sedra and Smith, Microelectronic Circuits, the BJT cascode:
    // Av ≈ −α1·α2·R'L/re1 with the emitter bypassed, Zin ≈ RB ‖ (β + 1)·re1,
    // Zout ≈ RC (the cascode's own β·ro left open). ro makes the exact
    // gain smaller by R'L/(β·ro), under 2 % here.
    close("cascode", b, "voltage_gain", 1.0);
    close("cascode", b, "input_impedance", 1.0);
    close("cascode", b, "output_impedance", 1.0);
    // source: Sedra and Smith, the open-circuit time-constant method: it
    // gives a lower bound on fH, within a factor of two when one pole
    // dominates (here Cπ1 with the source resistance).
    let fh = b.figure("upper_corner").unwrap();
    let (x, e) = (fh.exact.unwrap(), fh.estimate.unwrap());
    eprintln!("cascode fH: exact {x} estimate {e}");
    assert!(e <= x * 1.02 && e > 0.5 * x, "fH exact {x}, estimate {e}");
}

#[test]
fn the_upper_corner_is_where_the_gain_is_down_3_db() {
    use biasline::analysis::linear::{Mode, System};
    let doc = cascode();
    let a = analyse(&doc);
    let b = block(&a, BlockKind::Cascode);
    let fh = b.figure("upper_corner").unwrap().exact.unwrap();
    let ss = &a.small_signal;
    let nl = biasline::netlist::connect(&doc);
    let node = |n: &str| ss.net_node[nl.net_by_name(n).unwrap()];
    let gain = |f: f64| {
        use biasline::analysis::linear::Drive;
        let sys = System::new(&ss.circuit, Mode::Frequency, &[], None);
        sys.solve(f, &[Drive::unit(ss.signal.unwrap())])
            .unwrap()
            .v(node("out"))
            .norm()
    };
    // invariant: |A(fH)| = |A|max/√2 from the source (the mid band lies near 10 kHz here).
    let mid = gain(1e4);
    assert!(((gain(fh) / mid) - std::f64::consts::FRAC_1_SQRT_2).abs() < 2e-3);
}

fn follower(
    q1: biasline::document::PartKind,
    q2: biasline::document::PartKind,
    sziklai: bool,
) -> Document {
    // Darlington: Q1 emitter → Q2 base, collectors on VCC, output at Q2's emitter.
    // Sziklai: NPN Q1 whose collector drives PNP Q2's base; Q2's collector returns to
    // Q1's emitter (the output); Q2's emitter on VCC through nothing.
    let (q1n, q2n): ([&str; 3], [&str; 3]) = if sziklai {
        (["b2", "b1", "out"], ["out", "b2", "vcc"])
    } else {
        (["vcc", "b1", "e1"], ["vcc", "e1", "out"])
    };
    let q1p = if q1 == Npn {
        "small-signal-npn"
    } else {
        "small-signal-pnp"
    };
    let q2p = if q2 == Npn {
        "small-signal-npn"
    } else {
        "small-signal-pnp"
    };
    let q1n: &'static [&'static str] = Box::leak(Box::new(q1n));
    let q2n: &'static [&'static str] = Box::leak(Box::new(q2n));
    let mut parts = vec![
        p("VCC", Rail, &["vcc"], &[(k::VOLTAGE, 15.0)]),
        p("VS", SignalSource, &["src", "0"], &[(k::AMPLITUDE, 1e-3)]),
        p(
            "RS",
            Resistor,
            &["src", "a"],
            &[(k::RESISTANCE, 10e3), (k::SOURCE_RESISTANCE_MARK, 1.0)],
        ),
        p("C1", Capacitor, &["a", "b1"], &[(k::CAPACITANCE, 10e-6)]),
        p("R1", Resistor, &["vcc", "b1"], &[(k::RESISTANCE, 1e6)]),
        p("R2", Resistor, &["b1", "0"], &[(k::RESISTANCE, 1e6)]),
        with_preset(p("Q1", q1, q1n, &[]), q1p),
        with_preset(p("Q2", q2, q2n, &[]), q2p),
        p("RE", Resistor, &["out", "0"], &[(k::RESISTANCE, 1000.0)]),
        p(
            "C2",
            Capacitor,
            &["out", "load"],
            &[(k::CAPACITANCE, 100e-6)],
        ),
        p("RL", Resistor, &["load", "0"], &[(k::RESISTANCE, 600.0)]),
    ];
    if sziklai {
        // Q1 needs collector current of its own: a resistor across Q2's base–emitter.
        parts.push(p(
            "RBE",
            Resistor,
            &["vcc", "b2"],
            &[(k::RESISTANCE, 4.7e3)],
        ));
    }
    let mut doc = document(&parts);
    doc.signal.source = Some("VS".into());
    doc.signal.load = Some("RL".into());
    doc
}

#[test]
fn the_darlington_follower_is_one_block_near_its_estimates() {
    let a = analyse(&follower(Npn, Npn, false));
    let b = block(&a, BlockKind::Darlington);
    assert_eq!(b.transistors, ["Q1", "Q2"]);
    assert!(b.words.ends_with("as a follower"), "{}", b.words);
    // source: Sedra and Smith, the Darlington configuration: Av ≈ R'E/(R'E + re2 +
    // re1/(β2 + 1)), Zin ≈ RB ‖ (β1 + 1)(β2 + 1)(re2 + R'E). ro and the Early
    // effect are left out (a few per cent at these impedances).
    close("Darlington", b, "voltage_gain", 0.5);
    close("Darlington", b, "input_impedance", 1.0);
    let av = b.figure("voltage_gain").unwrap().exact.unwrap();
    assert!(av > 0.95 && av < 1.0, "a follower: {av}");
}

#[test]
fn the_complementary_feedback_follower_is_one_block_near_its_estimates() {
    let a = analyse(&follower(Npn, Pnp, true));
    let b = block(&a, BlockKind::ComplementaryFeedbackPair);
    assert_eq!(b.transistors, ["Q1", "Q2"]);
    assert!(b.words.ends_with("as a follower"), "{}", b.words);
    // source: Horowitz and Hill, The Art of Electronics, the complementary
    // (Sziklai) pair: a follower with gm ≈ gm1·β2, so its gain is nearer 1 than
    // a single follower's.
    close("Sziklai", b, "voltage_gain", 0.5);
    close("Sziklai", b, "input_impedance", 2.0);
    let av = b.figure("voltage_gain").unwrap().exact.unwrap();
    assert!(av > 0.99 && av < 1.0, "{av}");
}
