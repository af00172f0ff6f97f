//! The response panel: magnitude and phase against log frequency, the −3 dB
//! corners marked, the output noise density (dashed), and a readout under the
//! pointer. It draws plain data
//! ([`ResponseData`]); the sweep that fills it comes from the small-signal
//! analysis. The maths here is plain Rust; the plot needs the `gui` feature.

/// One sweep as the panel shows it.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ResponseData {
    /// Hz, rising.
    pub frequencies: Vec<f64>,
    pub magnitude_db: Vec<f64>,
    pub phase_degrees: Vec<f64>,
    /// −3 dB corners, Hz.
    pub lower_corner: Option<f64>,
    pub upper_corner: Option<f64>,
    /// Output noise density at the same frequencies, V/√Hz, when the noise
    /// analysis has a result (drawn dashed on its own scale).
    pub noise_density: Option<Vec<f64>>,
    /// The feedback loop's gain |T| over the same frequencies, when the
    /// sheet has a loop (drawn dotted on the magnitude's dB scale).
    pub loop_gain: Option<crate::scene::LoopCurve>,
}

impl ResponseData {
    /// Magnitude and phase at `f`, interpolated linearly in log f.
    pub fn at(&self, f: f64) -> Option<(f64, f64)> {
        let fs = &self.frequencies;
        if fs.len() < 2 || f.is_nan() || f <= 0.0 || f < fs[0] || f > fs[fs.len() - 1] {
            return None;
        }
        let k = fs.partition_point(|x| *x <= f).clamp(1, fs.len() - 1);
        let (a, b) = (fs[k - 1].ln(), fs[k].ln());
        let t = if b > a { (f.ln() - a) / (b - a) } else { 0.0 };
        let lerp = |v: &[f64]| v.get(k - 1).zip(v.get(k)).map(|(p, q)| p + t * (q - p));
        Some((lerp(&self.magnitude_db)?, lerp(&self.phase_degrees)?))
    }

    /// Powers of ten inside the sweep, for the grid lines.
    /// The output noise density nearest to `f` on the sweep grid, V/√Hz.
    pub fn noise_at(&self, f: f64) -> Option<f64> {
        let n = self.noise_density.as_ref()?;
        let k = self
            .frequencies
            .iter()
            .enumerate()
            .min_by(|a, b| {
                (a.1.ln() - f.ln())
                    .abs()
                    .total_cmp(&(b.1.ln() - f.ln()).abs())
            })?
            .0;
        n.get(k).copied().filter(|v| v.is_finite() && *v > 0.0)
    }

    pub fn decades(&self) -> Vec<f64> {
        let (Some(lo), Some(hi)) = (self.frequencies.first(), self.frequencies.last()) else {
            return Vec::new();
        };
        let (a, b) = (lo.log10().ceil() as i32, hi.log10().floor() as i32);
        (a..=b).map(|e| 10f64.powi(e)).collect()
    }
}

/// Position of `f` across a width, on a log scale from `lo` to `hi`.
pub fn log_position(f: f64, lo: f64, hi: f64, width: f64) -> f64 {
    (f / lo).ln() / (hi / lo).ln() * width
}

#[cfg(feature = "gui")]
pub use plot::ResponsePlot;

#[cfg(feature = "gui")]
mod plot {
    use super::{log_position, loop_label, noise_range, readout, ResponseData};
    use crate::gui::palette;
    use crate::gui::pointer_plot::{label, label_width, Painting};
    use crate::units::{format, Unit};
    use iced::widget::canvas::{Frame, LineDash, Path, Stroke};
    use iced::{Point, Size};

    /// The plot; `pointer_plot::PointerPlot` draws it and keeps the pointer.
    pub struct ResponsePlot<'a> {
        pub data: &'a ResponseData,
    }

    impl Painting for ResponsePlot<'_> {
        fn paint(&self, f: &mut Frame, size: Size, pointer: Option<Point>) {
            draw(f, self.data, size, pointer)
        }
    }

    fn draw(f: &mut Frame, d: &ResponseData, size: Size, pointer: Option<Point>) {
        f.fill_rectangle(Point::ORIGIN, size, palette::PAPER);
        let (Some(&lo), Some(&hi)) = (d.frequencies.first(), d.frequencies.last()) else {
            return;
        };
        let left = 44.0f32;
        let w = (size.width - left - 8.0).max(10.0);
        let half = (size.height - 16.0) / 2.0;
        let x = |fr: f64| left + log_position(fr, lo, hi, w as f64) as f32;
        let range = |v: &[f64]| {
            let a = v.iter().cloned().fold(f64::INFINITY, f64::min);
            let b = v.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
            if b - a < 1e-9 {
                (a - 1.0, b + 1.0)
            } else {
                (a, b)
            }
        };
        // The loop gain shares the magnitude's dB scale when it is drawn.
        let looped = d.loop_gain.as_ref().filter(|l| {
            l.frequencies == d.frequencies && l.magnitude_db.iter().all(|v| v.is_finite())
        });
        let (m0, m1) = match looped {
            Some(l) => {
                let both: Vec<f64> = d
                    .magnitude_db
                    .iter()
                    .chain(&l.magnitude_db)
                    .copied()
                    .collect();
                range(&both)
            }
            None => range(&d.magnitude_db),
        };
        let (p0, p1) = range(&d.phase_degrees);
        let ym = |v: f64| 4.0 + ((m1 - v) / (m1 - m0)) as f32 * (half - 8.0);
        let yp = |v: f64| half + 12.0 + ((p1 - v) / (p1 - p0)) as f32 * (half - 8.0);
        let grid = Stroke::default().with_color(palette::GRID).with_width(1.0);
        // Every decade gets its grid line; a label only where it clears the
        // one before it (a narrow panel labels every second or third decade).
        let mut free_from = f32::NEG_INFINITY;
        for dec in d.decades() {
            let gx = x(dec);
            f.stroke(
                &Path::line(Point::new(gx, 0.0), Point::new(gx, size.height)),
                grid,
            );
            let text = format(dec, Unit::Hertz);
            if gx + 2.0 >= free_from {
                free_from = gx + 2.0 + label_width(&text) + 6.0;
                f.fill_text(label(
                    text,
                    Point::new(gx + 2.0, size.height - 12.0),
                    palette::INK_SOFT,
                ));
            }
        }
        let trace = |f: &mut Frame, v: &[f64], y: &dyn Fn(f64) -> f32, color| {
            let path = Path::new(|b| {
                for (k, (fr, val)) in d.frequencies.iter().zip(v).enumerate() {
                    let p = Point::new(x(*fr), y(*val));
                    if k == 0 {
                        b.move_to(p)
                    } else {
                        b.line_to(p)
                    }
                }
            });
            f.stroke(&path, Stroke::default().with_color(color).with_width(1.6));
        };
        trace(f, &d.magnitude_db, &ym, palette::STAGE);
        trace(f, &d.phase_degrees, &yp, palette::CURRENT);
        if let Some(l) = looped {
            let path = Path::new(|b| {
                for (k, (fr, val)) in d.frequencies.iter().zip(&l.magnitude_db).enumerate() {
                    let p = Point::new(x(*fr), ym(*val));
                    if k == 0 {
                        b.move_to(p)
                    } else {
                        b.line_to(p)
                    }
                }
            });
            let dots = [1.5, 3.0];
            f.stroke(
                &path,
                Stroke {
                    line_dash: LineDash {
                        segments: &dots,
                        offset: 0,
                    },
                    ..Stroke::default().with_color(palette::STAGE).with_width(1.8)
                },
            );
            f.fill_text(label(
                loop_label(l),
                Point::new(left + 4.0, half - 14.0),
                palette::STAGE,
            ));
        }
        // Output noise density, dashed, on its own scale in the upper half.
        if let Some(noise) = d
            .noise_density
            .as_ref()
            .filter(|n| n.len() == d.frequencies.len() && n.iter().all(|v| *v > 0.0))
        {
            let db: Vec<f64> = noise.iter().map(|v| 20.0 * v.log10()).collect();
            let (n0, n1) = range(&db);
            let yn = |v: f64| 4.0 + ((n1 - v) / (n1 - n0)) as f32 * (half - 8.0);
            let path = Path::new(|b| {
                for (k, (fr, val)) in d.frequencies.iter().zip(&db).enumerate() {
                    let p = Point::new(x(*fr), yn(*val));
                    if k == 0 {
                        b.move_to(p)
                    } else {
                        b.line_to(p)
                    }
                }
            });
            let dash = [5.0, 3.0];
            f.stroke(
                &path,
                Stroke {
                    line_dash: LineDash {
                        segments: &dash,
                        offset: 0,
                    },
                    ..Stroke::default()
                        .with_color(palette::VOLTAGE)
                        .with_width(1.4)
                },
            );
            let top = noise.iter().cloned().fold(0.0, f64::max);
            let bottom = noise.iter().cloned().fold(f64::INFINITY, f64::min);
            f.fill_text(label(
                format!("noise (dashed) {}", noise_range(bottom, top)),
                // In the gap between the magnitude and phase traces, where
                // no curve runs.
                Point::new(left + 4.0, half - 1.0),
                palette::VOLTAGE,
            ));
        }
        // Whole numbers, and never "−0".
        let whole = |v: f64| format!("{:.0}", if v.abs() < 0.5 { 0.0 } else { v });
        f.fill_text(label(
            format!("{} dB", whole(m1)),
            Point::new(2.0, 2.0),
            palette::STAGE,
        ));
        f.fill_text(label(
            format!("{} dB", whole(m0)),
            Point::new(2.0, half - 14.0),
            palette::STAGE,
        ));
        f.fill_text(label(
            format!("{}°", whole(p1)),
            Point::new(2.0, half + 10.0),
            palette::CURRENT,
        ));
        f.fill_text(label(
            format!("{}°", whole(p0)),
            Point::new(2.0, 2.0 * half - 4.0),
            palette::CURRENT,
        ));
        let dash = [4.0, 3.0];
        for c in [d.lower_corner, d.upper_corner].into_iter().flatten() {
            let cx = x(c);
            let s = Stroke {
                line_dash: LineDash {
                    segments: &dash,
                    offset: 0,
                },
                ..Stroke::default().with_color(palette::INK).with_width(1.0)
            };
            f.stroke(
                &Path::line(Point::new(cx, 0.0), Point::new(cx, size.height - 14.0)),
                s,
            );
            f.fill_text(label(
                format!("−3 dB {}", format(c, Unit::Hertz)),
                Point::new(cx + 3.0, 14.0),
                palette::INK,
            ));
        }
        if let Some(p) = pointer {
            if p.x >= left && p.x <= left + w {
                let fr = lo * (hi / lo).powf(((p.x - left) / w) as f64);
                if let Some((m, ph)) = d.at(fr) {
                    f.stroke(
                        &Path::line(Point::new(p.x, 0.0), Point::new(p.x, size.height)),
                        Stroke::default()
                            .with_color(palette::SELECT)
                            .with_width(1.0),
                    );
                    let t = readout(fr, m, ph, d.noise_at(fr));
                    let tx = if p.x + 230.0 > size.width {
                        p.x - 230.0
                    } else {
                        p.x + 4.0
                    };
                    f.fill_text(label(t, Point::new(tx, half - 2.0), palette::SELECT));
                }
            }
        }
    }
}

/// The loop gain's label: what the dotted trace is, where |T| crosses 1
/// and the phase margin there.
pub fn loop_label(l: &crate::scene::LoopCurve) -> String {
    match (l.crossover_hz, l.phase_margin_degrees) {
        (Some(fc), Some(pm)) => format!(
            "loop gain |T| (dotted): 1 at {}, phase margin {pm:.1}°",
            crate::units::format(fc, crate::units::Unit::Hertz)
        ),
        _ => "loop gain |T| (dotted): never 1 in the sweep".into(),
    }
}

/// The noise range over the plot, in the one density unit the command line
/// uses (nV/√Hz), e.g. `0.696 … 31.4 nV/√Hz`.
pub fn noise_range(bottom: f64, top: f64) -> String {
    let low = crate::units::format_density(bottom, crate::units::Unit::Volt);
    format!(
        "{} … {}",
        low.trim_end_matches(" nV/√Hz"),
        crate::units::format_density(top, crate::units::Unit::Volt)
    )
}

/// The hover readout: frequency, gain, phase and the output noise there.
pub fn readout(f: f64, gain_db: f64, phase: f64, noise: Option<f64>) -> String {
    let mut t = format!(
        "{}: {gain_db:.1} dB, {phase:.0}°",
        crate::units::format(f, crate::units::Unit::Hertz)
    );
    if let Some(n) = noise {
        t.push_str(&format!(
            ", noise {}",
            crate::units::format_density(n, crate::units::Unit::Volt)
        ));
    }
    t
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn noise_reads_in_the_command_lines_unit() {
        // common practice (no source): a designer reads voltage noise density in nV/√Hz.
        assert_eq!(noise_range(696e-12, 31.4e-9), "0.696 … 31.4 nV/√Hz");
        assert_eq!(
            readout(1e3, 20.04, -179.6, Some(3.1e-9)),
            "1 kHz: 20.0 dB, -180°, noise 3.10 nV/√Hz"
        );
        assert_eq!(readout(1e3, 20.04, 10.0, None), "1 kHz: 20.0 dB, 10°");
        let l = crate::scene::LoopCurve {
            frequencies: vec![1.0],
            magnitude_db: vec![0.0],
            crossover_hz: Some(17.4e6),
            phase_margin_degrees: Some(90.24),
        };
        assert_eq!(
            loop_label(&l),
            "loop gain |T| (dotted): 1 at 17.4 MHz, phase margin 90.2°"
        );
    }

    /// A first-order high-pass with its corner at `fc`.
    fn high_pass(fc: f64) -> ResponseData {
        let frequencies: Vec<f64> = (0..=120).map(|k| 10f64.powf(k as f64 / 20.0)).collect();
        let magnitude_db = frequencies
            .iter()
            .map(|f| {
                let r = f / fc;
                20.0 * (r / (1.0 + r * r).sqrt()).log10()
            })
            .collect();
        let phase_degrees = frequencies
            .iter()
            .map(|f| (fc / f).atan().to_degrees())
            .collect();
        ResponseData {
            frequencies,
            magnitude_db,
            phase_degrees,
            lower_corner: Some(fc),
            upper_corner: None,
            noise_density: None,
            loop_gain: None,
        }
    }

    #[test]
    fn readout_at_the_corner_of_a_first_order_high_pass() {
        // source: any circuits text (e.g. Sedra & Smith, 7th ed., §1.6): a single-pole
        // high-pass is 3.01 dB down with +45° phase at its corner f = 1/(2πRC).
        let d = high_pass(159.15);
        let (m, p) = d.at(159.15).unwrap();
        assert!((m + 3.0103).abs() < 0.05, "{m}");
        assert!((p - 45.0).abs() < 1.0, "{p}");
        // invariant: a decade above the corner it is within 0.05 dB of its passband.
        let (m, _) = d.at(1591.5).unwrap();
        assert!(m.abs() < 0.05, "{m}");
        assert_eq!(d.at(0.5), None);
        assert_eq!(d.decades(), vec![1.0, 10.0, 100.0, 1e3, 1e4, 1e5, 1e6]);
        // invariant: the log axis puts each decade an equal width apart.
        let w = log_position(1e3, 1.0, 1e6, 600.0) - log_position(1e2, 1.0, 1e6, 600.0);
        assert!((w - 100.0).abs() < 1e-9);
    }
}
