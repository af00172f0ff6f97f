//! DC operating-point benchmarks:
//! - the two-stage preamp demo (target: median under 100 µs);
//! - a chain of 500 DC-coupled stages, about 3,000 nodes, from a cold start
//!   (target: median under 50 ms);
//! - solve time against size, 10 → 5,000 nodes, dense and sparse LU, printed
//!   as a table (it sets `mna::DENSE_LIMIT`).
//!
//! The chain is generated here: each stage is a common-emitter stage whose
//! base divider hangs from the previous collector (DC-coupled), with split
//! collector and emitter resistors and the generic preset's base resistance,
//! so six unknown nodes per stage. The loop gain per stage is about −0.84,
//! so every stage sits near the same bias (collector ≈ 7.3 V on 12 V).

use biasline::analysis::circuit::{Circuit, Element, ElementKind};
use biasline::analysis::dc::{self, newton::Engine};
use biasline::analysis::devices::bjt::{BjtModel, Polarity};
use biasline::document::{load_file, PartKind};
use biasline::netlist;
use biasline::presets;
use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;
use std::time::{Duration, Instant};

fn element(kind: ElementKind, nodes: Vec<usize>, internal: Vec<usize>, name: String) -> Element {
    Element {
        part: 0,
        designator: name,
        kind,
        nodes,
        internal_nodes: internal,
        power_rating: None,
        voltage_rating: None,
        polarised: false,
    }
}

/// A chain of `stages` DC-coupled common-emitter stages (6 nodes each, plus 2).
pub fn chain(stages: usize) -> Circuit {
    let kelvin = 300.15;
    let npn = presets::find("small-signal-npn").expect("preset");
    let part = biasline::document::Part {
        id: "q".into(),
        connect: Default::default(),
        designator: "Q".into(),
        kind: PartKind::Npn,
        symbol: String::new(),
        position: [0, 0],
        rotation: 0,
        mirror: false,
        preset: Some(npn.name.into()),
        parameters: Default::default(),
    };
    let model =
        BjtModel::from_parameters(&presets::effective_parameters(&part), Polarity::Npn, kelvin);
    let mut names = vec!["ground".to_string(), "vcc".into(), "in".into()];
    let node = |n: String, names: &mut Vec<String>| {
        names.push(n);
        names.len() - 1
    };
    let mut elements = vec![
        element(
            ElementKind::VoltageSource {
                dc: 12.0,
                ac: 0.0,
                is_signal: false,
                is_rail: true,
            },
            vec![1, 0],
            vec![],
            "VCC".into(),
        ),
        element(
            ElementKind::VoltageSource {
                dc: 7.3,
                ac: 0.0,
                is_signal: false,
                is_rail: false,
            },
            vec![2, 0],
            vec![],
            "VIN".into(),
        ),
    ];
    let r = |ohms: f64, a: usize, b: usize, name: String| {
        element(
            ElementKind::Resistor { resistance: ohms },
            vec![a, b],
            vec![],
            name,
        )
    };
    let mut prev = 2;
    for k in 0..stages {
        let b = node(format!("b{k}"), &mut names);
        let bi = node(format!("Q{k}.base'"), &mut names);
        let c = node(format!("c{k}"), &mut names);
        let m = node(format!("m{k}"), &mut names);
        let e = node(format!("e{k}"), &mut names);
        let n = node(format!("n{k}"), &mut names);
        elements.push(r(12e3, prev, b, format!("R1_{k}")));
        elements.push(r(8.2e3, b, 0, format!("R2_{k}")));
        elements.push(r(3.3e3, 1, m, format!("RCA_{k}")));
        elements.push(r(3.6e3, m, c, format!("RCB_{k}")));
        elements.push(r(1.5e3, e, n, format!("REA_{k}")));
        elements.push(r(1.8e3, n, 0, format!("REB_{k}")));
        elements.push(element(
            ElementKind::Bjt {
                model: model.clone(),
                internal_base: bi,
            },
            vec![c, b, e],
            vec![bi],
            format!("Q{k}"),
        ));
        prev = c;
    }
    for (k, e) in elements.iter_mut().enumerate() {
        e.part = k;
    }
    let mut branch_count = 0;
    let branch_of = elements
        .iter()
        .map(|e| {
            e.kind.has_dc_branch().then(|| {
                branch_count += 1;
                branch_count - 1
            })
        })
        .collect();
    Circuit {
        node_count: names.len() - 1,
        net_node: vec![],
        node_names: names,
        elements,
        kelvin,
        net_names: vec![],
        branch_of,
        branch_count,
    }
}

fn median_time(runs: usize, mut f: impl FnMut()) -> Duration {
    let mut v: Vec<Duration> = (0..runs)
        .map(|_| {
            let t = Instant::now();
            f();
            t.elapsed()
        })
        .collect();
    v.sort();
    v[v.len() / 2]
}

fn size_table() {
    println!("\nDC solve time vs size (median; cold start: pattern, symbolic analysis and Newton)");
    println!(
        "{:>7} {:>8} {:>6} {:>12} {:>12}",
        "nodes", "unknowns", "iters", "dense", "sparse"
    );
    for stages in [2usize, 4, 8, 16, 33, 83, 166, 333, 500, 833] {
        let c = chain(stages);
        let unknowns = Engine::new(&c).reduction.reduced_size();
        let runs = if c.size() > 1000 { 5 } else { 21 };
        let mut iters = 0;
        let sparse = median_time(runs, || {
            let mut e = Engine::with_limit(&c, 0);
            let (s, _) = e.solve().expect("chain solves");
            iters = e.iterations;
            black_box(s);
        });
        let dense = if c.size() <= 1100 {
            let d = median_time(runs.min(5), || {
                let mut e = Engine::with_limit(&c, usize::MAX);
                black_box(e.solve().expect("chain solves"));
            });
            format!("{:.3} ms", d.as_secs_f64() * 1e3)
        } else {
            "—".to_string()
        };
        println!(
            "{:>7} {:>8} {:>6} {:>12} {:>9.3} ms",
            c.node_count,
            unknowns,
            iters,
            dense,
            sparse.as_secs_f64() * 1e3
        );
    }
}

/// One assembly + factorisation + solve, dense against sparse, small sizes:
/// the crossover that sets `mna::DENSE_LIMIT`.
fn crossover_table() {
    println!("\nOne linear solve (assemble, factorise, solve), median of 201");
    println!("{:>8} {:>12} {:>12}", "unknowns", "dense", "sparse");
    for stages in [1usize, 2, 3, 4, 6, 8, 12, 16, 24] {
        let c = chain(stages);
        let j = vec![[0.65, -4.0]; c.elements.len()];
        let time = |limit: usize| {
            let mut e = Engine::with_limit(&c, limit);
            let size = e.reduction.reduced_size();
            let t = median_time(201, || {
                black_box(
                    e.linear_solve(&j, biasline::analysis::dc::stamps::Conditions::PLAIN)
                        .expect("solves"),
                );
            });
            (size, t)
        };
        let (n, dense) = time(usize::MAX);
        let (_, sparse) = time(0);
        println!(
            "{:>8} {:>9.2} µs {:>9.2} µs",
            n,
            dense.as_secs_f64() * 1e6,
            sparse.as_secs_f64() * 1e6
        );
    }
}

fn benches(cr: &mut Criterion) {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/two-stage-preamp.json"
    );
    let doc = load_file(std::path::Path::new(path)).expect("demo loads");
    let nl = netlist::connect(&doc);
    let c = biasline::analysis::circuit::build(&doc, &nl).expect("builds");
    cr.bench_function("dc two-stage-preamp (solve_circuit)", |b| {
        b.iter(|| black_box(dc::solve_circuit(black_box(&c)).expect("solves")))
    });
    // The multiple-state test on the normal path (two determinant signs of a
    // small dense Jacobian); compare with solve_circuit above, which includes it.
    cr.bench_function("dc two-stage-preamp (multiple-state test alone)", |b| {
        let mut engine = dc::newton::Engine::new(&c);
        let (state, _) = engine.solve().expect("solves");
        b.iter(|| {
            black_box(dc::multistate::other_states(
                black_box(&c),
                &mut engine,
                &state,
            ))
        })
    });
    cr.bench_function("dc two-stage-preamp (document: rules, build, solve)", |b| {
        b.iter(|| black_box(dc::solve(black_box(&doc), &nl).expect("solves")))
    });
    let big = chain(500);
    let mut g = cr.benchmark_group("dc chain");
    g.sample_size(10);
    g.bench_function("500 stages (~3000 nodes) cold start", |b| {
        b.iter(|| black_box(dc::solve_circuit(black_box(&big)).expect("solves")))
    });
    g.bench_function("500 stages (~3000 nodes) Newton only, no report", |b| {
        b.iter(|| {
            let mut e = Engine::new(black_box(&big));
            black_box(e.solve().expect("solves"))
        })
    });
    let generated = biasline::generate::transistor_chain(500);
    let gnl = netlist::connect(&generated);
    let gc = biasline::analysis::circuit::build(&generated, &gnl).expect("builds");
    g.bench_function(
        format!(
            "generate::transistor_chain(500) ({} nodes) solve_circuit",
            gc.node_count
        ),
        |b| b.iter(|| black_box(dc::solve_circuit(black_box(&gc)).expect("solves"))),
    );
    g.finish();
    crossover_table();
    size_table();
}

criterion_group!(dc_benches, benches);
criterion_main!(dc_benches);
