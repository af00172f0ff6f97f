//! The DC operating point of every field-effect transistor: region (cut-off,
//! triode, saturation, or "gate conducting" — a JFET whose gate junction is
//! forward-biased, a fault), the margin to the triode edge VDS − VDS(sat),
//! gm, ro, power, and warnings (gate forward bias, body diode conducting,
//! ratings; a MOSFET gate past ±20 V when the part gives no rating —
//! common practice).
//!
//! In the element's home (only `elements/` reads the element kind): made
//! through `Model::report` into the operating point's one list of device
//! reports (`OperatingPoint::fets` picks these out); its warnings join the
//! designer warnings.

use crate::analysis::circuit::Circuit;
use crate::analysis::dc::stamps::{terminal_currents, voltage};
use crate::analysis::devices::bjt::ON_CURRENT;
use crate::analysis::devices::fet::{Channel, ChannelRegion, FetKind, FetModel};
use serde::Serialize;

/// Usual MOSFET gate–source limit when the part gives none, V (common practice, no source).
pub const USUAL_MAX_GATE_SOURCE_VOLTAGE: f64 = 20.0;

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum FetRegion {
    CutOff,
    Triode,
    Saturation,
    GateConducting,
}

impl FetRegion {
    /// Plain words: a FET's "saturation" is its amplifying region (the
    /// bipolar's is not), so both words say what they mean.
    pub fn words(self) -> &'static str {
        match self {
            FetRegion::CutOff => "cut-off",
            FetRegion::Triode => "triode (ohmic)",
            FetRegion::Saturation => "saturation (constant current)",
            FetRegion::GateConducting => "gate conducting (a fault)",
        }
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FetOperatingPoint {
    /// Index into `Document::parts`.
    pub part: usize,
    /// Index into `Circuit::elements`.
    pub element: usize,
    pub designator: String,
    pub kind: FetKind,
    pub channel: Channel,
    pub region: FetRegion,
    /// Channel sense (P-channel negated), V.
    pub vgs: f64,
    pub vds: f64,
    /// Into the drain pin, A (negative for a conducting P-channel part).
    pub drain_current: f64,
    /// VDS − VDS(sat), channel sense, V: negative in the triode region.
    pub triode_margin: f64,
    pub gm: f64,
    /// 1/gds, Ω (infinite when gds = 0).
    pub ro: f64,
    pub power: f64,
    /// Junction temperature Tamb + P·θJA, °C, when θJA is given.
    pub junction_celsius: Option<f64>,
    pub warnings: Vec<String>,
}

impl FetOperatingPoint {
    /// "N-channel JFET", "P-channel MOSFET".
    pub fn kind_words(&self) -> String {
        let ch = match self.channel {
            Channel::N => "N",
            Channel::P => "P",
        };
        let k = match self.kind {
            FetKind::Jfet => "JFET",
            FetKind::Mosfet => "MOSFET",
        };
        format!("{ch}-channel {k}")
    }

    /// VGS as measured at the pins (V(gate) − V(source)), V.
    pub fn measured_vgs(&self) -> f64 {
        self.channel.sign() * self.vgs
    }

    /// VDS as measured at the pins, V.
    pub fn measured_vds(&self) -> f64 {
        self.channel.sign() * self.vds
    }
}

/// The report of FET `m`, element `k` of `c`, at the solution `x` (node
/// voltages, then branch currents).
pub(super) fn report_of(c: &Circuit, k: usize, m: &FetModel, x: &[f64]) -> FetOperatingPoint {
    {
        let e = &c.elements[k];
        let v = |i: usize| voltage(x, e.nodes[i]);
        let s = m.channel.sign();
        let (vgs, vds) = (s * (v(1) - v(2)), s * (v(0) - v(2)));
        let ch = m.channel(vgs, vds);
        let t = terminal_currents(c, k, x, 1.0);
        let power: f64 = t.iter().map(|(n, i)| voltage(x, n) * i).sum();
        let d = &e.designator;
        let mut warnings = Vec::new();
        let (igs, igd) = m.gate_currents(vgs, vds);
        let gate_on = m.kind == FetKind::Jfet && (igs > ON_CURRENT || igd > ON_CURRENT);
        if gate_on {
            warnings.push(format!(
                "{d}: the gate junction is forward-biased ({:.3} µA of gate current) — a JFET's gate must stay reverse-biased",
                (igs + igd) * 1e6
            ));
        }
        if m.kind == FetKind::Mosfet && -vds > m.junction.on_voltage() {
            warnings.push(format!(
                "{d}: the body diode conducts (drain {:.2} V beyond the source)",
                -vds
            ));
        }
        let r = &m.ratings;
        let vgs_limit = match (m.kind, r.max_gate_source_voltage) {
            (_, Some(l)) => Some(l),
            (FetKind::Mosfet, None) => Some(USUAL_MAX_GATE_SOURCE_VOLTAGE),
            (FetKind::Jfet, None) => None,
        };
        let mut over = |what: &str, value: f64, limit: Option<f64>, unit: &str| {
            if let Some(l) = limit {
                if value.abs() > l {
                    warnings.push(format!(
                        "{d}: {what} {:.3} {unit} exceeds its limit of {l} {unit}",
                        value.abs()
                    ));
                }
            }
        };
        over("|VGS|", vgs, vgs_limit, "V");
        over("|VDS|", vds, r.max_drain_source_voltage, "V");
        over("|ID|", ch.id, r.max_drain_current, "A");
        over("power", power, r.max_power, "W");
        let junction_celsius = r
            .thermal_resistance
            .map(|th| c.kelvin - crate::analysis::ZERO_CELSIUS + power * th);
        if let (Some(tj), Some(l)) = (junction_celsius, r.max_junction_celsius) {
            if tj > l {
                warnings.push(format!(
                    "{d}: the junction runs at {tj:.0} °C, past its limit of {l} °C \
                     (ambient plus power × thermal resistance)"
                ));
            }
        }
        let region = if gate_on {
            FetRegion::GateConducting
        } else {
            match m.region(vgs, vds) {
                ChannelRegion::CutOff => FetRegion::CutOff,
                ChannelRegion::Triode => FetRegion::Triode,
                ChannelRegion::Saturation => FetRegion::Saturation,
            }
        };
        let vov = vgs - m.threshold;
        match region {
            FetRegion::CutOff => warnings.push(format!(
                "{d} is cut off: VGS {:.3} V does not reach its {} of {:.3} V; no drain current flows",
                s * vgs,
                match m.kind {
                    FetKind::Jfet => "pinch-off voltage",
                    FetKind::Mosfet => "threshold",
                },
                s * m.threshold
            )),
            FetRegion::Triode => warnings.push(format!(
                "{d} is in its triode (ohmic) region: |VDS| {:.3} V is below VGS − VTO = {:.3} V; \
                 as an amplifier it has little gain (a switch that is on belongs here)",
                vds.abs(),
                vov
            )),
            _ => {}
        }
        FetOperatingPoint {
            part: e.part,
            element: k,
            designator: d.clone(),
            kind: m.kind,
            channel: m.channel,
            region,
            vgs,
            vds,
            drain_current: t.current[0],
            triode_margin: vds.abs()
                - m.saturation_voltage(if vds < 0.0 { vgs - vds } else { vgs }),
            gm: ch.did_dvgs,
            ro: if ch.did_dvds > 0.0 {
                1.0 / ch.did_dvds
            } else {
                f64::INFINITY
            },
            power,
            junction_celsius,
            warnings,
        }
    }
}
