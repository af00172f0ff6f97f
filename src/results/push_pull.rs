//! The push-pull level sweep as a result: every level's THD, output power,
//! efficiency and dissipation, and the summary a designer reads — the
//! largest clean output (THD at or below the limit) with its power and
//! efficiency, each device's worst dissipation over the levels against its
//! rating — as JSON for `biasline transient FILE --levels N --json`
//! (docs/transient-levels.md) and as the rows the text report prints.

use crate::analysis::blocks::push_pull_levels::{self, LevelSweep};
use crate::analysis::elements::per_device;
use crate::document::Document;
use crate::netlist::Netlist;
use serde::Serialize;

/// Each output device's worst dissipation over the sweep.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DeviceWorst {
    pub designator: String,
    /// Worst mean dissipation, W, and the output peak where it occurs, V.
    pub worst_dissipation: f64,
    pub at_output_peak: f64,
    /// max_power of the part, when given.
    pub rating: Option<f64>,
    pub over_rating: bool,
}

/// The sweep and its summary.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LevelReport {
    pub thd_limit: f64,
    #[serde(flatten)]
    pub sweep: LevelSweep,
    /// Index of the largest level with THD at or below the limit.
    pub largest_clean: Option<usize>,
    pub devices_worst: Vec<DeviceWorst>,
    /// Designer warnings (a device over its rating under signal).
    pub warnings: Vec<String>,
    /// Wall time of the sweep, s.
    pub seconds: f64,
}

/// Run the sweep at `count` levels (output peaks 1/count … 1 of the rail).
pub fn level_report(
    doc: &Document,
    nl: &Netlist,
    count: usize,
    thd_limit: f64,
) -> Result<LevelReport, String> {
    let started = std::time::Instant::now();
    let amplitudes = push_pull_levels::default_amplitudes(doc, nl, count)?;
    let sweep = push_pull_levels::sweep(doc, nl, &amplitudes)?;
    let c = crate::analysis::circuit::build(doc, nl).map_err(|e| e.to_string())?;
    let rating = |name: &str| {
        let e = c.elements.iter().find(|e| e.designator == name)?;
        per_device::ratings(&c, e.part)?.max_power
    };
    let mut warnings = Vec::new();
    let devices_worst: Vec<DeviceWorst> = (0..2)
        .filter_map(|k| {
            let (i, p) = sweep.worst_dissipation(k)?;
            let name = sweep.devices[k].clone();
            let r = rating(&name);
            let over = r.is_some_and(|r| p > r);
            if over {
                warnings.push(format!(
                    "{name} dissipates {} on average at {} output peak, above its rating of {}",
                    crate::units::format(p, crate::units::Unit::Watt),
                    crate::units::format(sweep.levels[i].output_peak, crate::units::Unit::Volt),
                    crate::units::format(r.unwrap_or(0.0), crate::units::Unit::Watt)
                ));
            }
            Some(DeviceWorst {
                designator: name,
                worst_dissipation: p,
                at_output_peak: sweep.levels[i].output_peak,
                rating: r,
                over_rating: over,
            })
        })
        .collect();
    Ok(LevelReport {
        thd_limit,
        largest_clean: sweep.largest_clean(thd_limit),
        sweep,
        devices_worst,
        warnings,
        seconds: started.elapsed().as_secs_f64(),
    })
}

/// The JSON of `transient --levels N --json`.
pub fn level_json(r: &LevelReport) -> serde_json::Value {
    let mut v = serde_json::to_value(r).expect("serialises");
    if let Some(o) = v.as_object_mut() {
        o.remove("seconds");
    }
    v
}
