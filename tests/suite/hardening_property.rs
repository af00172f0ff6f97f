//! Property test (issue 11): random valid sheets from
//! `generate::random_sheet`, some made degenerate on purpose (a part
//! shorted, every pin of a transistor on one net, a floating island, huge or
//! tiny values, a signal source or load that is not there), each run through
//! check, analyze (text and JSON), sweep, noise, spread (10 runs) and an SVG
//! export. Every run must end in a report or a clear message: no panic, no
//! NaN or infinity in any output, every exit code 0, 1 or 2.
//!
//! The normal run does 500 cases; the long run (10,000 cases) is ignored by
//! default: `cargo test --release --no-default-features --test suite
//! hardening_property -- --ignored` (set BIASLINE_PROPERTY_CASES for another count).

use crate::cli_common::ran;
use biasline::document::{self, Document, NetLabel, Part, PartKind};
use std::path::{Path, PathBuf};

struct Rng(u64);
impl Rng {
    fn next(&mut self) -> u64 {
        // SplitMix64.
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }
}

/// Put every pin of part `i` on one net with net labels at the pins.
fn short_part(doc: &mut Document, i: usize, name: &str) {
    let nl = biasline::netlist::connect(doc);
    let pins: Vec<_> = nl
        .nets
        .iter()
        .flat_map(|n| n.pins.iter())
        .filter(|p| p.part == i)
        .map(|p| p.position)
        .collect();
    for position in pins {
        doc.labels.push(NetLabel {
            name: name.into(),
            position,
        });
    }
}

fn part(
    id: &str,
    designator: &str,
    kind: PartKind,
    position: [i32; 2],
    value: (&str, f64),
) -> Part {
    Part {
        id: id.into(),
        connect: Default::default(),
        designator: designator.into(),
        kind,
        symbol: String::new(),
        position,
        rotation: 0,
        mirror: false,
        preset: None,
        parameters: [(value.0.to_string(), value.1)].into_iter().collect(),
    }
}

/// A generated sheet, made degenerate by `case % 8`.
fn sheet(case: u64) -> Document {
    let mut rng = Rng(case.wrapping_mul(0x2545_f491_4f6c_dd1d) ^ 0x1234_5678);
    let mut doc = biasline::generate::random_sheet(case, 10 + rng.below(20));
    let find = |doc: &Document, f: &dyn Fn(PartKind) -> bool| -> Vec<usize> {
        (0..doc.parts.len())
            .filter(|&i| f(doc.parts[i].kind))
            .collect()
    };
    // Name a signal source and a load when there are candidates.
    let sources = find(&doc, &|k| k == PartKind::SignalSource);
    let resistors = find(&doc, &|k| k == PartKind::Resistor);
    if !sources.is_empty() && !resistors.is_empty() {
        doc.signal.source = Some(
            doc.parts[sources[rng.below(sources.len())]]
                .designator
                .clone(),
        );
        doc.signal.load = Some(
            doc.parts[resistors[rng.below(resistors.len())]]
                .designator
                .clone(),
        );
    }
    match case % 8 {
        1 => {
            let two = find(&doc, &|k| k.pin_names().len() == 2);
            if !two.is_empty() {
                let i = two[rng.below(two.len())];
                short_part(&mut doc, i, "shorted");
            }
        }
        2 => {
            let q = find(&doc, &|k| k.is_transistor());
            if !q.is_empty() {
                let i = q[rng.below(q.len())];
                short_part(&mut doc, i, "one_net");
            }
        }
        3 => {
            // A floating island: two resistors joined to each other only.
            for (k, x) in [(0, 9000), (1, 9010)] {
                let p = part(
                    &format!("island{k}"),
                    &format!("RISL{k}"),
                    PartKind::Resistor,
                    [x, 9000],
                    ("resistance", 1e3),
                );
                for (name, dy) in [("island_a", -2), ("island_b", 2)] {
                    doc.labels.push(NetLabel {
                        name: name.into(),
                        position: [x, 9000 + dy],
                    });
                }
                doc.parts.push(p);
            }
        }
        4 | 5 => {
            let factor = if case % 8 == 4 { 1e12 } else { 1e-12 };
            for p in &mut doc.parts {
                for (k, v) in p.parameters.iter_mut() {
                    if k != "frequency" && rng.below(2) == 0 {
                        *v *= factor;
                    }
                }
            }
        }
        6 => {
            doc.signal.source = Some("NOSUCH".into());
        }
        7 => {
            doc.spread.runs = 0;
            if let Some(&i) = resistors.first() {
                doc.parts[i].parameters.insert("resistance".into(), 1e-300);
            }
        }
        _ => {}
    }
    doc
}

/// Words that betray a number that is not a number.
fn bad_number(text: &str) -> Option<&str> {
    text.split(|c: char| c.is_whitespace() || matches!(c, ',' | ';' | '(' | ')' | ':' | '"'))
        .find(|w| {
            let w = w.trim_start_matches(['-', '−', '+']);
            w == "NaN" || w == "inf" || w.starts_with("NaN") || w == "∞"
        })
}

fn run_one(dir: &Path, case: u64) -> Result<(), String> {
    let doc = sheet(case);
    let path: PathBuf = dir.join(format!("case-{case}.json"));
    document::save_file(&doc, &path).map_err(|e| format!("save: {e}"))?;
    let file = path.to_string_lossy().into_owned();
    let commands: [&[&str]; 7] = [
        &["check", &file],
        &["analyze", &file],
        &["analyze", &file, "--json"],
        &["sweep", &file, "--csv"],
        &["noise", &file, "--band", "20..20k", "--at", "1k"],
        &["spread", &file, "--runs", "10", "--threads", "1"],
        &["export", &file, "--table", "bias"],
    ];
    for command in &commands {
        let r = ran(command);
        if !(0..=2).contains(&r.code) {
            return Err(format!("{command:?}: exit code {} {}", r.code, r.message));
        }
        if r.code == 2 && r.message.trim().is_empty() && r.out.trim().is_empty() {
            return Err(format!("{command:?}: exit 2 without a message"));
        }
        if let Some(w) = bad_number(&r.message) {
            return Err(format!("{command:?}: {w} in the message {}", r.message));
        }
        if let Some(w) = bad_number(&r.out) {
            return Err(format!("{command:?}: {w} in the output:\n{}", r.out));
        }
    }
    // Export through the library: scene and SVG.
    std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        use biasline::render::svg;
        use biasline::scene::{self, LayerSet, SceneOptions};
        let nl = biasline::netlist::connect(&doc);
        let ann = biasline::results::annotations_for(&doc);
        let s = scene::build(&doc, &nl, &ann, &SceneOptions::default());
        let opts = svg::SvgOptions {
            embed_font: false,
            ..svg::SvgOptions::default()
        };
        svg::render(&s, LayerSet::all(), &opts).map(|_| ())
    }))
    .map_err(|_| "panic in the export".to_string())?
    .map_err(|e| format!("export: {e}"))?;
    let _ = std::fs::remove_file(&path);
    Ok(())
}

fn run_cases(count: u64) {
    let dir = std::env::temp_dir().join(format!("biasline-property-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    // Panics are caught and reported with their case; keep the default hook quiet.
    let hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(|_| {}));
    let mut failures = Vec::new();
    for case in 0..count {
        if let Err(e) = run_one(&dir, case) {
            failures.push(format!("case {case}: {e}"));
            if failures.len() >= 5 {
                break;
            }
        }
    }
    std::panic::set_hook(hook);
    let _ = std::fs::remove_dir_all(&dir);
    // invariant: no input ends in a panic, a NaN or an exit code outside 0–2.
    assert!(failures.is_empty(), "{}", failures.join("\n\n"));
}

/// Case count: BIASLINE_PROPERTY_CASES when set, else `default`.
fn cases(default: u64) -> u64 {
    std::env::var("BIASLINE_PROPERTY_CASES")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(default)
}

#[test]
fn random_and_degenerate_sheets_end_in_a_result_or_a_message() {
    run_cases(cases(500));
}

#[test]
#[ignore]
fn ten_thousand_random_sheets() {
    run_cases(cases(10_000));
}
