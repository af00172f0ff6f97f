//! Field-effect transistors as parts of a drawn circuit: the six DC
//! circuits of issue 19 solved from a document (kinds, presets, netlist,
//! circuit builder, DC engine, operating-point report) against an
//! independent bisection on each circuit's one-unknown equation, with the
//! square law written out again here (source: the reference page
//! "Field-effect transistors"; H. Shichman and D. A. Hodges, IEEE J.
//! Solid-State Circuits SC-3, 1968; W. Shockley, Proc. IRE 40, 1952), plus
//! the conservation laws, the parts' table rows and symbols, and bad input.

use crate::cli_common::{ran, EXIT_CANNOT};
use crate::common::{assert_kcl_and_tellegen, document, net_v, p, solved, with_preset};
use biasline::analysis::dc::{FetOperatingPoint, FetRegion};
use biasline::analysis::devices::fet::keys as fk;
use biasline::document::PartKind;
use biasline::presets::keys as k;

/// Bisection of a function that changes sign on [lo, hi], to f64 resolution.
fn bisect(mut lo: f64, mut hi: f64, f: impl Fn(f64) -> f64) -> f64 {
    let flo = f(lo);
    assert!(flo * f(hi) < 0.0, "no sign change on [{lo}, {hi}]");
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if (f(mid) < 0.0) == (flo < 0.0) {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// JFET in saturation, N sense: ID = β·(VGS − VTO)²·(1 + λ·VDS), β = IDSS/VTO².
fn jfet_sat(idss: f64, vto: f64, lambda: f64, vgs: f64, vds: f64) -> f64 {
    let vov = (vgs - vto).max(0.0);
    idss / (vto * vto) * vov * vov * (1.0 + lambda * vds)
}

/// MOSFET, N sense: saturation β/2·Vov²·(1 + λ·VDS), triode β·(Vov·VDS − VDS²/2)·(1 + λ·VDS).
fn mos(beta: f64, vto: f64, lambda: f64, vgs: f64, vds: f64) -> f64 {
    let vov = (vgs - vto).max(0.0);
    let core = if vds < vov {
        beta * (vov * vds - 0.5 * vds * vds)
    } else {
        0.5 * beta * vov * vov
    };
    core * (1.0 + lambda * vds)
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(1e-300)
}

fn fet<'a>(op: &'a biasline::analysis::dc::OperatingPoint, d: &str) -> &'a FetOperatingPoint {
    op.fets().find(|f| f.designator == d).expect("fet")
}

/// Gate leakage and body diode made negligible so the bisection's one
/// unknown is the whole story (a 1e-22 A junction leaks 1e-16 V into 1 MΩ).
const QUIET: [(&str, f64); 2] = [
    (fk::GATE_SATURATION_CURRENT, 1e-22),
    (fk::BODY_DIODE_SATURATION_CURRENT, 1e-22),
];

#[test]
fn n_jfet_self_bias_matches_the_square_law_with_vgs_equal_to_minus_id_rs() {
    // source: Shockley's square law, self-bias VGS = −ID·RS (the reference page).
    let params = [
        (fk::THRESHOLD_VOLTAGE, -2.0),
        (fk::ZERO_GATE_DRAIN_CURRENT, 6e-3),
        (fk::CHANNEL_LENGTH_MODULATION, 0.01),
        QUIET[0],
        QUIET[1],
    ];
    let (rd, rs, vdd) = (2200.0, 680.0, 15.0);
    let doc = document(&[
        p("VDD", PartKind::Rail, &["vdd"], &[(k::VOLTAGE, vdd)]),
        p(
            "RD",
            PartKind::Resistor,
            &["vdd", "d"],
            &[(k::RESISTANCE, rd)],
        ),
        p("Q1", PartKind::NJfet, &["d", "g", "s"], &params),
        p(
            "RG",
            PartKind::Resistor,
            &["g", "0"],
            &[(k::RESISTANCE, 1e6)],
        ),
        p(
            "RS",
            PartKind::Resistor,
            &["s", "0"],
            &[(k::RESISTANCE, rs)],
        ),
    ]);
    let (_, c, op) = solved(&doc);
    assert_kcl_and_tellegen(&c, &op, "N-JFET self-bias");
    let id = bisect(0.0, 2.0 / rs, |id| {
        id - jfet_sat(6e-3, -2.0, 0.01, -id * rs, vdd - id * (rd + rs))
    });
    let q = fet(&op, "Q1");
    assert!(
        rel(q.drain_current, id) < 1e-9,
        "{} vs {id}",
        q.drain_current
    );
    assert!(rel(net_v(&doc, &op, "s"), id * rs) < 1e-9);
    assert!(rel(net_v(&doc, &op, "d"), vdd - id * rd) < 1e-9);
    assert_eq!(q.region, FetRegion::Saturation);
    // invariant: the reported VGS is the measured one, −ID·RS here.
    assert!(rel(q.measured_vgs(), -id * rs) < 1e-9);
    // source: gm = 2·IDSS/|VP|·√(ID/IDSS)·(1 + λ·VDS)^½ → with λ, gm = 2·√(β·ID·(1 + λ·VDS)).
    let vds = vdd - id * (rd + rs);
    let gm = 2.0 * (6e-3 / 4.0 * id * (1.0 + 0.01 * vds)).sqrt();
    assert!(rel(q.gm, gm) < 1e-9, "gm {} vs {gm}", q.gm);
}

#[test]
fn p_jfet_self_bias_is_the_mirror_image() {
    // source: the square law with every voltage and current negated (the reference page).
    let params = [
        (fk::THRESHOLD_VOLTAGE, 2.5),
        (fk::ZERO_GATE_DRAIN_CURRENT, 8e-3),
        (fk::CHANNEL_LENGTH_MODULATION, 0.02),
        QUIET[0],
        QUIET[1],
    ];
    let (rd, rs, vdd) = (1500.0, 820.0, 15.0);
    let doc = document(&[
        p("VDD", PartKind::Rail, &["vdd"], &[(k::VOLTAGE, vdd)]),
        p(
            "RS",
            PartKind::Resistor,
            &["vdd", "s"],
            &[(k::RESISTANCE, rs)],
        ),
        p("Q1", PartKind::PJfet, &["d", "g", "s"], &params),
        p(
            "RG",
            PartKind::Resistor,
            &["g", "vdd"],
            &[(k::RESISTANCE, 1e6)],
        ),
        p(
            "RD",
            PartKind::Resistor,
            &["d", "0"],
            &[(k::RESISTANCE, rd)],
        ),
    ]);
    let (_, c, op) = solved(&doc);
    assert_kcl_and_tellegen(&c, &op, "P-JFET self-bias");
    let id = bisect(0.0, 2.5 / rs, |id| {
        id - jfet_sat(8e-3, -2.5, 0.02, -id * rs, vdd - id * (rd + rs))
    });
    let q = fet(&op, "Q1");
    // A conducting P-channel part: current out of the drain pin.
    assert!(
        rel(-q.drain_current, id) < 1e-9,
        "{} vs {id}",
        q.drain_current
    );
    assert!(rel(net_v(&doc, &op, "d"), id * rd) < 1e-9);
    assert!(rel(net_v(&doc, &op, "s"), vdd - id * rs) < 1e-9);
    assert!(q.measured_vgs() > 0.0, "a working P-JFET's VGS is positive");
}

#[test]
fn n_jfet_follower_between_split_rails() {
    // source: square law with VGS = 0 − (−VSS + ID·RS) (the reference page).
    let params = [
        (fk::THRESHOLD_VOLTAGE, -2.0),
        (fk::ZERO_GATE_DRAIN_CURRENT, 6e-3),
        (fk::CHANNEL_LENGTH_MODULATION, 0.01),
        QUIET[0],
        QUIET[1],
    ];
    let rs = 3300.0;
    let doc = document(&[
        p("VP", PartKind::Rail, &["vp"], &[(k::VOLTAGE, 12.0)]),
        p("VN", PartKind::Rail, &["vn"], &[(k::VOLTAGE, -12.0)]),
        p("Q1", PartKind::NJfet, &["vp", "g", "s"], &params),
        p(
            "RG",
            PartKind::Resistor,
            &["g", "0"],
            &[(k::RESISTANCE, 1e3)],
        ),
        p(
            "RS",
            PartKind::Resistor,
            &["s", "vn"],
            &[(k::RESISTANCE, rs)],
        ),
    ]);
    let (_, c, op) = solved(&doc);
    assert_kcl_and_tellegen(&c, &op, "N-JFET follower");
    let id = bisect(12.0 / rs, 14.0 / rs, |id| {
        let vs = -12.0 + id * rs;
        id - jfet_sat(6e-3, -2.0, 0.01, -vs, 12.0 - vs)
    });
    assert!(rel(fet(&op, "Q1").drain_current, id) < 1e-9);
    assert!(rel(net_v(&doc, &op, "s"), -12.0 + id * rs) < 1e-9);
}

#[test]
fn divider_biased_n_mosfet_with_source_resistor() {
    // source: Shichman–Hodges saturation law, VGS = VG − ID·RS (the reference page).
    let params = [
        (fk::THRESHOLD_VOLTAGE, 2.1),
        (fk::TRANSCONDUCTANCE_PARAMETER, 0.05),
        (fk::CHANNEL_LENGTH_MODULATION, 0.02),
        QUIET[0],
        QUIET[1],
    ];
    let (r1, r2, rd, rs, vdd) = (1e6, 470e3, 4700.0, 1000.0, 12.0);
    let doc = document(&[
        p("VDD", PartKind::Rail, &["vdd"], &[(k::VOLTAGE, vdd)]),
        p(
            "R1",
            PartKind::Resistor,
            &["vdd", "g"],
            &[(k::RESISTANCE, r1)],
        ),
        p(
            "R2",
            PartKind::Resistor,
            &["g", "0"],
            &[(k::RESISTANCE, r2)],
        ),
        p(
            "RD",
            PartKind::Resistor,
            &["vdd", "d"],
            &[(k::RESISTANCE, rd)],
        ),
        p("Q1", PartKind::NMosfet, &["d", "g", "s"], &params),
        p(
            "RS",
            PartKind::Resistor,
            &["s", "0"],
            &[(k::RESISTANCE, rs)],
        ),
    ]);
    let (_, c, op) = solved(&doc);
    assert_kcl_and_tellegen(&c, &op, "N-MOSFET divider");
    let vg = vdd * r2 / (r1 + r2);
    let id = bisect(0.0, (vg - 2.1) / rs, |id| {
        id - mos(0.05, 2.1, 0.02, vg - id * rs, vdd - id * (rd + rs))
    });
    let q = fet(&op, "Q1");
    assert!(
        rel(q.drain_current, id) < 1e-9,
        "{} vs {id}",
        q.drain_current
    );
    assert!(rel(net_v(&doc, &op, "g"), vg) < 1e-9);
    assert_eq!(q.region, FetRegion::Saturation);
    // source: gm = 2·ID/(VGS − VTO) in saturation (λ's factor cancels in the ratio).
    let gm = 2.0 * id / (vg - id * rs - 2.1);
    assert!(rel(q.gm, gm) < 1e-9, "gm {} vs {gm}", q.gm);
}

#[test]
fn p_mosfet_high_side_in_saturation() {
    // source: the square law negated for a P channel (the reference page).
    let params = [
        (fk::THRESHOLD_VOLTAGE, -2.0),
        (fk::TRANSCONDUCTANCE_PARAMETER, 0.03),
        (fk::CHANNEL_LENGTH_MODULATION, 0.02),
        QUIET[0],
        QUIET[1],
    ];
    let (rd, vdd) = (100.0, 12.0);
    let doc = document(&[
        p("VDD", PartKind::Rail, &["vdd"], &[(k::VOLTAGE, vdd)]),
        p(
            "R1",
            PartKind::Resistor,
            &["vdd", "g"],
            &[(k::RESISTANCE, 100e3)],
        ),
        p(
            "R2",
            PartKind::Resistor,
            &["g", "0"],
            &[(k::RESISTANCE, 200e3)],
        ),
        p("Q1", PartKind::PMosfet, &["d", "g", "vdd"], &params),
        p(
            "RD",
            PartKind::Resistor,
            &["d", "0"],
            &[(k::RESISTANCE, rd)],
        ),
    ]);
    let (_, c, op) = solved(&doc);
    assert_kcl_and_tellegen(&c, &op, "P-MOSFET high side");
    let vsg = vdd - vdd * 200e3 / 300e3;
    // Channel sense: VGS → VSG, VDS → VSD, VTO → −VTO.
    let id = bisect(0.0, 0.12, |id| {
        id - mos(0.03, 2.0, 0.02, vsg, vdd - id * rd)
    });
    let q = fet(&op, "Q1");
    assert!(
        rel(-q.drain_current, id) < 1e-9,
        "{} vs {id}",
        q.drain_current
    );
    assert!(rel(net_v(&doc, &op, "d"), id * rd) < 1e-9);
    assert_eq!(q.region, FetRegion::Saturation);
}

#[test]
fn n_mosfet_switch_sits_in_the_triode_region() {
    // source: the triode law of Shichman and Hodges (the reference page).
    let params = [
        (fk::THRESHOLD_VOLTAGE, 2.1),
        (fk::TRANSCONDUCTANCE_PARAMETER, 0.05),
        (fk::CHANNEL_LENGTH_MODULATION, 0.02),
        QUIET[0],
        QUIET[1],
    ];
    let (rd, vdd) = (1000.0, 12.0);
    let doc = document(&[
        p("VDD", PartKind::Rail, &["vdd"], &[(k::VOLTAGE, vdd)]),
        p("VGATE", PartKind::Rail, &["drive"], &[(k::VOLTAGE, 10.0)]),
        p(
            "RGATE",
            PartKind::Resistor,
            &["drive", "g"],
            &[(k::RESISTANCE, 10e3)],
        ),
        p(
            "RD",
            PartKind::Resistor,
            &["vdd", "d"],
            &[(k::RESISTANCE, rd)],
        ),
        p("Q1", PartKind::NMosfet, &["d", "g", "0"], &params),
    ]);
    let (_, c, op) = solved(&doc);
    assert_kcl_and_tellegen(&c, &op, "N-MOSFET switch");
    let vds = bisect(0.0, 7.9, |vds| {
        mos(0.05, 2.1, 0.02, 10.0, vds) - (vdd - vds) / rd
    });
    assert!(rel(net_v(&doc, &op, "d"), vds) < 1e-9, "{vds}");
    let q = fet(&op, "Q1");
    assert_eq!(q.region, FetRegion::Triode);
    assert!(q.triode_margin < 0.0);
    // The report says so, naming the part (a switch that is on belongs there).
    assert!(op
        .warnings
        .iter()
        .any(|w| w.message.contains("Q1 is in its triode")));
}

#[test]
fn every_fet_preset_solves_a_plain_stage_for_its_own_kind() {
    // invariant: each shipped FET preset is meant for its kind and gives a conducting,
    // saturated part in a plain self-biased (JFET) or divider-biased (MOSFET) stage.
    for preset in biasline::presets::PRESETS {
        let Some(&kind) = preset.kinds.first() else {
            continue;
        };
        if !kind.is_fet() {
            continue;
        }
        let (s, jfet) = match kind {
            PartKind::NJfet => (1.0, true),
            PartKind::PJfet => (-1.0, true),
            PartKind::NMosfet => (1.0, false),
            _ => (-1.0, false),
        };
        // The MOSFET's gate sits 50 mV past its threshold (a power part's β makes amperes
        // of a volt); the JFET self-biases.
        let vt = preset
            .parameters
            .iter()
            .find(|(key, _)| *key == fk::THRESHOLD_VOLTAGE)
            .map(|(_, v)| *v)
            .expect("threshold");
        let rs: f64 = if jfet { 470.0 } else { 0.0 };
        let gate = if jfet { 0.0 } else { vt + s * 0.05 };
        let vdd = 12.0 * s;
        let doc = document(&[
            p("VDD", PartKind::Rail, &["vdd"], &[(k::VOLTAGE, vdd)]),
            p(
                "VG",
                PartKind::Rail,
                &["vg"],
                &[(k::VOLTAGE, gate.max(-30.0))],
            ),
            p(
                "RG",
                PartKind::Resistor,
                &["vg", "g"],
                &[(k::RESISTANCE, 1e5)],
            ),
            p(
                "RD",
                PartKind::Resistor,
                &["vdd", "d"],
                &[(k::RESISTANCE, 100.0)],
            ),
            with_preset(p("Q1", kind, &["d", "g", "s"], &[]), preset.name),
            p(
                "RS",
                PartKind::Resistor,
                &["s", "0"],
                &[(k::RESISTANCE, rs.max(1e-3))],
            ),
        ]);
        let (_, c, op) = solved(&doc);
        assert_kcl_and_tellegen(&c, &op, preset.name);
        let q = fet(&op, "Q1");
        assert_eq!(q.region, FetRegion::Saturation, "{}: {q:?}", preset.name);
        assert!(s * q.drain_current > 0.0, "{}", preset.name);
    }
}

#[test]
fn fet_kinds_have_rows_symbols_and_presets() {
    // invariant: every FET kind's row names pins its symbol has, a preset for that kind,
    // a shelf key of its own, and the file word round-trips through serde.
    let lib = biasline::symbols::library();
    let mut keys = Vec::new();
    for kind in PartKind::ALL.into_iter().filter(|k| k.is_fet()) {
        let info = kind.info();
        let symbol = lib.get(info.symbol).expect("symbol");
        for pin in info.pins {
            assert!(symbol.pin(pin).is_some(), "{}: pin {pin}", info.word);
        }
        let preset = biasline::presets::find(info.new_preset.expect("preset")).expect("exists");
        assert!(preset.kinds.contains(&kind), "{}", info.word);
        let word = serde_json::to_string(&kind).unwrap();
        assert_eq!(word, format!("\"{}\"", info.word));
        assert_eq!(PartKind::by_key(info.key), Some(kind));
        keys.push(info.key);
    }
    keys.sort();
    keys.dedup();
    assert_eq!(keys.len(), 4);
}

#[test]
fn a_gate_fed_only_through_a_capacitor_has_no_dc_path() {
    // source: an insulated gate draws no DC current (the MOSFET's defining property), so a
    // gate reached only through a capacitor floats; the rules check says so.
    let doc = document(&[
        p("VDD", PartKind::Rail, &["vdd"], &[(k::VOLTAGE, 12.0)]),
        p(
            "RD",
            PartKind::Resistor,
            &["vdd", "d"],
            &[(k::RESISTANCE, 1e3)],
        ),
        p("Q1", PartKind::NMosfet, &["d", "g", "0"], &[]),
        p(
            "C1",
            PartKind::Capacitor,
            &["in", "g"],
            &[(k::CAPACITANCE, 1e-6)],
        ),
        p(
            "RIN",
            PartKind::Resistor,
            &["in", "0"],
            &[(k::RESISTANCE, 1e3)],
        ),
    ]);
    let nl = biasline::netlist::connect(&doc);
    let findings = biasline::netlist::check(&doc, &nl);
    assert!(
        findings
            .iter()
            .any(|f| f.severity == biasline::netlist::Severity::Error
                && f.message.to_lowercase().contains("dc path")),
        "{findings:?}"
    );
}

/// A fresh directory of this test run.
fn scratch(name: &str) -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("biasline-fet-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// A self-biased N-JFET stage as a project file with `extra` on Q1.
fn jfet_file(dir: &std::path::Path, name: &str, extra: &str) -> std::path::PathBuf {
    let text =
        std::fs::read_to_string(crate::cli_common::root().join("projects/common-emitter.json"))
            .unwrap()
            .replace("\"kind\": \"npn\"", "\"kind\": \"n_jfet\"")
            .replace(
                "\"preset\": \"small-signal-npn\"",
                &format!("\"preset\": \"small-signal-n-jfet\", \"parameters\": {{{extra}}}"),
            );
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

#[test]
fn bad_fet_parameters_are_named_and_nothing_is_written() {
    // common practice (no source): a value a datasheet cannot give is refused with the part
    // and the key named, exit 2, and no output file.
    let dir = scratch("bad");
    for (extra, key) in [
        ("\"threshold_voltage\": 2.0", "threshold_voltage"),
        (
            "\"zero_gate_drain_current\": 0.0",
            "zero_gate_drain_current",
        ),
        (
            "\"zero_gate_drain_current\": -1e-3",
            "zero_gate_drain_current",
        ),
        (
            "\"gate_source_capacitance\": -1e-12",
            "gate_source_capacitance",
        ),
        (
            "\"channel_length_modulation\": -0.1",
            "channel_length_modulation",
        ),
    ] {
        let file = jfet_file(dir.as_path(), "bad.json", extra);
        let out = dir.as_path().join("out.png");
        let r = ran(&[
            "export",
            file.to_str().unwrap(),
            "-o",
            out.to_str().unwrap(),
        ]);
        assert_eq!(r.code, EXIT_CANNOT, "{extra}: {}", r.message);
        assert!(
            r.message.contains("Q1") && r.message.contains(key),
            "{extra}: {}",
            r.message
        );
        assert!(!out.exists(), "{extra}: a drawing was written");
        let r = ran(&["analyze", file.to_str().unwrap()]);
        assert_eq!(r.code, EXIT_CANNOT, "{extra}");
    }
    // Zero or negative β for a MOSFET, and a Crss above Ciss.
    let text = std::fs::read_to_string(crate::cli_common::root().join("projects/common-emitter.json"))
        .unwrap()
        .replace("\"kind\": \"npn\"", "\"kind\": \"n_mosfet\"")
        .replace(
            "\"preset\": \"small-signal-npn\"",
            "\"preset\": \"small-signal-n-mosfet\", \"parameters\": {\"transconductance_parameter\": 0, \"reverse_transfer_capacitance\": 1e-9}",
        );
    let file = dir.as_path().join("mos.json");
    std::fs::write(&file, text).unwrap();
    let r = ran(&["analyze", file.to_str().unwrap()]);
    assert_eq!(r.code, EXIT_CANNOT);
    assert!(
        r.message.contains("transconductance_parameter"),
        "{}",
        r.message
    );
    assert!(
        r.message.contains("reverse_transfer_capacitance"),
        "{}",
        r.message
    );
}

#[test]
fn analyze_reports_a_fet_in_text_and_json() {
    // invariant: the command's JSON carries the same operating point as the library's report.
    let dir = scratch("json");
    let file = jfet_file(dir.as_path(), "jfet.json", "");
    let r = ran(&["analyze", file.to_str().unwrap()]);
    assert!(r.out.contains("Field-effect transistors"), "{}", r.out);
    assert!(r.out.contains("Q1 (N-channel JFET)"), "{}", r.out);
    let r = ran(&["analyze", file.to_str().unwrap(), "--json"]);
    let v: serde_json::Value = serde_json::from_str(&r.out).unwrap();
    let f = &v["field_effect_transistors"][0];
    assert_eq!(f["designator"], "Q1");
    assert_eq!(f["kind"], "jfet");
    assert_eq!(f["channel"], "n");
    let doc = biasline::load_file(&file).unwrap();
    let (_, _, op) = solved(&doc);
    let q = fet(&op, "Q1");
    assert_eq!(f["drain_current"].as_f64().unwrap(), q.drain_current);
    assert_eq!(f["transconductance"].as_f64().unwrap(), q.gm);
}

#[test]
fn a_mixed_fet_and_bipolar_chain_solves_with_every_device_working() {
    // invariant: the generated mixed chain (every third transistor a MOSFET biased near the
    // bipolar's point) solves with Kirchhoff's and Tellegen's laws, every FET in saturation and
    // every bipolar forward active — the circuit the 500-stage benchmark times.
    let doc = biasline::generate::mixed_chain(60);
    let (_, c, op) = solved(&doc);
    assert_kcl_and_tellegen(&c, &op, "mixed chain");
    assert_eq!(op.fets().count(), 20);
    for f in op.fets() {
        assert_eq!(f.region, FetRegion::Saturation, "{f:?}");
    }
    for t in op.transistors() {
        assert_eq!(
            t.region,
            biasline::analysis::dc::Region::ForwardActive,
            "{}",
            t.designator
        );
    }
}
