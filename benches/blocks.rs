//! Block recognition from the topology (issue 21 target: under 20 ms on a
//! generated sheet of 2,000 parts), the stage reading included.

use biasline::analysis::blocks;
use biasline::{generate, netlist};
use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;

fn recognise(c: &mut Criterion) {
    let mut g = c.benchmark_group("block recognition");
    g.sample_size(20);
    for stages in [110, 440] {
        let doc = generate::amplifier_chain(stages, Some(47e-6));
        let nl = netlist::connect(&doc);
        let parts = doc.parts.len();
        g.bench_function(format!("{stages} stages ({parts} parts)"), |b| {
            b.iter(|| blocks::recognise(black_box(&doc), black_box(&nl)))
        });
    }
    g.finish();
}

criterion_group!(benches, recognise);
criterion_main!(benches);
