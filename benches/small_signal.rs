//! Small-signal benchmarks: the two-stage preamp's models and midband stage
//! figures (from a fresh DC solve), the same plus the 161-point sweep, and
//! the per-frequency cost of a ~3,000-node generated chain.

use biasline::analysis::linear::{Drive, Mode, System, C64};
use biasline::analysis::{ac, circuit, dc, small_signal};
use biasline::{document, generate, netlist};
use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;

fn preamp() -> document::Document {
    document::load_file(std::path::Path::new("projects/two-stage-preamp.json")).expect("demo loads")
}

fn bench_preamp(c: &mut Criterion) {
    let doc = preamp();
    c.bench_function("preamp: DC + models + midband stage figures", |b| {
        b.iter(|| {
            let nl = netlist::connect(&doc);
            let cir = circuit::build(&doc, &nl).unwrap();
            let op = dc::solve_circuit(&cir).unwrap();
            black_box(small_signal::analyse(&doc, &nl, &cir, &op))
        })
    });
    c.bench_function("preamp: DC + models + midband + 161-point sweep", |b| {
        b.iter(|| {
            let nl = netlist::connect(&doc);
            let cir = circuit::build(&doc, &nl).unwrap();
            let op = dc::solve_circuit(&cir).unwrap();
            let a = small_signal::analyse(&doc, &nl, &cir, &op);
            black_box(ac::sweep(
                &a.small_signal,
                &a.chain,
                &a.midband,
                &doc.analysis,
            ))
        })
    });
}

fn bench_large(c: &mut Criterion) {
    let mut stages = 1000;
    let (doc, nl, cir) = loop {
        let doc = generate::transistor_chain(stages);
        let nl = netlist::connect(&doc);
        let cir = circuit::build(&doc, &nl).expect("chain builds");
        if cir.node_count >= 3000 || stages > 4000 {
            break (doc, nl, cir);
        }
        stages += 250;
    };
    let op = dc::solve_circuit(&cir).expect("chain solves");
    let ss = small_signal::linearise(&cir, &op);
    let _ = (&doc, &nl);
    let sys = System::new(&ss.circuit, Mode::Frequency, &[], None);
    // Drive the first supply so the right-hand side is not zero.
    let drive = [Drive::unit(ss.supplies.first().map(|s| s.1).unwrap_or(0))];
    let name = format!(
        "chain of {stages} stages ({} nodes, {} unknowns): one frequency, sparse LU with reused symbolic analysis",
        cir.node_count,
        sys.size()
    );
    c.bench_function(&name, |b| {
        b.iter(|| black_box(sys.solve(1e4, &drive).unwrap()))
    });
    c.bench_function("chain: symbolic analysis (once per sweep)", |b| {
        b.iter(|| black_box(System::new(&ss.circuit, Mode::Frequency, &[], None).size()))
    });
}

criterion_group!(benches, bench_preamp, bench_large);
criterion_main!(benches);
