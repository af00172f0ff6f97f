//! One device's model looked at, or rebuilt at its own junction
//! temperature, by part: what the push-pull block's thermal loop and its
//! estimates need without matching on the element kind elsewhere.

use crate::analysis::circuit::{Circuit, Element, ElementKind, Node};
use crate::analysis::devices::bjt::{BjtModel, Polarity};
use crate::analysis::devices::fet::{Channel, FetKind, FetModel};
use crate::analysis::devices::kelvin;
use crate::document::{Document, PartKind};
use crate::presets::effective_parameters;

/// A transistor's ratings and thermal resistance, as given.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Ratings {
    pub max_power: Option<f64>,
    /// Junction to ambient, K/W.
    pub thermal_resistance: Option<f64>,
    pub max_junction_celsius: Option<f64>,
}

/// The ratings of the transistor made from `part`.
pub fn ratings(c: &Circuit, part: usize) -> Option<Ratings> {
    match &c.elements.iter().find(|e| e.part == part)?.kind {
        ElementKind::Bjt { model, .. } => Some(Ratings {
            max_power: model.ratings.max_power,
            thermal_resistance: model.ratings.thermal_resistance,
            max_junction_celsius: model.ratings.max_junction_celsius,
        }),
        ElementKind::Fet(m) => Some(Ratings {
            max_power: m.ratings.max_power,
            thermal_resistance: m.ratings.thermal_resistance,
            max_junction_celsius: m.ratings.max_junction_celsius,
        }),
        _ => None,
    }
}

/// The bipolar model of `part` (at the circuit's temperature), if it is one.
pub fn bjt(c: &Circuit, part: usize) -> Option<&BjtModel> {
    match &c.elements.iter().find(|e| e.part == part)?.kind {
        ElementKind::Bjt { model, .. } => Some(model),
        _ => None,
    }
}

/// An element's bipolar model and internal base node, if it is a bipolar
/// transistor.
pub fn bipolar(e: &Element) -> Option<(&BjtModel, Node)> {
    match &e.kind {
        ElementKind::Bjt {
            model,
            internal_base,
        } => Some((model, *internal_base)),
        _ => None,
    }
}

/// Rebuild the model of the transistor `part` in `c` at `celsius` (its own
/// junction temperature; the rest of the circuit keeps its temperature).
pub fn set_junction(doc: &Document, c: &mut Circuit, part: usize, celsius: f64) {
    let Some(e) = c.elements.iter_mut().find(|e| e.part == part) else {
        return;
    };
    let params = effective_parameters(&doc.parts[part]);
    let k = kelvin(celsius);
    match (&mut e.kind, doc.parts[part].kind) {
        (ElementKind::Bjt { model, .. }, kind) => {
            let polarity = if kind == PartKind::Npn {
                Polarity::Npn
            } else {
                Polarity::Pnp
            };
            *model = BjtModel::from_parameters(&params, polarity, k);
        }
        (ElementKind::Fet(model), kind) => {
            let (fk, ch) = match kind {
                PartKind::NJfet => (FetKind::Jfet, Channel::N),
                PartKind::PJfet => (FetKind::Jfet, Channel::P),
                PartKind::NMosfet => (FetKind::Mosfet, Channel::N),
                _ => (FetKind::Mosfet, Channel::P),
            };
            *model = FetModel::from_parameters(&params, fk, ch, k);
        }
        _ => {}
    }
}
