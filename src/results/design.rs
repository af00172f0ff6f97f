//! The JSON of `biasline design --json`: targets, the first guess, the
//! continuous and the preferred-value design with what the engine measured
//! of each, the reasons for every difference and the per-target bounds.

use crate::design::measure::Measured;
use crate::design::report::snapped_miss;
use crate::design::{Design, Stage};

fn measured_json(m: &Result<Measured, String>) -> serde_json::Value {
    use serde_json::json;
    match m {
        Err(e) => json!({ "error": e }),
        Ok(m) => json!({
            "gain": m.gain,
            "gain_db": m.gain_db(),
            "input_impedance": m.input_impedance,
            "output_impedance": m.output_impedance,
            "low_corner": m.low_corner,
            "transistors": m.devices.iter().map(|d| json!({
                "designator": d.designator,
                "collector_current": d.ic,
                "collector_emitter_voltage": d.vce,
                "emitter_voltage": d.ve,
                "region": d.region,
                "saturation_margin": d.saturation_margin,
                "cutoff_margin": d.cutoff_margin,
                "beta_sensitivity": d.sensitivity,
                "swing": d.swing.map(|(a, b)| json!({"toward_saturation": a, "toward_cut_off": b})),
            })).collect::<Vec<_>>(),
            "warnings": m.warnings,
        }),
    }
}

/// The design as JSON (for scripts).
pub fn json(d: &Design) -> serde_json::Value {
    use serde_json::json;
    let t = &d.targets;
    let stage = |s: &Stage| json!({ "values": s.values, "measured": measured_json(&s.measured) });
    json!({
        "targets": {
            "stage": t.topology.word(),
            "supply": t.supply,
            "preset": t.preset,
            "collector_current": t.ic(),
            "gain_db": t.gain_db,
            "input_impedance": t.input_impedance,
            "load": t.load,
            "source_resistance": t.source_resistance,
            "low_corner": t.low_corner,
            "stability": t.stability,
            "resistor_series": t.resistor_series.name,
            "capacitor_series": t.capacitor_series.name,
        },
        "equations": d.equations.iter().map(|e| e.words()).collect::<Vec<_>>(),
        "first_guess": stage(&d.first_guess),
        "continuous": stage(&d.continuous),
        "snapped": stage(&d.snapped),
        "reasons": d.reasons,
        "bounds": d.bounds.iter().map(|b| json!({
            "figure": b.figure,
            "relative": b.log_bound.exp() - 1.0,
            "snapped_relative": snapped_miss(d, &b.figure),
        })).collect::<Vec<_>>(),
        "iterations": d.iterations,
        "evaluations": d.evaluations,
    })
}

/// [`json`] with the swing and yield checks under `"checks"`.
pub fn json_with_checks(d: &Design, c: &super::design_checks::DesignChecks) -> serde_json::Value {
    let mut v = json(d);
    if let Some(o) = v.as_object_mut() {
        o.insert(
            "checks".into(),
            serde_json::to_value(c).unwrap_or(serde_json::Value::Null),
        );
    }
    v
}
