//! The complementary push-pull output read as one block: recognition with
//! its bias network and driver, the class-B closed forms of power,
//! efficiency and dissipation against the level sweep, crossover
//! distortion against bias, the junction-temperature loop, idle warnings.

use crate::common::{document, p, solved, transistor, with_preset};
use crate::ss_common::analyse;
use biasline::analysis::blocks::push_pull_levels::sweep;
use biasline::analysis::blocks::{Block, BlockKind};
use biasline::document::Document;
use biasline::document::PartKind::*;
use biasline::netlist;
use biasline::presets::keys as k;
use std::f64::consts::{E, PI};

const VT27: f64 = 0.025_864; // kT/q at 300.15 K

fn block(a: &biasline::analysis::small_signal::Analysis) -> &Block {
    let b: Vec<&Block> = a
        .blocks
        .iter()
        .filter(|b| b.kind == BlockKind::PushPull)
        .collect();
    assert_eq!(b.len(), 1, "{:?}", a.blocks);
    b[0]
}

fn named(mut doc: Document) -> Document {
    doc.signal.source = Some("VS".into());
    doc.signal.load = Some("RL".into());
    doc
}

const POWER_NPN: &[(&str, f64)] = &[
    (k::SATURATION_CURRENT, 1e-13),
    (k::FORWARD_BETA, 60.0),
    (k::MAX_POWER, 25.0),
    (k::THERMAL_RESISTANCE, 40.0),
    (k::MAX_JUNCTION_CELSIUS, 150.0),
];

/// The circuit of issue 21: ±15 V into 8 Ω, two bias diodes, a CE driver
/// with DC feedback from the output; RTOP feeds the upper base.
fn class_ab(rtop: f64) -> Document {
    let rtop: &'static [(&'static str, f64)] = Box::leak(Box::new([(k::RESISTANCE, rtop)]));
    named(document(&[
        p("VCC", Rail, &["vcc"], &[(k::VOLTAGE, 15.0)]),
        p("VEE", Rail, &["vee"], &[(k::VOLTAGE, -15.0)]),
        p(
            "VS",
            SignalSource,
            &["src", "0"],
            &[(k::AMPLITUDE, 0.05), (k::FREQUENCY, 1000.0)],
        ),
        p("C1", Capacitor, &["src", "b1"], &[(k::CAPACITANCE, 1e-5)]),
        p("RF", Resistor, &["out", "b1"], &[(k::RESISTANCE, 47e3)]),
        p("RB2", Resistor, &["b1", "vee"], &[(k::RESISTANCE, 27e3)]),
        with_preset(p("Q1", Npn, &["bn", "b1", "e1"], &[]), "small-signal-npn"),
        p("RE1", Resistor, &["e1", "vee"], &[(k::RESISTANCE, 1e3)]),
        p("RTOP", Resistor, &["vcc", "bp"], rtop),
        with_preset(p("D1", Diode, &["bp", "mid"], &[]), "general-purpose-diode"),
        with_preset(p("D2", Diode, &["mid", "bn"], &[]), "general-purpose-diode"),
        p("Q2", Npn, &["vcc", "bp", "out"], POWER_NPN),
        p("Q3", Pnp, &["vee", "bn", "out"], POWER_NPN),
        p("RL", Resistor, &["out", "0"], &[(k::RESISTANCE, 8.0)]),
    ]))
}

#[test]
fn the_class_ab_stage_is_one_block_with_its_bias_network_and_its_real_limit() {
    let doc = class_ab(2.7e3);
    let a = analyse(&doc);
    let b = block(&a);
    assert_eq!(b.transistors, ["Q2", "Q3"]);
    assert!(b.words.contains("2 diodes (D1 and D2)"), "{}", b.words);
    let notes = b.notes.join("\n");
    assert!(notes.contains("Q1 drives bn"), "{notes}");
    assert!(notes.contains("RTOP feeds bp"), "{notes}");
    // The limit named is the top resistor's base current supply.
    assert!(
        notes.contains("RTOP cannot supply Q2's base current"),
        "{notes}"
    );
    let (_, _, op) = solved(&doc);
    let (q2, q3) = (transistor(&op, "Q2"), transistor(&op, "Q3"));
    let iq = b.figure("quiescent_current").unwrap();
    // invariant: the mean of the two collector currents at idle.
    assert!((iq.exact.unwrap() - 0.5 * (q2.ic.abs() + q3.ic.abs())).abs() < 1e-12);
    // The estimated limit against the engine: the level sweep is clean
    // (THD < 1 %) at 80 % of it and clipped (THD > 1 %) at 115 % of it.
    // invariant: the named limit is where clipping starts.
    let vmax = b.figure("largest_output").unwrap().estimate.unwrap();
    let gain = a.midband.chain.source_gain.unwrap().abs();
    let nl = netlist::connect(&doc);
    let s = sweep(&doc, &nl, &[0.8 * vmax / gain, 1.15 * vmax / gain]).unwrap();
    assert!(s.levels[0].thd < 0.01, "{:?}", s.levels[0]);
    assert!(s.levels[1].thd > 0.01, "{:?}", s.levels[1]);
}

/// A near-ideal stage: βF 1000, no base or emitter resistance, driven from
/// a voltage source through a fixed bias voltage VB between the bases, the
/// source offset by VB/2 so the output idles at 0 V.
fn stiff(vcc: f64, vb: f64, re: f64, theta: Option<f64>) -> Document {
    let mut dev = vec![(k::SATURATION_CURRENT, 1e-12), (k::FORWARD_BETA, 1000.0)];
    if let Some(t) = theta {
        dev.push((k::THERMAL_RESISTANCE, t));
    }
    let dev: &'static [(&'static str, f64)] = Box::leak(dev.into_boxed_slice());
    let src: &'static [(&'static str, f64)] = Box::leak(Box::new([
        (k::AMPLITUDE, 1.0),
        (k::FREQUENCY, 1000.0),
        (k::DC_OFFSET, vb / 2.0),
    ]));
    let rail =
        |v: f64| -> &'static [(&'static str, f64)] { Box::leak(Box::new([(k::VOLTAGE, v)])) };
    let vbp: &'static [(&'static str, f64)] = Box::leak(Box::new([(k::VOLTAGE, vb)]));
    let rep: &'static [(&'static str, f64)] = Box::leak(Box::new([(k::RESISTANCE, re)]));
    let mut parts = vec![
        p("VCC", Rail, &["vcc"], rail(vcc)),
        p("VEE", Rail, &["vee"], rail(-vcc)),
        p("VS", SignalSource, &["bp", "0"], src),
        p("VB", VoltageSource, &["bp", "bn"], vbp),
        p("RL", Resistor, &["out", "0"], &[(k::RESISTANCE, 8.0)]),
    ];
    if re > 0.0 {
        parts.push(p("Q1", Npn, &["vcc", "bp", "et"], dev));
        parts.push(p("Q2", Pnp, &["vee", "bn", "eb"], dev));
        parts.push(p("RE1", Resistor, &["et", "out"], rep));
        parts.push(p("RE2", Resistor, &["eb", "out"], rep));
    } else {
        parts.push(p("Q1", Npn, &["vcc", "bp", "out"], dev));
        parts.push(p("Q2", Pnp, &["vee", "bn", "out"], dev));
    }
    named(document(&parts))
}

/// The bias voltage for a quiescent current `iq`: two VBEs of the ideal
/// law plus the emitter resistors' drops.
fn bias_for(iq: f64, re: f64) -> f64 {
    2.0 * (VT27 * (iq / 1e-12).ln() + iq * re)
}

#[test]
fn class_b_efficiency_and_dissipation_follow_the_closed_forms() {
    // source: Sedra and Smith, Microelectronic Circuits, the class-B output
    // stage: PL = Vp²/(2RL), PS = 2·VCC·Vp/(π·RL), η = (π/4)·Vp/VCC
    // (π/4 at Vp = VCC with ideal devices), and per device
    // PD = VCC·Vp/(π·RL) − Vp²/(4·RL), largest, VCC²/(π²·RL), at Vp = 2·VCC/π
    // (2·VCC²/(π²·RL) per pair).
    // Tolerance 1 %: the stage is near-ideal, not ideal — a 1 mA quiescent
    // current adds 2·VCC·IQ to the rails' power (0.1–0.4 % here), βF = 1000
    // makes IC = α·IE (0.1 %), and the output is the input less a VBE that
    // varies a little over the cycle (its fundamental is measured, so only
    // the distortion's share, below 0.5 %, remains).
    let (vcc, rl) = (20.0, 8.0);
    let doc = stiff(vcc, bias_for(1e-3, 0.0), 0.0, None);
    let a = analyse(&doc);
    let b = block(&a);
    assert!(b.words.contains("fixed voltage (VB)"), "{}", b.words);
    let nl = netlist::connect(&doc);
    let fractions = [0.4, 0.55, 2.0 / PI, 0.72, 0.95];
    let amps: Vec<f64> = fractions.iter().map(|f| f * vcc + 0.0).collect();
    let s = sweep(&doc, &nl, &amps).unwrap();
    for l in &s.levels {
        let vp = l.output_peak;
        let eta = PI / 4.0 * vp / vcc;
        let pd = vcc * vp / (PI * rl) - vp * vp / (4.0 * rl);
        assert!(
            (l.efficiency.unwrap() / eta - 1.0).abs() < 0.01,
            "η {:?} vs {eta} at {vp} V",
            l.efficiency
        );
        // Near full swing PD is the small difference of the device's share
        // of the rails' power and of the load power, so its error is held
        // to 1 % of the former (VCC·Vp/(π·RL)).
        for d in l.dissipation {
            assert!(
                (d - pd).abs() < 0.01 * vcc * vp / (PI * rl),
                "PD {d} vs {pd} at {vp} V"
            );
        }
        assert!((l.load_power / (vp * vp / (2.0 * rl)) - 1.0).abs() < 0.01);
    }
    // Full swing: the efficiency approaches π/4 (0.785).
    let full = s.levels.last().unwrap();
    assert!(full.output_peak > 0.9 * vcc);
    assert!(full.efficiency.unwrap() > 0.9 * PI / 4.0);
    // Worst dissipation over the levels: at 2·VCC/π, VCC²/(π²·RL) per device.
    let (i, worst) = s.worst_dissipation(0).unwrap();
    assert_eq!(i, 2, "{:?}", s.levels);
    let want = vcc * vcc / (PI * PI * rl);
    assert!((worst / want - 1.0).abs() < 0.01, "{worst} vs {want}");
    let pair = s.levels[i].dissipation[0] + s.levels[i].dissipation[1];
    assert!((pair / (2.0 * want) - 1.0).abs() < 0.01);
}

#[test]
fn class_ab_distortion_falls_as_the_bias_current_rises() {
    // invariant: crossover distortion comes from the gm of the conducting
    // halves changing over the cycle; more quiescent current keeps both
    // halves conducting over more of it, so THD at one level falls.
    let mut last = f64::INFINITY;
    for iq in [1e-3, 10e-3, 60e-3] {
        let doc = stiff(15.0, bias_for(iq, 0.0), 0.0, None);
        let nl = netlist::connect(&doc);
        let s = sweep(&doc, &nl, &[1.0]).unwrap();
        let thd = s.levels[0].thd;
        assert!(thd < last, "THD {thd} at IQ {iq} not below {last}");
        last = thd;
    }
}

#[test]
fn a_fixed_bias_runs_away_above_the_hand_computed_theta_and_emitter_resistors_hold_it() {
    let (vcc, iq) = (20.0, 50e-3);
    // By hand: at a fixed VBE, IC = IS(T)·exp(VBE/VT) with the temperature law
    // of REFERENCES.md (IS ∝ T^3·exp((Eg/VT)(T/T0 − 1)), Eg = 1.11 V), so
    //   k = d ln IC/dT = 3/T + (Eg − VBE)/(VT·T)   (per kelvin).
    // Each device dissipates P ≈ P0·exp(k·ΔT) and heats itself by
    // ΔT = θ·P. A settled temperature needs ΔT = θ·P0·e^(kΔT); the
    // largest θ with a solution is where the line touches the curve, loop
    // gain ∂(θ·P)/∂T = θ·P0·k·e^(kΔT) = 1 with kΔT = 1:
    //   θcrit = 1/(e·k·P0).
    // source: the usual thermal-stability argument (loop gain of
    // ∂P/∂T·θ = 1), e.g. Sedra and Smith, the output-stage chapter.
    let vb = bias_for(iq, 0.0);
    let probe = stiff(vcc, vb, 0.0, None);
    let (_, _, op) = solved(&probe);
    let q = transistor(&op, "Q1");
    let t = 300.15;
    let kk = 3.0 / t + (1.11 - q.vbe) / (VT27 * t);
    let theta_crit = 1.0 / (E * kk * q.power);
    assert!(theta_crit > 1.0 && theta_crit < 20.0, "{theta_crit}");
    // The derivation takes k as constant over the ΔT = 1/k ≈ 13 K to the
    // edge (it falls about 8 % there): the engine's edge lies between 1.0
    // and 1.05 θcrit, so ±10 % is checked.
    // Below it the loop settles, with the current risen.
    let a = analyse(&stiff(vcc, vb, 0.0, Some(0.9 * theta_crit)));
    let b = block(&a);
    assert!(b.warnings.is_empty(), "{:?}", b.warnings);
    let hot = b.figure("quiescent_current_hot").unwrap().exact.unwrap();
    assert!(hot > b.figure("quiescent_current").unwrap().exact.unwrap());
    // Above it the loop runs away: a warning naming a device and the
    // missing emitter resistance.
    let a = analyse(&stiff(vcc, vb, 0.0, Some(1.1 * theta_crit)));
    let b = block(&a);
    let w = b.warnings.join("\n");
    assert!(w.contains("runs away"), "{w}");
    assert!(w.contains("Q1") || w.contains("Q2"), "{w}");
    assert!(w.contains("no emitter resistor"), "{w}");
    assert_eq!(b.figure("quiescent_current_hot").unwrap().exact, None);
    // With 1 Ω in each emitter (common practice: a fraction of an ohm to an
    // ohm or two) and the same idle current, a θ well past the edge settles.
    // common practice (no source)
    let a = analyse(&stiff(vcc, bias_for(iq, 1.0), 1.0, Some(1.6 * theta_crit)));
    let b = block(&a);
    assert!(
        b.words.contains("emitter resistors RE1 and RE2"),
        "{}",
        b.words
    );
    assert!(b.warnings.is_empty(), "{:?}", b.warnings);
    assert!(b.figure("quiescent_current_hot").unwrap().exact.is_some());
}

#[test]
fn a_hot_idle_warns_and_a_sane_one_does_not() {
    // The variant: about 186 mA idle at ±15 V, 2.8 W per device,
    // no max_power given (each device warns); then 20 mA (none does).
    // common practice (no source): a class-AB idle of tens of milliamperes.
    let hot = stiff(15.0, bias_for(0.186, 0.0), 0.0, None);
    let a = analyse(&hot);
    let b = block(&a);
    let pd = b.figure("idle_dissipation_top").unwrap().exact.unwrap();
    assert!((pd - 2.8).abs() < 0.1, "{pd}");
    assert_eq!(b.warnings.len(), 2, "{:?}", b.warnings);
    assert!(
        b.warnings[0].starts_with("Q1 idles at 2.7"),
        "{:?}",
        b.warnings
    );
    assert!(
        b.warnings[1].starts_with("Q2 idles at 2.7"),
        "{:?}",
        b.warnings
    );
    let sane = stiff(15.0, bias_for(0.02, 0.0), 0.0, None);
    let a = analyse(&sane);
    assert!(block(&a).warnings.is_empty(), "{:?}", block(&a).warnings);
    // The block's warnings count in `analyze`'s exit code: the hot variant
    // has no other finding (no ratings given), yet exits 1.
    assert_eq!(
        biasline::results::Session::new(&hot).verdict(),
        biasline::analysis::assess::Verdict::Clean
    );
    let dir = std::env::temp_dir().join(format!("biasline-pp-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("hot.json");
    biasline::document::save_file(&hot, &file).unwrap();
    let r = crate::cli_common::ran(&["analyze", file.to_str().unwrap()]);
    assert_eq!(r.code, crate::cli_common::EXIT_FINDINGS, "{}", r.out);
    assert!(r.out.contains("Q1 idles at 2.7"), "{}", r.out);
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn the_clip_search_names_the_feed_resistor_not_a_half_at_cut_off() {
    // invariant: in class AB each half cuts off for part of every cycle at
    // any level past the idle current, so a half's cut-off is no limit; the
    // limit of this stage is RTOP's current (the block's estimate).
    let doc = class_ab(2.7e3);
    let nl = netlist::connect(&doc);
    let c = biasline::analysis::circuit::build(&doc, &nl).unwrap();
    let clip =
        biasline::analysis::transient::clip::search(&doc, &nl, &c, 0.01, &mut |_| true).unwrap();
    assert!(
        clip.limited_by
            .contains("RTOP cannot supply more base current"),
        "{}",
        clip.limited_by
    );
    for e in &clip.excursions {
        assert!(
            !(["Q2", "Q3"].contains(&e.transistor.as_str()) && e.region == "cut-off"),
            "{e:?}"
        );
    }
    // The block's estimate, not a single stage's load line (which read
    // +17 188 % off before): within 25 % of the search.
    assert!(clip.estimate_stage.unwrap().contains("push-pull"));
    assert!(clip.difference_percent.unwrap().abs() < 25.0);
}

#[test]
fn a_vbe_multiplier_is_named_as_the_bias_network() {
    // common practice (no source): a VBE multiplier (a transistor with a
    // divider across its collector–emitter) sets about VBE·(1 + R1/R2).
    let doc = named(document(&[
        p("VCC", Rail, &["vcc"], &[(k::VOLTAGE, 15.0)]),
        p("VEE", Rail, &["vee"], &[(k::VOLTAGE, -15.0)]),
        p(
            "VS",
            SignalSource,
            &["src", "0"],
            &[(k::AMPLITUDE, 0.05), (k::FREQUENCY, 1000.0)],
        ),
        p("C1", Capacitor, &["src", "b1"], &[(k::CAPACITANCE, 1e-5)]),
        p("RF", Resistor, &["out", "b1"], &[(k::RESISTANCE, 47e3)]),
        p("RB2", Resistor, &["b1", "vee"], &[(k::RESISTANCE, 27e3)]),
        with_preset(p("Q1", Npn, &["bn", "b1", "e1"], &[]), "small-signal-npn"),
        p("RE1", Resistor, &["e1", "vee"], &[(k::RESISTANCE, 1e3)]),
        p("RTOP", Resistor, &["vcc", "bp"], &[(k::RESISTANCE, 2.7e3)]),
        with_preset(p("Q4", Npn, &["bp", "m", "bn"], &[]), "small-signal-npn"),
        p("R1", Resistor, &["bp", "m"], &[(k::RESISTANCE, 1.5e3)]),
        p("R2", Resistor, &["m", "bn"], &[(k::RESISTANCE, 1.5e3)]),
        p("Q2", Npn, &["vcc", "bp", "out"], POWER_NPN),
        p("Q3", Pnp, &["vee", "bn", "out"], POWER_NPN),
        p("RL", Resistor, &["out", "0"], &[(k::RESISTANCE, 8.0)]),
    ]));
    let a = analyse(&doc);
    let b = block(&a);
    assert!(
        b.words
            .contains("VBE multiplier (Q4 with the divider R1 and R2)"),
        "{}",
        b.words
    );
    assert_eq!(b.members[0], "Q4");
    // invariant: the multiplier's voltage is its VBE times 1 + R1/R2 plus
    // the divider's share of Q4's base current; within 5 % of 2·VBE here.
    let (_, _, op) = solved(&doc);
    let q4 = transistor(&op, "Q4");
    let vb = b.figure("bias_voltage").unwrap().exact.unwrap();
    assert!(
        (vb / (2.0 * q4.vbe) - 1.0).abs() < 0.05,
        "{vb} vs {}",
        q4.vbe
    );
}

#[test]
fn the_level_sweep_on_the_command_line() {
    use crate::cli_common::{ran, EXIT_CANNOT, EXIT_CLEAN};
    let demo = "projects/connections/class-ab-output.json";
    let r = ran(&["transient", demo, "--levels", "4", "--json"]);
    assert_eq!(r.code, EXIT_CLEAN, "{}", r.message);
    let v: serde_json::Value = serde_json::from_str(&r.out).unwrap();
    let levels = v["levels"].as_array().unwrap();
    assert_eq!(levels.len(), 4);
    assert_eq!(v["devices"], serde_json::json!(["Q2", "Q3"]));
    assert_eq!(v["load"], "RL");
    // invariant: energy balance of the output pair — the rails' power is
    // the load's plus both devices' dissipation (the pair's base currents
    // come from the driver, a small share here: within 3 %).
    for l in levels {
        let supply = l["supply_power"].as_f64().unwrap();
        let parts = l["load_power"].as_f64().unwrap()
            + l["dissipation"][0].as_f64().unwrap()
            + l["dissipation"][1].as_f64().unwrap();
        assert!((parts / supply - 1.0).abs() < 0.03, "{l}");
    }
    // The output rises with the level until it clips.
    let first = levels[0]["output_peak"].as_f64().unwrap();
    assert!(levels[3]["output_peak"].as_f64().unwrap() > first);
    let r = ran(&["transient", demo, "--levels", "0"]);
    assert_eq!(r.code, EXIT_CANNOT);
    assert!(r.message.contains("--levels 0"), "{}", r.message);
    let r = ran(&["transient", "projects/common-emitter.json", "--levels", "3"]);
    assert_eq!(r.code, EXIT_CANNOT);
    assert!(r.message.contains("no push-pull output"), "{}", r.message);
}
