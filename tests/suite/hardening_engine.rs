//! Hardening (issue 11, engine and command-semantics items): every hostile
//! input in `tests/hostile/` ends in a result or a clear message, never a
//! panic, a hang or a wrong figure. Each test failed before its fix.

use crate::cli_common::{ran, EXIT_CANNOT, EXIT_CLEAN, EXIT_FINDINGS};
use std::path::PathBuf;

fn hostile(name: &str) -> PathBuf {
    PathBuf::from(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/hostile")).join(name)
}

fn demo(name: &str) -> PathBuf {
    PathBuf::from(concat!(env!("CARGO_MANIFEST_DIR"), "/projects")).join(name)
}

/// Run a command; (exit code, report text or failure message).
fn run(args: &[&str], file: PathBuf) -> (i32, String) {
    let mut all: Vec<std::ffi::OsString> = args.iter().map(Into::into).collect();
    all.push(file.into());
    let r = ran(&all);
    if r.code == EXIT_CANNOT && !r.message.is_empty() {
        (r.code, format!("{}{}", r.out, r.message))
    } else {
        (r.code, r.out)
    }
}

fn check(file: PathBuf) -> (i32, String) {
    run(&["check"], file)
}
fn analyze(file: PathBuf) -> (i32, String) {
    run(&["analyze"], file)
}
fn sweep(file: PathBuf, csv: bool) -> (i32, String) {
    run(if csv { &["sweep", "--csv"] } else { &["sweep"] }, file)
}
fn spread(file: PathBuf, runs: Option<usize>) -> (i32, String) {
    match runs {
        Some(n) => {
            let n = n.to_string();
            run(&["spread", "--threads", "1", "--runs", &n], file)
        }
        None => run(&["spread", "--threads", "1"], file),
    }
}
fn noise(file: PathBuf) -> (i32, String) {
    run(&["noise", "--band", "20..20k", "--at", "1k"], file)
}

// ---- item 1: nothing left to solve in the small-signal system ----

#[test]
fn a_resistor_across_a_rail_gives_the_dc_result_and_no_signal_path() {
    for name in ["rail-resistor-only.json", "rail-resistor-named-path.json"] {
        // invariant: Ohm's law, 5 V across 1 kΩ is 5 mA; the run ends with a result.
        let (code, text) = analyze(hostile(name));
        assert!(
            code == EXIT_CLEAN || code == EXIT_FINDINGS,
            "{name}: {code}\n{text}"
        );
        assert!(text.contains("5 mA"), "{name}:\n{text}");
        assert!(text.contains("no signal path"), "{name}:\n{text}");
        // invariant: a sweep with nothing to sweep says so (exit 2) instead of panicking.
        let (code, text) = sweep(hostile(name), false);
        assert_eq!(code, EXIT_CANNOT, "{name}:\n{text}");
        assert!(!text.is_empty());
        let (code, text) = spread(hostile(name), Some(10));
        assert!(
            code == EXIT_CLEAN || code == EXIT_FINDINGS,
            "{name}: {code}\n{text}"
        );
        let (code, text) = noise(hostile(name));
        assert!(code <= EXIT_CANNOT, "{name}: {code}\n{text}");
        assert!(!text.contains("NaN"), "{name}:\n{text}");
    }
}

// ---- item 3: settings that size work are bounded ----

#[test]
fn unbounded_settings_are_refused_with_the_limit_named() {
    use biasline::document::limits::{MAX_POINTS_PER_DECADE, MAX_SPREAD_RUNS};
    // common practice (no source): a guard limit is stated and named in the message.
    let (code, text) = check(hostile("huge-points-per-decade.json"));
    assert_eq!(code, EXIT_CANNOT, "{text}");
    assert!(text.contains("points_per_decade"), "{text}");
    assert!(text.contains(&MAX_POINTS_PER_DECADE.to_string()), "{text}");
    let commands: [fn(PathBuf) -> (i32, String); 3] = [analyze, |p| sweep(p, true), noise];
    for f in commands {
        let (code, text) = f(hostile("huge-points-per-decade.json"));
        assert_eq!(code, EXIT_CANNOT, "{text}");
    }
    let (code, text) = check(hostile("huge-spread-runs.json"));
    assert_eq!(code, EXIT_CANNOT, "{text}");
    assert!(text.contains("runs"), "{text}");
    assert!(text.contains(&MAX_SPREAD_RUNS.to_string()), "{text}");
    let (code, text) = spread(hostile("huge-spread-runs.json"), None);
    assert_eq!(code, EXIT_CANNOT, "{text}");
    // The command-line flag meets the same limit.
    let (code, text) = spread(demo("common-emitter.json"), Some(1_000_000_000_000));
    assert_eq!(code, EXIT_CANNOT, "{text}");
    assert!(
        text.contains("--runs") && text.contains(&MAX_SPREAD_RUNS.to_string()),
        "{text}"
    );
}

#[test]
fn a_temperature_below_absolute_zero_names_the_field() {
    // source: SI brochure (BIPM, 9th ed.), 0 K = −273.15 °C.
    let (code, text) = check(hostile("below-absolute-zero.json"));
    assert_eq!(code, EXIT_CANNOT, "{text}");
    assert!(text.contains("ambient_celsius"), "{text}");
    assert!(text.contains("absolute zero"), "{text}");
    assert!(!text.contains("sweep"), "{text}");
}

// ---- item 7: rules check gaps ----

#[test]
fn the_rules_check_catches_sheet_level_mistakes() {
    // common practice (no source): a shorted transistor, reused ids, a signal
    // source that is not there and control characters are input errors.
    for (name, needle) in [
        (
            "transistor-one-net.json",
            "collector, base and emitter all on net",
        ),
        (
            "duplicate-part-ids.json",
            "part id \"p1\" is used by more than one part",
        ),
        (
            "missing-signal-source.json",
            "signal source is VX, which is not on the sheet",
        ),
        ("control-characters-title.json", "control character U+0000"),
    ] {
        let (code, text) = check(hostile(name));
        assert_eq!(code, EXIT_FINDINGS, "{name}:\n{text}");
        assert!(text.contains(needle), "{name}:\n{text}");
        // invariant: an analysis refuses what the check calls an error (no α −100, no Avs).
        let (code, text) = analyze(hostile(name));
        assert_eq!(code, EXIT_CANNOT, "{name}:\n{text}");
        assert!(text.contains(needle), "{name}:\n{text}");
        assert!(!text.contains("Avs"), "{name}:\n{text}");
    }
}

// ---- item 9: one findings set and one exit code from every command ----

#[test]
fn every_command_agrees_on_warnings_and_exit_code() {
    // invariant: one document, one set of findings, one exit code.
    for name in ["overloaded-resistor.json", "just-above-60-volts.json"] {
        let (c, check_text) = check(hostile(name));
        let (a, analyze_text) = analyze(hostile(name));
        let (s, spread_text) = spread(hostile(name), Some(10));
        assert_eq!(c, EXIT_FINDINGS, "{name}:\n{check_text}");
        assert_eq!(a, EXIT_FINDINGS, "{name}:\n{analyze_text}");
        assert_eq!(s, EXIT_FINDINGS, "{name}:\n{spread_text}");
        let warning = check_text
            .lines()
            .find(|l| l.starts_with("warning"))
            .expect("check lists the warning");
        assert!(analyze_text.contains(warning), "{name}:\n{analyze_text}");
    }
    for name in [
        "common-emitter.json",
        "two-stage-preamp.json",
        "high-voltage-driver.json",
    ] {
        let (c, t1) = check(demo(name));
        let (a, t2) = analyze(demo(name));
        assert_eq!(c, a, "{name}: check\n{t1}\nanalyze\n{t2}");
    }
}

#[test]
fn the_safety_caution_prints_the_value_that_crossed_the_limit() {
    // source: IEC 62368-1, ES1 limit 60 V DC; the caution shows 60.01 V, not "60 V … above 60 V".
    let (_, text) = check(hostile("just-above-60-volts.json"));
    assert!(text.contains("60.01 V DC between"), "{text}");
}

#[test]
fn a_spread_without_runs_judges_limits_by_the_worst_case() {
    // invariant: a limit a worst-case corner misses is not "met on every board".
    let (code, text) = spread(demo("common-emitter.json"), Some(0));
    let line = text
        .lines()
        .find(|l| l.contains("Avs_dB(chain) 26.00"))
        .expect("the limit line");
    assert!(!line.contains("met on every board"), "{text}");
    assert!(line.contains("missed at a worst-case corner"), "{text}");
    assert_eq!(code, EXIT_FINDINGS, "{text}");
}

// ---- item 2: capacitors by what they do; the photodiode demo's figures ----

fn analysis_of(
    doc: &biasline::document::Document,
) -> (
    biasline::analysis::small_signal::Analysis,
    biasline::analysis::ac::FrequencyResponse,
) {
    use biasline::analysis::{ac, circuit, dc, small_signal};
    let nl = biasline::netlist::connect(doc);
    let op = dc::solve(doc, &nl).expect("solves");
    let c = circuit::build(doc, &nl).expect("builds");
    let a = small_signal::analyse(doc, &nl, &c, &op);
    let r = ac::sweep(&a.small_signal, &a.chain, &a.midband, &doc.analysis);
    (a, r)
}

#[test]
fn the_photodiode_demo_agrees_with_its_own_sweep() {
    let doc = biasline::document::load_file(&demo("photodiode-buffer.json")).expect("loads");
    let (a, r) = analysis_of(&doc);
    let c = &a.midband.chain;
    let avs_db = c.source_gain_db.expect("an Avs in dB");
    let g = r.gain.as_ref().expect("a swept gain");
    // The plateau: the sweep's largest magnitude (the passband of a band-pass response).
    let plateau = g.magnitude_db.iter().cloned().fold(f64::MIN, f64::max);
    // invariant: the midband figure is the swept plateau (two methods, one circuit), within 0.1 dB.
    assert!(
        (avs_db - plateau).abs() < 0.1,
        "Avs {avs_db} dB, sweep plateau {plateau} dB"
    );
    // invariant: Zin is the common-base input, about re, never a short.
    let zin = c.input_impedance.expect("Zin");
    let re = a.small_signal.transistors[0].models.t.expect("T model").re;
    assert!(zin > 0.5 * re && zin < 2.0 * re, "Zin {zin} Ω, re {re} Ω");
    // invariant: voltage division at the input — v(i)/vs = Zin/(Zin + Rsource).
    let rs = c.source_resistance.expect("Rs");
    let frac = c.input_fraction.expect("v(i)/vs");
    assert!((frac - zin / (zin + rs)).abs() < 1e-6 * frac.abs().max(1e-12) + 1e-12);
    // invariant: with the source a current vs/Rs, Zt = v(load)/(vs/Rs) = Avs·Rs.
    let zt = c
        .transimpedance
        .expect("a transimpedance for a current-like source");
    let avs = c.source_gain.expect("Avs");
    assert!((zt - avs * rs).abs() < 1e-9 * zt.abs());
    // The low corner is not "set by" the photodiode's own capacitance.
    assert_ne!(r.low_corner_set_by.as_deref(), Some("CJ"));
    let (code, text) = analyze(demo("photodiode-buffer.json"));
    assert_eq!(code, EXIT_CLEAN, "{text}");
    assert!(text.contains("Zt "), "{text}");
}

#[test]
fn capacitors_are_classified_by_topology() {
    use biasline::analysis::small_signal::{capacitor_roles, CapacitorRole};
    // common practice (no source): the usual names of the three roles in a
    // common-emitter stage (coupling in and out, emitter bypass) and a
    // capacitance across a common-base input (shunting the signal).
    for (file, expect) in [
        (
            "common-emitter.json",
            vec![
                ("C1", CapacitorRole::Coupling),
                ("C2", CapacitorRole::Coupling),
                ("CE", CapacitorRole::Bypass),
            ],
        ),
        (
            "photodiode-buffer.json",
            vec![("CB", CapacitorRole::Bypass), ("CJ", CapacitorRole::Shunt)],
        ),
    ] {
        let doc = biasline::document::load_file(&demo(file)).expect("loads");
        let (a, _) = analysis_of(&doc);
        let ss = &a.small_signal;
        let roles = capacitor_roles(ss, &a.chain);
        for (name, role) in expect {
            let k = ss
                .circuit
                .elements
                .iter()
                .position(|e| e.part.is_some_and(|p| ss.designator(p) == name))
                .expect("the capacitor");
            // The shunting capacitor has already been turned into a frequency-only element.
            let got = roles[k].unwrap_or(CapacitorRole::Shunt);
            assert_eq!(got, role, "{file}: {name}");
        }
    }
}

// ---- item 10 (engine part) ----

#[test]
fn a_model_zero_prints_as_zero_on_cards_and_in_reports() {
    use biasline::scene::Quantity;
    use biasline::units::Unit;
    // from memory: in this model IB has no Early term, so hre is 0 by construction.
    let q = Quantity::model_zero("hre", 2.36e-59, 1.0, Unit::None);
    assert_eq!(q.text(), "hre = 0 (none in this model)");
    let q = Quantity::model_zero("hre", 2.4e-4, 1.0, Unit::None);
    assert!(q.text().starts_with("hre = 2.4"), "{}", q.text());
    let doc = biasline::document::load_file(&demo("common-emitter.json")).expect("loads");
    let (a, _) = analysis_of(&doc);
    let cards = biasline::results::stage_cards::stage_cards(&a);
    let hre = cards[0]
        .models
        .iter()
        .flat_map(|m| &m.values)
        .find(|q| q.name == "hre")
        .expect("hre on the card");
    assert_eq!(hre.text(), "hre = 0 (none in this model)");
}

#[test]
fn noise_densities_print_in_one_unit() {
    use biasline::units::{format_density, Unit};
    // common practice (no source): nV/√Hz and pA/√Hz are the trade's units for en and in.
    assert_eq!(format_density(696e-12, Unit::Volt), "0.696 nV/√Hz");
    assert_eq!(format_density(3.1e-9, Unit::Volt), "3.10 nV/√Hz");
    assert_eq!(format_density(2.5e-12, Unit::Ampere), "2.50 pA/√Hz");
    let (_, text) = noise(demo("photodiode-buffer.json"));
    for line in text.lines().filter(|l| l.contains("√Hz")) {
        assert!(
            !line.contains("pV/√Hz") && !line.contains("µV/√Hz") && !line.contains("fA/√Hz"),
            "{line}"
        );
    }
}

#[test]
fn the_source_resistance_and_load_are_not_board_parts_in_the_spread() {
    use biasline::spread::variables::collect;
    // common practice (no source): a generator's resistance and the load are not parts on the board.
    let doc = biasline::document::load_file(&demo("common-emitter.json")).expect("loads");
    let names: Vec<String> = collect(&doc).into_iter().map(|v| v.name).collect();
    assert!(!names.contains(&"RS".to_string()), "{names:?}");
    assert!(!names.contains(&"RL".to_string()), "{names:?}");
    assert!(names.contains(&"RC".to_string()), "{names:?}");
    // A tolerance given in the file still counts.
    let mut doc = doc;
    let rl = doc.parts.iter().position(|p| p.designator == "RL").unwrap();
    doc.parts[rl].parameters.insert("tolerance".into(), 0.01);
    let names: Vec<String> = collect(&doc).into_iter().map(|v| v.name).collect();
    assert!(names.contains(&"RL".to_string()), "{names:?}");
}

#[test]
fn a_sheet_without_a_signal_source_says_why_once() {
    // common practice (no source): one plain sentence instead of a block of dashes.
    let (_, text) = analyze(demo("current-mirror.json"));
    assert!(text.contains("no signal path"), "{text}");
    assert!(!text.contains("Zin — seen by the source"), "{text}");
}

// ---- item 8: more than one DC state ----

#[test]
fn a_cross_coupled_pair_is_reported_as_having_two_states() {
    let (code, text) = analyze(hostile("cross-coupled-latch.json"));
    assert_eq!(code, EXIT_FINDINGS, "{text}");
    assert!(
        text.contains("this circuit has more than one DC state"),
        "{text}"
    );
    let line = text
        .lines()
        .find(|l| l.contains("more than one DC state"))
        .expect("the warning");
    // invariant: the pair is symmetric, so its two stable states are mirror
    // images: one transistor carries the collector current the other does in
    // the other state, and each state has one transistor (nearly) off.
    assert!(
        line.contains("state 1: ") && line.contains("state 2: "),
        "{line}"
    );
    let (c, _) = check(hostile("cross-coupled-latch.json"));
    assert_eq!(c, EXIT_FINDINGS);
    let doc = biasline::document::load_file(&hostile("cross-coupled-latch.json")).unwrap();
    let nl = biasline::netlist::connect(&doc);
    let circuit = biasline::analysis::circuit::build(&doc, &nl).unwrap();
    let mut engine = biasline::analysis::dc::newton::Engine::new(&circuit);
    let (state, _) = engine.solve().expect("solves");
    let states = biasline::analysis::dc::multistate::other_states(&circuit, &mut engine, &state)
        .expect("flagged");
    assert_eq!(states.len(), 2, "{states:?}");
    let ic = |s: &biasline::analysis::dc::multistate::DcState, d: &str| {
        s.collector_currents
            .iter()
            .find(|(n, _)| n == d)
            .map(|(_, i)| *i)
            .unwrap()
    };
    let (a, b) = (&states[0], &states[1]);
    assert!((ic(a, "Q1") - ic(b, "Q2")).abs() < 1e-6 * ic(a, "Q1").abs().max(ic(b, "Q1").abs()));
    assert!((ic(a, "Q2") - ic(b, "Q1")).abs() < 1e-6 * ic(a, "Q1").abs().max(ic(b, "Q1").abs()));
    let on = ic(a, "Q1").abs().max(ic(a, "Q2").abs());
    let off = ic(a, "Q1").abs().min(ic(a, "Q2").abs());
    assert!(off < 1e-3 * on, "{states:?}");
    // invariant: a saturated transistor with 1 kΩ from 5 V carries just under 5 mA.
    assert!(on > 4.0e-3 && on < 5.0e-3, "{on}");
}

#[test]
fn a_cross_coupled_mosfet_pair_is_reported_as_having_two_states() {
    // invariant: the degree argument (the sign of det J along the supply ramp) holds for any
    // device law, so the MOSFET latch's symmetric point is flagged as the bipolar one is, and
    // its two stable states are mirror images with one transistor off.
    let file = hostile("cross-coupled-mosfet-latch.json");
    let (code, text) = analyze(file.clone());
    assert_eq!(code, EXIT_FINDINGS, "{text}");
    let line = text
        .lines()
        .find(|l| l.contains("more than one DC state"))
        .expect("the warning");
    assert!(
        line.contains("Q1 ID ") && line.contains("state 2: "),
        "{line}"
    );
    let doc = biasline::document::load_file(&file).unwrap();
    let nl = biasline::netlist::connect(&doc);
    let circuit = biasline::analysis::circuit::build(&doc, &nl).unwrap();
    let mut engine = biasline::analysis::dc::newton::Engine::new(&circuit);
    let (state, _) = engine.solve().expect("solves");
    let states = biasline::analysis::dc::multistate::other_states(&circuit, &mut engine, &state)
        .expect("flagged");
    assert_eq!(states.len(), 2, "{states:?}");
    let id = |s: &biasline::analysis::dc::multistate::DcState, d: &str| {
        s.collector_currents
            .iter()
            .find(|(n, _)| n == d)
            .map(|(_, i)| *i)
            .unwrap()
    };
    let (a, b) = (&states[0], &states[1]);
    assert!((id(a, "Q1") - id(b, "Q2")).abs() < 1e-6 * id(a, "Q1").abs().max(id(b, "Q1").abs()));
    let on = id(a, "Q1").abs().max(id(a, "Q2").abs());
    let off = id(a, "Q1").abs().min(id(a, "Q2").abs());
    assert!(off < 1e-3 * on, "{states:?}");
}

#[test]
fn ordinary_amplifiers_are_not_flagged() {
    // invariant: a stable amplifier has one DC state; the test must not cry wolf.
    for name in [
        "common-emitter.json",
        "two-stage-preamp.json",
        "current-mirror.json",
        "photodiode-buffer.json",
        "pnp-sensor-loop.json",
        "high-voltage-driver.json",
        "piezo-jfet-preamp.json",
        "mosfet-gain-stage.json",
    ] {
        let (_, text) = analyze(demo(name));
        assert!(!text.contains("more than one DC state"), "{name}:\n{text}");
    }
}

// ---- a figure past the device law is not reported as a plain result ----

#[test]
fn a_diode_forced_past_its_law_is_warned_about_not_reported_plainly() {
    let (code, text) = analyze(hostile("diode-forced-by-source.json"));
    // source: Shockley diode law I = Is·(exp(V/(n·VT)) − 1); at 40 V across
    // the junction it gives exp(1545) A — no physical diode holds this, and
    // the figure printed is the model's linear continuation past
    // devices::EXP_LIMIT·n·VT (2.07 V at 27 °C), so a warning must say so.
    assert_eq!(code, EXIT_FINDINGS, "{text}");
    assert!(
        text.contains("D1 is held at 40 V across its junction"),
        "{text}"
    );
    assert!(text.contains("add resistance in series"), "{text}");
    // invariant: one assessment — check and analyze agree on the exit code.
    let (c, _) = check(hostile("diode-forced-by-source.json"));
    assert_eq!(c, code);
}

#[test]
fn a_diode_fed_through_a_resistor_gets_no_such_warning() {
    // The same 40 V source, now through 1 kΩ: the diode sits near 0.7 V.
    let text = std::fs::read_to_string(hostile("diode-forced-by-source.json")).unwrap();
    let mut v: serde_json::Value = serde_json::from_str(&text).unwrap();
    v["wires"].as_array_mut().unwrap().remove(0);
    v["parts"].as_array_mut().unwrap().push(serde_json::json!({
        "id": "p9", "designator": "R1", "kind": "resistor", "position": [6, 8],
        "rotation": 90, "parameters": {"resistance": 1000.0}
    }));
    let dir = std::env::temp_dir().join(format!("biasline-diode-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("fed.json");
    std::fs::write(&file, v.to_string()).unwrap();
    let (code, text) = analyze(file);
    assert!(!text.contains("where the diode law ends"), "{text}");
    assert_eq!(code, EXIT_CLEAN, "{text}");
    // source: Shockley diode law with Is = 1e-14 A, n = 1 (the default
    // model): I ≈ (40 V − VD)/1 kΩ with VD = VT·ln(I/Is) ≈ 0.72 V, so
    // 39.2–39.4 mA.
    assert!(text.contains("D1: conducting, 39."), "{text}");
}

#[test]
fn a_base_forced_past_its_law_is_warned_about_and_temperatures_stay_readable() {
    let (code, text) = analyze(hostile("transistor-base-forced-by-source.json"));
    // source: Ebers–Moll transport current IS·exp(VBE/(nF·VT)); at 5 V it is
    // exp(193) times IS — no device carries that; with no base resistance
    // nothing limits it, and the figure is the model's linear continuation.
    assert_eq!(code, EXIT_FINDINGS, "{text}");
    assert!(
        text.contains("Q1's base–emitter junction is held at 5 V"),
        "{text}"
    );
    // common practice (no source): an absurd temperature in scientific
    // notation, not a 26-digit number.
    let tj = text
        .lines()
        .find(|l| l.contains("junction temperature"))
        .expect("the temperature warning");
    let digits = tj
        .split_whitespace()
        .map(|w| w.chars().filter(|c| c.is_ascii_digit()).count())
        .max()
        .unwrap();
    assert!(digits < 8, "{tj}");
}
