//! The JSON of a steady-state run (`transient --json`; the design report
//! reads the same object).

use crate::analysis::circuit::Circuit;
use crate::analysis::transient::steady::{self, Distortion};
use crate::analysis::transient::{self, companion, Counts, Drive, Engine, Waveforms};
use crate::document::{Document, TransientStart};
use crate::netlist::Netlist;
use serde_json::json;

/// The JSON of a steady-state run, as `transient --json` prints it (the
/// design report reads the same object).
pub fn steady_json(d: &Distortion) -> serde_json::Value {
    json!({
        "distortion": d,
        "waveform": {
            "time": period_times(d),
            "input": d.input.samples,
            "output": d.output.samples,
        }
    })
}

pub fn period_times(d: &Distortion) -> Vec<f64> {
    let n = d.output.samples.len();
    (0..n)
        .map(|j| j as f64 / (n as f64 * d.frequency))
        .collect()
}

/// A run over a stated time from t = 0: the recorded columns of the nets
/// and pin currents asked for (`transient --for`).
#[derive(Debug, Clone)]
pub struct TimeRun {
    /// Net names, one column each (volts), in order.
    pub nets: Vec<String>,
    /// `PART.PIN` names, one column each (amperes), after the nets.
    pub currents: Vec<String>,
    pub times: Vec<f64>,
    /// The nets' columns, then the currents' columns, each at `times`.
    pub columns: Vec<Vec<f64>>,
    pub counts: Counts,
}

/// Run `doc` from t = 0 to `stop` and record the nets named (by default the
/// chain's input and output) and the pin currents named (`PART.PIN`).
/// Errors name the net, part or pin that is not there.
pub fn time_run(
    doc: &Document,
    nl: &Netlist,
    c: &Circuit,
    drive: Drive,
    stop: f64,
    net_names: &[String],
    current_names: &[String],
) -> Result<TimeRun, String> {
    let chain = crate::analysis::stages::recognise(doc, nl);
    let mut nets: Vec<(String, usize)> = Vec::new();
    let names: Vec<String> = if net_names.is_empty() {
        steady::probes(c, nl, &chain)
            .into_iter()
            .take(2)
            .filter(|p| p.0 != 0)
            .map(|p| p.1)
            // A floating load: its second net too, so the voltage across it shows.
            .chain(chain.load.as_ref().and_then(|l| l.other_net_name.clone()))
            .collect()
    } else {
        net_names.to_vec()
    };
    for n in names {
        let id = nl
            .net_by_name(&n)
            .ok_or_else(|| format!("--net: there is no net named {n:?}"))?;
        nets.push((n, c.net_node[id]));
    }
    let mut currents: Vec<(String, usize, usize)> = Vec::new();
    for name in current_names {
        let (part, pin) = name.split_once('.').ok_or_else(|| {
            format!("--current: write PART.PIN, like Q1.collector (not {name:?})")
        })?;
        let k = c
            .elements
            .iter()
            .position(|e| e.designator == part)
            .ok_or_else(|| format!("--current: there is no part {part}"))?;
        let kind = doc.parts[c.elements[k].part].kind;
        let p = kind
            .pin_names()
            .iter()
            .position(|x| *x == pin)
            .ok_or_else(|| {
                format!(
                    "--current: {part} has no pin {pin}; its pins are {}",
                    kind.pin_names().join(", ")
                )
            })?;
        currents.push((name.clone(), k, p));
    }
    let power_on = doc.transient.start == TransientStart::PowerOn;
    let mut engine = Engine::new(c, drive, doc.transient.clone());
    let start = engine.initial(power_on).map_err(|e| e.to_string())?;
    let (w, _) = transient::record(&mut engine, start, stop, &[], &mut |_| true)
        .map_err(|e| e.to_string())?;
    let slots = companion::slots(c);
    let columns = columns(&w, c, &slots, &nets, &currents);
    Ok(TimeRun {
        nets: nets.into_iter().map(|n| n.0).collect(),
        currents: currents.into_iter().map(|i| i.0).collect(),
        times: w.times,
        columns,
        counts: w.counts,
    })
}

fn columns(
    w: &Waveforms,
    c: &Circuit,
    slots: &[companion::Slot],
    nets: &[(String, usize)],
    currents: &[(String, usize, usize)],
) -> Vec<Vec<f64>> {
    let mut cols: Vec<Vec<f64>> = nets.iter().map(|n| w.node_voltage(n.1)).collect();
    if !currents.is_empty() {
        let mut cur = vec![Vec::with_capacity(w.times.len()); currents.len()];
        for j in 0..w.times.len() {
            let all = w.pin_currents(c, slots, j);
            for (k, i) in currents.iter().enumerate() {
                cur[k].push(all[i.1].get(i.2).copied().unwrap_or(0.0));
            }
        }
        cols.extend(cur);
    }
    cols
}

/// The JSON of a time run, as `transient --for T --json` prints it.
pub fn time_run_json(r: &TimeRun) -> serde_json::Value {
    let mut v = serde_json::Map::new();
    v.insert("time".into(), json!(r.times));
    let mut volts = serde_json::Map::new();
    for (k, n) in r.nets.iter().enumerate() {
        volts.insert(n.clone(), json!(r.columns[k]));
    }
    let mut amps = serde_json::Map::new();
    for (k, i) in r.currents.iter().enumerate() {
        amps.insert(i.clone(), json!(r.columns[r.nets.len() + k]));
    }
    v.insert("net_volts".into(), volts.into());
    v.insert("pin_amperes".into(), amps.into());
    v.insert("counts".into(), json!(r.counts));
    serde_json::Value::Object(v)
}

/// The steady-state JSON of a document's own sine; null when it has no
/// signal source or no circuit, `{"error": why}` when the run stops.
pub fn steady_json_of(doc: &Document, nl: &Netlist) -> serde_json::Value {
    if doc.signal.source.is_none() {
        return serde_json::Value::Null;
    }
    let Ok(c) = crate::analysis::circuit::build(doc, nl) else {
        return serde_json::Value::Null;
    };
    let opts = steady::SteadyOptions::default();
    match steady::distortion(doc, nl, &c, &opts, &mut |_| true) {
        Ok(d) => steady_json(&d),
        // Why there are no time-domain figures (the report says so).
        Err(e) => json!({ "error": e.message }),
    }
}
