//! What a FET stage design knows of its device and of the ends of its
//! datasheet spread, per family: a JFET by its IDSS and pinch-off voltage,
//! a MOSFET by its threshold VGS(th) and β. The stage designs (`fet.rs`,
//! `mos.rs`) and their text and JSON read these; neither family is forced
//! through the other's figures.

use super::fet::JfetData;
use serde::Serialize;

/// The datasheet figures of the FET a design uses, typical and the ends.
/// Serialised as the family's own fields (no tag), so a JFET design's JSON
/// is what it was before the MOSFET stage came.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(untagged)]
pub enum FetDevice {
    Jfet(JfetData),
    Mosfet(MosfetData),
}

/// An N-MOSFET's figures for the design: the threshold VGS(th) (typical and
/// the datasheet's minimum and maximum), β = KP·W/L of the square law
/// ID = (β/2)·(VGS − VTO)²·(1 + λ·VDS), and λ.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct MosfetData {
    pub threshold: f64,
    pub threshold_min: f64,
    pub threshold_max: f64,
    /// β, A/V².
    pub beta: f64,
    pub lambda: f64,
    /// The drain current rating, A, when the preset gives one.
    pub max_drain_current: Option<f64>,
}

/// Which device figures one end of the spread sets.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(untagged)]
pub enum EndAt {
    /// IDSS and |VP| both at their minimum (or both at their maximum).
    Jfet { idss: f64, pinch_off: f64 },
    /// VGS(th) at its maximum (least current) or minimum (most), and the
    /// engine's margin to the triode edge there, VDS − VDS(sat).
    Mosfet { threshold: f64, triode_margin: f64 },
}

/// Drain current at one end of the spread, by the engine on the designed circuit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SpreadEnd {
    /// Which end: "low" (the least drain current) or "high" (the most).
    pub end: &'static str,
    #[serde(flatten)]
    pub at: EndAt,
    pub drain_current: f64,
    pub vds: f64,
}

impl SpreadEnd {
    /// The device figures of this end in words, like "IDSS 3 mA, |VP| 1.3 V"
    /// or "VGS(th) 2.6 V".
    pub fn words(&self) -> String {
        use crate::units::{format, Unit};
        match self.at {
            EndAt::Jfet { idss, pinch_off } => format!(
                "IDSS {}, |VP| {}",
                format(idss, Unit::Ampere),
                format(pinch_off, Unit::Volt)
            ),
            EndAt::Mosfet { threshold, .. } => {
                format!("VGS(th) {}", format(threshold, Unit::Volt))
            }
        }
    }
}
