//! Spread benchmarks: 1,000 Monte Carlo runs of the two-stage demo, with DC
//! and midband stage figures, and with the full 161-point sweep as well, on
//! 1 and 2 threads.

use biasline::document;
use biasline::spread::{self, evaluate::Board};
use criterion::{criterion_group, criterion_main, Criterion};
use std::path::Path;

fn bench(c: &mut Criterion) {
    let doc = document::load_file(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("projects/two-stage-preamp.json"),
    )
    .unwrap();
    let vars = spread::collect(&doc);
    let axes = spread::axes(&doc, &vars);
    let mut group = c.benchmark_group("spread");
    group.sample_size(10);
    for sweep in [false, true] {
        let mut board = Board::new(&doc);
        board.sweep = sweep;
        for threads in [1, 2] {
            let what = if sweep {
                "DC + midband + sweep"
            } else {
                "DC + midband"
            };
            group.bench_function(format!("1000 runs, {what}, {threads} thread(s)"), |b| {
                b.iter(|| {
                    spread::monte_carlo(&doc, &vars, &axes, &board, 1000, 1, threads).unwrap()
                })
            });
        }
    }
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
