//! `--ic low-noise`: the collector current at which the designed stage,
//! redesigned at each current tried, has the lowest noise figure over the
//! audio band at the source resistance.
//!
//! The noise analysis' "better collector current" hint scales one
//! transistor's current in a fixed circuit; here every current gets its own
//! design (divider, collector and emitter resistors all move with it), so
//! the minimum is searched on the designs themselves: a scan of
//! [`SCAN_POINTS`] currents evenly spaced in log from [`LOWEST`] to
//! [`HIGHEST`], then a golden-section search on log IC between the best
//! scan point's neighbours. Currents at which the targets cannot be met
//! are left out; the search stays inside the feasible scan points.

use super::solve::{design_at, Design};
use super::targets::Targets;
use super::DesignError;

/// The lowest and highest collector currents tried, A (common practice
/// range for small-signal stages, the same as the default choice).
pub const LOWEST: f64 = 20e-6;
pub const HIGHEST: f64 = 2e-3;
/// Currents in the first scan (ratio ≈ 1.47 between neighbours).
pub const SCAN_POINTS: usize = 13;
/// The golden-section search stops when the bracket is this narrow, as a
/// ratio of currents (1 %).
const BRACKET: f64 = 1.01;
/// Noise band, Hz.
const BAND: (f64, f64) = (20.0, 20e3);

/// The band noise figure of a design, dB.
fn figure_of(d: &Design) -> Option<f64> {
    let doc = &d.continuous.document;
    let r = crate::analysis::noise::report_for_document(
        doc,
        BAND,
        1e3,
        &crate::analysis::noise::BuildOptions::default(),
    )
    .ok()?;
    r.band_figure_db.filter(|f| f.is_finite())
}

/// A design at `ic` and its band noise figure, when the targets are met.
fn try_at(t: &Targets, ic: f64) -> Result<(Design, f64), String> {
    let mut t2 = t.clone();
    t2.low_noise = false;
    t2.collector_current = Some(ic);
    let d = design_at(&t2).map_err(|e| e.0)?;
    let nf = figure_of(&d).ok_or_else(|| "no noise figure for this design".to_string())?;
    Ok((d, nf))
}

pub(super) fn low_noise(t: &Targets) -> Result<Design, DesignError> {
    let step = (HIGHEST / LOWEST).ln() / (SCAN_POINTS - 1) as f64;
    let scan: Vec<f64> = (0..SCAN_POINTS)
        .map(|k| (LOWEST.ln() + step * k as f64).exp())
        .collect();
    let mut best: Option<(usize, Design, f64)> = None;
    let mut errors = Vec::new();
    for (k, &ic) in scan.iter().enumerate() {
        match try_at(t, ic) {
            Ok((d, nf)) => {
                if best.as_ref().is_none_or(|b| nf < b.2) {
                    best = Some((k, d, nf));
                }
            }
            Err(e) => errors.push((ic, e)),
        }
    }
    let Some((k, mut d, mut nf)) = best else {
        let (ic, e) = &errors[0];
        return Err(DesignError(format!(
            "no collector current from {} to {} meets every target, so there is no quietest one \
             (at {}: {e})",
            crate::units::format(LOWEST, crate::units::Unit::Ampere),
            crate::units::format(HIGHEST, crate::units::Unit::Ampere),
            crate::units::format(*ic, crate::units::Unit::Ampere),
        )));
    };
    // Golden section on ln IC between the best scan point's neighbours. A
    // current whose design misses a target counts as infinitely noisy, so
    // the search closes in on the edge of what is feasible when the noise
    // figure still falls there.
    let lo = k.saturating_sub(1);
    let hi = (k + 1).min(scan.len() - 1);
    let (mut a, mut b) = (scan[lo].ln(), scan[hi].ln());
    let g = (5f64.sqrt() - 1.0) / 2.0;
    let mut cache: Vec<(f64, Option<f64>)> = Vec::new();
    let mut eval = |x: f64, d: &mut Design, nf: &mut f64| -> f64 {
        if let Some((_, v)) = cache.iter().find(|(y, _)| *y == x) {
            return v.unwrap_or(f64::INFINITY);
        }
        let r = try_at(t, x.exp()).ok();
        let v = r.as_ref().map(|(_, f)| *f);
        if let Some((dd, f)) = r {
            if f < *nf {
                *d = dd;
                *nf = f;
            }
        }
        cache.push((x, v));
        v.unwrap_or(f64::INFINITY)
    };
    let mut c = b - g * (b - a);
    let mut e = a + g * (b - a);
    let mut fc = eval(c, &mut d, &mut nf);
    let mut fe = eval(e, &mut d, &mut nf);
    while b - a > BRACKET.ln() {
        if fc <= fe {
            b = e;
            e = c;
            fe = fc;
            c = b - g * (b - a);
            fc = eval(c, &mut d, &mut nf);
        } else {
            a = c;
            c = e;
            fc = fe;
            e = a + g * (b - a);
            fe = eval(e, &mut d, &mut nf);
        }
    }
    d.current_chosen = true;
    let ic = d.targets.ic();
    let edge = if ic < LOWEST * BRACKET {
        "; it is the lowest current tried: a lower one may be quieter still"
    } else if ic > HIGHEST / BRACKET {
        "; it is the highest current tried: a higher one may be quieter still"
    } else {
        ""
    };
    d.reasons.push(format!(
        "the collector current is the one whose design has the lowest noise figure over \
         20 Hz–20 kHz at the source resistance ({:.2} dB; currents from {} to {} tried, each \
         with its own design{edge})",
        nf,
        crate::units::format(LOWEST, crate::units::Unit::Ampere),
        crate::units::format(HIGHEST, crate::units::Unit::Ampere),
    ));
    Ok(d)
}
