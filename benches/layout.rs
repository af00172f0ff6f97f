//! Layout of a circuit given as connections: the two-stage demo (target
//! < 20 ms: the editor may run it on paste), a generated chain of about 500
//! parts (target < 1 s), and the growth to about 5,000 parts.

use biasline::{document, generate, layout};
use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;

fn demo(name: &str) -> document::Document {
    let path = format!("{}/projects/{name}.json", env!("CARGO_MANIFEST_DIR"));
    document::load_file(std::path::Path::new(&path)).expect("demo loads")
}

fn lay_out_demo(c: &mut Criterion) {
    let doc = layout::to_connections(&demo("two-stage-preamp"));
    c.bench_function("layout two-stage-preamp", |b| {
        b.iter(|| layout::lay_out(black_box(&doc)))
    });
}

fn lay_out_chains(c: &mut Criterion) {
    let mut g = c.benchmark_group("layout chain");
    g.sample_size(10);
    for stages in [20, 110, 330, 1110] {
        let doc = layout::to_connections(&generate::amplifier_chain(stages, Some(47e-6)));
        let parts = doc.parts.len();
        g.bench_function(format!("{stages} stages ({parts} parts)"), |b| {
            b.iter(|| layout::lay_out(black_box(&doc)))
        });
    }
    g.finish();
}

criterion_group!(benches, lay_out_demo, lay_out_chains);
criterion_main!(benches);
