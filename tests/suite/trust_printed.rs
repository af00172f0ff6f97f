//! Issue 18 items 8 and 9, as the mutation pass of a whole session found
//! them: figures printed as "NaN", "inf" or hundreds of digits on mutants of
//! the demos. Each case failed before its fix (the spread table's nominal
//! column, the noise density's unit scaling, the solver's Tellegen line, the
//! transient harmonics of exactly zero amplitude, the spread table's plain
//! numbers far from 1, `snap`'s zero, the sweep's CSV and table, the rules check's echo of a
//! value).

// invariant: no command prints a non-finite number as a figure, and every
// figure is in engineering or scientific notation (no run of more than 24
// digits).
use crate::cli_common;

use biasline::document::{self, Document};
use cli_common::{longest_digit_run, non_finite_word, root, run, text};

fn mutant(demo: &str, part: &str, edit: impl Fn(&mut document::Part)) -> Document {
    let mut doc = document::load_file(&root().join("projects").join(demo)).unwrap();
    let p = doc
        .parts
        .iter_mut()
        .find(|p| p.designator == part)
        .unwrap_or_else(|| panic!("{demo} has no {part}"));
    edit(p);
    doc
}

fn value(key: &'static str, v: f64) -> impl Fn(&mut document::Part) {
    move |p: &mut document::Part| {
        p.parameters.insert(key.into(), v);
    }
}

#[test]
fn extreme_values_print_no_nan_inf_or_endless_digits() {
    let dir = std::env::temp_dir().join(format!("biasline-printed-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let cases: Vec<(Document, Vec<&str>)> = vec![
        // No signal reaches Q1 (a 1e300 Ω source resistance): Av(Q1) has no value.
        (
            mutant("common-emitter.json", "RS", value("resistance", 1e300)),
            vec!["spread", "--runs", "20"],
        ),
        // A 5e-324 F coupling capacitor: no gain, an input-referred density
        // past f64 once scaled to nV.
        (
            mutant("common-emitter.json", "C1", value("capacitance", 5e-324)),
            vec!["analyze"],
        ),
        (
            mutant("common-emitter.json", "C1", value("capacitance", 5e-324)),
            vec!["noise"],
        ),
        // A 1e300 V rail: v·i overflows, and the density runs to 200 digits.
        (
            mutant(
                "connections/long-tailed-pair.json",
                "VEE",
                value("voltage", 1e300),
            ),
            vec!["analyze"],
        ),
        // A rail moved off its wires: the line driver's Q1 gain is 3e-211.
        (
            mutant("line-driver.json", "VEE", |p| p.position[0] = 40_000),
            vec!["spread", "--runs", "20"],
        ),
        // A rail moved off its wires: S(Q1) is exactly 0 (snap printed 300 zeros).
        (
            mutant("common-emitter.json", "VCC", |p| p.position[0] = 40_000),
            vec!["snap"],
        ),
        // A 1e-15 Ω tail: phases of 1e-10° (the CSV's plain notation ran to 27 digits).
        (
            mutant(
                "connections/long-tailed-pair.json",
                "RT",
                value("resistance", 1e-15),
            ),
            vec!["sweep", "--csv"],
        ),
        (
            mutant(
                "connections/long-tailed-pair.json",
                "RT",
                value("resistance", 1e-15),
            ),
            vec!["sweep"],
        ),
        // A tolerance of 1e300: the rules check echoed it in plain notation (301 digits).
        (
            mutant("common-emitter.json", "RE", value("tolerance", 1e300)),
            vec!["check"],
        ),
        // Is = 5e-324 A: an infinite saturation margin before and after (snap's
        // change column printed "NaN %").
        (
            mutant(
                "connections/class-ab-output.json",
                "Q3",
                value("saturation_current", 5e-324),
            ),
            vec!["snap"],
        ),
        // A 1e300 Ω collector resistor: the estimate's difference ran to 300 digits.
        (
            mutant("common-emitter.json", "RC", value("resistance", 1e300)),
            vec!["analyze"],
        ),
        // A 1e-307 Ω load: harmonics of exactly zero amplitude.
        (
            mutant("photodiode-buffer.json", "RL", value("resistance", 1e-307)),
            vec!["transient"],
        ),
        // βF = 1e300 on an output transistor: the DC table printed the model
        // βF in full (301 digits; session 6's mutation run, mutant 2256).
        (
            mutant(
                "connections/class-ab-output.json",
                "Q3",
                value("forward_beta", 1e300),
            ),
            vec!["analyze"],
        ),
    ];
    for (k, (doc, args)) in cases.iter().enumerate() {
        let f = dir.join(format!("m{k}.json"));
        std::fs::write(&f, document::to_json(doc)).unwrap();
        let mut a = vec![args[0], f.to_str().unwrap()];
        a.extend(&args[1..]);
        let o = run(&a);
        let out = text(&o.stdout);
        assert!(
            o.status.code().is_some_and(|c| c <= 2),
            "{a:?}: {:?}",
            o.status
        );
        assert!(!non_finite_word(&out), "{a:?} printed NaN or inf:\n{out}");
        assert!(
            longest_digit_run(&out) <= 24,
            "{a:?} printed a number of {} digits:\n{out}",
            longest_digit_run(&out)
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// The mutation pass's one hang: a 1e15 V rail on the long-tailed pair. Newton
/// converges there only at femtosecond steps, so `transient` (and `report`,
/// which runs it) ground through millions of steps toward the step limit,
/// past the pass's 120 s bound. The run now stops once its pace shows it
/// cannot end within the limit, and says so.
#[test]
fn a_collapsed_step_stops_with_the_reason() {
    // invariant: a run that cannot end within its step limit stops with a
    // message naming the limit, not after the limit's millions of steps.
    let dir = std::env::temp_dir().join(format!("biasline-pace-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let doc = mutant(
        "connections/long-tailed-pair.json",
        "VEE",
        value("voltage", 1e15),
    );
    let f = dir.join("vee.json");
    std::fs::write(&f, document::to_json(&doc)).unwrap();
    let o = run(&["transient", f.to_str().unwrap()]);
    let err = text(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("the step limit would be reached"), "{err}");
    assert!(!non_finite_word(&err), "{err}");
    let page = dir.join("vee.html");
    let o = run(&["report", f.to_str().unwrap(), "-o", page.to_str().unwrap()]);
    assert!(o.status.code().is_some_and(|c| c <= 1), "{:?}", o.status);
    let html = std::fs::read_to_string(&page).unwrap();
    assert!(html.contains("the step limit would be reached"));
    let _ = std::fs::remove_dir_all(&dir);
}
