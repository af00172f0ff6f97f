//! `--ic low-noise`: the collector current from the noise analysis'
//! "better collector current" what-if, the stage redesigned at it.

use super::solve::{design, design_at, Design};
use super::targets::Targets;
use super::DesignError;

/// The collector current for the lowest band noise figure (20 Hz–20 kHz)
/// at the source resistance, by the noise analysis' own "better collector
/// current" scan on the designed stage, redesigned at that current until it
/// settles (within 2 %, at most four rounds).
pub(super) fn low_noise(t: &Targets) -> Result<Design, DesignError> {
    use crate::analysis::noise;
    let mut t2 = t.clone();
    t2.low_noise = false;
    t2.collector_current = None;
    let mut d = design(&t2)?;
    let grid = crate::analysis::linear::log_frequencies(20.0, 20e3, 10);
    for _ in 0..4 {
        let doc = &d.continuous.document;
        let nl = crate::netlist::connect(doc);
        let setup = noise::build::setup(doc, &nl, &noise::BuildOptions::default())
            .map_err(|e| DesignError(format!("noise analysis of the design: {e}")))?;
        let hints = noise::figures::better_currents(&setup, &grid)
            .map_err(|e| DesignError(format!("noise analysis of the design: {e}")))?;
        let Some(h) = hints.iter().find(|h| h.designator == "Q1") else {
            break;
        };
        let ic = d.targets.ic();
        if (h.better_current / ic - 1.0).abs() < 0.02 {
            break;
        }
        t2.collector_current = Some(h.better_current.clamp(1e-6, 0.1));
        d = design_at(&t2).map_err(|e| {
            DesignError(format!(
                "the lowest-noise collector current at this source resistance, {}, does not meet \
                 the other targets: {e}",
                crate::units::format(h.better_current, crate::units::Unit::Ampere)
            ))
        })?;
    }
    d.current_chosen = true;
    d.reasons.push(
        "the collector current is the one the noise analysis finds quietest (20 Hz–20 kHz) at the \
         source resistance"
            .into(),
    );
    Ok(d)
}
