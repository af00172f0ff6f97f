//! Source values in time: the signal source's waveform, the supplies'
//! power-on ramp, and the corners (breakpoints) where a waveform's slope
//! jumps, which the step control lands on exactly.

use crate::analysis::circuit::{Circuit, ElementKind};
use crate::document::{Document, Waveform};
use crate::presets::keys;
use std::f64::consts::TAU;

/// The signal source's waveform with every value resolved.
#[derive(Debug, Clone, PartialEq)]
pub enum Wave {
    Sine {
        amplitude: f64,
        offset: f64,
        frequency: f64,
        delay: f64,
    },
    Pulse {
        low: f64,
        high: f64,
        delay: f64,
        rise: f64,
        fall: f64,
        width: f64,
        period: f64,
    },
    Corners(Vec<[f64; 2]>),
}

/// Frequency of a sine when neither the waveform nor the source gives one.
pub const DEFAULT_FREQUENCY: f64 = 1e3;

impl Wave {
    /// Resolve a file waveform; keys a sine leaves out come from the
    /// source's `amplitude`, `dc_offset` and `frequency`.
    pub fn resolve(w: Option<&Waveform>, amplitude: f64, offset: f64, frequency: f64) -> Wave {
        match w {
            None => Wave::Sine {
                amplitude,
                offset,
                frequency,
                delay: 0.0,
            },
            Some(Waveform::Sine {
                amplitude: a,
                offset: o,
                frequency: f,
                delay,
            }) => Wave::Sine {
                amplitude: a.unwrap_or(amplitude),
                offset: o.unwrap_or(offset),
                frequency: f.unwrap_or(frequency),
                delay: *delay,
            },
            Some(Waveform::Pulse {
                low,
                high,
                delay,
                rise,
                fall,
                width,
                period,
            }) => Wave::Pulse {
                low: *low,
                high: *high,
                delay: *delay,
                rise: *rise,
                fall: *fall,
                width: *width,
                period: *period,
            },
            Some(Waveform::Corners { points }) => Wave::Corners(points.clone()),
        }
    }

    /// The value at time `t`.
    pub fn value(&self, t: f64) -> f64 {
        match self {
            Wave::Sine {
                amplitude,
                offset,
                frequency,
                delay,
            } => {
                if t <= *delay {
                    *offset
                } else {
                    offset + amplitude * (TAU * frequency * (t - delay)).sin()
                }
            }
            Wave::Pulse {
                low,
                high,
                delay,
                rise,
                fall,
                width,
                period,
            } => {
                if t <= *delay {
                    return *low;
                }
                let s = (t - delay) % period;
                if s < *rise {
                    low + (high - low) * s / rise
                } else if s <= rise + width {
                    *high
                } else if s < rise + width + fall {
                    high + (low - high) * (s - rise - width) / fall
                } else {
                    *low
                }
            }
            Wave::Corners(p) => {
                if t <= p[0][0] {
                    return p[0][1];
                }
                for w in p.windows(2) {
                    if t <= w[1][0] {
                        let f = (t - w[0][0]) / (w[1][0] - w[0][0]);
                        return w[0][1] + f * (w[1][1] - w[0][1]);
                    }
                }
                p[p.len() - 1][1]
            }
        }
    }

    /// The period of a periodic waveform.
    pub fn period(&self) -> Option<f64> {
        match self {
            Wave::Sine { frequency, .. } => Some(1.0 / frequency),
            Wave::Pulse { period, .. } => Some(*period),
            Wave::Corners(_) => None,
        }
    }

    /// Corners in (from, to]: where the slope jumps.
    pub fn corners(&self, from: f64, to: f64, out: &mut Vec<f64>) {
        let mut push = |t: f64| {
            if t > from && t <= to {
                out.push(t)
            }
        };
        match self {
            Wave::Sine { delay, .. } => {
                if *delay > 0.0 {
                    push(*delay)
                }
            }
            Wave::Pulse {
                delay,
                rise,
                fall,
                width,
                period,
                ..
            } => {
                let first = ((from - delay) / period).floor().max(0.0) as u64;
                let mut k = first;
                loop {
                    let t0 = delay + k as f64 * period;
                    if t0 > to {
                        break;
                    }
                    for t in [t0, t0 + rise, t0 + rise + width, t0 + rise + width + fall] {
                        push(t);
                    }
                    k += 1;
                }
            }
            Wave::Corners(p) => p.iter().for_each(|c| push(c[0])),
        }
    }
}

/// How the independent sources move in time.
#[derive(Debug, Clone, PartialEq)]
pub struct Drive {
    /// The signal source's element and its waveform.
    pub signal: Option<(usize, Wave)>,
    /// Supplies (every other source) ramp linearly from zero over this
    /// time; `None`: they hold their value throughout.
    pub ramp: Option<f64>,
}

impl Drive {
    /// The supplies' scale at `t` (1 when there is no ramp).
    pub fn scale(&self, t: f64) -> f64 {
        match self.ramp {
            Some(r) if t < r => (t / r).max(0.0),
            _ => 1.0,
        }
    }

    /// Every corner in (from, to], sorted, without repeats.
    pub fn corners(&self, from: f64, to: f64) -> Vec<f64> {
        let mut out = Vec::new();
        if let Some((_, w)) = &self.signal {
            w.corners(from, to, &mut out);
        }
        if let Some(r) = self.ramp {
            if r > from && r <= to {
                out.push(r);
            }
        }
        out.sort_by(f64::total_cmp);
        out.dedup_by(|a, b| (*a - *b).abs() <= 1e-12 * a.abs().max(1e-30));
        out
    }

    /// The signal source of a document: `signal.source`, else the only
    /// signal source, with its waveform. `None` when there is none.
    pub fn from_document(doc: &Document, c: &Circuit) -> Option<(usize, Wave)> {
        let is_signal = |k: &usize| {
            matches!(
                c.elements[*k].kind,
                ElementKind::VoltageSource {
                    is_signal: true,
                    ..
                }
            )
        };
        let k = match &doc.signal.source {
            Some(d) => (0..c.elements.len()).find(|&k| c.elements[k].designator == *d)?,
            None => (0..c.elements.len()).find(is_signal)?,
        };
        let ElementKind::VoltageSource { dc, ac, .. } = c.elements[k].kind else {
            return None;
        };
        let frequency = doc.parts[c.elements[k].part]
            .parameter(keys::FREQUENCY)
            .filter(|f| f.is_finite() && *f > 0.0)
            .unwrap_or(DEFAULT_FREQUENCY);
        let wave = Wave::resolve(doc.signal.waveform.as_ref(), ac, dc, frequency);
        Some((k, wave))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pulse_corners_and_values() {
        // invariant: a trapezoid reaches its levels at its corners.
        let w = Wave::Pulse {
            low: 0.0,
            high: 2.0,
            delay: 1.0,
            rise: 0.5,
            fall: 0.5,
            width: 1.0,
            period: 4.0,
        };
        assert_eq!(w.value(0.5), 0.0);
        assert_eq!(w.value(1.25), 1.0);
        assert_eq!(w.value(2.0), 2.0);
        assert_eq!(w.value(2.75), 1.0);
        assert_eq!(w.value(3.5), 0.0);
        let mut c = Vec::new();
        w.corners(0.0, 6.0, &mut c);
        assert_eq!(c, vec![1.0, 1.5, 2.5, 3.0, 5.0, 5.5]);
    }
}
