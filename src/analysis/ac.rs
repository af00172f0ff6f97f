//! Frequency response: a logarithmic sweep of the small-signal circuit.
//!
//! At each frequency every element takes its impedance (capacitor parts and
//! device capacitances 1/(jωC), inductors jωL). Reported: source → load gain
//! and each stage's v(o)/v(i) as magnitude (dB) and phase (degrees), Zin(f)
//! and Zout(f) by the same cuts as the midband figures, the gain from each
//! supply to the output (supply rejection), the midband gain and the −3 dB
//! corners found by interpolating the sweep (linear in dB against log f).
//!
//! Estimates beside the sweep: the low corner by short-circuit time
//! constants, ωL ≈ Σ 1/(Ri·Ci) over the coupling and bypass capacitors (Ri
//! the resistance each sees with the others shorted and the device
//! capacitances open), naming the capacitor that contributes most; and
//! each common-emitter stage's Miller input capacitance (see
//! [`super::estimates::miller`]). Both are estimates that ignore the other
//! poles (Sedra and Smith, frequency-response chapter).

use super::figures::Midband;
use super::linear::{log_frequencies, Cut, Drive, LinearKind, Mode, Node, System, Test, C64};
use super::small_signal::SmallSignal;
use super::stages::Chain;
use crate::document::AnalysisSettings;
use serde::Serialize;
use std::f64::consts::PI;

/// The most frequencies one sweep computes (a guard against a typo in the settings).
pub use crate::document::limits::MAX_SWEEP_POINTS;

/// Magnitude and phase of one transfer function over the sweep.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Trace {
    /// What it is, e.g. `"source to load"`, `"Q1 stage"`, `"VCC to output"`.
    pub name: String,
    pub magnitude_db: Vec<f64>,
    pub phase_degrees: Vec<f64>,
}

/// An impedance over the sweep.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ImpedanceTrace {
    pub name: String,
    pub magnitude_ohms: Vec<f64>,
    pub phase_degrees: Vec<f64>,
}

/// One capacitor's share of the low corner.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TimeConstant {
    pub designator: String,
    pub capacitance: f64,
    /// Resistance it sees with the other capacitors shorted, Ω.
    pub resistance: f64,
    /// 1/(2π·R·C), Hz.
    pub corner: f64,
}

#[derive(Debug, Clone, PartialEq, Default, Serialize)]
pub struct FrequencyResponse {
    pub frequencies: Vec<f64>,
    /// Source EMF to the load (or the last stage's output when no load is named).
    pub gain: Option<Trace>,
    pub stages: Vec<Trace>,
    pub input_impedance: Option<ImpedanceTrace>,
    pub output_impedance: Option<ImpedanceTrace>,
    pub supply_rejection: Vec<Trace>,
    /// |gain| at midband (capacitor parts short, device capacitances open), dB.
    pub midband_gain_db: Option<f64>,
    /// −3 dB frequencies from the sweep, Hz.
    pub lower_corner: Option<f64>,
    pub upper_corner: Option<f64>,
    /// Σ 1/(2π·Ri·Ci), Hz.
    pub short_circuit_estimate: Option<f64>,
    /// The capacitor that sets the low corner (largest 1/(Ri·Ci)).
    pub low_corner_set_by: Option<String>,
    pub time_constants: Vec<TimeConstant>,
    /// Why a trace or corner is missing.
    pub notes: Vec<String>,
}

/// The lowest magnitude a trace reports, dB: an exact zero (no path at
/// that frequency) prints as this floor, never as −∞.
pub const FLOOR_DB: f64 = -400.0;

fn db(z: C64) -> f64 {
    let d = 20.0 * z.norm().log10();
    if d.is_nan() {
        FLOOR_DB
    } else {
        d.max(FLOOR_DB)
    }
}
fn deg(z: C64) -> f64 {
    z.arg().to_degrees()
}

/// Phase made continuous: a step of more than 180° between neighbouring
/// frequencies is a wrap of the angle, not a change of the circuit. Every
/// phase the program shows or writes (editor, `sweep`, CSV, JSON, plots) is
/// unwrapped this way, starting from the principal value (−180°, 180°] at
/// the lowest frequency.
pub fn unwrap_degrees(phase: &[f64]) -> Vec<f64> {
    let mut out: Vec<f64> = Vec::with_capacity(phase.len());
    let mut offset = 0.0;
    for (k, &p) in phase.iter().enumerate() {
        if k > 0 {
            let step = p + offset - out[k - 1];
            if step > 180.0 {
                offset -= 360.0;
            } else if step < -180.0 {
                offset += 360.0;
            }
        }
        out.push(p + offset);
    }
    out
}

fn unwrapped(z: &[C64]) -> Vec<f64> {
    unwrap_degrees(&z.iter().map(|&z| deg(z)).collect::<Vec<_>>())
}

/// Where `mag` (dB) crosses `level` between samples k and k+1, by
/// interpolation linear in dB against log f.
fn crossing(f: &[f64], mag: &[f64], k: usize, level: f64) -> f64 {
    let (l0, l1) = (f[k].log10(), f[k + 1].log10());
    let (m0, m1) = (mag[k], mag[k + 1]);
    if (m1 - m0).abs() < 1e-300 {
        return f[k];
    }
    10f64.powf(l0 + (level - m0) / (m1 - m0) * (l1 - l0))
}

/// The −3 dB corners of `mag` around its passband, relative to `reference` dB.
pub fn corners(f: &[f64], mag: &[f64], reference: f64) -> (Option<f64>, Option<f64>) {
    if f.len() < 2 || mag.len() != f.len() {
        return (None, None);
    }
    let level = reference - 3.0103;
    let peak = (0..mag.len())
        .max_by(|&a, &b| mag[a].total_cmp(&mag[b]))
        .unwrap_or(0);
    if mag[peak] < level {
        return (None, None);
    }
    let lower = (0..peak)
        .rev()
        .find(|&k| mag[k] < level)
        .map(|k| crossing(f, mag, k, level));
    let upper = (peak..f.len() - 1)
        .find(|&k| mag[k + 1] < level)
        .map(|k| crossing(f, mag, k, level));
    (lower, upper)
}

/// Sweep the linearised circuit.
pub fn sweep(
    ss: &SmallSignal,
    chain: &Chain,
    mid: &Midband,
    settings: &AnalysisSettings,
) -> FrequencyResponse {
    let expected = crate::document::limits::sweep_points(
        settings.frequency_start,
        settings.frequency_stop,
        settings.points_per_decade,
    );
    if expected.is_finite() && expected > MAX_SWEEP_POINTS as f64 {
        return FrequencyResponse {
            notes: vec![format!(
                "the sweep settings ask for about {expected:.0} points, more than {MAX_SWEEP_POINTS}: \
                 lower analysis.points_per_decade or narrow the frequency range"
            )],
            ..Default::default()
        };
    }
    let freqs = log_frequencies(
        settings.frequency_start,
        settings.frequency_stop,
        settings.points_per_decade,
    );
    let mut r = FrequencyResponse {
        frequencies: freqs.clone(),
        ..Default::default()
    };
    if freqs.is_empty() {
        r.notes.push(format!(
            "the sweep settings ({} Hz to {} Hz, {} points per decade) give no frequencies: \
             set a start above 0 below the stop",
            settings.frequency_start, settings.frequency_stop, settings.points_per_decade
        ));
        return r;
    }
    let node = |net: usize| ss.net_node.get(net).copied().unwrap_or(0);
    let out: Option<Node> = chain
        .load
        .as_ref()
        .map(|l| node(l.net))
        .or_else(|| chain.stages.last().map(|s| node(s.output)))
        .filter(|&n| n != 0);
    // A floating load: the output is the voltage across it, v(out) − v(out2).
    let out2: Option<Node> = chain
        .load
        .as_ref()
        .and_then(|l| super::figures::load_other_node(ss, l));
    let at_out = |s: &super::linear::Solution, o: Node| match out2 {
        Some(m) => s.v(o) - s.v(m),
        None => s.v(o),
    };
    let stage_nodes: Vec<(String, Node, Node)> = chain
        .stages
        .iter()
        .map(|s| (s.transistor.clone(), node(s.input), node(s.output)))
        .collect();

    // One factorization per frequency of the connected circuit, several right-hand
    // sides: the signal, each supply, and a 1 A test current into the load net.
    // Zin(f) = v(in)/i(in) from the signal solution (the amplifier side of the
    // input net is a passive one-port there); Zout(f) = v/(1 A − i(load)) from
    // the test-current solution (the rest of the current flows into the output).
    let connected = System::new(&ss.circuit, Mode::Frequency, &[], None);
    let mut drive_sets: Vec<Vec<Drive>> = Vec::new();
    if let Some(e) = ss.signal {
        drive_sets.push(vec![Drive::unit(e)]);
    } else {
        r.notes.push(if out.is_some() {
            "no signal source in the circuit: only supply rejection is swept".into()
        } else {
            "no signal source and no output to sweep: name the signal source and the load".into()
        });
    }
    for (_, e) in &ss.supplies {
        drive_sets.push(vec![Drive::unit(*e)]);
    }
    let load = chain
        .load
        .as_ref()
        .map(|l| (l.part, node(l.net)))
        .filter(|l| l.1 != 0);
    if let Some((_, n)) = load {
        let mut set = vec![Drive::inject(n)];
        if let Some(m) = out2 {
            set.push(Drive {
                value: C64::new(-1.0, 0.0),
                ..Drive::inject(m)
            });
        }
        drive_sets.push(set);
    }
    let input = chain
        .source
        .as_ref()
        .map(|s| (s.feed, node(s.input)))
        .filter(|s| s.1 != 0);
    let refs: Vec<&[Drive]> = drive_sets.iter().map(|v| v.as_slice()).collect();
    let nsig = usize::from(ss.signal.is_some());
    let nsup = ss.supplies.len();
    let mut gain = Vec::new();
    let mut stage_h: Vec<Vec<C64>> = vec![Vec::new(); stage_nodes.len()];
    let mut supply: Vec<Vec<C64>> = vec![Vec::new(); nsup];
    let mut zin = Vec::new();
    let mut zout = Vec::new();
    let mut solved = 0;
    for &f in &freqs {
        let Ok(sols) = connected.solve_each(f, &refs) else {
            r.notes.push(format!(
                "the small-signal equations are singular at {}; the sweep stops there",
                crate::units::format(f, crate::units::Unit::Hertz)
            ));
            break;
        };
        solved += 1;
        if nsig == 1 {
            let s = &sols[0];
            if let Some(o) = out {
                gain.push(at_out(s, o));
            }
            for (k, (_, i, o)) in stage_nodes.iter().enumerate() {
                let vi = s.v(*i);
                stage_h[k].push(if vi.norm() > 0.0 {
                    s.v(*o) / vi
                } else {
                    C64::default()
                });
            }
            if let Some((feed, n)) = input {
                let i = -connected.current_into_part(s, feed, n);
                zin.push(s.v(n) / i);
            }
        }
        if let Some(o) = out {
            for (k, s) in sols[nsig..nsig + nsup].iter().enumerate() {
                supply[k].push(at_out(s, o));
            }
        }
        if let Some((part, n)) = load {
            let s = &sols[nsig + nsup];
            let rest = C64::new(1.0, 0.0) - connected.current_into_part(s, part, n);
            zout.push(at_out(s, n) / rest);
        }
    }
    // Every trace holds one value per frequency: a sweep stopped early keeps
    // only the frequencies it solved.
    r.frequencies.truncate(solved);
    let trace = |name: String, h: &[C64]| Trace {
        name,
        magnitude_db: h.iter().map(|&z| db(z)).collect(),
        phase_degrees: unwrapped(h),
    };
    let ztrace = |name: &str, z: &[C64]| {
        (!z.is_empty()).then(|| ImpedanceTrace {
            name: name.into(),
            magnitude_ohms: z.iter().map(|z| z.norm()).collect(),
            phase_degrees: unwrapped(z),
        })
    };
    if !gain.is_empty() && gain.iter().all(|g| g.norm() == 0.0) {
        r.notes.push(
            "the signal does not reach the output at any frequency: nothing connects the \
             source to the load through the amplifier"
                .into(),
        );
        gain.clear();
    }
    if !gain.is_empty() {
        let name = if chain.load.is_some() {
            "source to load"
        } else {
            "source to last stage output"
        };
        r.gain = Some(trace(name.into(), &gain));
    }
    for (k, (name, _, _)) in stage_nodes.iter().enumerate() {
        if !stage_h[k].is_empty() {
            r.stages.push(trace(format!("{name} stage"), &stage_h[k]));
        }
    }
    for (k, (name, _)) in ss.supplies.iter().enumerate() {
        if !supply[k].is_empty() {
            r.supply_rejection
                .push(trace(format!("{name} to output"), &supply[k]));
        }
    }
    r.input_impedance = ztrace("input impedance", &zin);
    r.output_impedance = ztrace("output impedance", &zout);

    // Midband gain and corners.
    let mid_gain = if chain.load.is_some() {
        mid.chain.source_gain
    } else {
        None
    };
    r.midband_gain_db = mid_gain
        .filter(|g| *g != 0.0)
        .map(|g| 20.0 * g.abs().log10());
    if let (Some(g), Some(reference)) = (&r.gain, r.midband_gain_db) {
        let (lo, hi) = corners(&r.frequencies, &g.magnitude_db, reference);
        r.lower_corner = lo;
        r.upper_corner = hi;
        if lo.is_none() {
            r.notes.push(
                "no lower −3 dB point inside the sweep (DC-coupled, or below the start)".into(),
            );
        }
        if hi.is_none() {
            r.notes
                .push("no upper −3 dB point inside the sweep (above the stop)".into());
        }
    }
    let (tcs, total) = time_constants(ss);
    if total > 0.0 {
        r.short_circuit_estimate = Some(total);
        r.low_corner_set_by = tcs
            .iter()
            .max_by(|a, b| a.corner.total_cmp(&b.corner))
            .map(|t| t.designator.clone());
    }
    r.time_constants = tcs;
    r
}

/// Short-circuit time constants of every capacitor part.
pub fn time_constants(ss: &SmallSignal) -> (Vec<TimeConstant>, f64) {
    let mut out = Vec::new();
    for e in &ss.circuit.elements {
        let (LinearKind::Capacitor(c), Some(part)) = (e.kind, e.part) else {
            continue;
        };
        if c <= 0.0 {
            continue;
        }
        let cut = [Cut { part, node: e.a }, Cut { part, node: e.b }];
        let sys = System::new(
            &ss.circuit,
            Mode::Midband,
            &cut,
            Some(Test::Between(e.a, e.b)),
        );
        let Ok(sol) = sys.solve(0.0, &[]) else {
            continue;
        };
        let rseen = (sol.v(e.a) - sol.v(e.b)).re;
        if !(rseen.is_finite() && rseen > 0.0) {
            continue;
        }
        out.push(TimeConstant {
            designator: ss.designator(part).to_string(),
            capacitance: c,
            resistance: rseen,
            corner: 1.0 / (2.0 * PI * rseen * c),
        });
    }
    let total = out.iter().map(|t| t.corner).sum();
    (out, total)
}
