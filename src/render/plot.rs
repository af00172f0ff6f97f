//! The frequency-response plot (the response, as a picture for reports):
//! magnitude and phase against log frequency, with the −3 dB corners marked.
//! It takes plain data and builds a [`Scene`], so it renders through the same
//! SVG and PNG paths as the sheet (same font, same print sizes).

use crate::scene::{
    style, Anchor, Colour, Element, ItemRef, Layer, PathItem, Point, Primitive, Rect, Scene, Shape,
    Stroke, TextRun, Weight,
};
use crate::units::{self, Unit};

/// What the plot shows.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ResponseData {
    pub title: String,
    /// (frequency Hz, magnitude dB, phase degrees), in rising frequency.
    pub points: Vec<(f64, f64, f64)>,
    /// −3 dB corner frequencies, Hz.
    pub corners: Vec<f64>,
    /// Other marked frequencies (a loop gain's crossover and phase
    /// crossover): (Hz, the level in dB where the ring goes, the label).
    pub marks: Vec<(f64, f64, String)>,
}

/// The heading of a plot: its title, or `fallback` when it has none.
pub(super) fn title(text: &str, fallback: &str) -> Primitive {
    Primitive::Text(TextRun {
        text: if text.is_empty() {
            fallback.into()
        } else {
            text.to_string()
        },
        position: [LEFT, TOP - 1.5],
        anchor: Anchor::Start,
        size: style::TEXT_HEADING,
        weight: Weight::Bold,
        colour: style::INK,
    })
}

/// Read a CSV whose first column is a frequency and whose next two columns
/// are numbers, as `sweep --csv` and `noise --csv` write it: a header line is
/// skipped, further columns are ignored, an empty field (or a missing third
/// column, when `columns` is 2) reads as NaN. Errors name the line and say
/// which columns were expected (`expect`).
pub(super) fn read_frequency_csv(
    text: &str,
    columns: usize,
    expect: &str,
    too_few: &str,
) -> Result<Vec<(f64, f64, f64)>, String> {
    let mut points = Vec::new();
    for (n, line) in text.lines().enumerate() {
        let line = line.trim();
        if line.is_empty() || (n == 0 && line.chars().any(|c| c.is_ascii_alphabetic())) {
            continue;
        }
        let f: Vec<&str> = line.split(',').collect();
        if f.len() < columns {
            return Err(format!("line {}: expected {expect}", n + 1));
        }
        let num = |s: &str| {
            let s = s.trim();
            if s.is_empty() {
                return Ok(f64::NAN);
            }
            s.parse::<f64>()
                .map_err(|_| format!("line {}: \"{s}\" is not a number", n + 1))
        };
        let fr = num(f[0])?;
        if fr.is_nan() || fr <= 0.0 {
            return Err(format!("line {}: frequency must be above 0 Hz", n + 1));
        }
        let third = match f.get(2) {
            Some(s) => num(s)?,
            None => f64::NAN,
        };
        points.push((fr, num(f[1])?, third));
    }
    if points.len() < 2 {
        return Err(too_few.into());
    }
    Ok(points)
}

impl ResponseData {
    /// Read `frequency_hz,magnitude_db,phase_degrees` CSV (a header line is
    /// skipped). Errors name the line.
    pub fn from_csv(title: &str, text: &str) -> Result<ResponseData, String> {
        let mut points = read_frequency_csv(
            text,
            3,
            "frequency_hz,magnitude_db,phase_degrees",
            "the response needs at least two points",
        )?;
        points.sort_by(|a, b| a.0.total_cmp(&b.0));
        let corners = corners(&points);
        Ok(ResponseData {
            title: title.to_string(),
            points,
            corners,
            marks: Vec::new(),
        })
    }
}

/// Frequencies where the magnitude crosses 3 dB below its maximum
/// (half power), interpolated linearly in log frequency.
pub fn corners(points: &[(f64, f64, f64)]) -> Vec<f64> {
    let peak = points
        .iter()
        .map(|p| p.1)
        .filter(|v| v.is_finite())
        .fold(f64::NEG_INFINITY, f64::max);
    if !peak.is_finite() {
        return Vec::new();
    }
    let level = peak - 3.0;
    let mut out = Vec::new();
    for w in points.windows(2) {
        let (a, b) = (w[0], w[1]);
        if (a.1 - level) * (b.1 - level) < 0.0 {
            let t = (level - a.1) / (b.1 - a.1);
            let lf = a.0.log10() + t * (b.0.log10() - a.0.log10());
            out.push(10f64.powf(lf));
        }
    }
    out
}

pub(super) const W: f64 = 56.0;
const MAG_H: f64 = 18.0;
const PHASE_H: f64 = 12.0;
const GAP: f64 = 3.0;
pub(super) const LEFT: f64 = 5.0;
pub(super) const TOP: f64 = 3.5;

pub(super) fn push(out: &mut Vec<Element>, primitive: Primitive) {
    out.push(Element {
        layer: Layer::Schematic,
        item: Some(ItemRef::TitleBlock),
        primitive,
    });
}

pub(super) fn line(
    out: &mut Vec<Element>,
    pts: Vec<Point>,
    colour: Colour,
    width: f64,
    dash: Option<[f64; 2]>,
) {
    push(
        out,
        Primitive::Path(PathItem {
            shape: Shape::Polyline {
                points: pts,
                closed: false,
            },
            stroke: Some(Stroke {
                colour,
                width,
                dash,
            }),
            fill: None,
        }),
    );
}

pub(super) fn text(
    out: &mut Vec<Element>,
    s: &str,
    p: Point,
    anchor: Anchor,
    size: f64,
    colour: Colour,
) {
    push(
        out,
        Primitive::Text(TextRun {
            text: s.to_string(),
            position: p,
            anchor,
            size,
            weight: Weight::Regular,
            colour,
        }),
    );
}

/// Round a range out to whole steps.
fn nice(lo: f64, hi: f64, step: f64) -> (f64, f64) {
    let lo = (lo / step).floor() * step;
    let mut hi = (hi / step).ceil() * step;
    if hi <= lo {
        hi = lo + step;
    }
    (lo, hi)
}

/// The plot as a display list (grid units, like the sheet).
pub fn response_scene(data: &ResponseData) -> Scene {
    let mut el = Vec::new();
    let pts: Vec<_> = data
        .points
        .iter()
        .filter(|p| p.0 > 0.0 && p.0.is_finite() && p.1.is_finite() && p.2.is_finite())
        .copied()
        .collect();
    let (f0, f1) = if pts.len() >= 2 {
        (pts[0].0, pts[pts.len() - 1].0)
    } else {
        (10.0, 1e5)
    };
    let (d0, d1) = (
        f0.log10().floor(),
        f1.log10().ceil().max(f0.log10().floor() + 1.0),
    );
    let x = |f: f64| LEFT + (f.log10() - d0) / (d1 - d0) * W;
    let mag = pts.iter().map(|p| p.1);
    let (m0, m1) = nice(
        mag.clone().fold(f64::INFINITY, f64::min).min(0.0),
        mag.fold(f64::NEG_INFINITY, f64::max).max(0.0),
        10.0,
    );
    let ph = pts.iter().map(|p| p.2);
    let (p0, p1) = nice(
        ph.clone().fold(f64::INFINITY, f64::min).min(0.0),
        ph.fold(f64::NEG_INFINITY, f64::max).max(0.0),
        45.0,
    );
    let mag_top = TOP;
    let ph_top = TOP + MAG_H + GAP;
    let ym = |v: f64| mag_top + (m1 - v) / (m1 - m0) * MAG_H;
    let yp = |v: f64| ph_top + (p1 - v) / (p1 - p0) * PHASE_H;
    let small = style::TEXT_CARD;
    // Title.
    push(&mut el, title(&data.title, "Frequency response"));
    // Grids: decades solid, 2…9 light; value lines every step.
    for (top, h) in [(mag_top, MAG_H), (ph_top, PHASE_H)] {
        let mut d = d0;
        while d <= d1 + 1e-9 {
            let f = 10f64.powf(d);
            line(
                &mut el,
                vec![[x(f), top], [x(f), top + h]],
                Colour::rgb(0xcfc8b8),
                style::FRAME,
                None,
            );
            if d < d1 - 1e-9 {
                for k in 2..10 {
                    let fk = f * k as f64;
                    line(
                        &mut el,
                        vec![[x(fk), top], [x(fk), top + h]],
                        style::GRID,
                        style::LEADER * 0.7,
                        None,
                    );
                }
            }
            d += 1.0;
        }
    }
    let mut v = m0;
    while v <= m1 + 1e-9 {
        line(
            &mut el,
            vec![[LEFT, ym(v)], [LEFT + W, ym(v)]],
            style::GRID,
            style::FRAME,
            None,
        );
        text(
            &mut el,
            &format!("{}", v.round()).replace('-', "−"),
            [LEFT - 0.4, ym(v) + 0.3],
            Anchor::End,
            small,
            style::INK_SOFT,
        );
        v += 10.0;
    }
    let mut v = p0;
    while v <= p1 + 1e-9 {
        line(
            &mut el,
            vec![[LEFT, yp(v)], [LEFT + W, yp(v)]],
            style::GRID,
            style::FRAME,
            None,
        );
        text(
            &mut el,
            &format!("{}°", v.round()).replace('-', "−"),
            [LEFT - 0.4, yp(v) + 0.3],
            Anchor::End,
            small,
            style::INK_SOFT,
        );
        v += 45.0;
    }
    // Frames and axis words.
    for (top, h) in [(mag_top, MAG_H), (ph_top, PHASE_H)] {
        push(
            &mut el,
            Primitive::Path(PathItem {
                shape: Shape::Rect {
                    rect: Rect::from_size([LEFT, top], W, h),
                    corner: 0.0,
                },
                stroke: Some(Stroke {
                    colour: style::INK,
                    width: style::FRAME,
                    dash: None,
                }),
                fill: None,
            }),
        );
    }
    let mut d = d0;
    while d <= d1 + 1e-9 {
        let f = 10f64.powf(d);
        text(
            &mut el,
            &units::format(f, Unit::Hertz),
            [x(f), ph_top + PHASE_H + 1.1],
            Anchor::Middle,
            small,
            style::INK_SOFT,
        );
        d += 1.0;
    }
    text(
        &mut el,
        "gain (dB), solid",
        [LEFT + W, mag_top - 0.4],
        Anchor::End,
        small,
        style::INK,
    );
    text(
        &mut el,
        "phase (degrees), dashed",
        [LEFT + W, ph_top - 0.4],
        Anchor::End,
        small,
        style::STAGE,
    );
    text(
        &mut el,
        "frequency (Hz), log scale",
        [LEFT + W / 2.0, ph_top + PHASE_H + 2.4],
        Anchor::Middle,
        small,
        style::INK,
    );
    // The curves: magnitude solid ink, phase dashed violet.
    if pts.len() >= 2 {
        line(
            &mut el,
            pts.iter().map(|p| [x(p.0), ym(p.1)]).collect(),
            style::INK,
            style::LINE,
            None,
        );
        line(
            &mut el,
            pts.iter().map(|p| [x(p.0), yp(p.2)]).collect(),
            style::STAGE,
            style::LINE,
            Some([0.6, 0.35]),
        );
    }
    // −3 dB corners: a dotted line through both panels, a ring on the curve, the value.
    let peak = pts.iter().map(|p| p.1).fold(f64::NEG_INFINITY, f64::max);
    for (k, fc) in data.corners.iter().enumerate() {
        if !(fc.is_finite() && *fc > 0.0) || fc.log10() < d0 || fc.log10() > d1 {
            continue;
        }
        let xc = x(*fc);
        line(
            &mut el,
            vec![[xc, mag_top], [xc, ph_top + PHASE_H]],
            style::CURRENT,
            style::LEADER * 1.5,
            Some([0.25, 0.25]),
        );
        if peak.is_finite() {
            push(
                &mut el,
                Primitive::Path(PathItem {
                    shape: Shape::Circle {
                        center: [xc, ym(peak - 3.0)],
                        radius: 0.3,
                    },
                    stroke: Some(Stroke {
                        colour: style::CURRENT,
                        width: style::FRAME * 1.5,
                        dash: None,
                    }),
                    fill: Some(Colour::rgb(0xffffff)),
                }),
            );
        }
        let label = format!("−3 dB at {}", units::format(*fc, Unit::Hertz));
        let right =
            xc + 0.4 + crate::scene::text::measure(&label, small, Weight::Regular).width < LEFT + W;
        let (lx, anchor) = if right {
            (xc + 0.4, Anchor::Start)
        } else {
            (xc - 0.4, Anchor::End)
        };
        text(
            &mut el,
            &label,
            [lx, mag_top + MAG_H - 0.6 - k as f64 * 1.1],
            anchor,
            small,
            style::CURRENT,
        );
    }
    // Other marks (a loop gain's crossover and margins): the same drawing,
    // their labels below the corners'.
    let below = data.corners.len();
    for (k, (fm, level, label)) in data.marks.iter().enumerate() {
        if !(fm.is_finite() && *fm > 0.0) || fm.log10() < d0 || fm.log10() > d1 {
            continue;
        }
        let xc = x(*fm);
        line(
            &mut el,
            vec![[xc, mag_top], [xc, ph_top + PHASE_H]],
            style::CURRENT,
            style::LEADER * 1.5,
            Some([0.25, 0.25]),
        );
        if level.is_finite() {
            push(
                &mut el,
                Primitive::Path(PathItem {
                    shape: Shape::Circle {
                        center: [xc, ym(*level)],
                        radius: 0.3,
                    },
                    stroke: Some(Stroke {
                        colour: style::CURRENT,
                        width: style::FRAME * 1.5,
                        dash: None,
                    }),
                    fill: Some(Colour::rgb(0xffffff)),
                }),
            );
        }
        let right =
            xc + 0.4 + crate::scene::text::measure(label, small, Weight::Regular).width < LEFT + W;
        let (lx, anchor) = if right {
            (xc + 0.4, Anchor::Start)
        } else {
            (xc - 0.4, Anchor::End)
        };
        text(
            &mut el,
            label,
            [lx, mag_top + MAG_H - 0.6 - (below + k) as f64 * 1.1],
            anchor,
            small,
            style::CURRENT,
        );
    }
    Scene {
        elements: el,
        bounds: Rect::new([0.0, 0.0], [LEFT + W + 2.0, ph_top + PHASE_H + 4.0]),
        ..Scene::default()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn corners_of_a_first_order_high_pass_are_at_its_pole() {
        // source: Sedra & Smith, Microelectronic Circuits, single-time-constant
        // networks: |T| = 1/√(1 + (f0/f)²) is 3.01 dB down at f = f0.
        let f0 = 100.0;
        let pts: Vec<_> = (0..=80)
            .map(|k| {
                let f = 10f64.powf(k as f64 / 20.0);
                let db = -10.0 * (1.0 + (f0 / f).powi(2)).log10();
                (f, db, (f0 / f).atan().to_degrees())
            })
            .collect();
        let c = corners(&pts);
        assert_eq!(c.len(), 1);
        assert!((c[0] / f0 - 1.0).abs() < 0.01, "{c:?}");
    }

    #[test]
    fn csv_errors_name_the_line() {
        // common practice (no source): a bad input line is reported by its number.
        let e = ResponseData::from_csv(
            "t",
            "frequency_hz,magnitude_db,phase_degrees\n10,1,2\nx,1,2\n",
        );
        assert!(e.unwrap_err().starts_with("line 3"));
    }
}
