//! The DC operating point against textbook formulas, hand algebra and an
//! independent one-unknown solve, plus the designer-facing regions and
//! warnings.

use crate::common;

use biasline::analysis::circuit;
use biasline::analysis::dc::{DiodeState, Region};
use biasline::analysis::{thermal_voltage, AnalysisError, ZERO_CELSIUS};
use biasline::document::{self, PartKind::*};
use biasline::netlist;
use biasline::presets::keys::*;
use common::*;

fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

#[test]
fn divider_bias_matches_the_thevenin_base_formula() {
    let (vcc, r1, r2, rc, re) = (12.0, 47e3, 10e3, 4.7e3, 1e3);
    let doc = document(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, vcc)]),
        p("R1", Resistor, &["vcc", "b"], &[(RESISTANCE, r1)]),
        p("R2", Resistor, &["b", "0"], &[(RESISTANCE, r2)]),
        p("RC", Resistor, &["vcc", "c"], &[(RESISTANCE, rc)]),
        p("RE", Resistor, &["e", "0"], &[(RESISTANCE, re)]),
        with_preset(p("Q1", Npn, &["c", "b", "e"], &[]), "small-signal-npn"),
    ]);
    let op = solve(&doc).expect("solves");
    let q = transistor(&op, "Q1");
    assert_eq!(q.region, Region::ForwardActive);
    let divider_current = net_v(&doc, &op, "b") / r2;
    assert!(divider_current >= 10.0 * q.ib, "stiff divider precondition");
    // source: Sedra & Smith, Microelectronic Circuits, BJT DC biasing section (divider bias,
    // Thevenin base circuit): IE = (VBB − VBE)/(RE + RB/(β + 1)), VBB = VCC·R2/(R1 + R2), RB = R1‖R2.
    let vbb = vcc * r2 / (r1 + r2);
    let rb = r1 * r2 / (r1 + r2);
    let beta = 200.0; // the preset's βF
    let ie = (vbb - q.vbe) / (re + rb / (beta + 1.0));
    assert!(rel(-q.ie, ie) < 0.03, "IE {} vs formula {ie}", -q.ie);
    // source: same section, VC = VCC − α·IE·RC with α = β/(β + 1).
    let vc = vcc - beta / (beta + 1.0) * ie * rc;
    assert!(rel(net_v(&doc, &op, "c"), vc) < 0.03);
}

#[test]
fn emitter_follower_sits_one_vbe_below_its_base() {
    let (vs, rb, re) = (6.0, 22e3, 2.2e3);
    let doc = document(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, 12.0)]),
        p("V1", VoltageSource, &["in", "0"], &[(VOLTAGE, vs)]),
        p("RB", Resistor, &["in", "b"], &[(RESISTANCE, rb)]),
        p("Q1", Npn, &["vcc", "b", "e"], &[(FORWARD_BETA, 120.0)]),
        p("RE", Resistor, &["e", "0"], &[(RESISTANCE, re)]),
    ]);
    let op = solve(&doc).expect("solves");
    let q = transistor(&op, "Q1");
    // source: Horowitz & Hill, The Art of Electronics, 3rd ed., §2.2 (emitter follower):
    // VE = VB − VBE, and with a base resistance IE = (VS − VBE)/(RE + RB/(β + 1)).
    let ie = (vs - q.vbe) / (re + rb / 121.0);
    assert!(rel(net_v(&doc, &op, "e"), ie * re) < 0.03);
    assert!((net_v(&doc, &op, "e") - (net_v(&doc, &op, "b") - q.vbe)).abs() < 1e-9);
    // invariant: with an infinite Early voltage and VBC < 0, hFE equals βF to within IBC/IB.
    assert!(rel(q.dc_current_gain, 120.0) < 1e-6);
}

#[test]
fn current_mirror_copies_the_reference_current() {
    let (vcc, rref) = (12.0, 11e3);
    let doc = document(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, vcc)]),
        p("RREF", Resistor, &["vcc", "ref"], &[(RESISTANCE, rref)]),
        p("Q1", Npn, &["ref", "ref", "0"], &[(FORWARD_BETA, 100.0)]),
        p("Q2", Npn, &["out", "ref", "0"], &[(FORWARD_BETA, 100.0)]),
        p("RL", Resistor, &["vcc", "out"], &[(RESISTANCE, 4.7e3)]),
    ]);
    let op = solve(&doc).expect("solves");
    let q1 = transistor(&op, "Q1");
    let iref = (vcc - q1.vbe) / rref;
    // source: Sedra & Smith, Microelectronic Circuits, current-mirror section:
    // IO = IREF/(1 + 2/β) for matched transistors without the Early effect.
    let io = iref / (1.0 + 2.0 / 100.0);
    assert!(
        rel(transistor(&op, "Q2").ic, io) < 1e-3,
        "{} vs {io}",
        transistor(&op, "Q2").ic
    );
    // Q1 is diode-connected: no near-saturation warning for it.
    assert!(!op
        .warnings
        .iter()
        .any(|w| w.message.starts_with("Q1 is within")));
}

/// Bisection on f(lo) < 0 < f(hi) to a relative width of 1e-13.
fn bisect(mut lo: f64, mut hi: f64, f: impl Fn(f64) -> f64) -> f64 {
    assert!(f(lo) < 0.0 && f(hi) > 0.0);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if f(mid) > 0.0 {
            hi = mid
        } else {
            lo = mid
        }
        if hi - lo < 1e-13 * hi.abs() {
            break;
        }
    }
    0.5 * (lo + hi)
}

#[test]
fn diode_and_resistor_match_an_independent_bisection() {
    let (v, r, is, n) = (5.0, 1e3, 1e-14, 1.0);
    let doc = document(&[
        p("V1", VoltageSource, &["in", "0"], &[(VOLTAGE, v)]),
        p("R1", Resistor, &["in", "a"], &[(RESISTANCE, r)]),
        p(
            "D1",
            Diode,
            &["a", "0"],
            &[(SATURATION_CURRENT, is), (EMISSION_COEFFICIENT, n)],
        ),
    ]);
    let op = solve(&doc).expect("solves");
    let vt = thermal_voltage(27.0 + ZERO_CELSIUS);
    // source: W. Shockley, Bell System Technical Journal 28 (1949); invariant: agreement of two independent methods.
    let vd = bisect(0.0, v, |x| is * ((x / (n * vt)).exp() - 1.0) - (v - x) / r);
    assert!(rel(net_v(&doc, &op, "a"), vd) < 1e-6);
    assert_eq!(op.diodes().next().unwrap().state, DiodeState::Forward);
}

#[test]
fn diode_connected_transistor_matches_an_independent_bisection() {
    let (v, r, beta) = (9.0, 10e3, 150.0);
    let doc = document(&[
        p("V1", VoltageSource, &["in", "0"], &[(VOLTAGE, v)]),
        p("R1", Resistor, &["in", "d"], &[(RESISTANCE, r)]),
        p("Q1", Npn, &["d", "d", "0"], &[(FORWARD_BETA, beta)]),
    ]);
    let op = solve(&doc).expect("solves");
    let vt = thermal_voltage(27.0 + ZERO_CELSIUS);
    // source: Gummel and Poon, Bell System Technical Journal 49 (1970), at VBC = 0: IC + IB = Is·(e^(VBE/VT) − 1)·(1 + 1/βF).
    // invariant: agreement with an independent one-unknown bisection.
    let vbe = bisect(0.0, v, |x| {
        1e-14 * ((x / vt).exp() - 1.0) * (1.0 + 1.0 / beta) - (v - x) / r
    });
    assert!(rel(net_v(&doc, &op, "d"), vbe) < 1e-6);
}

#[test]
fn hard_driven_switch_is_saturated_and_flagged() {
    let doc = document(&[
        p("V1", VoltageSource, &["vcc", "0"], &[(VOLTAGE, 5.0)]),
        p("RB", Resistor, &["vcc", "b"], &[(RESISTANCE, 1e3)]),
        p("RC", Resistor, &["vcc", "c"], &[(RESISTANCE, 1e3)]),
        with_preset(p("Q1", Npn, &["c", "b", "0"], &[]), "small-signal-npn"),
    ]);
    let op = solve(&doc).expect("solves");
    let q = transistor(&op, "Q1");
    assert_eq!(q.region, Region::Saturation);
    // common practice (no source): a small-signal switch driven hard sits at VCE,sat ≈ 0.05–0.3 V.
    assert!(q.vce > 0.0 && q.vce < 0.3, "{}", q.vce);
    assert!(q.saturation_margin < 0.0);
    assert!(op
        .warnings
        .iter()
        .any(|w| w.message.contains("Q1 is saturated")));
}

#[test]
fn base_held_at_ground_is_cut_off_and_flagged() {
    let doc = document(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, 9.0)]),
        p("RB", Resistor, &["b", "0"], &[(RESISTANCE, 10e3)]),
        p("RC", Resistor, &["vcc", "c"], &[(RESISTANCE, 4.7e3)]),
        with_preset(p("Q1", Npn, &["c", "b", "0"], &[]), "small-signal-npn"),
    ]);
    let op = solve(&doc).expect("solves");
    let q = transistor(&op, "Q1");
    assert_eq!(q.region, Region::CutOff);
    assert!(q.cutoff_margin < 0.0);
    // invariant: with the base at 0 V the collector sits at the supply less only leakage.
    assert!((net_v(&doc, &op, "c") - 9.0).abs() < 1e-6);
    assert!(op
        .warnings
        .iter()
        .any(|w| w.message.contains("Q1 is cut off")));
}

#[test]
fn reversed_pnp_works_in_reverse_active_with_a_warning() {
    // The PNP high-side stage of the sensor-loop demo with collector and emitter swapped.
    let doc = document(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, 24.0)]),
        p("R1", Resistor, &["vcc", "b"], &[(RESISTANCE, 2.2e3)]),
        p("R2", Resistor, &["b", "0"], &[(RESISTANCE, 22e3)]),
        p("RE", Resistor, &["vcc", "top"], &[(RESISTANCE, 150.0)]),
        with_preset(p("Q1", Pnp, &["top", "b", "loop"], &[]), "small-signal-pnp"),
        p("RL", Resistor, &["loop", "0"], &[(RESISTANCE, 250.0)]),
    ]);
    let op = solve(&doc).expect("solves");
    let q = transistor(&op, "Q1");
    // common practice (no source): a transistor fitted the wrong way round still conducts, with
    // the low reverse gain βR, so a designer expects reverse active (or cut-off) and a warning.
    assert!(
        matches!(q.region, Region::ReverseActive | Region::CutOff),
        "{:?}",
        q.region
    );
    assert!(op
        .warnings
        .iter()
        .any(|w| w.subject == netlist::Subject::Part("Q1".into())));
    // The reverse gain is far below βF: hFE measured "backwards" is about βR = 2.
    assert!(q.dc_current_gain.abs() < 10.0);
}

#[test]
fn vbe_falls_about_two_millivolts_per_kelvin_at_constant_current() {
    let at = |celsius: f64| {
        let doc = document_at(
            &[
                p("I1", CurrentSource, &["d", "0"], &[(CURRENT, 1e-3)]),
                p("Q1", Npn, &["d", "d", "0"], &[(FORWARD_BETA, 1e4)]),
            ],
            celsius,
        );
        let op = solve(&doc).expect("solves");
        transistor(&op, "Q1").vbe
    };
    let slope = (at(35.0) - at(25.0)) / 10.0;
    // common practice (no source): VBE falls about 2 mV per °C at constant collector current.
    assert!(slope < -1.6e-3 && slope > -2.4e-3, "{slope}");
}

#[test]
fn loops_of_sources_and_floating_nets_are_stopped_by_the_rules_check() {
    let doc = document(&[
        p("V1", VoltageSource, &["a", "0"], &[(VOLTAGE, 5.0)]),
        p("V2", VoltageSource, &["a", "0"], &[(VOLTAGE, 6.0)]),
        p("R1", Resistor, &["a", "0"], &[(RESISTANCE, 1e3)]),
    ]);
    match solve(&doc) {
        Err(AnalysisError::Rules(f)) => assert!(f.iter().any(|x| x.message.contains("V2"))),
        other => panic!("{other:?}"),
    }
    let doc = document(&[
        p("I1", CurrentSource, &["a", "0"], &[(CURRENT, 1e-3)]),
        p("C1", Capacitor, &["a", "0"], &[(CAPACITANCE, 1e-6)]),
    ]);
    assert!(matches!(solve(&doc), Err(AnalysisError::Rules(_))));
}

#[test]
fn singular_system_is_reported_by_the_solver_naming_the_net() {
    // Two current sources in series: the net between them has no DC path (a cut-set of current
    // sources). Built without the rules check, the solver must catch it and name the net.
    let doc = document(&[
        p("I1", CurrentSource, &["mid", "0"], &[(CURRENT, 1e-3)]),
        p("I2", CurrentSource, &["top", "mid"], &[(CURRENT, 1e-3)]),
        p("R1", Resistor, &["top", "0"], &[(RESISTANCE, 1e3)]),
    ]);
    let nl = netlist::connect(&doc);
    let c = circuit::build_unchecked(&doc, &nl).expect("builds");
    match biasline::analysis::dc::solve_circuit(&c) {
        Err(AnalysisError::Singular { message }) => {
            assert!(message.contains("net mid"), "{message}");
            assert!(
                message.contains("I1") && message.contains("I2"),
                "{message}"
            );
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn ratings_and_polarity_warnings_name_the_part() {
    let doc = document(&[
        p("VCC", Rail, &["vcc"], &[(VOLTAGE, 30.0)]),
        p(
            "R1",
            Resistor,
            &["vcc", "b"],
            &[(RESISTANCE, 100e3), (POWER_RATING, 0.25)],
        ),
        p("R2", Resistor, &["b", "0"], &[(RESISTANCE, 10e3)]),
        p(
            "RC",
            Resistor,
            &["vcc", "c"],
            &[(RESISTANCE, 47.0), (POWER_RATING, 0.125)],
        ),
        p("RE", Resistor, &["e", "0"], &[(RESISTANCE, 100.0)]),
        p(
            "Q1",
            Npn,
            &["c", "b", "e"],
            &[
                (MAX_COLLECTOR_EMITTER_VOLTAGE, 20.0),
                (MAX_POWER, 0.1),
                (THERMAL_RESISTANCE, 500.0),
                (MAX_JUNCTION_CELSIUS, 125.0),
                (MAX_COLLECTOR_CURRENT, 0.01),
            ],
        ),
        p(
            "C1",
            PolarisedCapacitor,
            &["0", "c"],
            &[(CAPACITANCE, 1e-5), (VOLTAGE_RATING, 16.0)],
        ),
    ]);
    let op = solve(&doc).expect("solves");
    let has = |part: &str, text: &str| {
        op.warnings
            .iter()
            .any(|w| w.subject == netlist::Subject::Part(part.into()) && w.message.contains(text))
    };
    // IE ≈ (2.73 − 0.7)/100 ≈ 20 mA: RC dissipates ≈ 19 mW (< 125 mW), VCE ≈ 28 V.
    assert!(has("Q1", "collector–emitter"), "{:#?}", op.warnings);
    assert!(has("Q1", "collector current"));
    assert!(has("Q1", "dissipates"));
    assert!(has("Q1", "junction temperature"));
    assert!(has("C1", "reversed"));
    assert!(has("C1", "voltage rating"));
    assert!(!has("RC", "power rating"));
}

#[test]
fn resistor_over_its_power_rating_is_flagged() {
    let doc = document(&[
        p("V1", VoltageSource, &["a", "0"], &[(VOLTAGE, 12.0)]),
        p(
            "R1",
            Resistor,
            &["a", "0"],
            &[(RESISTANCE, 100.0), (POWER_RATING, 0.25)],
        ),
    ]);
    let op = solve(&doc).expect("solves");
    // invariant: P = V²/R = 1.44 W, above 0.25 W.
    assert!(
        (op.parts
            .iter()
            .find(|x| x.designator == "R1")
            .expect("R1")
            .power
            - 1.44)
            .abs()
            < 1e-12
    );
    assert!(op
        .warnings
        .iter()
        .any(|w| w.message.contains("R1 dissipates")));
}

#[test]
fn safety_caution_shows_above_sixty_volts_between_nets_only() {
    let load = |name: &str| {
        document::load_file(std::path::Path::new(&format!(
            "{}/projects/{name}",
            env!("CARGO_MANIFEST_DIR")
        )))
        .expect("loads")
    };
    let caution = |name: &str| {
        let op = solve(&load(name)).expect("solves");
        op.warnings
            .iter()
            .any(|w| w.message.contains("IEC 62368-1"))
    };
    // source: IEC 62368-1, ES1 limit of 60 V DC.
    assert!(caution("high-voltage-driver.json"));
    assert!(!caution("pnp-sensor-loop.json"));
    let op = solve(&load("high-voltage-driver.json")).expect("solves");
    // invariant: ±35 V rails are 70 V apart.
    assert!((op.largest_voltage - 70.0).abs() < 1e-9);
}

#[test]
fn singular_system_is_named_by_the_sparse_solver_too() {
    // The cut-set of the test above inside a ladder large enough for the sparse LU.
    let names: Vec<String> = (0..20).map(|k| format!("n{k}")).collect();
    let mut parts = vec![
        p("V1", VoltageSource, &["n0", "0"], &[(VOLTAGE, 5.0)]),
        p("I1", CurrentSource, &["mid", "0"], &[(CURRENT, 1e-3)]),
        p("I2", CurrentSource, &["n19", "mid"], &[(CURRENT, 1e-3)]),
    ];
    let rungs: Vec<[&str; 2]> = (0..19)
        .map(|k| [names[k].as_str(), names[k + 1].as_str()])
        .collect();
    let legs: Vec<[&str; 2]> = (1..20).map(|k| [names[k].as_str(), "0"]).collect();
    let ids: Vec<String> = (0..38).map(|k| format!("R{k}")).collect();
    for k in 0..19 {
        parts.push(p(&ids[k], Resistor, &rungs[k], &[(RESISTANCE, 1e3)]));
        parts.push(p(&ids[19 + k], Resistor, &legs[k], &[(RESISTANCE, 10e3)]));
    }
    let doc = document(&parts);
    let nl = netlist::connect(&doc);
    let c = circuit::build_unchecked(&doc, &nl).expect("builds");
    assert!(c.size() > biasline::analysis::DENSE_LIMIT);
    match biasline::analysis::dc::solve_circuit(&c) {
        Err(AnalysisError::Singular { message }) => {
            assert!(message.contains("net mid"), "{message}");
        }
        other => panic!("{other:?}"),
    }
}
