//! Stability (issue 20): the circuit's own poles of the two-stage demo, the
//! loop gains of the feedback demo over its sweep (every transistor's return
//! ratio; the double injection at its break point), the whole `stability`
//! command on the feedback demo (the built program, process start
//! included), and the phase margin over 100 Monte Carlo boards.

use biasline::analysis::{circuit, dc, linear, small_signal, stability};
use biasline::document::Document;
use biasline::netlist::{self, Netlist};
use biasline::spread::{self, evaluate::phase_margin_at, Options, Outcome};
use criterion::{criterion_group, criterion_main, Criterion};

fn load(name: &str) -> Document {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/projects/").to_string() + name;
    biasline::document::load_file(std::path::Path::new(&path)).expect("the demo loads")
}

fn linearised(doc: &Document) -> (Netlist, small_signal::SmallSignal) {
    let nl = netlist::connect(doc);
    let op = dc::solve(doc, &nl).expect("solves");
    let c = circuit::build_unchecked(doc, &nl).expect("builds");
    let ss = small_signal::linearise(&c, &op);
    (nl, ss)
}

fn bench(c: &mut Criterion) {
    let mut group = c.benchmark_group("stability");
    group.sample_size(10);
    let preamp = load("two-stage-preamp.json");
    let (_, ss) = linearised(&preamp);
    group.bench_function("poles_two_stage_demo", |b| {
        b.iter(|| stability::poles(&ss.circuit).expect("poles"))
    });
    let driver = load("line-driver.json");
    let (nl, ss) = linearised(&driver);
    let a = &driver.analysis;
    let freqs = linear::log_frequencies(a.frequency_start, a.frequency_stop, a.points_per_decade);
    group.bench_function("return_ratios_line_driver_sweep", |b| {
        b.iter(|| stability::return_ratios(&ss.circuit, &freqs))
    });
    let at = stability::at_pin::find(&driver, &nl, &ss, "Q2.base").expect("break point");
    group.bench_function("double_injection_with_margins_line_driver", |b| {
        b.iter(|| stability::at_pin::loop_at(&ss, at, &freqs).expect("loop gain"))
    });
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/projects/line-driver.json");
    group.bench_function("stability_command_line_driver", |b| {
        b.iter(|| {
            let status = std::process::Command::new(env!("CARGO_BIN_EXE_biasline"))
                .args(["stability", path])
                .stdout(std::process::Stdio::null())
                .status()
                .expect("the program runs");
            assert!(status.code().is_some_and(|c| c <= 1), "stability failed");
        })
    });
    let margin = |doc: &Document| -> Result<Outcome, String> {
        let (nl, ss) = linearised(doc);
        let pm = phase_margin_at(doc, &nl, &ss, "Q2.base").ok_or("no margin")?;
        Ok(Outcome {
            values: vec![("PM".into(), pm)],
            all_active: true,
            missing: Vec::new(),
        })
    };
    let opt = Options {
        runs: 100,
        worst_case: false,
        sensitivities: false,
        ..Options::from_document(&driver)
    };
    group.bench_function("phase_margin_monte_carlo_100_boards", |b| {
        b.iter(|| spread::run(&driver, &margin, &opt).expect("runs"))
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
