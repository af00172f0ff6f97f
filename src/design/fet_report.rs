//! The text of a JFET stage design: what was chosen, what the engine
//! measured of it, and the drain current at both ends of the spread.

use super::fet::{FetDesign, FetDevice, FetStage};
use crate::units::{self, Unit};
use std::fmt::Write;

/// The design as text.
pub fn text(d: &FetDesign) -> String {
    let mut o = String::new();
    let t = &d.targets;
    let r = |v: f64| units::format(v, Unit::Ohm);
    let a = |v: f64| units::format(v, Unit::Ampere);
    let v = |x: f64| units::format(x, Unit::Volt);
    let _ = writeln!(
        o,
        "Design: {} on {}, preset {}",
        t.stage.words(),
        v(t.supply),
        t.preset
    );
    match &d.device {
        FetDevice::Jfet(j) => {
            let _ = writeln!(
                o,
                "  JFET: IDSS {} ({} … {}), |VP| {} ({} … {}), λ {} /V",
                a(j.idss),
                a(j.idss_min),
                a(j.idss_max),
                v(j.pinch_off),
                v(j.pinch_off_min),
                v(j.pinch_off_max),
                units::echo(j.lambda)
            );
        }
        FetDevice::Mosfet(m) => {
            let _ = writeln!(
                o,
                "  MOSFET: VGS(th) {} ({} … {}), β {} A/V², λ {} /V",
                v(m.threshold),
                v(m.threshold_min),
                v(m.threshold_max),
                units::echo(m.beta),
                units::echo(m.lambda)
            );
        }
    }
    let _ = writeln!(o, "  target drain current {}", a(d.drain_current));
    if let Some(c) = &d.bias_choice {
        let _ = writeln!(
            o,
            "  source voltage ID·RSB {} (the headroom allows up to {}), aimed to hold ID within \
             {} … {} over the threshold spread; the bias equation gives {} … {} before rounding{}",
            v(c.source_voltage),
            v(c.source_voltage_max),
            a(c.aim_min),
            a(c.aim_max),
            a(c.estimate_low),
            a(c.estimate_high),
            if c.headroom_limited {
                " (the headroom, not the window, set it)"
            } else {
                ""
            }
        );
    }
    let _ = writeln!(o, "\n{:<6} {:>12} {:>12}", "part", "computed", "preferred");
    for (k, c) in &d.continuous {
        let p = d.values.get(k).copied().unwrap_or(f64::NAN);
        let (cs, ps) = if k.starts_with('C') {
            (
                units::format(*c, Unit::Farad),
                units::format(p, Unit::Farad),
            )
        } else {
            (r(*c), r(p))
        };
        let _ = writeln!(o, "{k:<6} {cs:>12} {ps:>12}");
    }
    let m = &d.measured;
    let _ = writeln!(o, "\nThe engine on the preferred-value design:");
    let _ = writeln!(
        o,
        "  ID {} ({:+.2} % from the target), VGS {}, VDS {}, gm {:.4} mS",
        a(d.drain_current_achieved),
        (d.drain_current_achieved / d.drain_current - 1.0) * 100.0,
        v(d.vgs),
        v(d.vds),
        d.gm * 1e3
    );
    let _ = writeln!(
        o,
        "  gain {:.4} ({:.2} dB){}, Zin {}, Zout {}, low corner {}",
        m.gain,
        m.gain_db(),
        t.gain_db
            .map_or(String::new(), |g| format!(" against {g} dB asked")),
        r(m.input_impedance),
        m.output_impedance.map_or("—".into(), r),
        m.low_corner
            .map_or("—".into(), |f| units::format(f, Unit::Hertz))
    );
    let _ = writeln!(
        o,
        "\nDrain current over the spread (the engine, {}):",
        match d.device {
            FetDevice::Jfet(_) => "IDSS and |VP| both at one end bound ID",
            FetDevice::Mosfet(_) => "VGS(th) at its maximum and minimum bound ID",
        }
    );
    for e in &d.ends {
        let _ = writeln!(
            o,
            "  {:<4} {}: ID {}, VDS {}",
            e.end,
            e.words(),
            a(e.drain_current),
            v(e.vds)
        );
    }
    if t.drain_current_min.is_some() || t.drain_current_max.is_some() {
        let _ = writeln!(
            o,
            "  limits: {} … {}",
            t.drain_current_min.map_or("—".into(), a),
            t.drain_current_max.map_or("—".into(), a)
        );
    }
    for w in &m.warnings {
        let _ = writeln!(o, "warning: {w}");
    }
    for miss in &d.misses {
        let _ = writeln!(o, "MISSED: {miss}");
    }
    if d.misses.is_empty() && (t.drain_current_min.is_some() || t.drain_current_max.is_some()) {
        let _ = writeln!(o, "The drain current stays inside its limits at both ends.");
    }
    if t.stage == FetStage::JfetFollower && t.gain_db.is_none() {
        let _ = writeln!(
            o,
            "(a follower: its gain is whatever gm·RSB gives, below 1)"
        );
    }
    o
}
