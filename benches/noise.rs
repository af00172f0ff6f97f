//! Noise over the 161 sweep frequencies (1 Hz–100 MHz, 20 per decade) of
//! projects/two-stage-preamp.json with every source's contribution.

use biasline::analysis::noise::{self, spectrum, BuildOptions};
use biasline::{document, netlist};
use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;

fn bench(c: &mut Criterion) {
    let doc = document::load_file(std::path::Path::new("projects/two-stage-preamp.json"))
        .expect("demo loads");
    let nl = netlist::connect(&doc);
    let setup = noise::setup(&doc, &nl, &BuildOptions::default()).expect("noise setup");
    let freqs = spectrum::log_grid(1.0, 1e8, 20);
    assert_eq!(freqs.len(), 161);
    c.bench_function("noise_spectrum_161_preamp", |b| {
        b.iter(|| {
            spectrum::spectrum(
                black_box(&setup.network),
                &setup.sources,
                setup.output,
                &freqs,
            )
            .expect("solves")
        })
    });
    c.bench_function("noise_setup_and_spectrum_161_preamp", |b| {
        b.iter(|| {
            let s = noise::setup(black_box(&doc), &nl, &BuildOptions::default()).expect("setup");
            spectrum::spectrum(&s.network, &s.sources, s.output, &freqs).expect("solves")
        })
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
