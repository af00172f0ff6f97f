//! The JSON of `biasline design --stage jfet-cs|jfet-sf|mos-cs --json`.

use crate::design::fet::FetDesign;

/// The JFET stage design as JSON (for scripts).
pub fn json(d: &FetDesign) -> serde_json::Value {
    use serde_json::json;
    let t = &d.targets;
    let m = &d.measured;
    let mut j = json!({
        "targets": {
            "stage": t.stage.word(),
            "supply": t.supply,
            "preset": t.preset,
            "drain_current": d.drain_current,
            "drain_current_min": t.drain_current_min,
            "drain_current_max": t.drain_current_max,
            "gain_db": t.gain_db,
            "input_impedance": t.input_impedance,
            "load": t.load,
            "source_resistance": t.source_resistance,
            "low_corner": t.low_corner,
            "resistor_series": t.resistor_series.name,
            "capacitor_series": t.capacitor_series.name,
        },
        "device": d.device,
        "continuous": d.continuous,
        "values": d.values,
        "measured": {
            "drain_current": d.drain_current_achieved,
            "gate_source_voltage": d.vgs,
            "drain_source_voltage": d.vds,
            "transconductance": d.gm,
            "gain": m.gain,
            "gain_db": m.gain_db(),
            "input_impedance": m.input_impedance,
            "output_impedance": m.output_impedance,
            "low_corner": m.low_corner,
            "warnings": m.warnings,
        },
        "spread_ends": d.ends,
        "missed": d.misses,
    });
    // The MOSFET stage says how it chose its source voltage (a JFET design's
    // JSON is as it was).
    if let (Some(c), Some(o)) = (&d.bias_choice, j.as_object_mut()) {
        o.insert("bias_choice".into(), json!(c));
    }
    j
}
