//! Field-effect transistor benchmarks (issue targets in brackets):
//! - DC of the JFET demo `projects/piezo-jfet-preamp.json` [under 100 µs];
//! - its DC + small-signal models + midband stage figures [under 0.5 ms];
//! - a 500-stage generated mixed FET/bipolar chain (`generate::mixed_chain`,
//!   about 3,000 nodes) from a cold start [under 50 ms];
//! - 20 periods of the JFET demo's 1 kHz sine with the THD of the last, the
//!   step set by the truncation error alone as in a plain run [under 20 ms],
//!   and with at least 640 steps a period, the floor every steady-state
//!   figure has had since the phase accuracy of issue 18 item 14 (0.01°
//!   near a resonance);
//! - the whole `analyze` command on the JFET demo, as a user runs it
//!   (process start, load, every analysis, text into a sink).

use biasline::analysis::transient::steady::{self, SteadyOptions};
use biasline::analysis::{circuit, dc, small_signal};
use biasline::{document, generate, netlist};
use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;
use std::path::Path;

const DEMO: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/projects/piezo-jfet-preamp.json"
);

fn bench(cr: &mut Criterion) {
    let doc = document::load_file(Path::new(DEMO)).expect("demo loads");
    let nl = netlist::connect(&doc);
    let c = circuit::build(&doc, &nl).expect("builds");
    cr.bench_function("fet: JFET demo DC (solve_circuit)", |b| {
        b.iter(|| black_box(dc::solve_circuit(black_box(&c)).expect("solves")))
    });
    cr.bench_function("fet: JFET demo DC + models + midband stage figures", |b| {
        b.iter(|| {
            let nl = netlist::connect(&doc);
            let cir = circuit::build(&doc, &nl).unwrap();
            let op = dc::solve_circuit(&cir).unwrap();
            black_box(small_signal::analyse(&doc, &nl, &cir, &op))
        })
    });
    let free = SteadyOptions {
        periods: Some(20),
        steps_per_period: None,
        ..SteadyOptions::default()
    };
    let d = steady::distortion(&doc, &nl, &c, &free, &mut |_| true).unwrap();
    println!(
        "JFET demo, 20 periods, steps by the truncation error: {} steps ({} rejected), {} Newton iterations, THD {:.4} %",
        d.steps,
        d.rejected_steps,
        d.newton_iterations,
        100.0 * d.output.spectrum.thd
    );
    cr.bench_function("fet: JFET demo 20 periods with THD, automatic steps", |b| {
        b.iter(|| black_box(steady::distortion(&doc, &nl, &c, &free, &mut |_| true).unwrap()))
    });
    let opts = SteadyOptions {
        periods: Some(20),
        ..SteadyOptions::default()
    };
    let d = steady::distortion(&doc, &nl, &c, &opts, &mut |_| true).unwrap();
    println!(
        "JFET demo, 20 periods, at least 640 steps a period: {} steps ({} rejected), {} Newton iterations, THD {:.4} %",
        d.steps,
        d.rejected_steps,
        d.newton_iterations,
        100.0 * d.output.spectrum.thd
    );
    cr.bench_function("fet: JFET demo 20 periods with THD", |b| {
        b.iter(|| black_box(steady::distortion(&doc, &nl, &c, &opts, &mut |_| true).unwrap()))
    });
    let mixed = generate::mixed_chain(500);
    let mnl = netlist::connect(&mixed);
    let mc = circuit::build(&mixed, &mnl).expect("builds");
    println!(
        "mixed chain: {} parts, {} unknown nodes",
        mixed.parts.len(),
        mc.node_count
    );
    let mut g = cr.benchmark_group("fet chain");
    g.sample_size(10);
    g.bench_function("500-stage mixed FET/bipolar chain cold start", |b| {
        b.iter(|| black_box(dc::solve_circuit(black_box(&mc)).expect("solves")))
    });
    g.bench_function("whole analyze command on the JFET demo", |b| {
        b.iter(|| {
            let status = std::process::Command::new(env!("CARGO_BIN_EXE_biasline"))
                .arg("analyze")
                .arg(DEMO)
                .stdout(std::process::Stdio::null())
                .status()
                .expect("the program runs");
            assert!(status.code().is_some_and(|c| c <= 1), "analyze failed");
        })
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
