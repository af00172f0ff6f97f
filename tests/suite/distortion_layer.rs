//! The optional `distortion` layer: a line on each stage card with the THD
//! at the stage's output for the project's own sine, and on the first card
//! the level where the chain's THD reaches 1 %. The figures are the ones
//! `transient --json` and `transient --clip --json` print (one source of
//! truth), the cards stay apart, and the layer is off by default.

use crate::scene_common;
use biasline::document::{self, Document};
use biasline::netlist;
use biasline::render::svg;
use biasline::results::layers as layer_adapters;
use biasline::scene::{self, Layer, LayerSet, SceneOptions};
use serde_json::Value;
use std::process::Command;

const PREAMP: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/projects/two-stage-preamp.json"
);

fn load(path: &str) -> Document {
    document::load_file(std::path::Path::new(path)).unwrap()
}

fn json_of(args: &[&str]) -> Value {
    let out = Command::new(env!("CARGO_BIN_EXE_biasline"))
        .args(args)
        .output()
        .unwrap();
    assert!(
        out.status.code().is_some_and(|c| c <= 1),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(1e-300)
}

#[test]
fn the_card_figures_are_the_transient_commands_figures() {
    let doc = load(PREAMP);
    let d = layer_adapters::stage_distortion(&doc).unwrap();
    let steady = json_of(&["transient", PREAMP, "--json"]);
    let stages = steady["distortion"]["stages"].as_array().unwrap();
    assert!(stages.len() >= 2, "the preamp has two stages");
    for s in stages {
        let t = s["transistor"].as_str().unwrap();
        let card = d
            .get(t)
            .unwrap_or_else(|| panic!("no distortion line for {t}"));
        // invariant: one source of truth — the card shows the command's own numbers.
        let thd = s["spectrum"]["thd"].as_f64().unwrap();
        let peak = s["spectrum"]["amplitude"][0].as_f64().unwrap();
        assert!(rel(card.thd, thd) < 1e-12, "{t}: THD {} vs {thd}", card.thd);
        assert!(rel(card.output_peak, peak) < 1e-12, "{t}: peak");
        let amp = steady["distortion"]["amplitude"].as_f64().unwrap();
        assert!(rel(card.source_amplitude, amp) < 1e-12);
    }
    let clip = json_of(&["transient", PREAMP, "--clip", "--json"]);
    let first = &d[stages[0]["transistor"].as_str().unwrap()];
    let chain = first
        .chain_clip
        .as_ref()
        .expect("the first card names the clip level");
    // invariant: one source of truth — the clip line is `transient --clip`.
    assert!(
        rel(
            chain.amplitude.unwrap(),
            clip["amplitude"].as_f64().unwrap()
        ) < 1e-12
    );
    assert_eq!(chain.limited_by, clip["limited_by"].as_str().unwrap());
    // invariant: only the input stage's card carries the chain's clip level.
    for s in &stages[1..] {
        assert!(d[s["transistor"].as_str().unwrap()].chain_clip.is_none());
    }
    // invariant: THD rises with level (a memoryless curvature's harmonics grow
    // as a power of the amplitude), so below the clip level the output's THD
    // is below the limit, and above it, above.
    let out_thd = steady["distortion"]["output"]["spectrum"]["thd"]
        .as_f64()
        .unwrap();
    let below = first.source_amplitude < chain.amplitude.unwrap();
    assert_eq!(
        out_thd < chain.thd_limit,
        below,
        "source {} V, clip level {} V, output THD {out_thd}",
        first.source_amplitude,
        chain.amplitude.unwrap()
    );
}

#[test]
fn the_layer_draws_a_line_on_every_card_and_the_cards_stay_apart() {
    let mut doc = load(PREAMP);
    doc.layout = Default::default();
    let nl = netlist::connect(&doc);
    let mut ann = biasline::results::annotations_for(&doc);
    let why = layer_adapters::add_optional(&doc, &mut ann, false, false, true);
    assert!(why.is_empty(), "{why:?}");
    let opts = SceneOptions {
        layers: LayerSet::standard().with(Layer::Distortion),
        ..SceneOptions::default()
    };
    let s = scene::build(&doc, &nl, &ann, &opts);
    // invariant: no two annotation boxes overlap with the longer cards.
    scene_common::assert_annotations_apart("two-stage preamp", &s);
    let text = svg::render(&s, LayerSet::all(), &svg::SvgOptions::default()).unwrap();
    let lines = text.matches("at the output").count();
    // invariant: one distortion line per stage card.
    assert_eq!(lines, ann.stages.len(), "one line per card");
    assert!(text.contains("chain reaches THD 1.000 %"), "the clip line");
    assert!(
        ann.title
            .assumptions
            .iter()
            .any(|a| a.starts_with("stage distortion:")),
        "the title block says what the figures are"
    );
    // common practice (no source): costly extra layers are drawn only when asked for.
    assert!(!SceneOptions::default().layers.contains(Layer::Distortion));
    let s = scene::build(&doc, &nl, &ann, &SceneOptions::default());
    let text = svg::render(&s, LayerSet::all(), &svg::SvgOptions::default()).unwrap();
    assert!(!text.contains("at the output"), "drawn with the layer off");
}

#[test]
fn without_a_signal_source_the_layer_says_why_and_draws_nothing() {
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/projects");
    let mut seen = 0;
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        // The demo files (projects/connections/ holds the typed-in forms).
        if path.extension().is_none_or(|e| e != "json") {
            continue;
        }
        let doc = document::load_file(&path).unwrap();
        if doc.signal.source.is_some() {
            continue;
        }
        seen += 1;
        let mut ann = biasline::results::annotations_for(&doc);
        let why = layer_adapters::add_optional(&doc, &mut ann, false, false, true);
        // invariant: no sine, no distortion figures — and the reason is given once.
        assert!(ann.stage_distortion.is_empty());
        assert_eq!(why.len(), 1, "{why:?}");
        assert!(why[0].starts_with("no distortion figures: "), "{why:?}");
    }
    assert!(seen > 0, "a demo without a signal source exists");
}

#[test]
fn export_takes_the_layer_by_its_word() {
    let dir = std::env::temp_dir().join(format!("biasline-distortion-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let out = dir.join("preamp.svg");
    let run = Command::new(env!("CARGO_BIN_EXE_biasline"))
        .args(["export", PREAMP, "-o"])
        .arg(&out)
        .args(["--layers", "schematic,voltages,currents,stages,distortion"])
        .output()
        .unwrap();
    assert!(
        run.status.code().is_some_and(|c| c <= 1),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let svg = std::fs::read_to_string(&out).unwrap();
    // invariant: the word on the command line selects the layer.
    assert!(svg.contains("at the output"));
    let _ = std::fs::remove_dir_all(&dir);
}
