//! Load + connect + rules check of generated projects.
//!
//! Run: `cargo bench --no-default-features --bench foundation`.

use biasline::document::{load_str, to_json};
use biasline::generate;
use biasline::netlist;
use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;

fn foundation(c: &mut Criterion) {
    let grid = to_json(&generate::resistor_grid(2000));
    let chain = to_json(&generate::transistor_chain(500));
    let mut g = c.benchmark_group("foundation");
    g.sample_size(30);
    for (name, text) in [("grid-2000", &grid), ("chain-500", &chain)] {
        g.bench_function(format!("{name}/load+connect+check"), |b| {
            b.iter(|| {
                let doc = load_str(black_box(text)).expect("generated projects load");
                let nl = netlist::connect(&doc);
                black_box(netlist::check(&doc, &nl))
            })
        });
        let doc = load_str(text).unwrap();
        g.bench_function(format!("{name}/load"), |b| {
            b.iter(|| load_str(black_box(text)).unwrap())
        });
        g.bench_function(format!("{name}/connect"), |b| {
            b.iter(|| netlist::connect(black_box(&doc)))
        });
        let nl = netlist::connect(&doc);
        g.bench_function(format!("{name}/check"), |b| {
            b.iter(|| netlist::check(black_box(&doc), black_box(&nl)))
        });
    }
    g.finish();
}

criterion_group!(benches, foundation);
criterion_main!(benches);
