//! The −3 dB corners of the source-to-load gain wherever they lie, not
//! only inside the sweep's range.
//!
//! The sweep's own corners ([`super::ac::corners`]) interpolate between
//! swept points, so a corner below the sweep's start or above its stop is
//! missing. Here the sweep only brackets the crossing: where the sweep does
//! not reach it, the search steps on by factors of two past the end of the
//! sweep (down to a thousandth of the short-circuit time-constant estimate,
//! up to a thousand times the sweep's stop); the crossing is then solved at
//! the exact gain by false position in (log f, dB) with the Illinois
//! modification (Dowell and Jarratt, BIT 11, 1971).

use super::ac::FrequencyResponse;
use super::linear::{Drive, Mode, Node, System};
use super::small_signal::SmallSignal;
use super::stages::Chain;

/// One corner: its frequency, or why there is none.
pub type Corner = Result<f64, String>;

/// How far past the end of the sweep the search goes: a thousandth of the
/// short-circuit estimate below, a thousand times the stop above.
pub const REACH: f64 = 1e3;

/// Both corners of the source-to-load gain, searched past the sweep.
pub fn find(ss: &SmallSignal, chain: &Chain, sweep: &FrequencyResponse) -> (Corner, Corner) {
    let none = |why: &str| (Err(why.to_string()), Err(why.to_string()));
    let (Some(g), Some(reference)) = (&sweep.gain, sweep.midband_gain_db) else {
        return none(
            "no source-to-load gain to take corners of (no signal source, load or midband gain)",
        );
    };
    let Some(signal) = ss.signal else {
        return none("no signal source");
    };
    let node = |net: usize| ss.net_node.get(net).copied().unwrap_or(0);
    let out: Option<Node> = chain
        .load
        .as_ref()
        .map(|l| node(l.net))
        .or_else(|| chain.stages.last().map(|s| node(s.output)))
        .filter(|&n| n != 0);
    let Some(out) = out else {
        return none("no output node");
    };
    // A floating load: the gain is taken across it.
    let out2 = chain
        .load
        .as_ref()
        .and_then(|l| super::figures::load_other_node(ss, l));
    let f = &sweep.frequencies;
    let mag = &g.magnitude_db;
    if f.is_empty() || mag.len() != f.len() {
        return none("the sweep holds no gain");
    }
    let level = reference - 3.0103;
    let peak = (0..mag.len())
        .max_by(|&a, &b| mag[a].total_cmp(&mag[b]))
        .unwrap_or(0);
    if mag[peak] < level {
        return none("the gain never comes within 3 dB of its midband value inside the sweep");
    }
    let system = System::new(&ss.circuit, Mode::Frequency, &[], None);
    let drive = [Drive::unit(signal)];
    let gain_db = |freq: f64| -> Option<f64> {
        let s = system.solve(freq, &drive).ok()?;
        let v = match out2 {
            Some(m) => s.v(out) - s.v(m),
            None => s.v(out),
        };
        let d = 20.0 * v.norm().log10();
        d.is_finite().then_some(d)
    };
    let lower = match (0..peak).rev().find(|&k| mag[k] < level) {
        Some(k) => Ok(refine(&gain_db, level, f[k], f[k + 1])),
        None => {
            let estimate = super::ac::time_constants(ss).1;
            if estimate <= 0.0 {
                Err("no lower corner: no capacitor in the signal path (DC-coupled)".to_string())
            } else {
                let floor = (estimate / REACH).min(f[0]);
                extend(&gain_db, level, f[0], 0.5, floor).map_err(|_| {
                    format!(
                        "no lower corner above {}: the gain stays within 3 dB down there",
                        crate::units::format(floor, crate::units::Unit::Hertz)
                    )
                })
            }
        }
    };
    let last = f.len() - 1;
    let upper = match (peak..last).find(|&k| mag[k + 1] < level) {
        Some(k) => Ok(refine(&gain_db, level, f[k + 1], f[k])),
        None => {
            let ceiling = f[last] * REACH;
            extend(&gain_db, level, f[last], 2.0, ceiling).map_err(|_| {
                format!(
                    "no upper corner below {}: the gain stays within 3 dB up there",
                    crate::units::format(ceiling, crate::units::Unit::Hertz)
                )
            })
        }
    };
    (lower, upper)
}

/// Step from `start` (inside the band) by `factor` until the gain falls
/// below `level` or the search passes `limit`; then refine the crossing.
fn extend(
    gain_db: &dyn Fn(f64) -> Option<f64>,
    level: f64,
    start: f64,
    factor: f64,
    limit: f64,
) -> Result<f64, ()> {
    let mut inside = start;
    loop {
        let next = inside * factor;
        let past = if factor < 1.0 {
            next < limit
        } else {
            next > limit
        };
        if past || !next.is_finite() || next <= 0.0 {
            return Err(());
        }
        match gain_db(next) {
            Some(m) if m < level => return Ok(refine(gain_db, level, next, inside)),
            Some(_) => inside = next,
            None => return Err(()),
        }
    }
}

/// The crossing of `level` between `outside` (gain below) and `inside`
/// (gain at or above), by Illinois false position on log f.
fn refine(gain_db: &dyn Fn(f64) -> Option<f64>, level: f64, outside: f64, inside: f64) -> f64 {
    let (mut a, mut b) = (outside.log10(), inside.log10());
    let g = |x: f64| gain_db(10f64.powf(x)).map(|m| m - level);
    let (Some(mut ga), Some(mut gb)) = (g(a), g(b)) else {
        return 10f64.powf(0.5 * (a + b));
    };
    let mut side = 0i8;
    for _ in 0..60 {
        if (b - a).abs() < 1e-12 {
            break;
        }
        let x = if (gb - ga).abs() > 0.0 {
            b - gb * (b - a) / (gb - ga)
        } else {
            0.5 * (a + b)
        };
        let x = if x.is_finite() && (x - a) * (x - b) < 0.0 {
            x
        } else {
            0.5 * (a + b)
        };
        let Some(gx) = g(x) else { break };
        if gx.abs() < 1e-9 {
            return 10f64.powf(x);
        }
        if (gx < 0.0) == (ga < 0.0) {
            a = x;
            ga = gx;
            if side == -1 {
                gb *= 0.5;
            }
            side = -1;
        } else {
            b = x;
            gb = gx;
            if side == 1 {
                ga *= 0.5;
            }
            side = 1;
        }
    }
    10f64.powf(0.5 * (a + b))
}
