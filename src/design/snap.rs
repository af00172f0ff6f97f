//! Preferred values for a whole document (`biasline snap`), and for a
//! design's continuous solution (the neighbour search).

use super::eseries::Series;
use super::measure::{Measured, Probe};
use super::solve::{self, Equation, Stage};
use super::targets::Targets;
use super::{layout, Values};
use crate::analysis::{circuit, dc, small_signal};
use crate::document::{Document, PartKind};
use crate::netlist;
use serde::Serialize;

/// How capacitors are rounded.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CapacitorRounding {
    /// To the nearest member.
    Nearest,
    /// Up (a larger coupling capacitor only lowers the corner).
    Up,
}

/// One value that moved.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Change {
    pub designator: String,
    /// `resistance` or `capacitance`.
    pub parameter: String,
    pub before: f64,
    pub after: f64,
    /// after/before − 1.
    pub relative: f64,
    pub series: String,
}

/// One figure before and after.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FigureChange {
    /// e.g. `IC(Q1)`, `Zin`, `gain_dB`.
    pub quantity: String,
    pub unit: String,
    pub before: Option<f64>,
    pub after: Option<f64>,
}

/// What `snap` did.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SnapReport {
    pub resistor_series: String,
    pub capacitor_series: String,
    pub changes: Vec<Change>,
    /// Parts left alone because they model the outside world (the signal
    /// source's own resistance, the load).
    pub kept: Vec<String>,
    pub figures: Vec<FigureChange>,
    /// Why figures are missing.
    pub notes: Vec<String>,
}

/// Designators that stand for the outside world: the load and the
/// resistors in series with the signal source.
fn outside(doc: &Document, nl: &netlist::Netlist) -> Vec<String> {
    let chain = crate::analysis::stages::recognise(doc, nl);
    let mut v: Vec<String> = chain.source.map(|s| s.series).unwrap_or_default();
    if let Some(l) = chain.load {
        v.push(l.designator);
    }
    v
}

/// Round every resistor to `rs` and every capacitor to `cs` (nearest).
pub fn snap_document(doc: &Document, rs: Series, cs: Series) -> (Document, SnapReport) {
    let nl = netlist::connect(doc);
    let kept = outside(doc, &nl);
    let mut out = doc.clone();
    let mut changes = Vec::new();
    for p in &mut out.parts {
        let (key, series) = match p.kind {
            PartKind::Resistor => ("resistance", rs),
            PartKind::Capacitor | PartKind::PolarisedCapacitor => ("capacitance", cs),
            _ => continue,
        };
        if kept.contains(&p.designator) {
            continue;
        }
        let Some(before) = p.parameter(key) else {
            continue;
        };
        let after = series.nearest(before);
        if after != before {
            p.parameters.insert(key.into(), after);
            changes.push(Change {
                designator: p.label(),
                parameter: key.into(),
                before,
                after,
                relative: after / before - 1.0,
                series: series.name.into(),
            });
        }
    }
    let mut notes = Vec::new();
    let before = figures(doc, &nl, &mut notes);
    let after = figures(&out, &nl, &mut notes);
    notes.dedup();
    let mut list = Vec::new();
    for (q, u, b) in &before {
        let a = after.iter().find(|(qa, _, _)| qa == q).map(|x| x.2);
        list.push(FigureChange {
            quantity: q.clone(),
            unit: u.to_string(),
            before: Some(*b),
            after: a,
        });
    }
    for (q, u, a) in &after {
        if !before.iter().any(|(qb, _, _)| qb == q) {
            list.push(FigureChange {
                quantity: q.clone(),
                unit: u.to_string(),
                before: None,
                after: Some(*a),
            });
        }
    }
    let report = SnapReport {
        resistor_series: rs.name.into(),
        capacitor_series: cs.name.into(),
        changes,
        kept,
        figures: list,
        notes,
    };
    (out, report)
}

/// Every transistor's operating point and the chain's figures.
fn figures(
    doc: &Document,
    nl: &netlist::Netlist,
    notes: &mut Vec<String>,
) -> Vec<(String, &'static str, f64)> {
    let mut v = Vec::new();
    let Ok(c) = circuit::build(doc, nl) else {
        notes.push("the rules check finds errors: no operating point".into());
        return v;
    };
    let op = match dc::solve_circuit(&c) {
        Ok(op) => op,
        Err(e) => {
            notes.push(format!("no operating point: {}", e.to_string().trim_end()));
            return v;
        }
    };
    for t in op.transistors() {
        let d = &t.designator;
        v.push((format!("IC({d})"), "A", t.ic));
        v.push((format!("VCE({d})"), "V", t.vce));
        v.push((format!("S({d})"), "", t.beta_sensitivity));
        v.push((format!("saturation_margin({d})"), "V", t.saturation_margin));
    }
    if doc.signal.source.is_none() || op.transistors().next().is_none() {
        return v;
    }
    let a = small_signal::analyse(doc, nl, &c, &op);
    for s in &a.midband.stages {
        let d = &s.transistor;
        let put = |v: &mut Vec<_>, q: String, u, x: Option<f64>| {
            if let Some(x) = x.filter(|x: &f64| x.is_finite()) {
                v.push((q, u, x));
            }
        };
        put(&mut v, format!("Av({d})"), "", s.voltage_gain.exact);
        put(&mut v, format!("Zin({d})"), "Ω", s.input_impedance.exact);
        put(&mut v, format!("Zout({d})"), "Ω", s.output_impedance.exact);
    }
    let ch = &a.midband.chain;
    let put = |v: &mut Vec<_>, q: &str, u, x: Option<f64>| {
        if let Some(x) = x.filter(|x: &f64| x.is_finite()) {
            v.push((q.to_string(), u, x));
        }
    };
    put(&mut v, "Zin", "Ω", ch.input_impedance);
    put(&mut v, "Zout", "Ω", ch.output_impedance);
    put(&mut v, "gain_dB", "dB", ch.voltage_gain_db);
    put(&mut v, "source_gain_dB", "dB", ch.source_gain_db);
    put(
        &mut v,
        "low_corner",
        "Hz",
        super::measure::low_corner(&a.small_signal, &a.chain),
    );
    v
}

/// How far a candidate is from the targets (sum of squared log misses, with
/// a heavy price on leaving forward-active or passing the S limit).
fn score(t: &Targets, eqs: &[Equation], m: &Measured) -> f64 {
    let mut s = 0.0;
    for e in eqs {
        if let Equation::Current(..) | Equation::Gain(_) | Equation::InputImpedance(_) = e {
            let r = match e {
                Equation::Current(d, i) => m.device(d).map(|x| (x.ic / i).ln()),
                Equation::Gain(a) => Some((m.gain / a).ln()),
                Equation::InputImpedance(z) => Some((m.input_impedance / z).ln()),
                _ => None,
            };
            s += r.map_or(1e3, |r| r * r);
        }
    }
    for d in &m.devices {
        if d.sensitivity > t.stability {
            s += 1.0 + (d.sensitivity - t.stability);
        }
        if d.saturation_margin <= 0.0 {
            s += 100.0;
        }
    }
    s
}

/// Preferred values for a design: each resistor the solver chose may take
/// its member below or above. Every combination is ranked by the engine's
/// own Jacobian at the continuous solution (first-order change of each
/// target figure), and the best few are re-analysed in full; the one
/// nearest the targets (with S and forward-active as hard limits) is kept.
/// Capacitors go up to the capacitor series.
pub fn snap_design(
    t: &Targets,
    values: &Values,
    vars: &[&str],
    eqs: &[Equation],
    jac: &nalgebra::DMatrix<f64>,
) -> Stage {
    let rs = t.resistor_series;
    let mut base = values.clone();
    for (k, v) in base.iter_mut() {
        if k.starts_with('C') {
            *v = t.capacitor_series.up(*v);
        } else {
            *v = rs.nearest(*v);
        }
    }
    let options: Vec<Vec<f64>> = vars
        .iter()
        .map(|k| {
            let v = values[*k];
            let (d, u) = (rs.down(v), rs.up(v));
            if d == u {
                vec![d]
            } else {
                vec![d, u]
            }
        })
        .collect();
    let target_rows: Vec<usize> = eqs
        .iter()
        .enumerate()
        .filter(|(_, e)| {
            matches!(
                e,
                Equation::Current(..) | Equation::Gain(_) | Equation::InputImpedance(_)
            )
        })
        .map(|(r, _)| r)
        .collect();
    let total: usize = options.iter().map(Vec::len).product();
    let mut ranked: Vec<(f64, Values)> = (0..total)
        .map(|mut code| {
            let mut cand = base.clone();
            let mut dlog = vec![0.0; vars.len()];
            for (c, (k, opts)) in vars.iter().zip(&options).enumerate() {
                let v = opts[code % opts.len()];
                code /= opts.len();
                dlog[c] = (v / values[*k]).ln();
                cand.insert(k.to_string(), v);
            }
            let predicted: f64 = target_rows
                .iter()
                .map(|&r| {
                    let d: f64 = (0..vars.len()).map(|c| jac[(r, c)] * dlog[c]).sum();
                    d * d
                })
                .sum();
            (predicted, cand)
        })
        .collect();
    ranked.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut probe = Probe::new(layout::document(t, &base));
    let mut best = (f64::INFINITY, base.clone());
    for (_, cand) in ranked.into_iter().take(4) {
        layout::set_values(&mut probe.doc, &cand);
        if let Ok((m, _)) = probe.measure(false) {
            let s = score(t, eqs, &m);
            if s < best.0 {
                best = (s, cand);
            }
        }
    }
    solve::stage(t, &best.1)
}
