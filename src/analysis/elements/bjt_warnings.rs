//! A bipolar transistor's designer warnings at its operating point: its
//! junction law's end, region (saturated, cut off, reversed, near
//! saturation), a very low collector current, a bias that hangs on βF, the
//! ratings (current, voltages, power, junction temperature) and high
//! injection. Asked through `Model::warnings`.

use super::At;
use crate::analysis::dc::warnings::{
    a, v, w, warn, LOW_COLLECTOR_CURRENT, NEAR_SATURATION, SENSITIVITY_LIMIT,
};
use crate::analysis::dc::{Region, TransistorOperatingPoint};
use crate::analysis::devices::bjt::BjtModel;
use crate::netlist::Finding;

/// The warnings about transistor `t` (model `model`, element `at`).
pub(super) fn warnings(
    model: &BjtModel,
    at: &At,
    t: &TransistorOperatingPoint,
    out: &mut Vec<Finding>,
) {
    let ambient = at.circuit.kelvin - crate::analysis::ZERO_CELSIUS;
    let d = t.designator.as_str();
    let s = model.polarity.sign();
    let r = &model.ratings;
    // Past `EXP_LIMIT`·n·VT the junction law is continued as a straight
    // line (for Newton's sake): a solution there is not a real device's.
    let end = crate::analysis::devices::EXP_LIMIT * model.thermal_voltage;
    for (junction, volts, n) in [
        ("base–emitter", t.vbe_intrinsic, model.forward_emission),
        ("base–collector", t.vbc_intrinsic, model.reverse_emission),
    ] {
        if volts > end * n {
            out.push(warn(
                d,
                format!(
                    "{d}'s {junction} junction is held at {}, past the {} where the junction \
                     law ends: nothing in the circuit limits its current (the figures are the \
                     model's straight-line continuation, not a real transistor's); add \
                     resistance in series with the drive",
                    v(s * volts),
                    v(s * end * n)
                ),
            ));
        }
    }
    match t.region {
        Region::Saturation => out.push(warn(
            d,
            format!(
                "{d} is saturated (VCE = {}, both junctions conduct): as an amplifier it \
                 has no room to swing; reduce the base drive or the collector resistor",
                v(t.vce)
            ),
        )),
        Region::CutOff => out.push(warn(
            d,
            format!(
                "{d} is cut off (VBE = {}, IC = {}): check the base bias network",
                v(t.vbe),
                a(t.ic)
            ),
        )),
        Region::ReverseActive => out.push(warn(
            d,
            format!(
                "{d} works in reverse active (base–collector forward, base–emitter \
                 reverse): its collector and emitter look swapped; check the symbol's \
                 orientation"
            ),
        )),
        Region::ForwardActive => {
            // A diode-connected transistor (collector and base on one
            // net) sits at VCB = 0 by design: no near-saturation warning.
            let e = at.element;
            let diode_connected = e.nodes[0] == e.nodes[1];
            if t.saturation_margin < NEAR_SATURATION && !diode_connected {
                out.push(warn(
                    d,
                    format!(
                        "{d} is within {} of saturation (VCE = {}): the output can \
                         swing only {} toward the emitter before clipping",
                        v(NEAR_SATURATION),
                        v(t.vce),
                        v(t.saturation_margin)
                    ),
                ));
            }
            if (s * t.ic) < LOW_COLLECTOR_CURRENT {
                out.push(warn(
                    d,
                    format!(
                        "{d} runs at a very low collector current ({}, under {}): gain \
                         and speed suffer and leakage matters; check the bias",
                        a(t.ic),
                        a(LOW_COLLECTOR_CURRENT)
                    ),
                ));
            }
            if t.beta_sensitivity > SENSITIVITY_LIMIT {
                out.push(warn(
                    d,
                    format!(
                        "the bias of {d} depends strongly on βF (S = ∂IC/∂βF·βF/IC = \
                         {:.2}, above {SENSITIVITY_LIMIT}): parts of one type spread about \
                         3:1 in βF; add emitter degeneration or a stiffer divider",
                        t.beta_sensitivity
                    ),
                ));
            }
        }
    }
    if let Some(max) = r.max_collector_current {
        if t.ic.abs() > max {
            out.push(warn(
                d,
                format!(
                    "{d} carries {} collector current, above its rating of {}",
                    a(t.ic.abs()),
                    a(max)
                ),
            ));
        }
    }
    // High injection: above the knee current βF falls roughly as Ik/IC
    // (Gummel and Poon, 1970), so the stage has less current gain than βF says.
    let knee = model.forward_knee_current;
    if knee.is_finite() && s * t.ic > knee {
        out.push(warn(
            d,
            format!(
                "{d} runs above its knee current ({} > {}): its current gain has \
                 fallen to hFE {:.0}",
                a(s * t.ic),
                a(knee),
                t.dc_current_gain
            ),
        ));
    }
    let vce = s * t.vce;
    let vcb = s * t.vcb;
    let veb = -s * t.vbe;
    for (value, max, what) in [
        (vce, r.max_collector_emitter_voltage, "collector–emitter"),
        (vcb, r.max_collector_base_voltage, "collector–base"),
        (veb, r.max_emitter_base_voltage, "reverse emitter–base"),
    ] {
        if let Some(max) = max {
            if value > max {
                out.push(warn(
                    d,
                    format!(
                        "{d}: the {what} voltage is {}, above its rating of {}: the \
                         junction may break down; lower the supply or choose a part \
                         rated higher",
                        v(value),
                        v(max)
                    ),
                ));
            }
        }
    }
    if let Some(max) = r.max_power {
        if t.power > max {
            out.push(warn(
                d,
                format!(
                    "{d} dissipates {}, above its rating of {}",
                    w(t.power),
                    w(max)
                ),
            ));
        }
    }
    if let (Some(tj), Some(max)) = (t.junction_celsius, r.max_junction_celsius) {
        if tj > max {
            out.push(warn(
                d,
                format!(
                    "{d}: junction temperature {} (ambient {ambient:.0} °C + P·θJA) \
                     is above its maximum of {max:.0} °C; reduce the dissipation or add \
                     a heat sink",
                    crate::units::celsius(tj, 0)
                ),
            ));
        }
    }
}
