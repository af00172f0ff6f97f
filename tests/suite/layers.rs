//! The optional `spread` and `noise` layers and the noise density plot: on
//! every demo (stored layout stripped) with both layers on, annotations keep
//! apart and off the symbols, every range and every noise line is in the
//! SVG; the layers are off by default; the noise plot decodes with ink.

use crate::scene_common;
use biasline::document::{self, Document};
use biasline::netlist;
use biasline::render::{noise_plot, png, svg};
use biasline::results::layers as layer_adapters;
use biasline::scene::{self, Annotations, Layer, LayerSet, Placement, Primitive, SceneOptions};
use std::process::Command;

fn demos() -> Vec<(String, Document)> {
    let mut out = Vec::new();
    for entry in std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/projects")).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "json") {
            let mut doc = document::load_file(&path).unwrap();
            doc.layout = Default::default();
            out.push((path.display().to_string(), doc));
        }
    }
    assert!(out.len() >= 2, "the demos are in projects/");
    out
}

fn preamp() -> Document {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/two-stage-preamp.json"
    );
    document::load_file(std::path::Path::new(path)).unwrap()
}

fn annotated(doc: &Document) -> Annotations {
    let mut ann = biasline::results::annotations_for(doc);
    layer_adapters::add_optional(doc, &mut ann, true, true, false);
    ann
}

/// Whether a text was put there by the `spread` or `noise` layer.
fn ours(t: &str) -> bool {
    t.contains(" … ") || t.contains("/√Hz") || t.starts_with("chain NF")
}

fn with_both() -> SceneOptions {
    SceneOptions {
        layers: LayerSet::standard().with(Layer::Spread).with(Layer::Noise),
        ..SceneOptions::default()
    }
}

#[test]
fn both_layers_on_every_demo_keep_annotations_apart_and_drawn() {
    let mut ranges_seen = 0;
    let mut noise_seen = 0;
    for (name, doc) in demos() {
        let nl = netlist::connect(&doc);
        let ann = annotated(&doc);
        let s = scene::build(&doc, &nl, &ann, &with_both());
        let placed: Vec<_> = s
            .annotations
            .iter()
            .filter(|a| a.placement != Placement::User)
            .collect();
        // invariant: no two annotation boxes overlap (the taller two-line tags and longer cards included).
        scene_common::assert_annotations_apart(&name, &s);
        // invariant: no annotation lies on a symbol body.
        for a in &placed {
            for (item, body) in &s.bodies {
                assert!(
                    !a.rect.overlaps(body),
                    "{name}: {} lies on the body of {item:?}",
                    a.key
                );
            }
        }
        // invariant: no annotation crosses a wire (the taller tags still sit beside their nets).
        for w in &doc.wires {
            for seg in w.points.windows(2) {
                let (p, q) = (
                    [seg[0][0] as f64, seg[0][1] as f64],
                    [seg[1][0] as f64, seg[1][1] as f64],
                );
                for a in &placed {
                    assert!(
                        !a.rect.crosses_segment(p, q),
                        "{name}: {} crosses the wire {p:?}–{q:?}",
                        a.key
                    );
                }
            }
        }
        // invariant: a tag's or card's texts (the range and noise lines too) lie inside its box and apart.
        for a in s
            .annotations
            .iter()
            .filter(|a| matches!(a.layer, Layer::Voltages | Layer::Stages))
        {
            let texts: Vec<_> = s
                .elements
                .iter()
                .filter(|e| e.layer == a.layer && e.item.as_ref() == Some(&a.item))
                .filter_map(|e| match &e.primitive {
                    Primitive::Text(t) => Some((t.bounds(), ours(&t.text))),
                    _ => None,
                })
                .collect();
            for (t, _) in &texts {
                assert!(
                    t.min[0] >= a.rect.min[0] - 1e-6
                        && t.max[0] <= a.rect.max[0] + 1e-6
                        && t.min[1] >= a.rect.min[1] - 1e-6
                        && t.max[1] <= a.rect.max[1] + 1e-6,
                    "{name}: text {t:?} outside {} {:?}",
                    a.key,
                    a.rect
                );
            }
            // (Pairs of the base tag's or card's own texts are the scene
            // tests' business; here every pair with a range or noise text.)
            for (i, (x, xo)) in texts.iter().enumerate() {
                for (y, yo) in &texts[i + 1..] {
                    if !(*xo || *yo) {
                        continue;
                    }
                    assert!(
                        x.inflate(-0.06).overlap_area(&y.inflate(-0.06)) == 0.0,
                        "{name}: texts of {} overlap {x:?} {y:?}",
                        a.key
                    );
                }
            }
        }
        let text = svg::render(&s, LayerSet::all(), &svg::SvgOptions::default()).unwrap();
        // invariant: every net with a known range and a voltage tag shows `min … max` in the drawing.
        for (id, net) in nl.nets.iter().enumerate() {
            if Some(id) == nl.ground || !ann.net_voltages.contains_key(&net.name) {
                continue;
            }
            if let Some(&(lo, hi)) = ann.voltage_ranges.get(&net.name) {
                let r = scene::range_text(lo, hi);
                assert!(
                    text.contains(&r),
                    "{name}: net {} lacks its range {r}",
                    net.name
                );
                ranges_seen += 1;
            }
        }
        // invariant: each stage card with a noise result carries its noise line.
        for card in &ann.stages {
            let Some(n) = ann.stage_noise.get(&card.transistor) else {
                continue;
            };
            let first = &scene::noise_lines(n)[0];
            assert!(
                text.contains(first.as_str()),
                "{name}: card {} lacks \"{first}\"",
                card.transistor
            );
            noise_seen += 1;
        }
        // invariant: the noise analysis recognises the same stages the cards show.
        if !ann.stage_noise.is_empty() {
            for card in &ann.stages {
                assert!(
                    ann.stage_noise.contains_key(&card.transistor),
                    "{name}: stage {} has a card but no noise line",
                    card.transistor
                );
            }
        }
    }
    // invariant: the demos have biased transistors, so some ranges and noise lines exist to check.
    assert!(
        ranges_seen > 0 && noise_seen > 0,
        "{ranges_seen} ranges, {noise_seen} noise lines"
    );
}

#[test]
fn worst_case_range_contains_the_nominal_voltage() {
    for (name, doc) in demos() {
        let ann = annotated(&doc);
        for (net, &(lo, hi)) in &ann.voltage_ranges {
            let Some(&v) = ann.net_voltages.get(net) else {
                continue;
            };
            // invariant: the nominal design is one point of the spread, so its corners bracket it.
            let slack = 1e-6 + 1e-6 * v.abs();
            assert!(
                lo <= v + slack && v <= hi + slack && lo < hi,
                "{name}: V({net}) = {v} outside {lo} … {hi}"
            );
        }
    }
}

#[test]
fn chain_noise_figure_is_on_the_first_card_only_and_not_below_0_db() {
    let doc = preamp();
    let ann = annotated(&doc);
    assert!(ann.stages.len() >= 2, "the preamp has two stages");
    let first = &ann.stages[0].transistor;
    for (t, n) in &ann.stage_noise {
        // invariant: only the input stage's card carries the chain figure.
        assert_eq!(n.chain_figure.is_some(), t == first, "stage {t}");
        // invariant: noise densities are positive (powers of independent sources add).
        assert!(
            n.voltage_density > 0.0 && n.current_density > 0.0,
            "stage {t}"
        );
        if let Some(c) = &n.chain_figure {
            // source: Friis (1944), noise factor F = SNR_in/SNR_out ≥ 1, so NF ≥ 0 dB.
            assert!(c.figure_db >= 0.0, "NF {} dB", c.figure_db);
            assert!(c.source_ohms > 0.0);
        }
    }
}

#[test]
fn optional_layers_are_off_by_default() {
    let doc = preamp();
    let nl = netlist::connect(&doc);
    let ann = annotated(&doc);
    assert!(!ann.voltage_ranges.is_empty() && !ann.stage_noise.is_empty());
    // common practice (no source): costly extra layers are drawn only when asked for.
    assert!(!SceneOptions::default().layers.contains(Layer::Spread));
    assert!(!SceneOptions::default().layers.contains(Layer::Noise));
    let s = scene::build(&doc, &nl, &ann, &SceneOptions::default());
    let text = svg::render(&s, LayerSet::all(), &svg::SvgOptions::default()).unwrap();
    assert!(
        !text.contains(" … "),
        "a range is drawn with the spread layer off"
    );
    assert!(
        !text.contains("noise at "),
        "a noise line is drawn with the noise layer off"
    );
}

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_biasline"))
}

#[test]
fn noise_plot_from_the_noise_csv_decodes_and_has_ink() {
    let dir = std::env::temp_dir().join(format!("biasline-layers-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let project = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/two-stage-preamp.json"
    );
    let csv = dir.join("noise.csv");
    let out = bin().args(["noise", project, "--csv"]).output().unwrap();
    assert!(out.status.success() || out.status.code() == Some(1));
    std::fs::write(&csv, &out.stdout).unwrap();
    let png_path = dir.join("noise.png");
    let out = bin()
        .args(["export", project, "--noise"])
        .arg(&csv)
        .arg("-o")
        .arg(&png_path)
        .output()
        .unwrap();
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let img = image::load_from_memory_with_format(
        &std::fs::read(&png_path).unwrap(),
        image::ImageFormat::Png,
    )
    .unwrap()
    .to_rgba8();
    // invariant: a plot has ink: many pixels differ from the white page.
    let inked = img
        .pixels()
        .filter(|p| p.0[0] < 128 && p.0[1] < 128)
        .count();
    let (w, h) = (img.width(), img.height());
    assert!(
        inked > (w * h / 300) as usize,
        "only {inked} dark pixels of {w}×{h}"
    );
    // invariant: the page is white at the corner (nothing cut off into it).
    assert_eq!(img.get_pixel(0, 0).0, [255, 255, 255, 255]);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn noise_plot_axes_are_logarithmic_and_the_curve_stays_inside() {
    let doc = preamp();
    let r = layer_adapters::noise_report(&doc).unwrap();
    let data = biasline::results::plots::noise_data("t", &r);
    let s = noise_plot::noise_scene(&data);
    let texts: Vec<&str> = s.texts().map(|t| t.text.as_str()).collect();
    // invariant: decade ticks on a log axis read 10× apart.
    assert!(
        texts.contains(&"1 kHz") && texts.contains(&"10 kHz"),
        "{texts:?}"
    );
    assert!(texts.iter().any(|t| t.ends_with("V/√Hz")), "{texts:?}");
    // invariant: every text and curve lies inside the page bounds.
    for t in s.texts() {
        let b = t.bounds();
        assert!(
            s.bounds.contains(b.min) && s.bounds.contains(b.max),
            "{} cut off",
            t.text
        );
    }
    let png = png::render(&s, LayerSet::all(), &png::PngOptions::default()).unwrap();
    assert!(png.len() > 1000);
}

#[test]
fn analyze_text_has_a_noise_paragraph() {
    let project = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/two-stage-preamp.json"
    );
    let out = bin().args(["analyze", project]).output().unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    // common practice (no source): a bias report names the noise figure, its source resistance and the worst contributor.
    assert!(text.contains("\nNoise ("), "{text}");
    assert!(
        text.contains("noise figure") && text.contains("real source resistance"),
        "{text}"
    );
    assert!(
        text.contains("input-referred density") && text.contains("top contributor"),
        "{text}"
    );
}
