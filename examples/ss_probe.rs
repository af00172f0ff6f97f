use biasline::analysis::{ac, circuit, dc, small_signal};
fn main() {
    for f in std::env::args().skip(1) {
        let doc = biasline::document::load_file(std::path::Path::new(&f)).unwrap();
        let nl = biasline::netlist::connect(&doc);
        let c = circuit::build(&doc, &nl).unwrap();
        let op = dc::solve_circuit(&c).unwrap();
        let a = small_signal::analyse(&doc, &nl, &c, &op);
        println!("== {f}");
        for t in &a.small_signal.transistors {
            println!(
                "{} ic={:.4e} {:?}",
                t.designator, t.collector_current, t.models.hybrid_pi
            );
        }
        println!("{}", serde_json::to_string_pretty(&a.midband).unwrap());
        let r = ac::sweep(&a.small_signal, &a.chain, &a.midband, &doc.analysis);
        println!(
            "mid {:?} lo {:?} hi {:?} sc {:?} by {:?}",
            r.midband_gain_db,
            r.lower_corner,
            r.upper_corner,
            r.short_circuit_estimate,
            r.low_corner_set_by
        );
        for t in &r.time_constants {
            println!("  {:?}", t);
        }
        println!("notes {:?}", r.notes);
    }
}
