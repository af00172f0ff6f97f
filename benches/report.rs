//! Design report benchmarks: `two-stage-preamp.json` to HTML bytes (every
//! analysis, the drawing, the plots, the page), without and with the spread
//! section (1,000 Monte Carlo runs, all cores).

use biasline::document;
use biasline::report::{self, Options, SpreadChoice};
use criterion::{criterion_group, criterion_main, Criterion};
use std::path::Path;

fn bench(c: &mut Criterion) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("projects/two-stage-preamp.json");
    let bytes = std::fs::read(&path).unwrap();
    let doc = document::load_file(&path).unwrap();
    let mut group = c.benchmark_group("report");
    group.sample_size(10);
    for (what, spread) in [
        ("without spread", SpreadChoice::Never),
        ("with spread, 1000 runs", SpreadChoice::Always),
    ] {
        let opts = Options {
            spread,
            runs: Some(1000),
            ..Options::default()
        };
        group.bench_function(format!("two-stage-preamp, {what}"), |b| {
            b.iter(|| {
                report::build(&doc, &path, &bytes, &opts)
                    .unwrap()
                    .html
                    .len()
            })
        });
    }
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
