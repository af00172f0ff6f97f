//! The signal source's waveform in time and the settings of the transient
//! analysis, as kept in the project file.
//!
//! Every value is an SI number (seconds, hertz, volts) like the rest of the
//! file, or a text with its unit written out (`"1 kHz"`, `"0.5 ms"`,
//! `"10 mV"`); a text without its unit is refused, naming the key. Files are
//! always written with plain SI numbers.

use crate::units::{self, Unit};
use serde::de::Error as _;
use serde::{Deserialize, Deserializer, Serialize};

/// The waveform of the signal source in a transient run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "shape", rename_all = "snake_case", deny_unknown_fields)]
pub enum Waveform {
    /// offset + amplitude·sin(2π·frequency·(t − delay)) after `delay`,
    /// `offset` before it. Amplitude, offset and frequency left out come
    /// from the source's `amplitude`, `dc_offset` and `frequency`.
    Sine {
        #[serde(
            default,
            deserialize_with = "opt_volts",
            skip_serializing_if = "Option::is_none"
        )]
        amplitude: Option<f64>,
        #[serde(
            default,
            deserialize_with = "opt_volts",
            skip_serializing_if = "Option::is_none"
        )]
        offset: Option<f64>,
        #[serde(
            default,
            deserialize_with = "opt_hertz",
            skip_serializing_if = "Option::is_none"
        )]
        frequency: Option<f64>,
        #[serde(default, deserialize_with = "seconds", skip_serializing_if = "is_zero")]
        delay: f64,
    },
    /// A train of trapezoids: `low` until `delay`, a `rise` to `high`,
    /// `high` for `width`, a `fall` back to `low`, repeating every `period`.
    Pulse {
        #[serde(deserialize_with = "volts")]
        low: f64,
        #[serde(deserialize_with = "volts")]
        high: f64,
        #[serde(default, deserialize_with = "seconds", skip_serializing_if = "is_zero")]
        delay: f64,
        #[serde(deserialize_with = "seconds")]
        rise: f64,
        #[serde(deserialize_with = "seconds")]
        fall: f64,
        #[serde(deserialize_with = "seconds")]
        width: f64,
        #[serde(deserialize_with = "seconds")]
        period: f64,
    },
    /// Straight lines through `[time, volts]` corners; the first value
    /// holds before the first corner and the last after the last.
    Corners {
        #[serde(deserialize_with = "corners")]
        points: Vec<[f64; 2]>,
    },
}

/// Where a transient run starts.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum TransientStart {
    /// From the DC operating point (the circuit has been on for a long time).
    #[default]
    OperatingPoint,
    /// From every supply at zero, ramped up over `power_on_time` (power-on).
    PowerOn,
}

/// Settings of the transient analysis kept with the project.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct TransientSettings {
    /// Relative tolerance of the local truncation error per step.
    pub relative_tolerance: f64,
    /// Absolute tolerance of a current in the truncation-error test, A.
    pub current_tolerance: f64,
    /// Absolute tolerance of a node voltage in the Newton test, V.
    pub voltage_tolerance: f64,
    pub start: TransientStart,
    /// Time the supplies take to ramp up from zero at power-on, s.
    #[serde(deserialize_with = "seconds")]
    pub power_on_time: f64,
    /// Steady state: the output's change from one period to the next,
    /// relative to its peak, below which it counts as settled.
    pub settle_tolerance: f64,
    /// Steady state: periods run at most while waiting for it to settle.
    pub max_periods: u32,
}

impl Default for TransientSettings {
    fn default() -> Self {
        TransientSettings {
            relative_tolerance: 1e-3,
            current_tolerance: 1e-12,
            voltage_tolerance: 1e-6,
            start: TransientStart::OperatingPoint,
            power_on_time: 1e-3,
            settle_tolerance: 1e-4,
            max_periods: 200,
        }
    }
}

impl TransientSettings {
    pub fn is_default(&self) -> bool {
        *self == TransientSettings::default()
    }

    /// Refuse settings no run can use, naming the key.
    pub fn check(&self) -> Result<(), String> {
        let positive = |v: f64, key: &str| {
            if v.is_finite() && v > 0.0 {
                Ok(())
            } else {
                Err(format!(
                    "transient.{key} is {}: give a number above zero",
                    crate::units::echo(v)
                ))
            }
        };
        positive(self.relative_tolerance, "relative_tolerance")?;
        positive(self.current_tolerance, "current_tolerance")?;
        positive(self.voltage_tolerance, "voltage_tolerance")?;
        positive(self.power_on_time, "power_on_time")?;
        positive(self.settle_tolerance, "settle_tolerance")?;
        if self.max_periods == 0 {
            return Err("transient.max_periods is 0: give at least 1".into());
        }
        Ok(())
    }
}

impl Waveform {
    /// Refuse a waveform no run can use, naming the key and what to do.
    pub fn check(&self) -> Result<(), String> {
        let finite = |v: f64, key: &str| {
            if v.is_finite() {
                Ok(())
            } else {
                Err(format!("waveform.{key} is not a finite number"))
            }
        };
        let non_negative = |v: f64, key: &str| {
            finite(v, key)?;
            if v < 0.0 {
                Err(format!(
                    "waveform.{key} is {} s: a time cannot be negative",
                    crate::units::echo(v)
                ))
            } else {
                Ok(())
            }
        };
        match self {
            Waveform::Sine {
                amplitude,
                offset,
                frequency,
                delay,
            } => {
                for (v, k) in [(amplitude, "amplitude"), (offset, "offset")] {
                    if let Some(v) = v {
                        finite(*v, k)?;
                    }
                }
                if let Some(f) = frequency {
                    if !(f.is_finite() && *f > 0.0) {
                        return Err(format!(
                            "waveform.frequency is {f} Hz: a sine needs a frequency above zero"
                        ));
                    }
                }
                non_negative(*delay, "delay")
            }
            Waveform::Pulse {
                low,
                high,
                delay,
                rise,
                fall,
                width,
                period,
            } => {
                finite(*low, "low")?;
                finite(*high, "high")?;
                non_negative(*delay, "delay")?;
                non_negative(*rise, "rise")?;
                non_negative(*fall, "fall")?;
                non_negative(*width, "width")?;
                if !(period.is_finite() && *period > 0.0) {
                    return Err(format!(
                        "waveform.period is {period} s: give a period above zero"
                    ));
                }
                if rise + width + fall > *period {
                    return Err(format!(
                        "waveform: rise + width + fall ({} s) is longer than the period ({period} s)",
                        rise + width + fall
                    ));
                }
                Ok(())
            }
            Waveform::Corners { points } => {
                if points.is_empty() {
                    return Err("waveform.points is empty: give at least one [time, volts]".into());
                }
                for (i, p) in points.iter().enumerate() {
                    finite(p[0], "points")?;
                    finite(p[1], "points")?;
                    if i > 0 && p[0] <= points[i - 1][0] {
                        return Err(format!(
                            "waveform.points: corner {} at {} s does not come after the one before",
                            i + 1,
                            p[0]
                        ));
                    }
                }
                Ok(())
            }
        }
    }
}

fn is_zero(v: &f64) -> bool {
    *v == 0.0
}

/// A number (SI) or a text with its unit written out.
#[derive(Deserialize)]
#[serde(untagged)]
enum Quantity {
    Number(f64),
    Text(String),
}

fn to_si(q: Quantity, unit: Unit) -> Result<f64, String> {
    match q {
        Quantity::Number(v) => Ok(v),
        Quantity::Text(t) => {
            if !t.trim_end().ends_with(unit.symbol()) {
                return Err(format!(
                    "\"{t}\" has no unit: write it with its unit, like \"1 m{}\", or as a \
                     plain number in {}",
                    unit.symbol(),
                    unit.name()
                ));
            }
            units::parse(&t, unit).map_err(|e| e.to_string())
        }
    }
}

fn with_unit<'de, D: Deserializer<'de>>(d: D, unit: Unit) -> Result<f64, D::Error> {
    to_si(Quantity::deserialize(d)?, unit).map_err(D::Error::custom)
}

fn seconds<'de, D: Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
    with_unit(d, Unit::Second)
}
fn volts<'de, D: Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
    with_unit(d, Unit::Volt)
}
fn opt_volts<'de, D: Deserializer<'de>>(d: D) -> Result<Option<f64>, D::Error> {
    with_unit(d, Unit::Volt).map(Some)
}
fn opt_hertz<'de, D: Deserializer<'de>>(d: D) -> Result<Option<f64>, D::Error> {
    with_unit(d, Unit::Hertz).map(Some)
}
fn corners<'de, D: Deserializer<'de>>(d: D) -> Result<Vec<[f64; 2]>, D::Error> {
    let raw = Vec::<[Quantity; 2]>::deserialize(d)?;
    raw.into_iter()
        .map(|[t, v]| Ok([to_si(t, Unit::Second)?, to_si(v, Unit::Volt)?]))
        .collect::<Result<_, String>>()
        .map_err(D::Error::custom)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_and_texts_with_units_read_alike() {
        // invariant: "1 kHz" and 1000 are the same frequency (SI prefixes).
        let a: Waveform =
            serde_json::from_str(r#"{"shape":"sine","frequency":"1 kHz","delay":"2 ms"}"#).unwrap();
        let b: Waveform =
            serde_json::from_str(r#"{"shape":"sine","frequency":1000,"delay":0.002}"#).unwrap();
        assert_eq!(a, b);
    }

    #[test]
    fn a_text_without_its_unit_is_refused() {
        // common practice (no source): a bare "5" for a time is ambiguous.
        let e = serde_json::from_str::<Waveform>(
            r#"{"shape":"pulse","low":0,"high":1,"rise":"5","fall":0,"width":1,"period":2}"#,
        )
        .unwrap_err();
        assert!(e.to_string().contains("has no unit"), "{e}");
    }

    #[test]
    fn a_zero_period_is_refused_by_the_check() {
        // invariant: a pulse train needs a period above zero.
        let w = Waveform::Pulse {
            low: 0.0,
            high: 1.0,
            delay: 0.0,
            rise: 0.0,
            fall: 0.0,
            width: 0.0,
            period: 0.0,
        };
        assert!(w.check().unwrap_err().contains("period"));
    }
}
