//! Scene build alone (target < 2 ms), the whole PNG export of the
//! two-stage demo at 2× including the analysis (target < 150 ms), and the
//! scene of generated sheets of 2,500, 5,000 and 10,000 parts (target for
//! 10,000: < 2 s; placement must scale, see `scene::place` and
//! `scene::plan`).

use biasline::render::export::{ExportOptions, Format};
use biasline::render::Background;
use biasline::{document, generate, netlist, scene};
use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;

fn demo(name: &str) -> document::Document {
    let path = format!("{}/projects/{name}.json", env!("CARGO_MANIFEST_DIR"));
    document::load_file(std::path::Path::new(&path)).expect("demo loads")
}

fn scene_build(c: &mut Criterion) {
    for name in ["two-stage-preamp", "common-emitter"] {
        let doc = demo(name);
        let nl = netlist::connect(&doc);
        let ann = biasline::results::annotations_for(&doc);
        let opts = scene::SceneOptions::default();
        c.bench_function(&format!("scene build {name}"), |b| {
            b.iter(|| scene::build(black_box(&doc), &nl, &ann, &opts))
        });
    }
    let doc = generate::random_sheet(4, 60);
    let nl = netlist::connect(&doc);
    let ann = biasline::results::annotations_for(&doc);
    c.bench_function("scene build random sheet 60 parts", |b| {
        b.iter(|| scene::build(black_box(&doc), &nl, &ann, &scene::SceneOptions::default()))
    });
}

fn export_png(c: &mut Criterion) {
    let doc = demo("two-stage-preamp");
    let opts = ExportOptions {
        format: Format::Png,
        scale: 2.0,
        background: Background::White,
        ..ExportOptions::default()
    };
    let mut group = c.benchmark_group("export");
    group.sample_size(20);
    group.bench_function("two-stage-preamp png 2x with analysis", |b| {
        b.iter(|| biasline::results::export::export(black_box(&doc), None, &opts).expect("exports"))
    });
    let svg = ExportOptions {
        format: Format::Svg,
        ..ExportOptions::default()
    };
    group.bench_function("two-stage-preamp svg with analysis", |b| {
        b.iter(|| biasline::results::export::export(black_box(&doc), None, &svg).expect("exports"))
    });
    group.finish();
}

/// The DC-coupled chain with at least `parts` parts: three per stage, a
/// ground on every other stage, five around the first (see
/// `generate::transistor_chain`).
fn chain_of(parts: usize) -> document::Document {
    let stages = ((parts.saturating_sub(5)) as f64 / 3.5).ceil() as usize;
    let doc = generate::transistor_chain(stages);
    assert!(doc.parts.len() >= parts && doc.parts.len() < parts + 4);
    doc
}

fn large_sheet(c: &mut Criterion) {
    // Generated chains of 2,500, 5,003 and 10,001 parts (713, 1,428 and
    // 2,856 stages), every standard layer: the growth with the sheet's size
    // shows whether placement stays near-linear (see `scene::plan`).
    let mut group = c.benchmark_group("large");
    group.sample_size(10);
    for parts in [2_500, 5_000, 10_000] {
        let doc = chain_of(parts);
        let nl = netlist::connect(&doc);
        let ann = biasline::results::annotations_for(&doc);
        group.bench_function(format!("scene build {parts}-part chain"), |b| {
            b.iter(|| scene::build(black_box(&doc), &nl, &ann, &scene::SceneOptions::default()))
        });
    }
    group.finish();
}

criterion_group!(benches, scene_build, export_png, large_sheet);
criterion_main!(benches);
