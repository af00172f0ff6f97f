//! The datasheet fit, reachable: `biasline fit` and `fit_line::apply` turn
//! a datasheet's figures into part parameters, and the solved part then
//! reproduces those figures (the fits are exact for the model: source: the
//! reference page "Field-effect transistors" and the bipolar fit's
//! Gummel–Poon subset; each check solves the test condition the datasheet
//! states and compares with the typed figure).

use crate::cli_common::{ran, EXIT_CANNOT, EXIT_CLEAN};
use crate::common::{document_at, p, solved};
use biasline::analysis::devices::fet::keys as fk;
use biasline::analysis::fit_line::{apply, FitLine};
use biasline::document::{Document, PartKind};
use biasline::presets::keys as k;

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// Fit Q1 of `doc` from `line` (in the library, as the inspector does).
fn fit_q1(doc: &mut Document, line: FitLine) {
    let q = doc.parts.iter_mut().find(|p| p.designator == "Q1").unwrap();
    apply(q, &line).unwrap_or_else(|e| panic!("fit: {e}"));
}

fn s(v: &str) -> Option<String> {
    Some(v.to_string())
}

/// A test jig: drain (collector) held at `vd` by a rail, gate (base) at `vg`, source grounded.
fn jig(kind: PartKind, vd: f64, vg: f64, quiet: &[(&str, f64)]) -> Document {
    document_at(
        &[
            p("VD", PartKind::Rail, &["d"], &[(k::VOLTAGE, vd)]),
            p("VG", PartKind::Rail, &["g"], &[(k::VOLTAGE, vg)]),
            p("Q1", kind, &["d", "g", "0"], quiet),
        ],
        25.0,
    )
}

fn drain_current(doc: &Document) -> f64 {
    let (_, _, op) = solved(doc);
    op.parts
        .iter()
        .find(|p| p.designator == "Q1")
        .map(|p| p.pin_currents[0])
        .unwrap()
}

#[test]
fn a_fitted_jfet_gives_idss_at_zero_gate_voltage_and_the_stated_vds() {
    // source: IDSS is the drain current at VGS = 0 at the datasheet's VDS (its definition).
    for (kind, s_) in [(PartKind::NJfet, 1.0), (PartKind::PJfet, -1.0)] {
        let mut doc = jig(
            kind,
            10.0 * s_,
            0.0,
            &[(fk::GATE_SATURATION_CURRENT, 1e-22)],
        );
        fit_q1(
            &mut doc,
            FitLine {
                idss: s("6m"),
                vgs_off: Some(format!("{}", -2.0 * s_)),
                lambda: s("0.01"),
                vds: s("10"),
                ..FitLine::default()
            },
        );
        let id = drain_current(&doc);
        assert!(rel(s_ * id, 6e-3) < 1e-9, "{kind:?}: {id}");
    }
}

#[test]
fn a_fitted_mosfet_passes_through_both_datasheet_points() {
    // source: VGS(th) is defined at a stated drain current, ID(on) at a stated VGS, both at
    // the test VDS; the square-law fit is exact through both points (reference page).
    let quiet = [(fk::BODY_DIODE_SATURATION_CURRENT, 1e-22)];
    let line = FitLine {
        vgs_th: s("2.1"),
        vgs_th_at: s("1m"),
        id_on: s("0.5"),
        id_on_at: s("10"),
        vds: s("15"),
        lambda: s("0.02"),
        ..FitLine::default()
    };
    for (vg, want) in [(2.1, 1e-3), (10.0, 0.5)] {
        let mut doc = jig(PartKind::NMosfet, 15.0, vg, &quiet);
        fit_q1(&mut doc, line.clone());
        let id = drain_current(&doc);
        assert!(rel(id, want) < 1e-9, "VGS {vg}: {id} vs {want}");
    }
}

#[test]
fn a_fitted_bipolar_transistor_gives_the_stated_vbe_at_its_current() {
    // source: the datasheet's VBE at IC, at its VCE; the bipolar fit is exact for the model.
    let line = FitLine {
        vbe: s("0.65"),
        vbe_at: s("1m"),
        hfe: s("200"),
        hfe_at: s("2m"),
        early: s("100"),
        vce: s("5"),
        ..FitLine::default()
    };
    let mut doc = jig(PartKind::Npn, 5.0, 0.65, &[(k::BASE_RESISTANCE, 0.0)]);
    fit_q1(&mut doc, line);
    let ic = drain_current(&doc);
    assert!(rel(ic, 1e-3) < 1e-6, "{ic}");
}

#[test]
fn fit_writes_into_a_part_of_a_project_and_refuses_bad_lines_untouched() {
    // invariant: what `fit --into` writes is what the library fit returns, and a refused
    // fit leaves the file byte for byte as it was (exit 2).
    let dir = std::env::temp_dir().join(format!("biasline-fit-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("p.json");
    std::fs::copy(
        crate::cli_common::root().join("projects/piezo-jfet-preamp.json"),
        &file,
    )
    .unwrap();
    let f = file.to_str().unwrap();
    let before = std::fs::read(&file).unwrap();
    for (args, says) in [
        (vec!["--idss", "4m", "--vbe", "0.6"], "--vbe"),
        (vec!["--idss", "4m", "--vgs-off", "1.5"], "wrong sign"),
        (vec!["--idss", "4m"], "two of"),
        (vec!["npn", "--idss", "4m", "--vgs-off", "-1.5"], "n_jfet"),
    ] {
        let mut all = vec!["fit", "--into", f, "--part", "Q1"];
        all.extend(args.iter());
        let r = ran(&all);
        assert_eq!(r.code, EXIT_CANNOT, "{args:?}: {}", r.message);
        assert!(r.message.contains(says), "{args:?}: {}", r.message);
        assert_eq!(
            std::fs::read(&file).unwrap(),
            before,
            "{args:?}: the file changed"
        );
    }
    let r = ran(&[
        "fit",
        "--into",
        f,
        "--part",
        "Q9",
        "--idss",
        "4m",
        "--vgs-off",
        "-1.5",
    ]);
    assert_eq!(r.code, EXIT_CANNOT);
    assert!(r.message.contains("Q9"));
    let r = ran(&[
        "fit",
        "--into",
        f,
        "--part",
        "Q1",
        "--idss",
        "4m",
        "--vgs-off",
        "-1.5",
    ]);
    assert_eq!(r.code, EXIT_CLEAN, "{}", r.message);
    let doc = biasline::load_file(&file).unwrap();
    let q = doc.parts.iter().find(|p| p.designator == "Q1").unwrap();
    assert_eq!(q.parameters[fk::THRESHOLD_VOLTAGE], -1.5);
    // The preset's λ = 0.01 is kept and the fit holds IDSS at the default 10 V test VDS.
    assert_eq!(q.parameters[fk::CHANNEL_LENGTH_MODULATION], 0.01);
    let beta = q.parameters[fk::TRANSCONDUCTANCE_PARAMETER];
    assert!(rel(beta * 1.5 * 1.5 * 1.1, 4e-3) < 1e-12, "{beta}");
    // The printed JSON agrees with the file.
    let r = ran(&[
        "fit",
        "n_jfet",
        "--idss",
        "4m",
        "--vgs-off",
        "-1.5",
        "--lambda",
        "0.01",
        "--json",
    ]);
    let v: serde_json::Value = serde_json::from_str(&r.out).unwrap();
    assert_eq!(
        v["parameters"][fk::TRANSCONDUCTANCE_PARAMETER]
            .as_f64()
            .unwrap(),
        beta
    );
}
