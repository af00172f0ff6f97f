//! Transient benchmarks:
//! - the two-stage preamp demo, its 1 kHz sine, 20 periods with automatic
//!   steps, at least 640 a period as every steady-state run, and the THD
//!   of the last one (target: median under 100 ms);
//! - the same run to its periodic steady state (shooting method, the
//!   default; target: median under 200 ms);
//! - the clip search on the same (target: median under 200 ms);
//! - growth: DC-coupled chains (`generate::transistor_chain`) of 50 to 500
//!   stages, one period of a 100 mV, 1 kHz ripple on the positive rail:
//!   time, steps, time per step beside one DC solve of the same chain,
//!   printed as a table (time per step must grow no faster than the DC
//!   solve does).
//! - the push-pull level sweep (`transient --levels 10`) of the class-AB
//!   demo `projects/connections/class-ab-output.json`: ten levels to
//!   steady state with THD, power and dissipation (target: under 0.5 s).

use biasline::analysis::circuit::{self, ElementKind};
use biasline::analysis::dc;
use biasline::analysis::transient::clip;
use biasline::analysis::transient::steady::{self, SteadyOptions};
use biasline::analysis::transient::{self, Drive, Engine, Wave};
use biasline::document::load_file;
use biasline::generate::transistor_chain;
use biasline::netlist;
use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;
use std::path::Path;
use std::time::{Duration, Instant};

fn preamp() -> biasline::document::Document {
    load_file(&Path::new(env!("CARGO_MANIFEST_DIR")).join("projects/two-stage-preamp.json"))
        .expect("demo loads")
}

fn bench_preamp(cr: &mut Criterion) {
    let doc = preamp();
    let nl = netlist::connect(&doc);
    let c = circuit::build(&doc, &nl).unwrap();
    let opts = SteadyOptions {
        periods: Some(20),
        ..SteadyOptions::default()
    };
    let d = steady::distortion(&doc, &nl, &c, &opts, &mut |_| true).unwrap();
    println!(
        "preamp, 20 periods: {} steps ({} rejected), {} Newton iterations, THD {:.4} %",
        d.steps,
        d.rejected_steps,
        d.newton_iterations,
        100.0 * d.output.spectrum.thd
    );
    cr.bench_function("transient_preamp_20_periods_thd", |b| {
        b.iter(|| black_box(steady::distortion(&doc, &nl, &c, &opts, &mut |_| true).unwrap()))
    });
    let steady_opts = SteadyOptions::default();
    let d = steady::distortion(&doc, &nl, &c, &steady_opts, &mut |_| true).unwrap();
    println!(
        "preamp, steady state (shooting): {} periods, {} steps, THD {:.4} %",
        d.periods,
        d.steps,
        100.0 * d.output.spectrum.thd
    );
    cr.bench_function("transient_preamp_steady_state", |b| {
        b.iter(|| {
            black_box(steady::distortion(&doc, &nl, &c, &steady_opts, &mut |_| true).unwrap())
        })
    });
    cr.bench_function("transient_preamp_clip_search", |b| {
        b.iter(|| {
            black_box(clip::search(&doc, &nl, &c, clip::DEFAULT_THD_LIMIT, &mut |_| true).unwrap())
        })
    });
}

fn growth(_cr: &mut Criterion) {
    println!("stages  unknowns  steps  run (ms)  per step (µs)  DC solve (ms)  per step / DC");
    for stages in [50, 100, 200, 500] {
        let doc = transistor_chain(stages);
        let nl = netlist::connect(&doc);
        let c = circuit::build(&doc, &nl).unwrap();
        let vcc = c
            .elements
            .iter()
            .position(|e| e.designator == "VCC")
            .unwrap();
        let ElementKind::VoltageSource { dc: v, .. } = c.elements[vcc].kind else {
            panic!()
        };
        let t = Instant::now();
        let reps = 3;
        for _ in 0..reps {
            black_box(dc::solve_circuit(&c).unwrap());
        }
        let dc_time = t.elapsed() / reps;
        let drive = Drive {
            signal: Some((
                vcc,
                Wave::Sine {
                    amplitude: 0.1,
                    offset: v,
                    frequency: 1e3,
                    delay: 0.0,
                },
            )),
            ramp: None,
        };
        let t = Instant::now();
        let mut e = Engine::new(&c, drive, doc.transient.clone());
        let start = e.initial(false).unwrap();
        let (w, _) = transient::record(&mut e, start, 1e-3, &[], &mut |_| true).unwrap();
        let run = t.elapsed();
        let per_step = run.as_secs_f64() / w.counts.steps.max(1) as f64;
        println!(
            "{stages:6}  {:8}  {:5}  {:8.1}  {:13.1}  {:13.2}  {:.3}",
            c.size(),
            w.counts.steps,
            run.as_secs_f64() * 1e3,
            per_step * 1e6,
            dc_time.as_secs_f64() * 1e3,
            per_step / dc_time.as_secs_f64()
        );
    }
}

fn bench_levels(cr: &mut Criterion) {
    let doc = load_file(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("projects/connections/class-ab-output.json"),
    )
    .expect("demo loads");
    let nl = netlist::connect(&doc);
    cr.bench_function("push_pull_levels_10", |b| {
        b.iter(|| {
            black_box(
                biasline::results::push_pull::level_report(&doc, &nl, 10, 0.01).expect("sweeps"),
            )
        })
    });
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(10).measurement_time(Duration::from_secs(3));
    targets = bench_preamp, growth, bench_levels
}
criterion_main!(benches);
