//! One descriptor row per part kind: everything the program says about a
//! kind in one place — its word in the file, designator prefix, pins, main
//! value and unit, symbol, editor key, what a new part starts with, default
//! tolerance and what it is electrically. The editor's shelf, the
//! generators, the drawing, the tables, the spread analysis and the report
//! read these rows instead of keeping their own per-kind tables; the
//! equations of a kind live in `analysis/elements/`, one file per kind.
//!
//! A new kind is a variant of [`PartKind`] and one row here (both in this
//! file; the test below fails when a variant has no row or a row is out of
//! order), its symbol file, and on the analysis side its element file and
//! its rows in the element-kind table (`analysis/elements/kinds.rs`).

use crate::units::Unit;
use serde::{Deserialize, Serialize};

/// What a part is, electrically.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PartKind {
    Resistor,
    Capacitor,
    PolarisedCapacitor,
    Inductor,
    /// An independent DC voltage source between its `positive` and `negative` pins.
    VoltageSource,
    /// The signal generator: an AC source with an optional DC offset.
    SignalSource,
    /// An independent DC current source: it drives `current` out of its `out` pin.
    CurrentSource,
    Ground,
    /// A supply symbol: its net sits at `voltage` against ground.
    Rail,
    Npn,
    Pnp,
    Diode,
    /// N-channel junction FET (pins drain, gate, source).
    NJfet,
    /// P-channel junction FET.
    PJfet,
    /// N-channel MOSFET, the discrete kind: body tied to the source, with
    /// its body diode; enhancement or depletion by the threshold's sign.
    NMosfet,
    /// P-channel MOSFET, discrete.
    PMosfet,
}

/// What a part kind is, electrically, as far as the layers above the
/// analysis care.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    /// Resistor, capacitor, inductor: a value with a tolerance.
    Passive,
    /// An independent source (DC or signal).
    Source,
    /// Ground or a supply rail: a reference, not a part on the bill.
    Reference,
    /// A bipolar transistor.
    Bipolar,
    /// A junction diode.
    Diode,
    /// A field-effect transistor (JFET or MOSFET).
    FieldEffect,
}

/// One row of the part-kind table.
#[derive(Debug, Clone, Copy)]
pub struct KindInfo {
    pub kind: PartKind,
    /// The word in the file, the command line and on screen.
    pub word: &'static str,
    /// The symbol drawn unless a part names another.
    pub symbol: &'static str,
    /// That symbol's file (`symbols/NAME.json`), compiled in.
    pub symbol_file: &'static str,
    /// Designator prefix (R1, Q2, …); empty for kinds that carry none.
    pub prefix: &'static str,
    /// Pin names in the order the analysis uses them.
    pub pins: &'static [&'static str],
    /// The parameter every part of this kind carries, with its unit.
    pub value: Option<(&'static str, Unit)>,
    /// A new part's value (when the kind has one).
    pub new_value: f64,
    /// A new part's device preset (transistors, diodes).
    pub new_preset: Option<&'static str>,
    /// Further parameters a new part starts with (a resistor's power rating).
    pub new_extras: &'static [(&'static str, f64)],
    /// The editor's key for placing one from the shelf.
    pub key: &'static str,
    /// Default tolerance below and above the value (fractions), if any.
    pub tolerance: Option<(f64, f64)>,
    /// Which pin a designer names a net after first: lower is first.
    pub naming_rank: u8,
    pub role: Role,
}

const fn row(
    kind: PartKind,
    word: &'static str,
    symbol: &'static str,
    prefix: &'static str,
    pins: &'static [&'static str],
    role: Role,
) -> KindInfo {
    KindInfo {
        kind,
        word,
        symbol,
        symbol_file: "",
        prefix,
        pins,
        value: None,
        new_value: 0.0,
        new_preset: None,
        new_extras: &[],
        key: "",
        tolerance: None,
        naming_rank: 3,
        role,
    }
}

const TWO: &[&str] = &["a", "b"];
const POLAR: &[&str] = &["positive", "negative"];
/// Field-effect transistors: the analysis's pin order (drain, gate, source).
const FET_PINS: &[&str] = &["drain", "gate", "source"];

/// Every kind's row, in [`PartKind::ALL`] order.
pub const KINDS: &[KindInfo] = &[
    KindInfo {
        value: Some(("resistance", Unit::Ohm)),
        new_value: 10e3,
        new_extras: &[("power_rating", 0.25)],
        key: "r",
        tolerance: Some((0.05, 0.05)),
        symbol_file: include_str!("../../symbols/resistor.json"),
        ..row(
            PartKind::Resistor,
            "resistor",
            "resistor",
            "R",
            TWO,
            Role::Passive,
        )
    },
    KindInfo {
        value: Some(("capacitance", Unit::Farad)),
        new_value: 100e-9,
        key: "c",
        tolerance: Some((0.10, 0.10)),
        symbol_file: include_str!("../../symbols/capacitor.json"),
        ..row(
            PartKind::Capacitor,
            "capacitor",
            "capacitor",
            "C",
            TWO,
            Role::Passive,
        )
    },
    KindInfo {
        value: Some(("capacitance", Unit::Farad)),
        new_value: 10e-6,
        key: "e",
        tolerance: Some((0.20, 0.80)),
        symbol_file: include_str!("../../symbols/polarised-capacitor.json"),
        ..row(
            PartKind::PolarisedCapacitor,
            "polarised_capacitor",
            "polarised-capacitor",
            "C",
            POLAR,
            Role::Passive,
        )
    },
    KindInfo {
        value: Some(("inductance", Unit::Henry)),
        new_value: 1e-3,
        key: "l",
        tolerance: Some((0.10, 0.10)),
        symbol_file: include_str!("../../symbols/inductor.json"),
        ..row(
            PartKind::Inductor,
            "inductor",
            "inductor",
            "L",
            TWO,
            Role::Passive,
        )
    },
    KindInfo {
        value: Some(("voltage", Unit::Volt)),
        new_value: 9.0,
        key: "b",
        naming_rank: 2,
        symbol_file: include_str!("../../symbols/dc-voltage-source.json"),
        ..row(
            PartKind::VoltageSource,
            "voltage_source",
            "dc-voltage-source",
            "V",
            POLAR,
            Role::Source,
        )
    },
    KindInfo {
        value: Some(("amplitude", Unit::Volt)),
        new_value: 10e-3,
        key: "s",
        naming_rank: 2,
        symbol_file: include_str!("../../symbols/signal-source.json"),
        ..row(
            PartKind::SignalSource,
            "signal_source",
            "signal-source",
            "VS",
            POLAR,
            Role::Source,
        )
    },
    KindInfo {
        value: Some(("current", Unit::Ampere)),
        new_value: 1e-3,
        key: "i",
        naming_rank: 2,
        symbol_file: include_str!("../../symbols/current-source.json"),
        ..row(
            PartKind::CurrentSource,
            "current_source",
            "current-source",
            "I",
            &["out", "in"],
            Role::Source,
        )
    },
    KindInfo {
        key: "g",
        symbol_file: include_str!("../../symbols/ground.json"),
        ..row(
            PartKind::Ground,
            "ground",
            "ground",
            "",
            &["ground"],
            Role::Reference,
        )
    },
    KindInfo {
        value: Some(("voltage", Unit::Volt)),
        new_value: 9.0,
        key: "v",
        symbol_file: include_str!("../../symbols/supply-rail.json"),
        ..row(
            PartKind::Rail,
            "rail",
            "supply-rail",
            "VCC",
            &["rail"],
            Role::Reference,
        )
    },
    KindInfo {
        new_preset: Some("small-signal-npn"),
        key: "n",
        naming_rank: 0,
        symbol_file: include_str!("../../symbols/npn.json"),
        ..row(
            PartKind::Npn,
            "npn",
            "npn",
            "Q",
            &["collector", "base", "emitter"],
            Role::Bipolar,
        )
    },
    KindInfo {
        new_preset: Some("small-signal-pnp"),
        key: "p",
        naming_rank: 0,
        symbol_file: include_str!("../../symbols/pnp.json"),
        ..row(
            PartKind::Pnp,
            "pnp",
            "pnp",
            "Q",
            &["collector", "base", "emitter"],
            Role::Bipolar,
        )
    },
    KindInfo {
        new_preset: Some("general-purpose-diode"),
        key: "d",
        naming_rank: 1,
        symbol_file: include_str!("../../symbols/diode.json"),
        ..row(
            PartKind::Diode,
            "diode",
            "diode",
            "D",
            &["anode", "cathode"],
            Role::Diode,
        )
    },
    KindInfo {
        new_preset: Some("small-signal-n-jfet"),
        key: "j",
        naming_rank: 0,
        symbol_file: include_str!("../../symbols/n-jfet.json"),
        ..row(
            PartKind::NJfet,
            "n_jfet",
            "n-jfet",
            "Q",
            FET_PINS,
            Role::FieldEffect,
        )
    },
    KindInfo {
        new_preset: Some("small-signal-p-jfet"),
        key: "J",
        naming_rank: 0,
        symbol_file: include_str!("../../symbols/p-jfet.json"),
        ..row(
            PartKind::PJfet,
            "p_jfet",
            "p-jfet",
            "Q",
            FET_PINS,
            Role::FieldEffect,
        )
    },
    KindInfo {
        new_preset: Some("small-signal-n-mosfet"),
        key: "m",
        naming_rank: 0,
        symbol_file: include_str!("../../symbols/n-mosfet.json"),
        ..row(
            PartKind::NMosfet,
            "n_mosfet",
            "n-mosfet",
            "Q",
            FET_PINS,
            Role::FieldEffect,
        )
    },
    KindInfo {
        new_preset: Some("small-signal-p-mosfet"),
        key: "M",
        naming_rank: 0,
        symbol_file: include_str!("../../symbols/p-mosfet.json"),
        ..row(
            PartKind::PMosfet,
            "p_mosfet",
            "p-mosfet",
            "Q",
            FET_PINS,
            Role::FieldEffect,
        )
    },
];

impl PartKind {
    /// Every kind, in the table's order (the order of the variants).
    pub const ALL: [PartKind; KINDS.len()] = {
        let mut all = [PartKind::Ground; KINDS.len()];
        let mut i = 0;
        while i < KINDS.len() {
            all[i] = KINDS[i].kind;
            i += 1;
        }
        all
    };

    /// This kind's row of the table.
    pub fn info(self) -> &'static KindInfo {
        &KINDS[self as usize]
    }

    /// The kind whose editor key is `key`.
    pub fn by_key(key: &str) -> Option<PartKind> {
        KINDS.iter().find(|k| k.key == key).map(|k| k.kind)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_kind_has_its_own_row_in_order() {
        // invariant: the table is indexed by the kind; a new variant without
        // a row, or a row out of order, fails here.
        assert_eq!(KINDS.len(), PartKind::ALL.len());
        for (k, row) in PartKind::ALL.iter().zip(KINDS.iter()) {
            assert_eq!(*k, row.kind);
            assert_eq!(k.info().kind, *k);
        }
    }

    #[test]
    fn words_and_keys_are_unique() {
        // invariant: one name per idea — no two kinds share a file word or a
        // shelf key.
        let mut words: Vec<_> = KINDS.iter().map(|k| k.word).collect();
        let mut keys: Vec<_> = KINDS.iter().map(|k| k.key).collect();
        words.sort();
        keys.sort();
        words.dedup();
        keys.dedup();
        assert_eq!(words.len(), KINDS.len());
        assert_eq!(keys.len(), KINDS.len());
        for k in KINDS {
            assert_eq!(PartKind::by_key(k.key), Some(k.kind));
        }
    }
}
