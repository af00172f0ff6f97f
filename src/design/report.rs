//! A design as text (targets against achieved, the first guess beside, the
//! snapped values) and as JSON.

use super::measure::Measured;
use super::solve::{Design, Stage};
use crate::units::{format as f, Unit};
use std::fmt::Write;

fn ohm(v: f64) -> String {
    f(v, Unit::Ohm)
}

fn value(designator: &str, v: f64) -> String {
    if designator.starts_with('C') {
        f(v, Unit::Farad)
    } else {
        ohm(v)
    }
}

/// One row per figure: target, first guess, continuous, snapped.
fn rows(d: &Design) -> Vec<(String, String, [Option<String>; 3])> {
    let t = &d.targets;
    let stages = [&d.first_guess, &d.continuous, &d.snapped];
    let fig = |g: &dyn Fn(&Measured) -> Option<String>| -> [Option<String>; 3] {
        stages.map(|s: &Stage| s.measured.as_ref().ok().and_then(g))
    };
    let mut r = Vec::new();
    let ic_target = match (t.topology, t.input_impedance) {
        (super::Topology::CommonBase, Some(_)) => "(from Zin)".to_string(),
        _ if d.current_chosen => format!("(chosen) {}", f(t.ic(), Unit::Ampere)),
        _ => f(t.ic(), Unit::Ampere),
    };
    r.push((
        "IC(Q1)".into(),
        ic_target,
        fig(&|m| m.device("Q1").map(|x| f(x.ic, Unit::Ampere))),
    ));
    if t.topology == super::Topology::EmitterIntoFollower {
        r.push((
            "IC(Q2)".into(),
            f(t.follower_current.unwrap_or(t.ic()), Unit::Ampere),
            fig(&|m| m.device("Q2").map(|x| f(x.ic, Unit::Ampere))),
        ));
    }
    r.push((
        "gain (input → load)".into(),
        t.gain_db.map_or("—".into(), |g| format!("{g:.2} dB")),
        fig(&|m| Some(format!("{:.2} dB", m.gain_db()))),
    ));
    r.push((
        "Zin".into(),
        t.input_impedance.map_or("—".into(), ohm),
        fig(&|m| Some(ohm(m.input_impedance))),
    ));
    r.push((
        "low corner".into(),
        format!("≤ {}", f(t.low_corner, Unit::Hertz)),
        fig(&|m| m.low_corner.map(|c| f(c, Unit::Hertz))),
    ));
    r.push((
        "S (βF sensitivity)".into(),
        format!("≤ {}", t.stability),
        fig(&|m| {
            Some(format!(
                "{:.3}",
                m.devices.iter().map(|d| d.sensitivity).fold(0.0, f64::max)
            ))
        }),
    ));
    for q in ["Q1", "Q2"] {
        if d.continuous
            .measured
            .as_ref()
            .ok()
            .and_then(|m| m.device(q))
            .is_none()
        {
            continue;
        }
        r.push((
            format!("VCE({q})"),
            "—".into(),
            fig(&|m| m.device(q).map(|x| f(x.vce, Unit::Volt))),
        ));
        r.push((
            format!("swing({q}) sat/cut-off"),
            if d.equations
                .contains(&super::solve::Equation::SwingCentred(if q == "Q1" {
                    "Q1"
                } else {
                    "Q2"
                }))
            {
                "equal".into()
            } else {
                "—".into()
            },
            fig(&|m| {
                m.device(q)
                    .and_then(|x| x.swing)
                    .map(|(a, b)| format!("{:.2}/{:.2} V", a, b))
            }),
        ));
    }
    r
}

/// The report of `biasline design`.
pub fn text(d: &Design) -> String {
    let t = &d.targets;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "Design: {} on {} V, load {}, source {}, preset {}",
        t.topology.words(),
        t.supply,
        ohm(t.load),
        ohm(t.source_resistance),
        t.preset
    );
    let _ = writeln!(
        s,
        "Solved by Newton on the part values over the engine's own analysis ({} steps, {} analyses); \
         equations: {}.",
        d.iterations,
        d.evaluations,
        d.equations.iter().map(|e| e.words()).collect::<Vec<_>>().join(", ")
    );
    let _ = writeln!(
        s,
        "\n{:<24} {:>12} {:>14} {:>14} {:>14}",
        "figure", "target", "first guess", "continuous", t.resistor_series.name
    );
    for (name, target, v) in rows(d) {
        let c = |x: &Option<String>| x.clone().unwrap_or("—".into());
        let _ = writeln!(
            s,
            "{:<24} {:>12} {:>14} {:>14} {:>14}",
            name,
            target,
            c(&v[0]),
            c(&v[1]),
            c(&v[2])
        );
    }
    let _ = writeln!(
        s,
        "\n{:<6} {:>14} {:>14} {:>14}",
        "part", "first guess", "continuous", "preferred"
    );
    for (k, v) in &d.continuous.values {
        let g = d.first_guess.values.get(k).copied().unwrap_or(f64::NAN);
        let p = d.snapped.values.get(k).copied().unwrap_or(f64::NAN);
        let _ = writeln!(
            s,
            "{:<6} {:>14} {:>14} {:>14}",
            k,
            value(k, g),
            value(k, *v),
            value(k, p)
        );
    }
    let _ = writeln!(
        s,
        "\nFirst guess: textbook procedure (VE ≈ VCC/10, divider current ≈ 10 × IB, VBE ≈ 0.65 V; common practice). \
         The engine's values differ because"
    );
    for r in &d.reasons {
        let _ = writeln!(s, "  - {r}");
    }
    let _ = writeln!(
        s,
        "Preferred values ({} resistors, {} capacitors rounded up): each resistor at its neighbour below \
         or above, the combinations ranked by the engine's Jacobian and the best four re-analysed. First-order bound when every value \
         moves at most one step of {} (×{:.4}):",
        t.resistor_series.name,
        t.capacitor_series.name,
        t.resistor_series.name,
        t.resistor_series.step()
    );
    for b in &d.bounds {
        let achieved = snapped_miss(d, &b.figure);
        let _ = writeln!(
            s,
            "  {:<22} within ±{:.2} %{}",
            b.figure,
            (b.log_bound.exp() - 1.0) * 100.0,
            achieved.map_or(String::new(), |a| format!(
                " (snapped: {:+.2} %)",
                a * 100.0
            ))
        );
    }
    if let Ok(m) = &d.snapped.measured {
        for w in &m.warnings {
            let _ = writeln!(s, "warning: {w}");
        }
    }
    s
}

/// The snapped design's relative miss on the figure named like an equation.
pub fn snapped_miss(d: &Design, figure: &str) -> Option<f64> {
    let m = d.snapped.measured.as_ref().ok()?;
    d.equations
        .iter()
        .find(|e| e.words() == figure)
        .and_then(|e| match e {
            super::solve::Equation::Current(q, i) => m.device(q).map(|x| x.ic / i - 1.0),
            super::solve::Equation::Gain(a) => Some(m.gain / a - 1.0),
            super::solve::Equation::InputImpedance(z) => Some(m.input_impedance / z - 1.0),
            _ => None,
        })
}
