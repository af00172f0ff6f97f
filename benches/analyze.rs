//! The whole `analyze` command (load, rules check, operating point,
//! small-signal, sweep, noise with the better-current scan, text into a
//! sink) on generated amplifier chains of 10, 100 and 1,000 stages
//! (`generate::amplifier_chain`: signal source with its resistance, load).
//! The built program runs as a user runs it (process start included), its
//! output into a sink. A second group runs the whole `check` command (load,
//! rules check, operating point with every transistor's βF sensitivity,
//! warnings) on chains of 1,000 and 4,000 stages (about 10,000 and 40,000
//! parts).

use criterion::{criterion_group, criterion_main, Criterion};

fn bench(c: &mut Criterion) {
    let dir = std::env::temp_dir().join(format!("biasline-bench-analyze-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let mut group = c.benchmark_group("analyze_command");
    group.sample_size(10);
    for n in [10usize, 100, 1000] {
        let doc = biasline::generate::amplifier_chain(n, None);
        let path = dir.join(format!("chain{n}.json"));
        std::fs::write(&path, serde_json::to_string(&doc).expect("serialises")).expect("writes");
        group.bench_function(format!("chain_{n}"), |b| {
            b.iter(|| {
                let status = std::process::Command::new(env!("CARGO_BIN_EXE_biasline"))
                    .arg("analyze")
                    .arg(&path)
                    .stdout(std::process::Stdio::null())
                    .status()
                    .expect("the program runs");
                assert!(status.code().is_some_and(|c| c <= 1), "analyze failed");
            })
        });
    }
    group.finish();
    let mut group = c.benchmark_group("check_command");
    group.sample_size(10);
    for n in [1000usize, 4000] {
        let doc = biasline::generate::amplifier_chain(n, None);
        let path = dir.join(format!("check{n}.json"));
        std::fs::write(&path, serde_json::to_string(&doc).expect("serialises")).expect("writes");
        group.bench_function(format!("chain_{n}"), |b| {
            b.iter(|| {
                let status = std::process::Command::new(env!("CARGO_BIN_EXE_biasline"))
                    .arg("check")
                    .arg(&path)
                    .stdout(std::process::Stdio::null())
                    .status()
                    .expect("the program runs");
                assert!(status.code().is_some_and(|c| c <= 1), "check failed");
            })
        });
    }
    group.finish();
    let _ = std::fs::remove_dir_all(&dir);
}

criterion_group!(benches, bench);
criterion_main!(benches);
