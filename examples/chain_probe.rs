use biasline::analysis::{
    circuit, dc,
    linear::{Mode, System},
    small_signal,
};
fn main() {
    let par = std::env::args().nth(1).unwrap_or_default();
    if par == "seq" {
        faer::set_global_parallelism(faer::Par::Seq);
    }
    for stages in [100usize, 300, 600] {
        let doc = biasline::generate::transistor_chain(stages);
        let nl = biasline::netlist::connect(&doc);
        let c = circuit::build(&doc, &nl).unwrap();
        let t = std::time::Instant::now();
        let op = dc::solve_circuit(&c);
        println!(
            "stages {stages} nodes {} dc {:?} ok={}",
            c.node_count,
            t.elapsed(),
            op.is_ok()
        );
        if let Ok(op) = op {
            let ss = small_signal::linearise(&c, &op);
            let t3 = std::time::Instant::now();
            let sys = System::new(&ss.circuit, Mode::Frequency, &[], None);
            let t4 = t3.elapsed();
            for _ in 0..3 {
                let t5 = std::time::Instant::now();
                let s = sys.solve(1e4, &[]).is_ok();
                println!("  symbolic {:?} solve {:?} {s}", t4, t5.elapsed());
            }
        }
    }
}
