//! Two-port conversions of a transistor at a real operating point.

use biasline::analysis::devices::bjt::{BjtModel, Polarity};
use biasline::analysis::two_port::{HSets, TransistorModels, YParameters};
use biasline::presets;
use std::collections::BTreeMap;

fn preset_model() -> BjtModel {
    let mut params: BTreeMap<String, f64> = presets::defaults(biasline::document::PartKind::Npn)
        .iter()
        .map(|(k, v)| (k.to_string(), *v))
        .collect();
    for (k, v) in presets::find("small-signal-npn").unwrap().parameters {
        params.insert(k.to_string(), *v);
    }
    BjtModel::from_parameters(&params, Polarity::Npn, 300.15)
}

/// Models at VBE = 0.65 V, VCE = 5 V (forward active).
fn models_at(vbe: f64, vce: f64) -> (BjtModel, TransistorModels, f64) {
    let m = preset_model();
    let vbc = vbe - vce;
    let ev = m.evaluate(vbe, vbc);
    let y =
        YParameters::from_junction_derivatives(ev.dib_dvbe, ev.dib_dvbc, ev.dic_dvbe, ev.dic_dvbc);
    let gm = y.y21 - y.y12;
    let (cpi, cmu) = m.capacitances(vbe, vbc, gm);
    let rb = m.base_resistance;
    (m, TransistorModels::new(y, cpi, cmu, rb), ev.ic)
}

#[test]
fn y_parameters_match_finite_differences() {
    // invariant: the y-parameters are the Jacobian of (IB, IC) in (VBE, VCE) — checked by central differences
    let m = preset_model();
    let (vbe, vce) = (0.65, 5.0);
    let ev = m.evaluate(vbe, vbe - vce);
    let y =
        YParameters::from_junction_derivatives(ev.dib_dvbe, ev.dib_dvbc, ev.dic_dvbe, ev.dic_dvbc);
    let at = |vbe: f64, vce: f64| {
        let e = m.evaluate(vbe, vbe - vce);
        (e.ib, e.ic)
    };
    let h = 1e-6;
    let d_vbe = |k: usize| {
        let (p, n) = (at(vbe + h, vce), at(vbe - h, vce));
        if k == 0 {
            (p.0 - n.0) / (2.0 * h)
        } else {
            (p.1 - n.1) / (2.0 * h)
        }
    };
    let d_vce = |k: usize| {
        let (p, n) = (at(vbe, vce + 1e-3), at(vbe, vce - 1e-3));
        if k == 0 {
            (p.0 - n.0) / 2e-3
        } else {
            (p.1 - n.1) / 2e-3
        }
    };
    assert!((y.y11 - d_vbe(0)).abs() < 1e-6 * y.y11.abs());
    assert!((y.y21 - d_vbe(1)).abs() < 1e-6 * y.y21.abs());
    assert!((y.y22 - d_vce(1)).abs() < 1e-6 * y.y22.abs());
    assert!((y.y12 - d_vce(0)).abs() < 1e-12);
}

#[test]
fn hybrid_pi_textbook_forms_hold() {
    // source: Gray, Hurst, Lewis, Meyer, "Analysis and Design of Analog Integrated Circuits", ch. 1 —
    // gm = IC/(nF·VT), rπ = hfe/gm, and for this model ro = (VA + VCB)/IC
    let (m, t, ic) = models_at(0.65, 5.0);
    let p = t.hybrid_pi;
    let vt = m.thermal_voltage;
    assert!(
        (p.gm - ic / vt).abs() < 1e-3 * p.gm,
        "gm {} vs {}",
        p.gm,
        ic / vt
    );
    let hfe = t.hfe().unwrap();
    assert!((p.r_pi() - hfe / p.gm).abs() < 1e-9 * p.r_pi());
    let vcb = 5.0 - 0.65;
    let ro = (m.forward_early_voltage + vcb) / ic;
    assert!((p.ro() - ro).abs() < 1e-6 * ro, "ro {} vs {}", p.ro(), ro);
    // invariant: IB has no Early term in this model, so gμ and hre are zero to rounding
    assert!(p.g_mu.abs() < 1e-30);
}

#[test]
fn h_round_trip_at_an_operating_point() {
    // invariant: h → y → h is the identity (standard two-port conversion both ways)
    let (_, t, _) = models_at(0.66, 3.0);
    for h in [
        t.h.unwrap().common_emitter,
        t.h.unwrap().common_base,
        t.h.unwrap().common_collector,
    ] {
        let back = h.to_y().unwrap().to_h().unwrap();
        for (a, b) in [(h.h11, back.h11), (h.h21, back.h21), (h.h22, back.h22)] {
            assert!((a - b).abs() <= 1e-12 * a.abs().max(1e-300), "{a} vs {b}");
        }
        assert!((h.h12 - back.h12).abs() <= 1e-12 * h.h12.abs().max(1e-9));
    }
}

#[test]
fn common_base_and_collector_sets() {
    // from memory: the h-parameter conversion between configurations (indefinite admittance matrix, common terminal grounded) — hfb = −α, hfc = −(1 + hfe)
    let (_, t, _) = models_at(0.65, 5.0);
    let s: HSets = t.h.unwrap();
    let hfe = s.common_emitter.h21;
    let alpha = hfe / (1.0 + hfe);
    assert!((s.common_collector.h21 + 1.0 + hfe).abs() < 1e-12 * hfe);
    // hfb equals −α up to the output conductance (order go/gm)
    let p = t.hybrid_pi;
    assert!(
        (s.common_base.h21 + alpha).abs() < 2.0 * p.go / p.gm,
        "{} vs {}",
        s.common_base.h21,
        -alpha
    );
    // source: Sedra & Smith, Microelectronic Circuits, BJT amplifiers (common base) — hib ≈ re = α/gm
    let re = t.t.unwrap().re;
    assert!((s.common_base.h11 - re).abs() < 0.01 * re);
}

#[test]
fn t_model_with_ro_is_hybrid_pi_at_the_terminals() {
    // invariant: the T model with ro (and rμ) is an exact redraw of the hybrid-π model
    let (_, t, _) = models_at(0.65, 5.0);
    let ty = t.t.unwrap().y();
    let y = t.y;
    assert!((ty.y11 - y.y11).abs() < 1e-9 * y.y11);
    assert!((ty.y21 - y.y21).abs() < 1e-12 * y.y21);
    assert!((ty.y22 - y.y22).abs() < 1e-12 * y.y22);
    // source: Sedra and Smith, "Microelectronic Circuits", BJT chapter (T model) — re ≈ nF·VT/IE
    let (m, _, ic) = models_at(0.65, 5.0);
    let ie = ic * (1.0 + 1.0 / t.hfe().unwrap());
    assert!((t.t.unwrap().re - m.thermal_voltage / ie).abs() < 1e-3 * t.t.unwrap().re);
}
