//! Small-signal benchmarks: the two-stage preamp's models and midband stage
//! figures (from a fresh DC solve), the same plus the 161-point sweep, and
//! the per-frequency cost of a ~3,000-node generated chain.

use biasline::analysis::linear::{Drive, Mode, System};
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

/// A ~3,000-node chain linearised at its operating point. The DC solve of
/// the whole chain is not what is measured here (and is slow at this size),
/// so the operating point is taken from a 12-stage chain: the generator's
/// chain sits at the same bias from the third stage on, so every NPN and
/// every PNP gets the last NPN's and PNP's point of the short chain.
fn big_chain() -> (usize, small_signal::SmallSignal) {
    use biasline::analysis::devices::bjt::Polarity;
    let short = generate::transistor_chain(12);
    let nl = netlist::connect(&short);
    let cir = circuit::build(&short, &nl).expect("short chain builds");
    let op = dc::solve_circuit(&cir).expect("short chain solves");
    let npn = op
        .transistors
        .iter()
        .rev()
        .find(|t| t.polarity == Polarity::Npn)
        .cloned()
        .unwrap();
    let pnp = op
        .transistors
        .iter()
        .rev()
        .find(|t| t.polarity == Polarity::Pnp)
        .cloned()
        .unwrap();
    let stages = 1000;
    let doc = generate::transistor_chain(stages);
    let nl = netlist::connect(&doc);
    let big = circuit::build(&doc, &nl).expect("chain builds");
    let mut big_op = op.clone();
    big_op.node_voltages = vec![0.0; big.node_count + 1];
    big_op.transistors = big
        .elements
        .iter()
        .filter_map(|e| match &e.kind {
            circuit::ElementKind::Bjt { model, .. } => {
                let mut t = if model.polarity == Polarity::Npn {
                    npn.clone()
                } else {
                    pnp.clone()
                };
                t.part = e.part;
                t.designator = e.designator.clone();
                Some(t)
            }
            _ => None,
        })
        .collect();
    (stages, small_signal::linearise(&big, &big_op))
}

fn bench_large(c: &mut Criterion) {
    let (stages, ss) = big_chain();
    let probe = ss.transistors[stages / 2].nodes[0];
    let drive = [Drive::inject(probe)];
    let folded = System::new(&ss.circuit, Mode::Frequency, &[], None);
    let name = format!(
        "chain of {stages} stages ({} nodes, {} unknowns, rails folded into ground): one frequency",
        ss.circuit.node_count,
        folded.size()
    );
    c.bench_function(&name, |b| {
        b.iter(|| black_box(folded.solve(1e4, &drive).unwrap()))
    });
    let kept = System::unfolded(&ss.circuit, Mode::Frequency, &[], None);
    let name = format!(
        "chain of {stages} stages ({} unknowns, rails kept as sources): one frequency",
        kept.size()
    );
    c.bench_function(&name, |b| {
        b.iter(|| black_box(kept.solve(1e4, &drive).unwrap()))
    });
    c.bench_function("chain: symbolic analysis (once per sweep)", |b| {
        b.iter(|| black_box(System::new(&ss.circuit, Mode::Frequency, &[], None).size()))
    });
}

criterion_group!(benches, bench_preamp, bench_large);
criterion_main!(benches);
