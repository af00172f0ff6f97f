use biasline::{document, netlist, scene};
fn main() {
    let path = std::env::args().nth(1).unwrap();
    let doc = document::load_file(std::path::Path::new(&path)).unwrap();
    let nl = netlist::connect(&doc);
    let ann = scene::annotations_for(&doc, &nl);
    let s = scene::build(&doc, &nl, &ann, &scene::SceneOptions::default());
    for a in &s.annotations {
        println!(
            "{:30} {:?} {:.2?} {:.2?}",
            a.key, a.placement, a.rect.min, a.rect.max
        );
    }
}
