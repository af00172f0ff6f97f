//! Field-effect transistors, JFET and MOSFET, N and P channel (square law
//! with channel-length modulation: H. Shichman and D. A. Hodges, IEEE J.
//! Solid-State Circuits SC-3, 1968; the JFET: W. Shockley, Proc. IRE 40,
//! 1952; equations exactly as on the reference page, "Field-effect
//! transistors").
//!
//! N-channel sense, VGS = VG − VS, VDS = VD − VS, Vov = VGS − VTO:
//!
//! ```text
//! MOSFET, β = KP·W/L          JFET, β = IDSS/VTO²
//! cut-off    Vov ≤ 0:          ID = 0
//! triode     0 ≤ VDS < Vov:    ID = β·(Vov·VDS − VDS²/2)·(1 + λ·VDS)   | β·VDS·(2·Vov − VDS)·(1 + λ·VDS)
//! saturation VDS ≥ Vov:        ID = (β/2)·Vov²·(1 + λ·VDS)             | β·Vov²·(1 + λ·VDS)
//! ```
//! For VDS < 0 drain and source swap roles (the device is symmetric):
//! ID(VGS, VDS) = −ID(VGS − VDS, −VDS). A P-channel device uses the same
//! equations with every terminal voltage and current negated, as the PNP.
//! The JFET's gate–source and gate–drain junctions are Shockley diodes;
//! the discrete MOSFET has its body tied to the source and a body diode
//! from source (anode) to drain (cathode), N-channel sense.

use super::bjt::depletion_capacitance;
use super::charge::depletion_charge;
use super::diode::DiodeModel;
use super::kelvin;
use crate::analysis::{BOLTZMANN, ELEMENTARY_CHARGE};
use crate::presets::keys as common;
use serde::Serialize;
use std::collections::BTreeMap;

/// Parameter keys of the field-effect parts (plain words of our own).
pub mod keys {
    /// Threshold (MOSFET) or pinch-off (JFET) voltage VTO, V, as the part
    /// sees it: an N-JFET's is negative, a P-JFET's positive; a MOSFET's
    /// sign says enhancement (N: > 0, P: < 0) or depletion.
    pub const THRESHOLD_VOLTAGE: &str = "threshold_voltage";
    /// β, A/V²: KP·W/L for a MOSFET (ID = β/2·Vov²), IDSS/VTO² for a JFET (ID = β·Vov²).
    pub const TRANSCONDUCTANCE_PARAMETER: &str = "transconductance_parameter";
    /// JFET IDSS, A (drain current at VGS = 0 in saturation); sets β = IDSS/VTO² when given.
    pub const ZERO_GATE_DRAIN_CURRENT: &str = "zero_gate_drain_current";
    /// The datasheet's limits of IDSS and of the threshold (pinch-off)
    /// voltage, for the spread analysis.
    pub const ZERO_GATE_DRAIN_CURRENT_MIN: &str = "zero_gate_drain_current_min";
    pub const ZERO_GATE_DRAIN_CURRENT_MAX: &str = "zero_gate_drain_current_max";
    pub const THRESHOLD_VOLTAGE_MIN: &str = "threshold_voltage_min";
    pub const THRESHOLD_VOLTAGE_MAX: &str = "threshold_voltage_max";
    /// λ, 1/V.
    pub const CHANNEL_LENGTH_MODULATION: &str = "channel_length_modulation";
    /// Threshold shift with temperature, V/K, channel sense (N: as given; P: of −VTO).
    pub const THRESHOLD_TEMPERATURE_COEFFICIENT: &str = "threshold_temperature_coefficient";
    /// Exponent of β(T) = β·(T/T0)^x (mobility law, −1.5).
    pub const MOBILITY_TEMPERATURE_EXPONENT: &str = "mobility_temperature_exponent";
    /// JFET gate junction saturation current and emission coefficient.
    pub const GATE_SATURATION_CURRENT: &str = "gate_saturation_current";
    pub const GATE_EMISSION_COEFFICIENT: &str = "gate_emission_coefficient";
    /// MOSFET body diode saturation current and emission coefficient.
    pub const BODY_DIODE_SATURATION_CURRENT: &str = "body_diode_saturation_current";
    pub const BODY_DIODE_EMISSION_COEFFICIENT: &str = "body_diode_emission_coefficient";
    /// Zero-bias gate–source / gate–drain capacitance (JFET junctions; MOSFET Cgs fixed).
    pub const GATE_SOURCE_CAPACITANCE: &str = "gate_source_capacitance";
    pub const GATE_DRAIN_CAPACITANCE: &str = "gate_drain_capacitance";
    pub const DRAIN_SOURCE_CAPACITANCE: &str = "drain_source_capacitance";
    pub const GATE_JUNCTION_POTENTIAL: &str = "gate_junction_potential";
    pub const GATE_JUNCTION_GRADING: &str = "gate_junction_grading";
    /// Datasheet capacitances at one drain–source voltage (MOSFET).
    pub const INPUT_CAPACITANCE: &str = "input_capacitance";
    pub const REVERSE_TRANSFER_CAPACITANCE: &str = "reverse_transfer_capacitance";
    pub const OUTPUT_CAPACITANCE: &str = "output_capacitance";
    pub const CAPACITANCE_TEST_VOLTAGE: &str = "capacitance_test_voltage";
    /// Flicker noise Kf·ID^Af/f (both optional; Kf = 0 turns it off).
    pub const FLICKER_COEFFICIENT: &str = "flicker_coefficient";
    pub const FLICKER_EXPONENT: &str = "flicker_exponent";
    /// Ratings.
    pub const MAX_DRAIN_SOURCE_VOLTAGE: &str = "max_drain_source_voltage";
    pub const MAX_GATE_SOURCE_VOLTAGE: &str = "max_gate_source_voltage";
    pub const MAX_DRAIN_CURRENT: &str = "max_drain_current";
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum FetKind {
    Jfet,
    Mosfet,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Channel {
    N,
    P,
}

impl Channel {
    /// +1 for N, −1 for P: multiply terminal voltages and currents by this
    /// to get the N-sense values the equations use.
    pub fn sign(self) -> f64 {
        match self {
            Channel::N => 1.0,
            Channel::P => -1.0,
        }
    }
}

/// Ratings a designer checks; `None` where the part does not say.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct FetRatings {
    pub max_drain_source_voltage: Option<f64>,
    pub max_gate_source_voltage: Option<f64>,
    pub max_drain_current: Option<f64>,
    pub max_power: Option<f64>,
    pub thermal_resistance: Option<f64>,
    pub max_junction_celsius: Option<f64>,
}

/// Model at the analysis temperature, N-sense threshold.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FetModel {
    pub kind: FetKind,
    pub channel: Channel,
    /// VTO in N sense (an N-JFET's and a P-JFET's are both negative here).
    pub threshold: f64,
    pub beta: f64,
    pub lambda: f64,
    /// JFET gate junctions (one model for both) or the MOSFET body diode.
    pub junction: DiodeModel,
    pub gate_source_capacitance: f64,
    /// Zero-bias gate–drain capacitance of the depletion form.
    pub gate_drain_capacitance: f64,
    pub drain_source_capacitance: f64,
    pub junction_potential: f64,
    pub grading: f64,
    pub flicker_coefficient: f64,
    pub flicker_exponent: f64,
    pub ratings: FetRatings,
    pub kelvin: f64,
}

/// Channel current into the drain and its derivatives, N sense.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ChannelEval {
    pub id: f64,
    pub did_dvgs: f64,
    pub did_dvds: f64,
}

/// Operating region of the channel (N sense, after the drain/source swap).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ChannelRegion {
    CutOff,
    Triode,
    Saturation,
}

/// Channel noise factor γ of a long channel in saturation (van der Ziel 1962).
pub const CHANNEL_NOISE_GAMMA: f64 = 2.0 / 3.0;

impl FetModel {
    /// Build from effective parameters: β(T) = β·(T/T0)^x (x = −1.5),
    /// VTO(T) = VTO + k·(T − T0) in channel sense; the gate junctions (or
    /// body diode) follow the diode temperature law.
    pub fn from_parameters(
        params: &BTreeMap<String, f64>,
        kind: FetKind,
        channel: Channel,
        kelvin_now: f64,
    ) -> Self {
        let get = |k: &str, d: f64| params.get(k).copied().unwrap_or(d);
        let opt = |k: &str| params.get(k).copied();
        let t0 = kelvin(get(common::PARAMETER_CELSIUS, 27.0));
        let s = channel.sign();
        let default_vto = match kind {
            FetKind::Jfet => -2.0 * s,
            FetKind::Mosfet => 2.0 * s,
        };
        let vto0 = s * get(keys::THRESHOLD_VOLTAGE, default_vto);
        let beta0 = match (kind, opt(keys::ZERO_GATE_DRAIN_CURRENT)) {
            (FetKind::Jfet, Some(idss)) => idss / (vto0 * vto0),
            _ => get(keys::TRANSCONDUCTANCE_PARAMETER, 1e-3),
        };
        // From memory: about −2 mV/K for a MOSFET's VTO; a JFET's pinch-off
        // voltage grows in size by about 2 mV/K (the gate junction's built-in
        // potential falls), i.e. also −2 mV/K in channel sense.
        let tc_default = -2e-3;
        let tc = get(keys::THRESHOLD_TEMPERATURE_COEFFICIENT, tc_default);
        let x = get(keys::MOBILITY_TEMPERATURE_EXPONENT, -1.5);
        let (is_key, n_key, is_default) = match kind {
            FetKind::Jfet => (
                keys::GATE_SATURATION_CURRENT,
                keys::GATE_EMISSION_COEFFICIENT,
                1e-14,
            ),
            FetKind::Mosfet => (
                keys::BODY_DIODE_SATURATION_CURRENT,
                keys::BODY_DIODE_EMISSION_COEFFICIENT,
                1e-12,
            ),
        };
        let mut diode = BTreeMap::new();
        diode.insert(common::SATURATION_CURRENT.into(), get(is_key, is_default));
        diode.insert(common::EMISSION_COEFFICIENT.into(), get(n_key, 1.0));
        diode.insert(
            common::PARAMETER_CELSIUS.into(),
            get(common::PARAMETER_CELSIUS, 27.0),
        );
        let phi = get(keys::GATE_JUNCTION_POTENTIAL, 0.75);
        let m = get(keys::GATE_JUNCTION_GRADING, 0.5);
        let (cgs, cgd, cds) = match opt(keys::INPUT_CAPACITANCE) {
            Some(ciss) => {
                let crss = get(keys::REVERSE_TRANSFER_CAPACITANCE, 0.0);
                let coss = get(keys::OUTPUT_CAPACITANCE, crss);
                let vds = get(keys::CAPACITANCE_TEST_VOLTAGE, 0.0).abs();
                datasheet_capacitances(ciss, crss, coss, vds, phi, m)
            }
            None => (
                get(keys::GATE_SOURCE_CAPACITANCE, 0.0),
                get(keys::GATE_DRAIN_CAPACITANCE, 0.0),
                get(keys::DRAIN_SOURCE_CAPACITANCE, 0.0),
            ),
        };
        FetModel {
            kind,
            channel,
            threshold: vto0 + tc * (kelvin_now - t0),
            beta: beta0 * (kelvin_now / t0).powf(x),
            lambda: get(keys::CHANNEL_LENGTH_MODULATION, 0.0),
            junction: DiodeModel::from_parameters(&diode, kelvin_now),
            gate_source_capacitance: cgs,
            gate_drain_capacitance: cgd,
            drain_source_capacitance: cds,
            junction_potential: phi,
            grading: m,
            flicker_coefficient: get(keys::FLICKER_COEFFICIENT, 0.0),
            flicker_exponent: get(keys::FLICKER_EXPONENT, 1.0),
            ratings: FetRatings {
                max_drain_source_voltage: opt(keys::MAX_DRAIN_SOURCE_VOLTAGE),
                max_gate_source_voltage: opt(keys::MAX_GATE_SOURCE_VOLTAGE),
                max_drain_current: opt(keys::MAX_DRAIN_CURRENT),
                max_power: opt(common::MAX_POWER),
                thermal_resistance: opt(common::THERMAL_RESISTANCE),
                max_junction_celsius: opt(common::MAX_JUNCTION_CELSIUS),
            },
            kelvin: kelvin_now,
        }
    }

    /// Channel current for VDS ≥ 0 (forward orientation), N sense.
    fn forward(&self, vgs: f64, vds: f64) -> ChannelEval {
        let vov = vgs - self.threshold;
        if vov <= 0.0 {
            return ChannelEval {
                id: 0.0,
                did_dvgs: 0.0,
                did_dvds: 0.0,
            };
        }
        let b = self.beta;
        let clm = 1.0 + self.lambda * vds;
        // f = core(Vov, VDS); ID = f·(1 + λ·VDS).
        let (f, df_dvov, df_dvds) = match (self.kind, vds < vov) {
            (FetKind::Mosfet, true) => {
                (b * (vov * vds - 0.5 * vds * vds), b * vds, b * (vov - vds))
            }
            (FetKind::Mosfet, false) => (0.5 * b * vov * vov, b * vov, 0.0),
            (FetKind::Jfet, true) => (
                b * vds * (2.0 * vov - vds),
                2.0 * b * vds,
                2.0 * b * (vov - vds),
            ),
            (FetKind::Jfet, false) => (b * vov * vov, 2.0 * b * vov, 0.0),
        };
        ChannelEval {
            id: f * clm,
            did_dvgs: df_dvov * clm,
            did_dvds: df_dvds * clm + f * self.lambda,
        }
    }

    /// Channel current into the drain and its derivatives, N sense, for
    /// any sign of VDS (drain and source swap below zero).
    pub fn channel(&self, vgs: f64, vds: f64) -> ChannelEval {
        if vds >= 0.0 {
            self.forward(vgs, vds)
        } else {
            // ID = −f(VGS − VDS, −VDS).
            let r = self.forward(vgs - vds, -vds);
            ChannelEval {
                id: -r.id,
                did_dvgs: -r.did_dvgs,
                did_dvds: r.did_dvgs + r.did_dvds,
            }
        }
    }

    /// Region of the channel at (VGS, VDS), N sense, after the swap.
    pub fn region(&self, vgs: f64, vds: f64) -> ChannelRegion {
        let (vgs, vds) = if vds < 0.0 {
            (vgs - vds, -vds)
        } else {
            (vgs, vds)
        };
        let vov = vgs - self.threshold;
        if vov <= 0.0 {
            ChannelRegion::CutOff
        } else if vds < vov {
            ChannelRegion::Triode
        } else {
            ChannelRegion::Saturation
        }
    }

    /// Drain–source voltage at the triode edge, VDS(sat) = VGS − VTO (N sense, ≥ 0).
    pub fn saturation_voltage(&self, vgs: f64) -> f64 {
        (vgs - self.threshold).max(0.0)
    }

    /// Currents into (drain, gate, source) and their Jacobian with respect
    /// to the pin voltages (vd, vg, vs), in the part's own sense (P-channel
    /// negated). Channel, gate junctions (JFET) and body diode (MOSFET).
    pub fn pin_currents(&self, vd: f64, vg: f64, vs: f64) -> ([f64; 3], [[f64; 3]; 3]) {
        let s = self.channel.sign();
        let (vgs, vds) = (s * (vg - vs), s * (vd - vs));
        let c = self.channel(vgs, vds);
        // N-sense currents into D, G, S and derivatives w.r.t. (vgs, vds).
        let mut i = [c.id, 0.0, -c.id];
        let mut d_gs = [c.did_dvgs, 0.0, -c.did_dvgs];
        let mut d_ds = [c.did_dvds, 0.0, -c.did_dvds];
        match self.kind {
            FetKind::Jfet => {
                let (igs, ggs) = self.junction.evaluate(vgs);
                let (igd, ggd) = self.junction.evaluate(vgs - vds);
                i[1] += igs + igd;
                i[2] -= igs;
                i[0] -= igd;
                d_gs[1] += ggs + ggd;
                d_ds[1] -= ggd;
                d_gs[2] -= ggs;
                d_gs[0] -= ggd;
                d_ds[0] += ggd;
            }
            FetKind::Mosfet => {
                // Body diode, source → drain, at VSD = −VDS.
                let (ib, gb) = self.junction.evaluate(-vds);
                i[2] += ib;
                i[0] -= ib;
                d_ds[2] -= gb;
                d_ds[0] += gb;
            }
        }
        // Chain rule: vgs = s·(vg − vs), vds = s·(vd − vs); currents scale by s.
        let mut jac = [[0.0; 3]; 3];
        for k in 0..3 {
            i[k] *= s;
            // s·s = 1.
            jac[k][0] = d_ds[k];
            jac[k][1] = d_gs[k];
            jac[k][2] = -d_ds[k] - d_gs[k];
        }
        (i, jac)
    }

    /// Gate currents of the two JFET junctions (N sense): (IGS, IGD).
    pub fn gate_currents(&self, vgs: f64, vds: f64) -> (f64, f64) {
        match self.kind {
            FetKind::Jfet => (
                self.junction.evaluate(vgs).0,
                self.junction.evaluate(vgs - vds).0,
            ),
            FetKind::Mosfet => (0.0, 0.0),
        }
    }

    /// Limit one Newton step of (VGS, VDS), N sense. The square law cannot
    /// overflow, but a step far across the threshold or the triode edge
    /// makes Newton oscillate: a VGS step is held to 0.5 V plus half the
    /// old overdrive's size, a VDS step to 2 V plus the old |VDS|
    /// (common practice, no source). The gate junctions of a JFET are then
    /// held by the critical-voltage method (Nagel 1975) on VGS and VGD.
    pub fn limit_step(&self, old: (f64, f64), new: (f64, f64)) -> ((f64, f64), bool) {
        let clamp = |o: f64, n: f64, w: f64| -> f64 { n.clamp(o - w, o + w) };
        let wg = 0.5 + 0.5 * (old.0 - self.threshold).abs();
        let wd = 2.0 + old.1.abs();
        let mut vgs = clamp(old.0, new.0, wg);
        let mut vds = clamp(old.1, new.1, wd);
        if self.kind == FetKind::Jfet {
            vgs = self.junction.limit_step(old.0, vgs).0;
            // Recompute VDS only when the VGD limit acted (vgs − (vgs − vds)
            // need not round back to vds, which would report a limit every step).
            let (vgd, acted) = self.junction.limit_step(old.0 - old.1, vgs - vds);
            if acted {
                vds = vgs - vgd;
            }
        } else {
            vds = -self.junction.limit_step(-old.1, -vds).0;
        }
        let hit = vgs != new.0 || vds != new.1;
        ((vgs, vds), hit)
    }

    /// (Cgs, Cgd, Cds) at (VGS, VDS), N sense. JFET: both gate junctions
    /// in the depletion form Cj0/(1 − V/φ)^m; MOSFET: Cgs and Cds fixed,
    /// Cgd in the depletion form of VGD (rising as VDG falls).
    pub fn capacitances(&self, vgs: f64, vds: f64) -> (f64, f64, f64) {
        let (phi, m) = (self.junction_potential, self.grading);
        let vgd = vgs - vds;
        let cgd = depletion_capacitance(self.gate_drain_capacitance, vgd, phi, m);
        let cgs = match self.kind {
            FetKind::Jfet => depletion_capacitance(self.gate_source_capacitance, vgs, phi, m),
            FetKind::Mosfet => self.gate_source_capacitance,
        };
        (cgs, cgd, self.drain_source_capacitance)
    }

    /// Charges (qgs, qgd, qds) whose derivatives are [`Self::capacitances`]
    /// with respect to VGS, VGD and VDS, N sense.
    pub fn charges(&self, vgs: f64, vds: f64) -> (f64, f64, f64) {
        let (phi, m) = (self.junction_potential, self.grading);
        let qgd = depletion_charge(self.gate_drain_capacitance, vgs - vds, phi, m).0;
        let qgs = match self.kind {
            FetKind::Jfet => depletion_charge(self.gate_source_capacitance, vgs, phi, m).0,
            FetKind::Mosfet => self.gate_source_capacitance * vgs,
        };
        (qgs, qgd, self.drain_source_capacitance * vds)
    }

    /// Noise current densities, A²/Hz, at (VGS, VDS) N sense and frequency
    /// `f`: (channel thermal, flicker, gate shot). Channel: 4·k·T·γ·gm in
    /// saturation with γ = 2/3 (van der Ziel 1962); in the triode region
    /// the long-channel form 4·k·T·γ·g0·(1 + η + η²)/(1 + η), η = 1 −
    /// VDS/Vov, g0 = ∂ID/∂VDS at VDS = 0 (Y. Tsividis, "Operation and
    /// Modeling of the MOS Transistor", long-channel thermal noise), which
    /// meets the saturation form at the edge. Flicker Kf·|ID|^Af/f; gate
    /// shot 2·q·(|IGS| + |IGD|).
    pub fn noise(&self, vgs: f64, vds: f64, f: f64) -> (f64, f64, f64) {
        let four_kt = 4.0 * BOLTZMANN * self.kelvin;
        let (vgs_f, vds_f) = if vds < 0.0 {
            (vgs - vds, -vds)
        } else {
            (vgs, vds)
        };
        let c = self.forward(vgs_f, vds_f);
        let vov = vgs_f - self.threshold;
        let thermal = match self.region(vgs, vds) {
            ChannelRegion::CutOff => 0.0,
            ChannelRegion::Saturation => four_kt * CHANNEL_NOISE_GAMMA * c.did_dvgs,
            ChannelRegion::Triode => {
                let g0 = match self.kind {
                    FetKind::Mosfet => self.beta * vov,
                    FetKind::Jfet => 2.0 * self.beta * vov,
                };
                let eta = 1.0 - vds_f / vov;
                four_kt
                    * CHANNEL_NOISE_GAMMA
                    * g0
                    * (1.0 + self.lambda * vds_f)
                    * (1.0 + eta + eta * eta)
                    / (1.0 + eta)
            }
        };
        let flicker = if self.flicker_coefficient > 0.0 && f > 0.0 {
            self.flicker_coefficient * c.id.abs().powf(self.flicker_exponent) / f
        } else {
            0.0
        };
        let (igs, igd) = self.gate_currents(vgs, vds);
        let shot = 2.0 * ELEMENTARY_CHARGE * (igs.abs() + igd.abs());
        (thermal, flicker, shot)
    }
}

/// Datasheet mapping (common practice): Cgd = Crss, Cgs = Ciss − Crss,
/// Cds = Coss − Crss at the test VDS (gate at the source, so VGD = −VDS);
/// Cgd is returned as the zero-bias value of the depletion form that
/// gives Crss there: Cgd0 = Crss·(1 + VDS/φ)^m.
pub fn datasheet_capacitances(
    ciss: f64,
    crss: f64,
    coss: f64,
    vds: f64,
    phi: f64,
    m: f64,
) -> (f64, f64, f64) {
    (ciss - crss, crss * (1.0 + vds / phi).powf(m), coss - crss)
}

#[cfg(test)]
#[path = "fet_tests.rs"]
mod tests;
