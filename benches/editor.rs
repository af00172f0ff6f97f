//! The editor's own update function on a value change: the edit, the
//! connectivity and rules check, the DC analysis and the rebuilt scene with
//! fresh results — everything between a keypress and the next frame except
//! the pixels.

use biasline::document;
use biasline::gui::app::App;
use biasline::gui::edit::Item;
use biasline::gui::message::Message;
use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;

fn value_change(c: &mut Criterion) {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/projects/two-stage-preamp.json"
    );
    let doc = document::load_file(std::path::Path::new(path)).expect("demo loads");
    let mut app = App::new(doc, None);
    let rc = app
        .doc
        .parts
        .iter()
        .position(|p| p.designator == "RC")
        .expect("the demo has RC");
    app.sheet.selection = [Item::Part(rc)].into_iter().collect();
    app.sync_inspector();
    let values = ["6k8", "5k6", "8k2", "4k7"];
    let mut k = 0;
    let mut step = |app: &mut App| {
        k = (k + 1) % values.len();
        let _ = app.update(Message::FieldEdited("resistance".into(), values[k].into()));
        let _ = app.update(Message::FieldSubmitted("resistance".into()));
    };
    // The figures must be fresh after one update, or this measures the stale path.
    step(&mut app);
    assert!(
        !app.stale && app.ok_figures().is_some(),
        "analysis ran inline"
    );
    c.bench_function(
        "editor value change → fresh scene (two-stage preamp)",
        |b| {
            b.iter(|| {
                step(&mut app);
                black_box(app.scene.elements.len())
            })
        },
    );
}

criterion_group!(benches, value_change);
criterion_main!(benches);
