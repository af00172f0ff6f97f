//! The waveform plot: input and output against time over the last period
//! (linear axes), with the output's harmonics 2–10 as bars beside it (dB
//! below the fundamental) and its THD. Same frame, grid and print sizes as
//! the response plot ([`super::plot`]); a [`Scene`], so it renders through
//! the same SVG and PNG paths.

use super::plot::{line, push, text, LEFT, TOP, W};
use crate::scene::{style, Anchor, Colour, PathItem, Primitive, Rect, Scene, Shape, Stroke};
use crate::units::{self, Unit};

/// Height of the waveform panel, grid units.
const H: f64 = 24.0;
/// Width of the harmonic bars panel, grid units.
const BARS_W: f64 = 20.0;
/// Gap between the two panels.
const GAP: f64 = 4.0;
/// The bars' floor, dB below the fundamental.
const FLOOR_DB: f64 = -100.0;

/// What the plot shows.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct WaveData {
    pub title: String,
    /// Times, s (rising).
    pub times: Vec<f64>,
    /// Traces: name and values at `times` (the first solid, the second dashed).
    pub traces: Vec<(String, Vec<f64>)>,
    /// Harmonics 2…10 of the output, dB relative to the fundamental.
    pub harmonics_db: Vec<f64>,
    /// THD of the output (fraction).
    pub thd: Option<f64>,
}

fn frame(el: &mut Vec<crate::scene::Element>, rect: Rect) {
    push(
        el,
        Primitive::Path(PathItem {
            shape: Shape::Rect { rect, corner: 0.0 },
            stroke: Some(Stroke {
                colour: style::INK,
                width: style::FRAME,
                dash: None,
            }),
            fill: None,
        }),
    );
}

/// A step of 1, 2 or 5 × 10^k giving about `count` divisions of `span`.
fn step_of(span: f64, count: f64) -> f64 {
    let raw = (span / count).max(f64::MIN_POSITIVE);
    let p = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .map(|m| m * p)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * p)
}

/// The plot as a display list (grid units, like the sheet).
pub fn wave_scene(data: &WaveData) -> Scene {
    let mut el = Vec::new();
    let small = style::TEXT_CARD;
    push(&mut el, super::plot::title(&data.title, "Waveforms"));
    let (t0, t1) = match (data.times.first(), data.times.last()) {
        (Some(&a), Some(&b)) if b > a => (a, b),
        _ => (0.0, 1e-3),
    };
    // Each trace on its own scale? No: one volts axis for all, each trace
    // shown about its own mean so input and output of different size read
    // together — the labels say so.
    let means: Vec<f64> = data
        .traces
        .iter()
        .map(|(_, v)| time_mean(&data.times, v))
        .collect();
    let peaks: Vec<f64> = data
        .traces
        .iter()
        .zip(&means)
        .map(|((_, v), m)| v.iter().map(|x| (x - m).abs()).fold(0.0, f64::max))
        .collect();
    let x = |t: f64| LEFT + (t - t0) / (t1 - t0) * W;
    // The grid: time.
    let ts = step_of(t1 - t0, 8.0);
    let mut t = (t0 / ts).ceil() * ts;
    while t <= t1 + 1e-12 * ts {
        line(
            &mut el,
            vec![[x(t), TOP], [x(t), TOP + H]],
            style::GRID,
            style::LEADER,
            None,
        );
        text(
            &mut el,
            &units::format(t - t0, Unit::Second),
            [x(t), TOP + H + 1.1],
            Anchor::Middle,
            small,
            style::INK_SOFT,
        );
        t += ts;
    }
    line(
        &mut el,
        vec![[LEFT, TOP + H / 2.0], [LEFT + W, TOP + H / 2.0]],
        Colour::rgb(0xcfc8b8),
        style::FRAME,
        None,
    );
    frame(&mut el, Rect::from_size([LEFT, TOP], W, H));
    let colours = [style::INK, style::STAGE];
    for (k, (name, v)) in data.traces.iter().enumerate().take(2) {
        let peak = peaks[k].max(f64::MIN_POSITIVE);
        let y = |val: f64| TOP + H / 2.0 - (val - means[k]) / peak * (0.45 * H);
        let pts: Vec<[f64; 2]> = data
            .times
            .iter()
            .zip(v)
            .filter(|(_, val)| val.is_finite())
            .map(|(t, val)| [x(*t), y(*val)])
            .collect();
        if pts.len() >= 2 {
            let dash = (k == 1).then_some([0.6, 0.35]);
            line(&mut el, pts, colours[k], style::LINE, dash);
        }
        let label = format!(
            "{name}: {} mean, ±{} peak{}",
            units::format(means[k], Unit::Volt),
            units::format(peaks[k], Unit::Volt),
            if k == 0 { ", solid" } else { ", dashed" }
        );
        text(
            &mut el,
            &label,
            [LEFT, TOP + H + 3.7 + 1.1 * k as f64],
            Anchor::Start,
            small,
            colours[k],
        );
    }
    text(
        &mut el,
        "time over one period; each trace scaled to its own peak about its mean",
        [LEFT + W / 2.0, TOP + H + 2.4],
        Anchor::Middle,
        small,
        style::INK,
    );
    // Harmonic bars.
    let bx = LEFT + W + GAP;
    frame(&mut el, Rect::from_size([bx, TOP], BARS_W, H));
    let yb = |db: f64| TOP + (db / FLOOR_DB).clamp(0.0, 1.0) * H;
    for db in [-20.0, -40.0, -60.0, -80.0] {
        line(
            &mut el,
            vec![[bx, yb(db)], [bx + BARS_W, yb(db)]],
            style::GRID,
            style::LEADER,
            None,
        );
        text(
            &mut el,
            &format!("{db:.0}"),
            [bx + BARS_W + 0.3, yb(db) + 0.3],
            Anchor::Start,
            small,
            style::INK_SOFT,
        );
    }
    let n = data.harmonics_db.len().max(1) as f64;
    let slot = BARS_W / n;
    for (k, db) in data.harmonics_db.iter().enumerate() {
        let cx = bx + slot * (k as f64 + 0.5);
        if db.is_finite() && *db > FLOOR_DB {
            push(
                &mut el,
                Primitive::Path(PathItem {
                    shape: Shape::Rect {
                        rect: Rect::new([cx - 0.3 * slot, TOP + H], [cx + 0.3 * slot, yb(*db)]),
                        corner: 0.0,
                    },
                    stroke: None,
                    fill: Some(style::STAGE),
                }),
            );
        }
        text(
            &mut el,
            &format!("{}", k + 2),
            [cx, TOP + H + 1.1],
            Anchor::Middle,
            small,
            style::INK_SOFT,
        );
    }
    let thd = data
        .thd
        .map(|t| format!("THD {:.3} %", 100.0 * t))
        .unwrap_or_default();
    text(
        &mut el,
        &format!("harmonics, dB below the fundamental; {thd}"),
        [bx, TOP + H + 2.4],
        Anchor::Start,
        small,
        style::INK,
    );
    Scene {
        elements: el,
        bounds: Rect::new([0.0, 0.0], [bx + BARS_W + 3.5, TOP + H + 6.2]),
        ..Scene::default()
    }
}

/// The mean over time (trapezoidal weights), so a period closed by its
/// first sample again counts that sample once; a plain mean when the
/// times do not match the values.
fn time_mean(times: &[f64], v: &[f64]) -> f64 {
    let span = times.last().zip(times.first()).map(|(b, a)| b - a);
    match span {
        Some(span) if times.len() == v.len() && v.len() >= 2 && span > 0.0 => {
            let area: f64 = times
                .windows(2)
                .zip(v.windows(2))
                .map(|(t, y)| 0.5 * (y[0] + y[1]) * (t[1] - t[0]))
                .sum();
            area / span
        }
        _ => v.iter().sum::<f64>() / v.len().max(1) as f64,
    }
}
