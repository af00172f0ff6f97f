//! The differential pair read as one block: differential and common-mode
//! gain, CMRR, input resistances and the tail's resistance against the
//! half-circuit formulas and an independent nodal solve; the mirror-loaded
//! pair; a load floating between the collectors measured across itself.

use crate::common::{document, p, with_preset};
use crate::ss_common::{analyse, stage};
use biasline::analysis::blocks::{Block, BlockKind};
use biasline::analysis::linear::{Drive, Mode, System};
use biasline::analysis::small_signal::Analysis;
use biasline::document::{Document, PartKind::*};
use biasline::presets::keys as k;

const RC: f64 = 10e3;
const RT: f64 = 11e3;

/// A balanced long-tailed pair like projects/connections/long-tailed-pair.json:
/// Q1's base driven by the source (0 V DC), Q2's base on ground, collector
/// resistors to +12 V, the tail to −12 V through `tail` (parts on "tail").
fn pair(
    tail: &[crate::common::P<'static>],
    load: Option<(&'static str, &'static str)>,
) -> Document {
    let mut parts = vec![
        p("VCC", Rail, &["vcc"], &[(k::VOLTAGE, 12.0)]),
        p("VEE", Rail, &["vee"], &[(k::VOLTAGE, -12.0)]),
        p("VS", SignalSource, &["in", "0"], &[(k::AMPLITUDE, 1e-3)]),
        with_preset(p("Q1", Npn, &["c1", "in", "tail"], &[]), "small-signal-npn"),
        with_preset(p("Q2", Npn, &["c2", "0", "tail"], &[]), "small-signal-npn"),
        p("RC1", Resistor, &["vcc", "c1"], &[(k::RESISTANCE, RC)]),
        p("RC2", Resistor, &["vcc", "c2"], &[(k::RESISTANCE, RC)]),
    ];
    for t in tail {
        parts.push(crate::common::P {
            designator: t.designator,
            kind: t.kind,
            nets: t.nets,
            params: t.params,
            preset: t.preset,
        });
    }
    let nets: &'static [&'static str] = match load {
        Some(("c1", "c2")) => &["c1", "c2"],
        Some(("c2", "0")) => &["c2", "0"],
        _ => &[],
    };
    if !nets.is_empty() {
        parts.push(p("RL", Resistor, nets, &[(k::RESISTANCE, 100e3)]));
    }
    let mut doc = document(&parts);
    doc.signal.source = Some("VS".into());
    doc.signal.load = load.map(|_| "RL".into());
    doc
}

fn resistor_tail() -> Vec<crate::common::P<'static>> {
    vec![p("RT", Resistor, &["tail", "vee"], &[(k::RESISTANCE, RT)])]
}

/// A transistor tail: Q3 with its base held by a divider from ground to
/// VEE and an emitter resistor `re3` to VEE.
fn transistor_tail(re3: &'static [(&'static str, f64)]) -> Vec<crate::common::P<'static>> {
    vec![
        with_preset(p("Q3", Npn, &["tail", "b3", "e3"], &[]), "small-signal-npn"),
        p("R1", Resistor, &["0", "b3"], &[(k::RESISTANCE, 10e3)]),
        p("R2", Resistor, &["b3", "vee"], &[(k::RESISTANCE, 2.7e3)]),
        p("RE3", Resistor, &["e3", "vee"], re3),
    ]
}

fn the_pair(a: &Analysis) -> &Block {
    let b: Vec<&Block> = a
        .blocks
        .iter()
        .filter(|b| b.kind == BlockKind::DifferentialPair)
        .collect();
    assert_eq!(b.len(), 1, "{:?}", a.blocks);
    assert_eq!(b[0].transistors, ["Q1", "Q2"]);
    b[0]
}

fn exact(b: &Block, key: &str) -> f64 {
    b.figure(key)
        .and_then(|f| f.exact)
        .unwrap_or_else(|| panic!("{key}: {:?}", b.figure(key)))
}

/// Solve a·x = y by Gaussian elimination with partial pivoting.
fn solve_dense(mut a: Vec<Vec<f64>>, mut y: Vec<f64>) -> Vec<f64> {
    let n = y.len();
    for col in 0..n {
        let piv = (col..n)
            .max_by(|&i, &j| a[i][col].abs().total_cmp(&a[j][col].abs()))
            .unwrap();
        a.swap(col, piv);
        y.swap(col, piv);
        let pivot = a[col].clone();
        for row in col + 1..n {
            let f = a[row][col] / pivot[col];
            for (x, p) in a[row][col..].iter_mut().zip(&pivot[col..]) {
                *x -= f * p;
            }
            y[row] -= f * y[col];
        }
    }
    let mut x = vec![0.0; n];
    for row in (0..n).rev() {
        let s: f64 = (row + 1..n).map(|c| a[row][c] * x[c]).sum();
        x[row] = (y[row] - s) / a[row][row];
    }
    x
}

/// An independent midband nodal solve of the resistor-tail pair from the
/// two transistors' hybrid-π values (gm, gπ, gμ, go, rb), with the bases
/// held at `vb`: returns (v(c1), v(c2)).
fn nodal(a: &Analysis, vb: [f64; 2], rl_between: Option<f64>) -> (f64, f64) {
    // Unknowns: bi1, bi2, e, c1, c2.
    let mut g = vec![vec![0.0; 5]; 5];
    let mut y = vec![0.0; 5];
    let cond = |g: &mut Vec<Vec<f64>>, i: Option<usize>, j: Option<usize>, x: f64| {
        if let Some(i) = i {
            g[i][i] += x;
        }
        if let Some(j) = j {
            g[j][j] += x;
        }
        if let (Some(i), Some(j)) = (i, j) {
            g[i][j] -= x;
            g[j][i] -= x;
        }
    };
    let (e, c) = (2, [3, 4]);
    for (s, name) in ["Q1", "Q2"].iter().enumerate() {
        let t = a
            .small_signal
            .transistors
            .iter()
            .find(|t| t.designator == *name)
            .unwrap();
        let h = &t.models.hybrid_pi;
        let bi = s;
        // rb from the driven base pin to the internal base.
        let grb = 1.0 / h.rb;
        g[bi][bi] += grb;
        y[bi] += grb * vb[s];
        cond(&mut g, Some(bi), Some(e), h.g_pi);
        cond(&mut g, Some(bi), Some(c[s]), h.g_mu);
        cond(&mut g, Some(c[s]), Some(e), h.go);
        // gm·(v(bi) − v(e)) leaves the collector and enters the emitter.
        g[c[s]][bi] += h.gm;
        g[c[s]][e] -= h.gm;
        g[e][bi] -= h.gm;
        g[e][e] += h.gm;
        cond(&mut g, Some(c[s]), None, 1.0 / RC);
    }
    cond(&mut g, Some(e), None, 1.0 / RT);
    if let Some(rl) = rl_between {
        cond(&mut g, Some(c[0]), Some(c[1]), 1.0 / rl);
    }
    let x = solve_dense(g, y);
    (x[3], x[4])
}

#[test]
fn resistor_tail_pair_against_the_half_circuit_and_a_nodal_solve() {
    let doc = pair(&resistor_tail(), None);
    let a = analyse(&doc);
    let b = the_pair(&a);
    assert!(b.words.contains("resistor tail RT"), "{}", b.words);
    assert!(b.words.contains("single-ended drive"), "{}", b.words);
    let t = |n: &str| {
        a.small_signal
            .transistors
            .iter()
            .find(|t| t.designator == n)
            .unwrap()
            .models
            .hybrid_pi
    };
    let (h1, h2) = (t("Q1"), t("Q2"));
    // invariant: a symmetric circuit with both bases at 0 V DC is balanced.
    assert!(
        (h1.gm / h2.gm - 1.0).abs() < 1e-6,
        "gm {} vs {}",
        h1.gm,
        h2.gm
    );
    let (gm, ro, rpi) = (h1.gm, 1.0 / h1.go, 1.0 / h1.g_pi);
    let rc = RC * ro / (RC + ro);
    let ad = exact(b, "differential_gain_single_ended");
    let ad_diff = exact(b, "differential_gain");
    let acm = exact(b, "common_mode_gain");
    let cmrr = exact(b, "cmrr");
    let ree = exact(b, "tail_resistance");
    // source: Sedra and Smith, Microelectronic Circuits, the BJT differential
    // pair's half-circuit: Ad = gm·RC/2 single-ended, gm·RC across the
    // collectors; within 2 % (the half-circuit leaves out rb and ro's path to
    // the tail).
    assert!(
        (ad / (gm * rc / 2.0) - 1.0).abs() < 0.02,
        "Ad {ad} vs {}",
        gm * rc / 2.0
    );
    assert!(
        (ad_diff / (gm * rc) - 1.0).abs() < 0.01,
        "Ad(diff) {ad_diff}"
    );
    // source: Sedra and Smith: Acm = −α·RC/(re + 2·REE) ≈ −RC/(2·REE) with a
    // finite tail; within 5 % (ro from each collector to the tail adds to
    // the common-mode current the half-circuit counts).
    let re = 1.0 / gm;
    let acm_book = -RC / (re + 2.0 * RT);
    assert!(
        (acm / acm_book - 1.0).abs() < 0.05,
        "Acm {acm} vs {acm_book}"
    );
    // source: Sedra and Smith: CMRR = |Ad/Acm| ≈ gm·REE for the single-ended
    // output; within 1 dB.
    let book_db = 20.0 * (gm * RT).log10();
    assert!(
        (cmrr - book_db).abs() < 1.0,
        "CMRR {cmrr} dB vs {book_db} dB"
    );
    assert!((ree / RT - 1.0).abs() < 1e-9, "REE {ree}");
    // source: Sedra and Smith: Rid = 2·rπ (no emitter resistors); rb adds 2·rb.
    let rid = exact(b, "differential_input_resistance");
    assert!(
        (rid / (2.0 * rpi + 2.0 * h1.rb) - 1.0).abs() < 0.02,
        "Rid {rid} vs 2rπ {}",
        2.0 * rpi
    );
    // invariant: Ric is far above Rid and below (β + 1)·REE (both halves in
    // parallel, each (β + 1)·2·REE at most).
    let ric = exact(b, "common_mode_input_resistance");
    let beta = gm * rpi;
    assert!(
        ric > 10.0 * rid && ric < (beta + 1.0) * RT * 1.01,
        "Ric {ric}"
    );
    // source: Sedra and Smith (Ric = (rπ + 2(β + 1)·REE)/2) with ro from each
    // collector to the tail in parallel with REE (Gray, Hurst, Lewis and
    // Meyer, ch. 3); within 10 % (the collectors' own movement left out).
    let f = b.figure("common_mode_input_resistance").unwrap();
    assert!(f.difference_percent.unwrap().abs() < 10.0, "{f:?}");

    // invariant: an independent nodal solve from the same gm, gπ, gμ, go and
    // rb gives the same gains (to solver rounding).
    let (c1d, c2d) = nodal(&a, [0.5, -0.5], None);
    let (_, c2c) = nodal(&a, [1.0, 1.0], None);
    assert!((ad / c2d - 1.0).abs() < 1e-6, "Ad {ad} vs nodal {c2d}");
    assert!(
        (ad_diff / (c2d - c1d) - 1.0).abs() < 1e-6,
        "Ad(diff) {ad_diff}"
    );
    assert!((acm / c2c - 1.0).abs() < 1e-6, "Acm {acm} vs nodal {c2c}");
}

#[test]
fn a_current_source_tail_rejects_common_mode_far_better() {
    let r = analyse(&pair(&resistor_tail(), None));
    let lo = analyse(&pair(&transistor_tail(&[(k::RESISTANCE, 1.0e3)]), None));
    let hi = analyse(&pair(&transistor_tail(&[(k::RESISTANCE, 4.7e3)]), None));
    let (br, blo, bhi) = (the_pair(&r), the_pair(&lo), the_pair(&hi));
    assert!(
        blo.words.contains("current-source tail Q3"),
        "{}",
        blo.words
    );
    let (ree_r, ree_lo, ree_hi) = (
        exact(br, "tail_resistance"),
        exact(blo, "tail_resistance"),
        exact(bhi, "tail_resistance"),
    );
    let (cm_r, cm_lo, cm_hi) = (exact(br, "cmrr"), exact(blo, "cmrr"), exact(bhi, "cmrr"));
    // invariant: more tail resistance, less common-mode gain: CMRR rises with REE.
    assert!(
        ree_hi > ree_lo && ree_lo > 10.0 * ree_r,
        "REE {ree_r} {ree_lo} {ree_hi}"
    );
    assert!(
        cm_hi > cm_lo && cm_lo > cm_r + 20.0,
        "CMRR {cm_r} {cm_lo} {cm_hi} dB"
    );
    // source: Gray, Hurst, Lewis and Meyer, Analysis and Design of Analog
    // Integrated Circuits, ch. 4: a degenerated current source's output
    // resistance ro·(1 + gm·(RE ‖ rπ)), with the base's source resistance RB
    // (R1 ‖ R2) in rπ's place where it counts; within 2 % (it leaves out rb, rμ).
    let f = blo.figure("tail_resistance").unwrap();
    assert!(f.difference_percent.unwrap().abs() < 2.0, "{f:?}");
}

#[test]
fn a_mirror_loaded_pair_gains_gm_times_ro2_parallel_ro4() {
    // The collector resistors give way to a PNP mirror: Q3 diode-connected on c1.
    let mut doc = document(&[
        p("VCC", Rail, &["vcc"], &[(k::VOLTAGE, 12.0)]),
        p("VEE", Rail, &["vee"], &[(k::VOLTAGE, -12.0)]),
        p("VS", SignalSource, &["in", "0"], &[(k::AMPLITUDE, 1e-3)]),
        with_preset(p("Q1", Npn, &["c1", "in", "tail"], &[]), "small-signal-npn"),
        with_preset(p("Q2", Npn, &["c2", "0", "tail"], &[]), "small-signal-npn"),
        with_preset(p("Q3", Pnp, &["c1", "c1", "vcc"], &[]), "small-signal-pnp"),
        with_preset(p("Q4", Pnp, &["c2", "c1", "vcc"], &[]), "small-signal-pnp"),
        p("RT", Resistor, &["tail", "vee"], &[(k::RESISTANCE, RT)]),
    ]);
    doc.signal.source = Some("VS".into());
    let a = analyse(&doc);
    let b = the_pair(&a);
    assert!(
        b.words.contains("loaded by the current mirror Q3, Q4"),
        "{}",
        b.words
    );
    assert!(
        a.blocks
            .iter()
            .any(|m| m.kind == BlockKind::CurrentMirror && m.transistors == ["Q3", "Q4"]),
        "{:?}",
        a.blocks
    );
    let t = |n: &str| {
        a.small_signal
            .transistors
            .iter()
            .find(|t| t.designator == n)
            .unwrap()
            .models
            .hybrid_pi
    };
    let (q1, q2, q4) = (t("Q1"), t("Q2"), t("Q4"));
    let gm = 2.0 / (1.0 / q1.gm + 1.0 / q2.gm);
    let ro_par = 1.0 / (q2.go + q4.go);
    // source: Sedra and Smith, the active-loaded MOS/BJT differential pair:
    // Ad = Gm·Ro = gm·(ro2 ‖ ro4); within 5 % (the formula leaves out the
    // mirror's β error and the tail's finite resistance).
    let ad = exact(b, "differential_gain_single_ended");
    assert!(
        (ad / (gm * ro_par) - 1.0).abs() < 0.05,
        "Ad {ad} vs gm·(ro2‖ro4) {}",
        gm * ro_par
    );
}

#[test]
fn a_floating_load_is_measured_across_itself() {
    let doc = pair(&resistor_tail(), Some(("c1", "c2")));
    let a = analyse(&doc);
    let b = the_pair(&a);
    assert!(
        b.words.contains("differential output across RL"),
        "{}",
        b.words
    );
    let chain = &a.midband.chain;
    let gain = chain.source_gain.unwrap();
    // invariant: the gain across the load is v(c1) − v(c2) of the same solve.
    let ss = &a.small_signal;
    let node = |n: &str| {
        let nl = biasline::netlist::connect(&doc);
        ss.net_node[nl.net_by_name(n).unwrap()]
    };
    let sys = System::new(&ss.circuit, Mode::Midband, &[], None);
    let s = sys.solve(0.0, &[Drive::unit(ss.signal.unwrap())]).unwrap();
    let (v1, v2) = (s.v(node("c1")).re, s.v(node("c2")).re);
    assert!(
        (gain - (v1 - v2)).abs() < 1e-9 * gain.abs(),
        "{gain} vs {}",
        v1 - v2
    );
    // invariant: balanced pair, so the two collectors swing equal and opposite:
    // the gain across the load is twice either single-ended gain (within 1 %).
    assert!((gain / (2.0 * v1) - 1.0).abs() < 0.01, "{gain} vs 2·{v1}");
    // invariant: the swept gain at its flat part is the midband gain across the load.
    let resp = biasline::results::small_signal::response(&doc, &a);
    assert!(
        (resp.midband_gain_db.unwrap() - 20.0 * gain.abs().log10()).abs() < 1e-9,
        "{:?}",
        resp.midband_gain_db
    );
    let g = resp.gain.as_ref().unwrap();
    let mid = g.magnitude_db[g.magnitude_db.len() / 3];
    assert!(
        (mid - 20.0 * gain.abs().log10()).abs() < 0.1,
        "swept {mid} dB"
    );
    // source: the half-circuit (Sedra and Smith): seen across the collectors,
    // the pair's output resistance is RC1 + RC2 in parallel with the
    // transistors' large output resistance; within 5 %.
    let zout = chain.output_impedance.unwrap();
    assert!((zout / (2.0 * RC) - 1.0).abs() < 0.05, "Zout {zout}");
    // invariant: the independent nodal solve with the load across the
    // collectors gives the same differential gain.
    let (c1d, c2d) = nodal(&a, [0.5, -0.5], Some(100e3));
    let ad_diff = exact(b, "differential_gain");
    assert!((ad_diff / (c2d - c1d) - 1.0).abs() < 1e-6, "{ad_diff}");
}

#[test]
fn the_pair_sides_get_no_single_transistor_estimate() {
    let doc = pair(&resistor_tail(), Some(("c2", "0")));
    let a = analyse(&doc);
    let s = stage(&a, "Q1");
    // common practice (no source): a CE formula with RT as the emitter
    // resistor reads a pair side wrong by ~98 %; the card says why instead.
    assert_eq!(s.voltage_gain.re_model, None);
    assert_eq!(s.input_impedance.h_model, None);
    assert!(
        s.caveats
            .iter()
            .any(|c| c.contains("differential pair with Q2")),
        "{:?}",
        s.caveats
    );
    assert!(
        !s.notes.iter().any(|n| n.contains("feedback pair")),
        "{:?}",
        s.notes
    );
}

#[test]
fn a_common_mode_drive_is_not_read_as_one_stage_driving_the_other() {
    // Both bases on the source: Q2 is driven by the source, not by RC1.
    let parts = [
        p("VCC", Rail, &["vcc"], &[(k::VOLTAGE, 12.0)]),
        p("VEE", Rail, &["vee"], &[(k::VOLTAGE, -12.0)]),
        p("VS", SignalSource, &["in", "0"], &[(k::AMPLITUDE, 1e-3)]),
        with_preset(p("Q1", Npn, &["c1", "in", "tail"], &[]), "small-signal-npn"),
        with_preset(p("Q2", Npn, &["c2", "in", "tail"], &[]), "small-signal-npn"),
        p("RC1", Resistor, &["vcc", "c1"], &[(k::RESISTANCE, RC)]),
        p("RC2", Resistor, &["vcc", "c2"], &[(k::RESISTANCE, RC)]),
        p("RT", Resistor, &["tail", "vee"], &[(k::RESISTANCE, RT)]),
        p("RL", Resistor, &["c2", "0"], &[(k::RESISTANCE, 100e3)]),
    ];
    let mut doc = document(&parts);
    doc.signal.source = Some("VS".into());
    doc.signal.load = Some("RL".into());
    let a = analyse(&doc);
    for q in ["Q1", "Q2"] {
        let s = stage(&a, q);
        assert!(
            !s.notes.iter().any(|n| n.contains("feedback pair")),
            "{q}: {:?}",
            s.notes
        );
        let driven_by = s.ac.source.as_ref().map(|l| l.label.clone());
        assert_ne!(
            driven_by.as_deref(),
            Some("RC1"),
            "{q} driven by {driven_by:?}"
        );
    }
    // invariant: the block's common-mode gain is the chain's gain here (the
    // source drives both bases at once, straight from an ideal source).
    let b = the_pair(&a);
    let acm = exact(b, "common_mode_gain");
    let g = a.midband.chain.source_gain.unwrap();
    assert!((acm / g - 1.0).abs() < 1e-9, "Acm {acm} vs chain {g}");
    assert!(
        b.notes
            .iter()
            .any(|n| n.contains("only a common-mode signal")),
        "{:?}",
        b.notes
    );
}

#[test]
fn the_distortion_across_a_floating_load_is_odd_only_for_a_balanced_pair() {
    let mut doc = pair(&resistor_tail(), Some(("c1", "c2")));
    // 20 mV peak: large enough that the tail's finite REE gives each collector
    // a second harmonic well above the run's numerical floor.
    crate::ss_common::set_value(&mut doc, "VS", k::AMPLITUDE, 20e-3);
    let nl = biasline::netlist::connect(&doc);
    let c = biasline::analysis::circuit::build(&doc, &nl).unwrap();
    let d = biasline::analysis::transient::steady::distortion(
        &doc,
        &nl,
        &c,
        &Default::default(),
        &mut |_| true,
    )
    .unwrap();
    assert_eq!(d.output.net, "c1 − c2");
    let c1 = d
        .stages
        .iter()
        .find(|s| s.net == "c1")
        .expect("the Q1 stage output");
    let (across, single) = (&d.output.spectrum, &c1.spectrum);
    // invariant: a balanced pair's collectors swing equal and opposite, so
    // the fundamental across the load is twice one collector's (within 1 %).
    assert!(
        (across.amplitude[0] / (2.0 * single.amplitude[0]) - 1.0).abs() < 0.01,
        "{} vs {}",
        across.amplitude[0],
        single.amplitude[0]
    );
    // source: Gray, Hurst, Lewis and Meyer, ch. 3: ΔIC = α·IEE·tanh(vid/(2VT)) is
    // odd, so the pair itself makes no second harmonic; what even harmonic
    // there is comes from the single-ended drive's common-mode half through
    // the finite tail, common to both collectors, so it is lower across the
    // load than at one collector, and far below the fundamental.
    assert!(
        across.relative_db[0] < single.relative_db[0] && across.relative_db[0] < -60.0,
        "H2 across {} dB, at c1 {} dB",
        across.relative_db[0],
        single.relative_db[0]
    );
}

#[test]
fn a_source_coupled_pair_gains_gm_rd_over_two() {
    let mut doc = document(&[
        p("VDD", Rail, &["vdd"], &[(k::VOLTAGE, 12.0)]),
        p("VSS", Rail, &["vss"], &[(k::VOLTAGE, -12.0)]),
        p("VS", SignalSource, &["in", "0"], &[(k::AMPLITUDE, 1e-3)]),
        with_preset(
            p("M1", NMosfet, &["d1", "in", "tail"], &[]),
            "small-signal-n-mosfet",
        ),
        with_preset(
            p("M2", NMosfet, &["d2", "0", "tail"], &[]),
            "small-signal-n-mosfet",
        ),
        p("RD1", Resistor, &["vdd", "d1"], &[(k::RESISTANCE, RC)]),
        p("RD2", Resistor, &["vdd", "d2"], &[(k::RESISTANCE, RC)]),
        p("RT", Resistor, &["tail", "vss"], &[(k::RESISTANCE, 22e3)]),
    ]);
    doc.signal.source = Some("VS".into());
    let a = analyse(&doc);
    let b: Vec<&Block> = a
        .blocks
        .iter()
        .filter(|b| b.kind == BlockKind::DifferentialPair)
        .collect();
    assert_eq!(b.len(), 1, "{:?}", a.blocks);
    let b = b[0];
    let f = a
        .small_signal
        .fets
        .iter()
        .find(|f| f.designator == "M2")
        .unwrap();
    let rd = RC * f.ro() / (RC + f.ro());
    // source: Sedra and Smith, the MOS differential pair: Ad = gm·RD/2 to one
    // drain; within 2 % (ro's path to the tail left out).
    let ad = exact(b, "differential_gain_single_ended");
    assert!(
        (ad / (f.gm * rd / 2.0) - 1.0).abs() < 0.02,
        "Ad {ad} vs {}",
        f.gm * rd / 2.0
    );
    // invariant: a gate draws no current at midband: no estimate, and the
    // reason says so.
    let rid = b.figure("differential_input_resistance").unwrap();
    assert!(
        rid.estimate.is_none() && rid.no_estimate_because.is_some(),
        "{rid:?}"
    );
}

#[test]
fn an_ideal_current_source_tail_has_infinite_ree_and_no_half_circuit_acm() {
    // "in" on the tail, "out" on VEE: the source draws 1 mA out of the tail.
    let tail = vec![p(
        "IT",
        CurrentSource,
        &["vee", "tail"],
        &[(k::CURRENT, 1e-3)],
    )];
    let a = analyse(&pair(&tail, None));
    let b = the_pair(&a);
    assert!(b.words.contains("current-source tail IT"), "{}", b.words);
    // invariant: nothing else on the tail, so its resistance is infinite: no
    // finite value is reported (the cut-away tail is an island).
    let ree = b.figure("tail_resistance").unwrap();
    assert!(
        ree.exact.is_none() && ree.no_estimate_because.is_some(),
        "{ree:?}"
    );
    let acm = b.figure("common_mode_gain").unwrap();
    assert!(acm.estimate.is_none(), "{acm:?}");
    // invariant: an ideal tail rejects common mode better than an 11 kΩ one.
    let r = analyse(&pair(&resistor_tail(), None));
    assert!(
        exact(b, "cmrr") > exact(the_pair(&r), "cmrr") + 40.0,
        "{} vs {}",
        exact(b, "cmrr"),
        exact(the_pair(&r), "cmrr")
    );
    // source: Gray, Hurst, Lewis and Meyer, ch. 3: with an ideal tail, Ric is
    // set by ro from each collector to the tail; the estimate within 10 %.
    let ric = b.figure("common_mode_input_resistance").unwrap();
    assert!(ric.difference_percent.unwrap().abs() < 10.0, "{ric:?}");
}

#[test]
fn the_pair_card_draws_the_half_circuit_with_the_tail_at_ac_ground() {
    // source: Sedra and Smith, the differential pair's half-circuit: for a
    // differential signal the tail node is at AC ground, so the tail resistor
    // leaves the drawing and each side is a common-emitter stage.
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/connections/long-tailed-pair.json"
    );
    let doc = biasline::document::load_file(std::path::Path::new(path)).unwrap();
    let ann = biasline::results::annotations_for(&doc);
    assert_eq!(ann.blocks.len(), 1);
    let (half, caption) = ann.blocks[0].drawing.as_ref().expect("a half-circuit");
    assert!(caption.contains("the tail RT at AC ground"), "{caption}");
    let names: Vec<&str> = half.elements.iter().map(|e| e.name.as_str()).collect();
    assert!(!names.iter().any(|n| n.contains("RT")), "{names:?}");
    assert!(
        names.contains(&"RC1") && names.contains(&"RB1"),
        "{names:?}"
    );
    // invariant: on the sheet, apart from every other annotation.
    let nl = biasline::netlist::connect(&doc);
    let s = biasline::scene::build(&doc, &nl, &ann, &Default::default());
    crate::scene_common::assert_annotations_apart("long-tailed-pair", &s);
}
