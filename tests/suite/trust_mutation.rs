//! A mutation pass over the demo projects through every command that reads
//! a project (check, nets, analyze, stability, sweep, noise, spread,
//! transient, snap, report, export SVG/PNG and a table): each mutant changes
//! one string or number of a demo; the pass fails on a panic or a killed
//! process, a run past its time bound (a hang), a command that exits 2 but
//! wrote its output, a written project that does not read back, "NaN" or
//! "inf" printed as a figure, a number printed with more than 24 digits, or
//! markup from user text in a page.
//!
//! Ignored by default (minutes): `cargo test --release --test suite trust_mutation -- --ignored --nocapture`
//! `BIASLINE_MUTANTS=N` sets the mutants per demo (default 12);
//! `BIASLINE_MUTANT_FROM=K` starts each demo's mutants at the K-th (to split
//! one long pass over several runs and still cover distinct mutants).

// invariant: the contract of every writing command — exit 2 writes nothing,
// a written project reads back, no panic or killed process, no markup from
// user text in a page — holds on every mutant.
use crate::cli_common;

use biasline::document::{self, Document};
use cli_common::{longest_digit_run, non_finite_word, root, text};
use std::path::Path;
use std::process::Command;

/// A small deterministic generator (SplitMix64; Steele, Lea and Flood,
/// "Fast splittable pseudorandom number generators", OOPSLA 2014).
struct Mix(u64);
impl Mix {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    fn pick<T: Copy>(&mut self, xs: &[T]) -> T {
        xs[(self.next() % xs.len() as u64) as usize]
    }
}

const STRINGS: [&str; 5] = [
    "<script>x</script>",
    "\" onmouseover=\"x",
    "&amp;<b>'",
    "]]><!--",
    "\u{202e}\u{0301}Ω",
];
const NUMBERS: [f64; 10] = [
    1e-307, 1e-300, 1e300, 0.0, -1.0, 5e-324, 1e15, 1e-15, 3.3, 1e9,
];

/// One mutant of `doc`: a string or a number changed.
fn mutate(doc: &mut Document, m: &mut Mix) -> String {
    match m.next() % 6 {
        0 => {
            let s = m.pick(&STRINGS);
            doc.title = s.into();
            format!("title {s:?}")
        }
        1 => {
            let s = m.pick(&STRINGS);
            let k = (m.next() % doc.parts.len() as u64) as usize;
            if doc.parts[k].designator.is_empty() {
                return "nothing".into();
            }
            let old = doc.parts[k].designator.clone();
            let new = format!("{old}{s}");
            for r in [&mut doc.signal.source, &mut doc.signal.load]
                .into_iter()
                .flatten()
            {
                if *r == old {
                    *r = new.clone();
                }
            }
            doc.parts[k].designator = new;
            format!("designator {old} + {s:?}")
        }
        2 if !doc.labels.is_empty() => {
            let s = m.pick(&STRINGS);
            let k = (m.next() % doc.labels.len() as u64) as usize;
            doc.labels[k].name.push_str(s);
            format!("label {k} + {s:?}")
        }
        3 | 4 => {
            let k = (m.next() % doc.parts.len() as u64) as usize;
            let keys: Vec<String> = doc.parts[k].parameters.keys().cloned().collect();
            if keys.is_empty() {
                return "nothing".into();
            }
            let key = keys[(m.next() % keys.len() as u64) as usize].clone();
            let v = m.pick(&NUMBERS);
            doc.parts[k].parameters.insert(key.clone(), v);
            format!("{}.{key} = {v:e}", doc.parts[k].designator)
        }
        _ => {
            let k = (m.next() % doc.parts.len() as u64) as usize;
            let c = m.pick(&[1_000_001, -999_999, 40_000, i32::MAX]);
            doc.parts[k].position[0] = c;
            format!("{} at x = {c}", doc.parts[k].designator)
        }
    }
}

/// The time one command may take on one mutant before it counts as a hang
/// (the slowest demo command, `spread` with its report, takes about 2 s on
/// the 2-core machine under load).
const HANG: std::time::Duration = std::time::Duration::from_secs(120);

/// Runs the program; `None` for the exit code when it was killed, and
/// `hung` when it outlived `HANG` (then it is killed by its own id).
fn run(args: &[&str]) -> (Option<i32>, String, String, bool) {
    use std::io::Read;
    let mut child = Command::new(env!("CARGO_BIN_EXE_biasline"))
        .args(args)
        .current_dir(root())
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    // Drain both pipes on their own threads so a long output cannot block
    // the child while this thread waits for it.
    let mut out = child.stdout.take().unwrap();
    let mut err = child.stderr.take().unwrap();
    let t_out = std::thread::spawn(move || {
        let mut b = Vec::new();
        let _ = out.read_to_end(&mut b);
        b
    });
    let t_err = std::thread::spawn(move || {
        let mut b = Vec::new();
        let _ = err.read_to_end(&mut b);
        b
    });
    let start = std::time::Instant::now();
    let mut hung = false;
    let status = loop {
        if let Some(s) = child.try_wait().unwrap() {
            break s;
        }
        if start.elapsed() > HANG {
            hung = true;
            let _ = child.kill();
            break child.wait().unwrap();
        }
        std::thread::sleep(std::time::Duration::from_millis(5));
    };
    let o = t_out.join().unwrap();
    let e = t_err.join().unwrap();
    (status.code(), text(&o), text(&e), hung)
}

#[test]
#[ignore]
fn mutation_pass_over_the_demos() {
    let per: usize = std::env::var("BIASLINE_MUTANTS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(12);
    let from: usize = std::env::var("BIASLINE_MUTANT_FROM")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(0);
    let dir = std::env::temp_dir().join(format!("biasline-mutants-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let p = |f: &Path| f.to_str().unwrap().to_string();
    let mut found = Vec::new();
    let mut runs = 0;
    // The demos, and the circuits typed as connections (the long-tailed
    // pair, the class-AB output: the block readers' own circuits).
    let mut demos: Vec<_> = ["projects", "projects/connections"]
        .iter()
        .flat_map(|d| std::fs::read_dir(root().join(d)).unwrap().flatten())
        .map(|e| e.path())
        .filter(|p| p.extension().is_some_and(|e| e == "json"))
        .collect();
    demos.sort();
    // Round by round over the demos (each demo's mutants are the same as
    // demo by demo: one generator per demo), so a pass stopped early has
    // covered every demo alike; a progress line every round.
    let bases: Vec<Document> = demos
        .iter()
        .map(|d| document::load_file(d).unwrap())
        .collect();
    let mut mixes: Vec<Mix> = (0..demos.len()).map(|d| Mix(d as u64 + 1)).collect();
    let mut mutants = 0;
    for k in 0..from + per {
        if k > from && (k - from).is_multiple_of(10) {
            println!(
                "progress: {mutants} mutants, {runs} runs, {} finding(s) so far",
                found.len()
            );
        }
        for (d, demo) in demos.iter().enumerate() {
            let mut doc = bases[d].clone();
            let what = mutate(&mut doc, &mut mixes[d]);
            if k < from {
                continue;
            }
            mutants += 1;
            let file = dir.join("m.json");
            std::fs::write(&file, document::to_json(&doc)).unwrap();
            let outs = ["o.html", "o.svg", "o.png", "o.json", "o.csv"].map(|n| dir.join(n));
            for o in &outs {
                let _ = std::fs::remove_file(o);
            }
            let f = p(&file);
            let cases: Vec<(Vec<String>, Option<&Path>)> = vec![
                (vec!["check".into(), f.clone()], None),
                (vec!["nets".into(), f.clone()], None),
                (vec!["analyze".into(), f.clone()], None),
                (vec!["stability".into(), f.clone(), "--json".into()], None),
                (vec!["sweep".into(), f.clone(), "--csv".into()], None),
                (vec!["noise".into(), f.clone()], None),
                (vec!["transient".into(), f.clone()], None),
                (
                    vec!["spread".into(), f.clone(), "--runs".into(), "20".into()],
                    None,
                ),
                (
                    vec!["snap".into(), f.clone(), "-o".into(), p(&outs[3])],
                    Some(&outs[3]),
                ),
                (
                    vec![
                        "report".into(),
                        f.clone(),
                        "-o".into(),
                        p(&outs[0]),
                        "--no-spread".into(),
                    ],
                    Some(&outs[0]),
                ),
                (
                    vec!["export".into(), f.clone(), "-o".into(), p(&outs[1])],
                    Some(&outs[1]),
                ),
                (
                    vec!["export".into(), f.clone(), "-o".into(), p(&outs[2])],
                    Some(&outs[2]),
                ),
                (
                    vec![
                        "export".into(),
                        f.clone(),
                        "--table".into(),
                        "stages".into(),
                        "-o".into(),
                        p(&outs[4]),
                    ],
                    Some(&outs[4]),
                ),
            ];
            for (args, out) in cases {
                let before = found.len();
                let a: Vec<&str> = args.iter().map(String::as_str).collect();
                let (code, stdout, stderr, hung) = run(&a);
                runs += 1;
                let name = demo.file_name().unwrap().to_string_lossy();
                let tag = format!("{name} #{k} ({what}) {}", a[0]);
                if hung {
                    found.push(format!("{tag}: still running after {HANG:?}"));
                }
                match code {
                    None | Some(101) => found.push(format!("{tag}: crashed {code:?}: {stderr}")),
                    Some(2) if out.is_some_and(Path::exists) => {
                        found.push(format!("{tag}: exit 2 but wrote its output"))
                    }
                    _ => {}
                }
                if non_finite_word(&stdout) {
                    found.push(format!("{tag}: NaN or inf printed"));
                }
                // A figure printed in plain notation past any readable size
                // (the longest honest run is a seed or a count: under 24).
                if a[0] != "stability" && longest_digit_run(&stdout) > 24 {
                    found.push(format!("{tag}: a number of more than 24 digits printed"));
                }
                if let Some(o) = out.filter(|o| o.exists()) {
                    if o.extension().is_some_and(|e| e == "json") {
                        let t = std::fs::read_to_string(o).unwrap();
                        if let Err(e) = document::load_str(&t) {
                            found.push(format!(
                                "{tag}: wrote a project that does not read back: {e}"
                            ));
                        }
                    }
                    if o.extension().is_some_and(|e| e == "html") {
                        let t = std::fs::read_to_string(o).unwrap();
                        let h = scraper::Html::parse_document(&t);
                        for bad in ["script", "b", "[onmouseover]"] {
                            if h.select(&scraper::Selector::parse(bad).unwrap())
                                .next()
                                .is_some()
                            {
                                found.push(format!("{tag}: `{bad}` in the page"));
                            }
                        }
                    }
                }
                // Each finding as it is made (a long pass stopped early still
                // says what it found).
                for f in &found[before..] {
                    println!("finding: {f}");
                }
            }
        }
    }
    println!(
        "{mutants} mutants, {runs} runs over {} demos, {} finding(s)",
        demos.len(),
        found.len()
    );
    for f in &found {
        println!("  {f}");
    }
    let _ = std::fs::remove_dir_all(&dir);
    assert!(found.is_empty(), "{} finding(s)", found.len());
}

/// Writes a generated chain to `BIASLINE_CHAIN_OUT` (stages from
/// `BIASLINE_CHAIN_STAGES`) for comparing builds by hand; nothing otherwise.
#[test]
#[ignore]
fn write_a_generated_chain() {
    let Some(out) = std::env::var_os("BIASLINE_CHAIN_OUT") else {
        return;
    };
    let n = std::env::var("BIASLINE_CHAIN_STAGES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(150);
    std::fs::write(
        out,
        document::to_json(&biasline::generate::transistor_chain(n)),
    )
    .unwrap();
}
