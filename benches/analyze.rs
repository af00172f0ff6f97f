//! The whole `analyze` command (load, rules check, operating point,
//! small-signal, sweep, noise with the better-current scan, text into a
//! sink) on generated amplifier chains of 10, 100, 1,000 and 2,000 stages
//! (`generate::amplifier_chain`: signal source with its resistance, load).
//! The built program runs as a user runs it (process start included), its
//! output into a sink. A second group runs the whole `check` command (load,
//! rules check, operating point with every transistor's βF sensitivity,
//! warnings) on chains of 1,000, 4,000 and 16,000 stages (about 10,000,
//! 40,000 and 160,000 parts).

use criterion::{criterion_group, criterion_main, Criterion};

/// Time `biasline COMMAND FILE` on generated chains of `sizes` stages.
fn command(c: &mut Criterion, dir: &std::path::Path, command: &str, sizes: &[usize]) {
    let mut group = c.benchmark_group(format!("{command}_command"));
    group.sample_size(10);
    for &n in sizes {
        let doc = biasline::generate::amplifier_chain(n, None);
        let path = dir.join(format!("{command}{n}.json"));
        std::fs::write(&path, serde_json::to_string(&doc).expect("serialises")).expect("writes");
        group.bench_function(format!("chain_{n}"), |b| {
            b.iter(|| {
                let status = std::process::Command::new(env!("CARGO_BIN_EXE_biasline"))
                    .arg(command)
                    .arg(&path)
                    .stdout(std::process::Stdio::null())
                    .status()
                    .expect("the program runs");
                assert!(status.code().is_some_and(|c| c <= 1), "{command} failed");
            })
        });
    }
    group.finish();
}

fn bench(c: &mut Criterion) {
    let dir = std::env::temp_dir().join(format!("biasline-bench-analyze-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    command(c, &dir, "analyze", &[10, 100, 1000, 2000]);
    command(c, &dir, "check", &[1000, 4000, 16000]);
    let _ = std::fs::remove_dir_all(&dir);
}

criterion_group!(benches, bench);
criterion_main!(benches);
