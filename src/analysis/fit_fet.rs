//! Fit the field-effect models to the figures a datasheet gives. Exact for
//! the model (square law with λ at the stated test VDS, reference page
//! "Field-effect transistors"), so the fitted model reproduces every figure
//! to rounding:
//! - JFET: IDSS and VGS(off) give VTO = VGS(off), β = IDSS/(VTO²·k); or gfs
//!   at a drain current with either of them, from gfs² = 4·β·k·ID in
//!   saturation (k = 1 + λ·VDS);
//! - MOSFET: VGS(th) at a stated ID and ID at a stated VGS: with
//!   r = √(ID,on/ID,th), VTO = (VGS,on − r·VGS,th)/(1 − r) and
//!   β = 2·ID,on/(k·(VGS,on − VTO)²) (both points in saturation);
//! - capacitances Ciss, Crss, Coss at a VDS: Cgs = Ciss − Crss, Cds = Coss −
//!   Crss, and the zero-bias Cgd0 = Crss·(1 + VDS/φ)^m of the depletion form.
//!
//! The fit applies at the parameter temperature. Voltages are given as the
//! part sees them (a P-channel part's VGS(off) positive, its VGS(th)
//! negative); currents and VDS as magnitudes.

use super::devices::fet::{datasheet_capacitances, keys, Channel};
use std::collections::BTreeMap;

#[derive(Debug, Clone, PartialEq)]
pub struct FetFitError(pub String);

impl std::fmt::Display for FetFitError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

/// What a JFET datasheet gives (any two of IDSS, VGS(off), gfs at a current).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum JfetFigures {
    ZeroGateCurrentAndCutoff { idss: f64, vgs_off: f64 },
    ZeroGateCurrentAndGfs { idss: f64, gfs: f64, at_id: f64 },
    CutoffAndGfs { vgs_off: f64, gfs: f64, at_id: f64 },
}

/// Datasheet capacitances at one drain–source voltage.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CapacitanceFigures {
    pub ciss: f64,
    pub crss: f64,
    pub coss: f64,
    pub vds: f64,
}

fn err<T>(msg: String) -> Result<T, FetFitError> {
    Err(FetFitError(msg))
}

fn positive(name: &str, v: f64) -> Result<f64, FetFitError> {
    if v.is_finite() && v > 0.0 {
        Ok(v)
    } else {
        err(format!("{name} must be a positive number (got {v})"))
    }
}

fn to_map(pairs: &[(&str, f64)]) -> BTreeMap<String, f64> {
    pairs.iter().map(|(k, v)| (k.to_string(), *v)).collect()
}

/// JFET: returns `threshold_voltage` (the part's own sign) and
/// `transconductance_parameter`, for channel-length modulation `lambda`
/// at test voltage `vds` (magnitude).
pub fn fit_jfet(
    figures: JfetFigures,
    channel: Channel,
    lambda: f64,
    vds: f64,
) -> Result<BTreeMap<String, f64>, FetFitError> {
    let s = channel.sign();
    let k = 1.0 + lambda * vds.abs();
    positive("1 + λ·VDS", k)?;
    let cutoff = |v: f64| -> Result<f64, FetFitError> {
        // N sense: the pinch-off voltage is negative.
        if v.is_finite() && s * v < 0.0 {
            Ok(s * v)
        } else {
            err(format!(
                "VGS(off) = {v} V has the wrong sign for a {} JFET",
                if s > 0.0 {
                    "N-channel (needs < 0)"
                } else {
                    "P-channel (needs > 0)"
                }
            ))
        }
    };
    let (vto, beta) = match figures {
        JfetFigures::ZeroGateCurrentAndCutoff { idss, vgs_off } => {
            let vto = cutoff(vgs_off)?;
            (vto, positive("IDSS", idss)? / (vto * vto * k))
        }
        JfetFigures::ZeroGateCurrentAndGfs { idss, gfs, at_id } => {
            let (idss, gfs, id) = (
                positive("IDSS", idss)?,
                positive("gfs", gfs)?,
                positive("the drain current of gfs", at_id)?,
            );
            if id > idss {
                return err(format!(
                    "gfs is given at {id} A, above IDSS = {idss} A (gate forward)"
                ));
            }
            let bk = gfs * gfs / (4.0 * id);
            (-(idss / bk).sqrt(), bk / k)
        }
        JfetFigures::CutoffAndGfs {
            vgs_off,
            gfs,
            at_id,
        } => {
            let vto = cutoff(vgs_off)?;
            let bk = positive("gfs", gfs)?.powi(2)
                / (4.0 * positive("the drain current of gfs", at_id)?);
            (vto, bk / k)
        }
    };
    Ok(to_map(&[
        (keys::THRESHOLD_VOLTAGE, s * vto),
        (keys::TRANSCONDUCTANCE_PARAMETER, beta),
        (keys::CHANNEL_LENGTH_MODULATION, lambda),
    ]))
}

/// MOSFET: VGS(th) at `id_th` and `id_on` at `vgs_on` (voltages as the part
/// sees them, currents as magnitudes), both at test voltage `vds`.
pub fn fit_mosfet(
    channel: Channel,
    vgs_th: f64,
    id_th: f64,
    vgs_on: f64,
    id_on: f64,
    lambda: f64,
    vds: f64,
) -> Result<BTreeMap<String, f64>, FetFitError> {
    let s = channel.sign();
    let (id_th, id_on) = (
        positive("the drain current of VGS(th)", id_th)?,
        positive("ID(on)", id_on)?,
    );
    let (vth, von) = (s * vgs_th, s * vgs_on);
    if id_on <= id_th || !(von.is_finite() && vth.is_finite()) || von <= vth {
        return err(format!(
            "ID(on) = {id_on} A at VGS = {vgs_on} V must exceed {id_th} A at VGS(th) = {vgs_th} V, at a larger gate drive"
        ));
    }
    let k = positive("1 + λ·VDS", 1.0 + lambda * vds.abs())?;
    let r = (id_on / id_th).sqrt();
    let vto = (von - r * vth) / (1.0 - r);
    let vov = von - vto;
    if vds.abs() < vov {
        return err(format!(
            "the test VDS = {vds} V is below VGS − VTO = {vov} V: ID(on) was taken in the triode region; give a VDS of at least {vov} V"
        ));
    }
    Ok(to_map(&[
        (keys::THRESHOLD_VOLTAGE, s * vto),
        (
            keys::TRANSCONDUCTANCE_PARAMETER,
            2.0 * id_on / (k * vov * vov),
        ),
        (keys::CHANNEL_LENGTH_MODULATION, lambda),
    ]))
}

/// Capacitances: `gate_source_capacitance`, `gate_drain_capacitance` (zero
/// bias, depletion form with potential `phi` and grading `m`),
/// `drain_source_capacitance`.
pub fn fit_capacitances(
    c: CapacitanceFigures,
    phi: f64,
    m: f64,
) -> Result<BTreeMap<String, f64>, FetFitError> {
    for (name, v) in [("Ciss", c.ciss), ("Crss", c.crss), ("Coss", c.coss)] {
        if !(v.is_finite() && v >= 0.0) {
            return err(format!("{name} must be ≥ 0 (got {v})"));
        }
    }
    if c.ciss < c.crss || c.coss < c.crss {
        return err(format!(
            "Ciss = {} F and Coss = {} F must both be at least Crss = {} F",
            c.ciss, c.coss, c.crss
        ));
    }
    let (cgs, cgd0, cds) = datasheet_capacitances(c.ciss, c.crss, c.coss, c.vds.abs(), phi, m);
    Ok(to_map(&[
        (keys::GATE_SOURCE_CAPACITANCE, cgs),
        (keys::GATE_DRAIN_CAPACITANCE, cgd0),
        (keys::DRAIN_SOURCE_CAPACITANCE, cds),
        (keys::GATE_JUNCTION_POTENTIAL, phi),
        (keys::GATE_JUNCTION_GRADING, m),
    ]))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::devices::fet::{FetKind, FetModel};
    use crate::analysis::devices::kelvin;

    fn build(p: &BTreeMap<String, f64>, kind: FetKind, ch: Channel) -> FetModel {
        FetModel::from_parameters(p, kind, ch, kelvin(27.0))
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * a.abs().max(b.abs())
    }

    #[test]
    fn jfet_fits_round_trip_exactly() {
        // invariant: the fitted model reproduces the datasheet figures it was fitted to.
        for ch in [Channel::N, Channel::P] {
            let s = ch.sign();
            let (lambda, vds) = (0.015, 15.0);
            let forms = [
                JfetFigures::ZeroGateCurrentAndCutoff {
                    idss: 6e-3,
                    vgs_off: -s * 2.2,
                },
                JfetFigures::ZeroGateCurrentAndGfs {
                    idss: 6e-3,
                    gfs: 4e-3,
                    at_id: 2e-3,
                },
                JfetFigures::CutoffAndGfs {
                    vgs_off: -s * 1.5,
                    gfs: 3e-3,
                    at_id: 1e-3,
                },
            ];
            for f in forms {
                let p = fit_jfet(f, ch, lambda, vds).unwrap();
                let m = build(&p, FetKind::Jfet, ch);
                let idss = m.channel(0.0, vds).id;
                let at_id = |id: f64| {
                    // VGS (N sense) where ID = id, from the square law inverse.
                    let vov = (id / (m.beta * (1.0 + lambda * vds))).sqrt();
                    m.channel(m.threshold + vov, vds)
                };
                match f {
                    JfetFigures::ZeroGateCurrentAndCutoff { idss: i, vgs_off } => {
                        assert!(close(idss, i) && close(s * m.threshold, vgs_off));
                    }
                    JfetFigures::ZeroGateCurrentAndGfs {
                        idss: i,
                        gfs,
                        at_id: id,
                    } => {
                        let c = at_id(id);
                        assert!(close(idss, i) && close(c.id, id) && close(c.did_dvgs, gfs));
                    }
                    JfetFigures::CutoffAndGfs {
                        vgs_off,
                        gfs,
                        at_id: id,
                    } => {
                        let c = at_id(id);
                        assert!(close(s * m.threshold, vgs_off) && close(c.did_dvgs, gfs));
                    }
                }
                // The channel is cut off just past VGS(off).
                assert_eq!(m.channel(m.threshold - 1e-9, vds).id, 0.0);
            }
        }
        assert!(fit_jfet(
            JfetFigures::ZeroGateCurrentAndCutoff {
                idss: 6e-3,
                vgs_off: 2.0
            },
            Channel::N,
            0.0,
            10.0
        )
        .is_err());
    }

    #[test]
    fn mosfet_fit_round_trips_exactly() {
        // invariant: ID at VGS(th) and at VGS(on) come back from the fitted model.
        for ch in [Channel::N, Channel::P] {
            let s = ch.sign();
            let (lambda, vds) = (0.01, 10.0);
            let p = fit_mosfet(ch, s * 2.1, 250e-6, s * 4.5, 0.8, lambda, vds).unwrap();
            let m = build(&p, FetKind::Mosfet, ch);
            // The channel alone (the reverse-biased body diode adds its Is to the pin current).
            let i_th = m.channel(2.1, vds).id;
            let i_on = m.channel(4.5, vds).id;
            assert!(close(i_th, 250e-6), "{i_th}");
            assert!(close(i_on, 0.8), "{i_on}");
        }
        assert!(fit_mosfet(Channel::N, 2.0, 1e-3, 1.0, 1.0, 0.0, 10.0).is_err());
        // ID(on) measured in the triode region cannot be fitted with the saturation form.
        assert!(fit_mosfet(Channel::N, 2.0, 1e-3, 12.0, 5.0, 0.0, 1.0).is_err());
    }

    #[test]
    fn capacitance_fit_round_trips_at_the_test_voltage() {
        // invariant: Ciss = Cgs + Cgd, Crss = Cgd, Coss = Cds + Cgd at the stated VDS.
        let c = CapacitanceFigures {
            ciss: 410e-12,
            crss: 30e-12,
            coss: 95e-12,
            vds: 25.0,
        };
        let p = fit_capacitances(c, 0.75, 0.5).unwrap();
        let m = build(&p, FetKind::Mosfet, Channel::N);
        let (cgs, cgd, cds) = m.capacitances(0.0, 25.0);
        assert!(close(cgs + cgd, c.ciss) && close(cgd, c.crss) && close(cds + cgd, c.coss));
        let bad = CapacitanceFigures { crss: 500e-12, ..c };
        assert!(fit_capacitances(bad, 0.75, 0.5).is_err());
    }
}
