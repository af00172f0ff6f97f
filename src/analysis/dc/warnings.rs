//! Designer warnings at an operating point. Each is a `Finding` with
//! severity Warning naming the part (or, for the safety caution, the nets).

use super::{OperatingPoint, Region};
use crate::analysis::circuit::{Circuit, ElementKind};
use crate::netlist::{Finding, Severity, Subject};
use crate::units::{format, Unit};

/// Above this many volts DC between any two nets the safety caution shows
/// (the ES1 limit of IEC 62368-1 for circuits a person may touch).
pub const SAFETY_LIMIT_VOLTS: f64 = 60.0;
/// βF sensitivity above which the bias "depends strongly on βF".
pub const SENSITIVITY_LIMIT: f64 = 0.5;
/// A collector current below this is flagged as very low.
pub const LOW_COLLECTOR_CURRENT: f64 = 10e-6;
/// Saturation margin below which the collector is "close to saturation", V.
pub const NEAR_SATURATION: f64 = 1.0;
/// A polarised capacitor reversed by more than this is flagged, V.
pub const REVERSED_CAPACITOR: f64 = 0.1;

fn warn(part: &str, message: String) -> Finding {
    Finding {
        severity: Severity::Warning,
        subject: Subject::Part(part.to_string()),
        position: None,
        message,
    }
}

fn v(x: f64) -> String {
    format(x, Unit::Volt)
}
fn a(x: f64) -> String {
    format(x, Unit::Ampere)
}
fn w(x: f64) -> String {
    format(x, Unit::Watt)
}

pub fn designer_warnings(c: &Circuit, op: &OperatingPoint) -> Vec<Finding> {
    let mut out = Vec::new();
    let ambient = c.kelvin - crate::analysis::ZERO_CELSIUS;
    for f in &op.fets {
        out.extend(f.warnings.iter().map(|m| warn(&f.designator, m.clone())));
    }
    for t in &op.transistors {
        let k = t.element;
        let ElementKind::Bjt { model, .. } = &c.elements[k].kind else {
            continue;
        };
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
                let e = &c.elements[k];
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

    for dop in &op.diodes {
        let ElementKind::Diode(m) = &c.elements[dop.element].kind else {
            continue;
        };
        let d = dop.designator.as_str();
        // Past `EXP_LIMIT`·n·VT the diode law is continued as a straight
        // line (for Newton's sake): a solution there is not a real diode's.
        let n_vt = m.emission_coefficient * m.thermal_voltage;
        let junction = dop.voltage - dop.current * m.series_resistance;
        if junction > crate::analysis::devices::EXP_LIMIT * n_vt {
            out.push(warn(
                d,
                format!(
                    "{d} is held at {} across its junction, past the {} where the diode law \
                     ends: nothing in the circuit limits its current ({} is the model's straight-line \
                     continuation, not a real diode's); add resistance in series",
                    v(junction),
                    v(crate::analysis::devices::EXP_LIMIT * n_vt),
                    a(dop.current)
                ),
            ));
        }
        if let Some(max) = m.ratings.max_forward_current {
            if dop.current > max {
                out.push(warn(
                    d,
                    format!(
                        "{d} carries {}, above its rating of {}",
                        a(dop.current),
                        a(max)
                    ),
                ));
            }
        }
        if let Some(max) = m.ratings.max_reverse_voltage {
            if -dop.voltage > max {
                out.push(warn(
                    d,
                    format!(
                        "{d} blocks {}, above its reverse rating of {}",
                        v(-dop.voltage),
                        v(max)
                    ),
                ));
            }
        }
        if let Some(max) = m.ratings.max_power {
            if dop.power > max {
                out.push(warn(
                    d,
                    format!(
                        "{d} dissipates {}, above its rating of {}",
                        w(dop.power),
                        w(max)
                    ),
                ));
            }
        }
    }

    for e in &c.elements {
        let d = e.designator.as_str();
        let volts = |n: usize| op.node_voltages[n];
        match e.kind {
            ElementKind::Resistor { .. } => {
                if let Some(max) = e.power_rating {
                    let p = op.parts.get(e.part).map_or(0.0, |p| p.power);
                    if p > max {
                        out.push(warn(
                            d,
                            format!(
                                "{d} dissipates {}, above its power rating of {}: choose a \
                                 larger resistor",
                                w(p),
                                w(max)
                            ),
                        ));
                    }
                }
            }
            ElementKind::Capacitor { .. } => {
                let across = volts(e.nodes[0]) - volts(e.nodes[1]);
                if e.polarised && across < -REVERSED_CAPACITOR {
                    out.push(warn(
                        d,
                        format!(
                            "{d} is polarised but sits reversed ({} from its positive to its \
                             negative pin): turn it round",
                            v(across)
                        ),
                    ));
                }
                if let Some(max) = e.voltage_rating {
                    if across.abs() > max {
                        out.push(warn(
                            d,
                            format!(
                                "{d} has {} across it, above its voltage rating of {}",
                                v(across.abs()),
                                v(max)
                            ),
                        ));
                    }
                }
            }
            _ => {}
        }
    }

    if op.largest_voltage > SAFETY_LIMIT_VOLTS {
        let (hi, lo) = &op.largest_voltage_nets;
        out.push(Finding {
            severity: Severity::Warning,
            subject: Subject::Net(hi.clone()),
            position: None,
            message: format!(
                "safety caution: {} DC between nets {hi} and {lo} is above {} DC, the ES1 \
                 limit of IEC 62368-1 for circuits a person may touch. Guard the circuit \
                 against contact and follow your local electrical codes; have a licensed \
                 practitioner review anything built to these voltages",
                above_limit(op.largest_voltage, &v as &dyn Fn(f64) -> String),
                v(SAFETY_LIMIT_VOLTS)
            ),
        });
    }
    out
}

/// The largest voltage as printed beside the limit: three significant figures,
/// or as many decimals as it takes not to read as the limit itself (60.01 V,
/// never "60 V … above 60 V").
fn above_limit(volts: f64, v: &dyn Fn(f64) -> String) -> String {
    let three = v(volts);
    if three != v(SAFETY_LIMIT_VOLTS) {
        return three;
    }
    for decimals in 2..=9 {
        let s = format!("{volts:.decimals$}");
        let limit = format!("{SAFETY_LIMIT_VOLTS:.decimals$}");
        if s != limit {
            return format!("{s} V");
        }
    }
    format!("{volts} V")
}
