//! Noise of field-effect transistor stages: the channel noise at the output
//! against van der Ziel's 4kT·(2/3)·gm, the noise figure of the piezo demo's
//! JFET front end against the bipolar stage at a megohm and a kilohm source,
//! and the drain-current what-if.

use crate::common::{document, p};
use crate::ss_common::{analyse, load, par, set_value};
use biasline::analysis::devices::fet::keys as fk;
use biasline::analysis::noise::{self, BuildOptions, Mechanism, NoiseSettings};
use biasline::analysis::{BOLTZMANN, ZERO_CELSIUS};
use biasline::document::{Document, PartKind};
use biasline::netlist;
use biasline::presets::keys as k;

const KELVIN: f64 = 27.0 + ZERO_CELSIUS;

/// N-MOSFET common source with its gate held by a DC source (no resistor
/// at the gate), drain resistor RD: the channel generator sees RD ‖ ro.
fn held_gate_common_source() -> Document {
    let mut doc = document(&[
        p("VDD", PartKind::Rail, &["vdd"], &[(k::VOLTAGE, 12.0)]),
        p(
            "VG",
            PartKind::VoltageSource,
            &["g", "0"],
            &[(k::VOLTAGE, 2.5)],
        ),
        p(
            "RD",
            PartKind::Resistor,
            &["vdd", "d"],
            &[(k::RESISTANCE, 2.2e3)],
        ),
        p(
            "Q1",
            PartKind::NMosfet,
            &["d", "g", "0"],
            &[
                (fk::THRESHOLD_VOLTAGE, 2.0),
                (fk::TRANSCONDUCTANCE_PARAMETER, 0.02),
                (fk::CHANNEL_LENGTH_MODULATION, 0.02),
                (fk::BODY_DIODE_SATURATION_CURRENT, 1e-22),
                // white channel noise only (no flicker term)
                (fk::FLICKER_COEFFICIENT, 0.0),
            ],
        ),
    ]);
    doc.signal.source = None;
    doc
}

#[test]
fn channel_noise_at_the_output_is_four_kt_two_thirds_gm_times_the_transfer() {
    // source: A. van der Ziel, "Thermal noise in field-effect transistors", Proc. IRE 50
    // (1962): the saturated channel's drain noise current is 4kT·(2/3)·gm; at the drain of
    // a common source it sees RD ‖ ro, so its output density is 4kT·(2/3)·gm·(RD ‖ ro)².
    let doc = held_gate_common_source();
    let nl = netlist::connect(&doc);
    let opts = BuildOptions {
        output_net: Some("d".into()),
        ..BuildOptions::default()
    };
    let setup = noise::setup(&doc, &nl, &opts).expect("noise setup");
    let s = noise::spectrum::spectrum(&setup.network, &setup.sources, setup.output, &[1e3])
        .expect("spectrum");
    let a = analyse(&doc);
    let q = &a.small_signal.fets[0];
    assert_eq!(q.region, biasline::analysis::dc::FetRegion::Saturation);
    let channel: f64 = setup
        .sources
        .iter()
        .zip(&s.contributions[0])
        .filter(|(g, _)| g.mechanism == Mechanism::ChannelThermal)
        .map(|(_, p)| p)
        .sum();
    let transfer = par(2.2e3, q.ro());
    let expected = 4.0 * BOLTZMANN * KELVIN * (2.0 / 3.0) * q.gm * transfer * transfer;
    assert!(
        (channel / expected - 1.0).abs() < 1e-9,
        "{channel:e} vs {expected:e}"
    );
    // invariant: the only other generator is RD's 4kT/RD through the same RD ‖ ro
    let rd = 4.0 * BOLTZMANN * KELVIN / 2.2e3 * transfer * transfer;
    assert!((s.total[0] / (expected + rd) - 1.0).abs() < 1e-9);
}

/// Spot noise figure (dB, 1 kHz) of a demo with its source resistance RS set to `rs`.
fn spot_nf(path: &str, rs: f64) -> f64 {
    let mut doc = load(path);
    set_value(&mut doc, "RS", k::RESISTANCE, rs);
    let nl = netlist::connect(&doc);
    let setup = noise::setup(&doc, &nl, &BuildOptions::default()).expect("noise setup");
    let settings = NoiseSettings {
        frequencies: noise::spectrum::log_grid(100.0, 10e3, 3),
        current_hints: false,
        spot_frequency: 1e3,
        ..NoiseSettings::default()
    };
    noise::report(&setup, &settings)
        .expect("noise")
        .spot_figure_db
        .expect("a noise figure")
}

fn db(f: f64) -> f64 {
    10.0 * f.log10()
}

#[test]
fn jfet_front_end_wins_at_a_megohm_and_the_bipolar_stage_at_a_kilohm() {
    // The piezo demo (JFET follower, RG = 10 MΩ, into the bipolar CE stage) against the
    // bipolar stage alone (the two-stage demo: the same CE stage, its bias divider
    // R1 ‖ R2 = 8.48 kΩ on the input), both driven through RS.
    let jfet = "projects/piezo-jfet-preamp.json";
    let bjt = "projects/two-stage-preamp.json";
    let (j_meg, b_meg) = (spot_nf(jfet, 1e6), spot_nf(bjt, 1e6));
    let (j_kilo, b_kilo) = (spot_nf(jfet, 1e3), spot_nf(bjt, 1e3));
    println!("NF at 1 kHz: RS 1 MΩ JFET {j_meg:.3} dB, bipolar {b_meg:.3} dB; RS 1 kΩ JFET {j_kilo:.3} dB, bipolar {b_kilo:.3} dB");
    // source: Motchenbacher & Connelly, "Low-Noise Electronic System Design", ch. 2: a
    // resistance Rp across the input adds Rs/Rp to the noise factor, F ≥ 1 + Rs/Rp.
    let rb = par(56e3, 10e3);
    assert!(
        b_meg >= db(1.0 + 1e6 / rb) - 1e-6,
        "bipolar at 1 MΩ: {b_meg}"
    );
    // The JFET's gate: F = 1 + Rs/RG + en²·(Rs + RG)²/(4kT·Rs·RG²) with en² at least the
    // channel's 4kT·(2/3)/gm (van der Ziel 1962); the later stages add little behind it.
    let doc = load(jfet);
    let a = analyse(&doc);
    let gm = a.small_signal.fets[0].gm;
    let (rs, rg): (f64, f64) = (1e6, 1e7);
    let floor = db(1.0 + rs / rg + (2.0 / 3.0) / gm * (rs + rg).powi(2) / (rs * rg * rg));
    assert!(
        j_meg >= floor - 1e-6 && j_meg < floor + 0.05,
        "JFET at 1 MΩ: {j_meg} vs {floor}"
    );
    // The contrast: the JFET front end wins by over 20 dB at a megohm ...
    assert!(b_meg - j_meg > 20.0);
    // ... and loses at a kilohm, where its channel noise, 4kT·(2/3)/gm = (2/3)·366 Ω of
    // equivalent resistance, is no longer small against the source's own 1 kΩ.
    assert!(
        j_kilo > b_kilo,
        "at 1 kΩ: JFET {j_kilo} vs bipolar {b_kilo}"
    );
    let rs: f64 = 1e3;
    let j_floor = db(1.0 + rs / rg + (2.0 / 3.0) / gm * (rs + rg).powi(2) / (rs * rg * rg));
    assert!(j_kilo >= j_floor - 1e-6);
}

#[test]
fn better_drain_current_scans_the_jfet_by_the_square_law() {
    // invariant: the what-if scales gm and the channel noise by √k and gds by k, so the
    // scaled setup's channel generator is the present one times √k
    let doc = load("projects/piezo-jfet-preamp.json");
    let nl = netlist::connect(&doc);
    let setup = noise::setup(&doc, &nl, &BuildOptions::default()).expect("noise setup");
    let t = setup
        .transistors
        .iter()
        .position(|t| t.designator == "Q1")
        .expect("the JFET is scanned");
    let tr = &setup.transistors[t];
    assert_eq!(tr.law, noise::CurrentLaw::SquareLaw);
    let scaled = setup.with_scaled_current(t, 4.0);
    let g = tr.collector_shot;
    assert!((scaled.sources[g].white / setup.sources[g].white - 2.0).abs() < 1e-12);
    // source: van der Ziel 1962, the generator is 4kT·(2/3)·gm
    let a = analyse(&doc);
    let gm = a.small_signal.fets[0].gm;
    let white = 4.0 * BOLTZMANN * KELVIN * (2.0 / 3.0) * gm;
    assert!((setup.sources[g].white / white - 1.0).abs() < 1e-9);
    // The report's what-if names the JFET's drain current and gives no bipolar formula.
    let settings = NoiseSettings {
        frequencies: noise::spectrum::log_grid(100.0, 10e3, 3),
        current_hints: true,
        ..NoiseSettings::default()
    };
    let rep = noise::report(&setup, &settings).expect("noise");
    let h = rep
        .current_hints
        .iter()
        .find(|h| h.designator == "Q1")
        .expect("a hint for the JFET");
    assert!(h.field_effect);
    assert!(!h.classic_current.is_finite());
    assert!((h.present_current - a.small_signal.fets[0].drain_current).abs() < 1e-15);
    assert!(h.better_figure_db <= h.present_figure_db);
}
