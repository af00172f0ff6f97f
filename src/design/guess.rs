//! The textbook first guess (common practice, e.g. the "VE ≈ VCC/10,
//! divider current ≈ 10 × IB, collector halfway" procedure of introductory
//! courses; Horowitz and Hill, "The Art of Electronics", ch. 2, uses the
//! same rules of thumb). Hand formulas with VBE ≈ 0.65 V, IE ≈ IC,
//! re = VT/IC and hFE taken as the preset's βF. The engine's design then
//! differs from it for the reasons [`reasons`] lists.

use super::targets::{Targets, Topology};
use super::{DesignError, Values};
use crate::analysis::{thermal_voltage, ZERO_CELSIUS};
use std::f64::consts::PI;

/// Base–emitter voltage of the hand formulas, V (common practice).
pub const VBE: f64 = 0.65;

fn par(a: f64, b: f64) -> f64 {
    a * b / (a + b)
}

/// The preset's βF (the hand formulas take hFE ≈ βF).
pub fn beta(t: &Targets) -> f64 {
    crate::presets::find(&t.preset)
        .and_then(|p| {
            p.parameters
                .iter()
                .find(|(k, _)| *k == crate::presets::keys::FORWARD_BETA)
        })
        .map_or(100.0, |(_, v)| *v)
}

/// VT at the default analysis temperature (27 °C).
pub fn vt() -> f64 {
    thermal_voltage(27.0 + ZERO_CELSIUS)
}

/// Coupling capacitor for a corner at `f` through resistance `r`.
fn cap(r: f64, f: f64) -> f64 {
    1.0 / (2.0 * PI * r * f)
}

/// The textbook values, and the textbook's own estimate of Zin.
pub fn first_guess(t: &Targets) -> Result<Values, DesignError> {
    let vcc = t.supply;
    let b = beta(t);
    let fl = t.low_corner;
    let mut v = Values::new();
    let put = |v: &mut Values, k: &str, x: f64| {
        v.insert(k.to_string(), x);
    };
    // Divider from 10 × IB through R2 (and 11 × IB through R1).
    let divider = |v: &mut Values, vb: f64, ib: f64| {
        put(v, "R1", (vcc - vb) / (11.0 * ib));
        put(v, "R2", vb / (10.0 * ib));
    };
    let rb = |v: &Values| par(v["R1"], v["R2"]);
    match t.topology {
        Topology::CommonEmitter | Topology::EmitterIntoFollower => {
            let ic = t.ic();
            let a = t.gain().unwrap_or(1.0);
            let ve = vcc / 10.0;
            let vb = ve + VBE;
            divider(&mut v, vb, ic / b);
            let re = vt() / ic;
            let (rc, rac) = if t.topology == Topology::CommonEmitter {
                let rc = (vcc - (vcc + ve) / 2.0) / ic;
                (rc, par(rc, t.load))
            } else {
                // Follower emitter at VCC/2, so the first collector sits a VBE above it.
                let ic2 = t.follower_current.unwrap_or(ic);
                let ve2 = vcc / 2.0;
                put(&mut v, "RE3", ve2 / ic2);
                let rc = (vcc - ve2 - VBE) / ic;
                (rc, par(rc, b * par(ve2 / ic2, t.load)))
            };
            put(&mut v, "RC", rc);
            let re1 = (rac / a - re).max(1.0);
            let re2 = (ve / ic - re1).max(1.0);
            put(&mut v, "RE1", re1);
            put(&mut v, "RE2", re2);
            let zin = par(rb(&v), b * (re + re1));
            put(&mut v, "C1", cap(t.source_resistance + zin, fl / 10.0));
            put(&mut v, "C2", cap(rc + t.load, fl / 10.0));
            let rs_b = par(t.source_resistance, rb(&v));
            put(&mut v, "CE", cap(par(re2, re + re1 + rs_b / b), fl));
        }
        Topology::CommonCollector => {
            let ic = t.ic();
            let ve = vcc / 2.0;
            let vb = ve + VBE;
            divider(&mut v, vb, ic / b);
            let re_ = ve / ic;
            put(&mut v, "RE", re_);
            let zin = par(rb(&v), b * par(re_, t.load));
            put(&mut v, "C1", cap(t.source_resistance + zin, fl / 10.0));
            let zout = vt() / ic + par(t.source_resistance, rb(&v)) / b;
            put(&mut v, "C2", cap(zout + t.load, fl));
        }
        Topology::CommonBase => {
            // re ≈ Zin when the emitter resistor is much larger.
            let ic = match t.input_impedance {
                Some(z) => vt() / z,
                None => t.ic(),
            };
            let ve = vcc / 10.0;
            let vb = ve + VBE;
            divider(&mut v, vb, ic / b);
            put(&mut v, "RE", ve / ic);
            let re = vt() / ic;
            let a = t.gain().unwrap_or(1.0);
            let rac = a * re;
            if rac >= t.load {
                let what = if t.input_impedance.is_some() {
                    "lower --zin (Zin ≈ re = VT/IE sets the collector current) or lower the gain"
                } else {
                    "raise --ic or lower the gain"
                };
                return Err(DesignError(format!(
                    "gain {} dB into {} needs a collector load above the load itself at {}; {what}",
                    crate::units::fixed(t.gain_db.unwrap_or(0.0), 1),
                    crate::units::format(t.load, crate::units::Unit::Ohm),
                    crate::units::format(ic, crate::units::Unit::Ampere),
                )));
            }
            let rc = 1.0 / (1.0 / rac - 1.0 / t.load);
            put(&mut v, "RC", rc);
            let zin = par(re, ve / ic);
            put(&mut v, "C1", cap(t.source_resistance + zin, fl));
            put(&mut v, "C2", cap(rc + t.load, fl / 10.0));
            let cb = cap(rb(&v), fl / 10.0);
            put(&mut v, "CB", cb);
        }
    }
    if v.values().any(|x| !(x.is_finite() && *x > 0.0)) {
        return Err(DesignError(
            "the hand formulas give no positive part values for these targets".into(),
        ));
    }
    Ok(v)
}

/// Why the engine's values differ from the first guess, in plain words.
pub fn reasons(t: &Targets) -> Vec<String> {
    let mut r = vec![
        "the engine uses the real VBE, hFE and Early effect at the operating point, not 0.65 V, βF and none".to_string(),
    ];
    match t.topology {
        Topology::CommonEmitter | Topology::EmitterIntoFollower | Topology::CommonCollector => {
            r.push("the divider is sized for the Zin target, not for 10 × IB".into());
        }
        Topology::CommonBase => {
            r.push("the divider is as light as the βF-sensitivity limit allows, not 10 × IB".into())
        }
    }
    if t.topology == Topology::CommonBase {
        r.push(
            "the collector resistor is solved for the exact gain, with the emitter at VCC/10"
                .into(),
        );
    } else {
        r.push(
            "the first collector's DC level is placed for equal swing toward saturation and cut-off \
             with its AC load connected, not halfway"
                .into(),
        );
    }
    if matches!(
        t.topology,
        Topology::CommonEmitter | Topology::EmitterIntoFollower
    ) {
        r.push(
            "VE stays at VCC/10 unless the βF-sensitivity limit needs more emitter resistance"
                .into(),
        );
    }
    r.push(
        "the capacitors keep the textbook's proportions and are scaled together so the exact \
         −3 dB corner of the whole response falls on the target"
            .into(),
    );
    r
}
