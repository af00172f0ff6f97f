//! The stage designer: one CE stage from targets (Newton over the engine,
//! capacitors, preferred values, re-analysis), and `snap` on the generated
//! 2,000-part sheet.

use biasline::design::{self, eseries, snap, Targets, Topology};
use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;

fn ce_targets() -> Targets {
    let mut t = Targets::new(Topology::CommonEmitter, 12.0, 10e3, 20.0);
    t.gain_db = Some(30.0);
    t.input_impedance = Some(20e3);
    t.collector_current = Some(500e-6);
    t
}

fn bench(c: &mut Criterion) {
    let t = ce_targets();
    c.bench_function("design/ce-12V-30dB-20k", |b| {
        b.iter(|| design::design(black_box(&t)).expect("designs"))
    });
    let mut chosen = ce_targets();
    chosen.collector_current = None;
    c.bench_function("design/ce-current-chosen", |b| {
        b.iter(|| design::design(black_box(&chosen)).expect("designs"))
    });
    let sheet = biasline::generate::resistor_grid(2000);
    let e24 = eseries::find("E24").unwrap();
    let e6 = eseries::find("E6").unwrap();
    c.bench_function("snap/grid-2000-E6", |b| {
        b.iter(|| snap::snap_document(black_box(&sheet), e6, e6))
    });
    c.bench_function("snap/grid-2000-E24", |b| {
        b.iter(|| snap::snap_document(black_box(&sheet), e24, e6))
    });
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(20);
    targets = bench
}
criterion_main!(benches);
