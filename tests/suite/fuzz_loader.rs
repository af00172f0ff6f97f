//! The loader never panics: random bytes, mutated demo files and the seed
//! corpus in tests/corpus. Whatever it accepts also connects, checks and
//! survives a save/load round trip.

use biasline::document::{load_str, to_json};
use biasline::netlist;
use proptest::prelude::*;
use std::path::Path;

/// Load; on success also connect, check and round-trip. Returns the error text, if any.
fn exercise(text: &str) -> Option<String> {
    match load_str(text) {
        Ok(doc) => {
            let nl = netlist::connect(&doc);
            let _ = netlist::check(&doc, &nl);
            // invariant: an accepted document reloads as itself.
            let again = load_str(&to_json(&doc)).expect("a saved document reloads");
            assert_eq!(again, doc);
            None
        }
        Err(e) => {
            let m = e.to_string();
            // invariant: every refusal says something.
            assert!(!m.trim().is_empty());
            Some(m)
        }
    }
}

fn demos() -> Vec<String> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    [
        "projects/common-emitter.json",
        "projects/two-stage-preamp.json",
    ]
    .iter()
    .map(|p| std::fs::read_to_string(root.join(p)).unwrap())
    .collect()
}

/// Replace the `k`-th run of digits with `with`.
fn change_number(text: &str, k: usize, with: &str) -> String {
    let bytes = text.as_bytes();
    let mut runs = Vec::new();
    let mut i = 0;
    while i < bytes.len() {
        if bytes[i].is_ascii_digit() {
            let start = i;
            while i < bytes.len() && bytes[i].is_ascii_digit() {
                i += 1;
            }
            runs.push((start, i));
        } else {
            i += 1;
        }
    }
    if runs.is_empty() {
        return text.to_string();
    }
    let (a, b) = runs[k % runs.len()];
    format!("{}{}{}", &text[..a], with, &text[b..])
}

/// The nearest char boundary at or below `i`.
fn floor_boundary(s: &str, i: usize) -> usize {
    let mut i = i.min(s.len());
    while !s.is_char_boundary(i) {
        i -= 1;
    }
    i
}

const NUMBERS: &[&str] = &[
    "0",
    "-1",
    "1e309",
    "-1e309",
    "99999999999999999999",
    "2147483648",
    "0.5",
    "1e-320",
    "-0",
    "NaN",
    "45",
    "",
];

const INSERTS: &[&str] = &[
    "{", "}", "[", "]", ",", ":", "\"", "\\", "null", "true", "1", "-", "e", "\u{0}", "\u{feff}",
    "µ", "\n",
];

proptest! {
    #![proptest_config(ProptestConfig { cases: 400, ..ProptestConfig::default() })]

    #[test]
    fn random_bytes_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..512)) {
        // invariant: errors are values — no input panics the loader.
        exercise(&String::from_utf8_lossy(&bytes));
    }

    #[test]
    fn random_json_shapes_never_panic(
        head in prop::sample::select(vec![
            r#"{"format": "biasline-project", "version": 1, "title": "t", "parts": ["#,
            r#"{"format": "biasline-project", "version": 1, "title": "t", "wires": ["#,
            r#"{"format": "biasline-project", "version": 1, "title": "t", "labels": ["#,
        ]),
        body in "[\\[\\]{}\",:0-9a-z_ -]{0,80}",
    ) {
        // invariant: no input panics the loader, even half-valid JSON.
        exercise(&format!("{head}{body}]}}"));
    }

    #[test]
    fn truncated_demos_never_panic(which in 0usize..2, cut in 0usize..30_000) {
        // invariant: a file cut short is refused with a message (or, cut at the very end, loads).
        let text = &demos()[which];
        let cut = floor_boundary(text, cut % text.len());
        let r = exercise(&text[..cut]);
        if cut + 2 < text.trim_end().len() {
            prop_assert!(r.is_some(), "a truncated file loaded");
        }
    }

    #[test]
    fn byte_flips_never_panic(which in 0usize..2, at in 0usize..30_000, xor in 1u8..=255) {
        let mut bytes = demos()[which].clone().into_bytes();
        let at = at % bytes.len();
        bytes[at] ^= xor;
        exercise(&String::from_utf8_lossy(&bytes));
    }

    #[test]
    fn deletions_and_insertions_never_panic(
        which in 0usize..2,
        at in 0usize..30_000,
        len in 0usize..40,
        insert in prop::sample::select(INSERTS.to_vec()),
    ) {
        let text = &demos()[which];
        let a = floor_boundary(text, at % text.len());
        let b = floor_boundary(text, a + len);
        exercise(&format!("{}{}", &text[..a], &text[b..]));
        exercise(&format!("{}{}{}", &text[..a], insert, &text[a..]));
    }

    #[test]
    fn changed_numbers_never_panic(
        which in 0usize..2,
        k in 0usize..2_000,
        with in prop::sample::select(NUMBERS.to_vec()),
    ) {
        exercise(&change_number(&demos()[which], k, with));
    }
}

#[test]
fn the_corpus_never_panics_and_each_seed_is_judged() {
    // invariant: each seed of the corpus gives a result, never a panic; the tricky ones are refused
    // or accepted as stated.
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/corpus");
    let mut seen = 0;
    let mut results = std::collections::BTreeMap::new();
    for entry in std::fs::read_dir(&dir).unwrap() {
        let path = entry.unwrap().path();
        let bytes = std::fs::read(&path).unwrap();
        let name = path.file_name().unwrap().to_string_lossy().into_owned();
        results.insert(name, exercise(&String::from_utf8_lossy(&bytes)));
        seen += 1;
    }
    assert!(seen >= 10);
    let refused = |name: &str, fragment: &str| {
        let r = results[name].as_deref();
        assert!(
            r.is_some_and(|m| m.contains(fragment)),
            "{name}: {r:?} lacks {fragment:?}"
        );
    };
    refused("empty.json", "line 1, column 0: EOF while parsing");
    refused("null.json", "expected a JSON object");
    refused("deep-nesting.json", "recursion limit exceeded");
    refused("huge-numbers.json", "version: expected a whole number");
    refused("overflow-float.json", "number out of range");
    refused(
        "position-too-big.json",
        "part 1 (R1): invalid value: integer `2147483648`",
    );
    refused("duplicate-keys.json", "format version 2");
    // Coordinates past the stated limit (document::geometry_limits, issue 18):
    // refused at load, naming the part, since drawings are sized by them.
    refused(
        "extreme-coordinates.json",
        "part 1 (R1): its position (2147483647, -2147483648) lies outside",
    );
    refused("wrong-types.json", "parts: expected a list");
    for accepted in [
        "bom.json",
        "unicode-names.json",
        "zero-length-wires.json",
        "every-kind-on-one-point.json",
    ] {
        assert_eq!(results[accepted], None, "{accepted}");
    }
}
