//! A generated chain with a signal path: [`super::transistor_chain`] plus a
//! signal source coupled into the first base and a load coupled to the last
//! output, so every signal command (sweep, noise, transient, analyze) has
//! something to measure on a chain of any length.

use super::{add, part, transistor_chain};
use crate::document::{Document, NetLabel, PartKind};
use crate::symbols;

/// Signal source amplitude (V) and frequency (Hz) of [`amplifier_chain`].
pub const SOURCE_AMPLITUDE: f64 = 1e-6;
pub const SOURCE_FREQUENCY: f64 = 1e3;
/// Input and output coupling capacitors, F, and the load, Ω.
pub const COUPLING: f64 = 10e-6;
pub const LOAD: f64 = 10e3;
/// The source's own resistance (`RS`, in series after it), Ω.
pub const SOURCE_RESISTANCE: f64 = 600.0;

fn pin_at(p: &crate::document::Part, pin: &str) -> [i32; 2] {
    let symbol = symbols::library()
        .get(p.symbol_name())
        .expect("built-in symbol");
    symbols::pin_position(
        symbol.pin(pin).expect("built-in pin"),
        p.position,
        p.rotation,
        p.mirror,
    )
}

/// Label the pin `pin` of the part just added with the net name `net`
/// (`"0"`: a ground symbol on the pin instead).
fn label_pin(doc: &mut Document, pin: &str, net: &str) {
    let at = pin_at(doc.parts.last().expect("a part was just added"), pin);
    if net == "0" {
        let g = part(doc, "", PartKind::Ground, at, 0, false, &[]);
        add(doc, g);
    } else {
        doc.labels.push(NetLabel {
            name: net.into(),
            position: at,
        });
    }
}

/// A [`transistor_chain`] of `stages` stages with signal source `VS` (its
/// negative pin grounded, its resistance `RS` in series) feeding the first base through `CIN`, and load `RL`
/// to ground fed from the last stage's output through `COUT`. The new parts
/// sit below the chain and join it by net labels (`source_emf`, `sig_in`, `first_base`,
/// `last_out`, `load`). With `emitter_bypass` (F) a capacitor of that value
/// sits across every emitter resistor (`CB1`, `CB2`, …, labels `bypass_k_a`
/// and `bypass_k_b`), so each stage has its full gain at midband.
pub fn amplifier_chain(stages: usize, emitter_bypass: Option<f64>) -> Document {
    let stages = stages.max(1);
    let mut doc = transistor_chain(stages);
    doc.title = format!("Generated amplifier chain of {stages} DC-coupled stages");
    // The first base: the divider wire ends at [2, 10].
    doc.labels.push(NetLabel {
        name: "first_base".into(),
        position: [2, 10],
    });
    // The last output: an NPN collector at [c, 8], a flipped PNP's at [c, 12].
    let c = 6 + 6 * (stages as i32 - 1) + 1;
    let out_y = if (stages - 1).is_multiple_of(2) {
        8
    } else {
        12
    };
    doc.labels.push(NetLabel {
        name: "last_out".into(),
        position: [c, out_y],
    });
    let y = 40;
    let vs = part(
        &doc,
        "VS",
        PartKind::SignalSource,
        [0, y],
        0,
        false,
        &[
            ("amplitude", SOURCE_AMPLITUDE),
            ("frequency", SOURCE_FREQUENCY),
        ],
    );
    add(&mut doc, vs);
    label_pin(&mut doc, "positive", "source_emf");
    label_pin(&mut doc, "negative", "0");
    let rs = part(
        &doc,
        "RS",
        PartKind::Resistor,
        [4, y + 8],
        0,
        false,
        &[
            ("resistance", SOURCE_RESISTANCE),
            // The generator's own resistance, as the file must say.
            ("source_resistance_mark", 1.0),
        ],
    );
    add(&mut doc, rs);
    label_pin(&mut doc, "a", "source_emf");
    label_pin(&mut doc, "b", "sig_in");
    let cin = part(
        &doc,
        "CIN",
        PartKind::Capacitor,
        [8, y],
        0,
        false,
        &[("capacitance", COUPLING)],
    );
    add(&mut doc, cin);
    label_pin(&mut doc, "a", "sig_in");
    label_pin(&mut doc, "b", "first_base");
    let cout = part(
        &doc,
        "COUT",
        PartKind::Capacitor,
        [16, y],
        0,
        false,
        &[("capacitance", COUPLING)],
    );
    add(&mut doc, cout);
    label_pin(&mut doc, "a", "last_out");
    label_pin(&mut doc, "b", "load");
    let rl = part(
        &doc,
        "RL",
        PartKind::Resistor,
        [24, y],
        0,
        false,
        &[("resistance", LOAD)],
    );
    add(&mut doc, rl);
    label_pin(&mut doc, "a", "load");
    label_pin(&mut doc, "b", "0");
    if let Some(c) = emitter_bypass {
        let emitters: Vec<[[i32; 2]; 2]> = doc
            .parts
            .iter()
            .filter(|p| p.designator.starts_with("RE"))
            .map(|p| [pin_at(p, "a"), pin_at(p, "b")])
            .collect();
        for (k, ends) in emitters.iter().enumerate() {
            let n = k + 1;
            for (end, at) in ["a", "b"].iter().zip(ends) {
                doc.labels.push(NetLabel {
                    name: format!("bypass_{n}_{end}"),
                    position: *at,
                });
            }
            let cb = part(
                &doc,
                &format!("CB{n}"),
                PartKind::Capacitor,
                [32 + 8 * k as i32, y],
                0,
                false,
                &[("capacitance", c)],
            );
            add(&mut doc, cb);
            label_pin(&mut doc, "a", &format!("bypass_{n}_a"));
            label_pin(&mut doc, "b", &format!("bypass_{n}_b"));
        }
    }
    doc.signal.source = Some("VS".into());
    doc.signal.load = Some("RL".into());
    doc
}
