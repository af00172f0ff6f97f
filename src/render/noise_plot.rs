//! The noise density plot: output noise density and the density referred
//! to the signal source, V/√Hz, against frequency, both axes logarithmic.
//! Same frame, grid, fonts and print sizes as the response plot
//! ([`super::plot`]); built as a [`Scene`] so it renders through the same
//! SVG and PNG paths.

use super::plot::{line, push, text, LEFT, TOP, W};
use crate::scene::{style, Anchor, Colour, Primitive, Rect, Scene, Shape, Stroke, Weight};
use crate::units::{self, Unit};

/// Height of the plot panel, grid units.
const H: f64 = 26.0;

/// What the plot shows.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct NoiseData {
    pub title: String,
    /// (frequency Hz, output density V/√Hz, input-referred density V/√Hz),
    /// in rising frequency. The input density is NaN when there is no
    /// signal source to refer to.
    pub points: Vec<(f64, f64, f64)>,
}

impl NoiseData {
    /// Read the CSV `biasline noise --csv` writes: `frequency_hz,
    /// output_density_v_per_root_hz,input_density_v_per_root_hz,…` (further
    /// columns, one per generator, are ignored; a header line is skipped;
    /// an empty field is a missing value). Errors name the line.
    pub fn from_csv(title: &str, text: &str) -> Result<NoiseData, String> {
        let mut points = super::plot::read_frequency_csv(
            text,
            2,
            "frequency_hz,output_density_v_per_root_hz,input_density_v_per_root_hz",
            "the noise plot needs at least two frequencies",
        )?;
        points.sort_by(|a, b| a.0.total_cmp(&b.0));
        Ok(NoiseData {
            title: title.to_string(),
            points,
        })
    }
}

fn positive(v: f64) -> bool {
    v.is_finite() && v > 0.0
}

/// The plot as a display list (grid units, like the sheet).
pub fn noise_scene(data: &NoiseData) -> Scene {
    let mut el = Vec::new();
    let pts: Vec<_> = data
        .points
        .iter()
        .filter(|p| positive(p.0) && (positive(p.1) || positive(p.2)))
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
    let levels = pts.iter().flat_map(|p| [p.1, p.2]).filter(|v| positive(*v));
    let lo = levels.clone().fold(f64::INFINITY, f64::min);
    let hi = levels.fold(f64::NEG_INFINITY, f64::max);
    let (e0, e1) = if lo.is_finite() && hi.is_finite() {
        let e0 = lo.log10().floor();
        (e0, hi.log10().ceil().max(e0 + 1.0))
    } else {
        (-9.0, -6.0)
    };
    let y = |v: f64| TOP + (e1 - v.log10()) / (e1 - e0) * H;
    let small = style::TEXT_CARD;
    push(&mut el, super::plot::title(&data.title, "Noise density"));
    // Grids: decades solid, 2…9 light, on both axes.
    let decade = Colour::rgb(0xcfc8b8);
    let mut d = d0;
    while d <= d1 + 1e-9 {
        let f = 10f64.powf(d);
        line(
            &mut el,
            vec![[x(f), TOP], [x(f), TOP + H]],
            decade,
            style::FRAME,
            None,
        );
        if d < d1 - 1e-9 {
            for k in 2..10 {
                let fk = f * k as f64;
                let xs = vec![[x(fk), TOP], [x(fk), TOP + H]];
                line(&mut el, xs, style::GRID, style::LEADER * 0.7, None);
            }
        }
        text(
            &mut el,
            &units::format(f, Unit::Hertz),
            [x(f), TOP + H + 1.1],
            Anchor::Middle,
            small,
            style::INK_SOFT,
        );
        d += 1.0;
    }
    let mut label_width: f64 = 0.0;
    let mut e = e0;
    while e <= e1 + 1e-9 {
        let v = 10f64.powf(e);
        let label = format!("{}/√Hz", units::format(v, Unit::Volt));
        label_width =
            label_width.max(crate::scene::text::measure(&label, small, Weight::Regular).width);
        line(
            &mut el,
            vec![[LEFT, y(v)], [LEFT + W, y(v)]],
            decade,
            style::FRAME,
            None,
        );
        if e < e1 - 1e-9 {
            for k in 2..10 {
                let vk = v * k as f64;
                let ys = vec![[LEFT, y(vk)], [LEFT + W, y(vk)]];
                line(&mut el, ys, style::GRID, style::LEADER * 0.7, None);
            }
        }
        text(
            &mut el,
            &label,
            [LEFT - 0.4, y(v) + 0.3],
            Anchor::End,
            small,
            style::INK_SOFT,
        );
        e += 1.0;
    }
    push(
        &mut el,
        Primitive::Path(crate::scene::PathItem {
            shape: Shape::Rect {
                rect: Rect::from_size([LEFT, TOP], W, H),
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
    text(
        &mut el,
        "output noise density (V/√Hz), solid",
        [LEFT + W, TOP - 1.5],
        Anchor::End,
        small,
        style::INK,
    );
    text(
        &mut el,
        "referred to the signal source, dashed",
        [LEFT + W, TOP - 0.4],
        Anchor::End,
        small,
        style::STAGE,
    );
    text(
        &mut el,
        "frequency (Hz), log scale; density, log scale",
        [LEFT + W / 2.0, TOP + H + 2.4],
        Anchor::Middle,
        small,
        style::INK,
    );
    // The curves, each broken where a value is missing.
    for (pick, colour, dash) in [
        (0usize, style::INK, None),
        (1usize, style::STAGE, Some([0.6, 0.35])),
    ] {
        let mut run: Vec<[f64; 2]> = Vec::new();
        for p in &pts {
            let v = if pick == 0 { p.1 } else { p.2 };
            if positive(v) {
                run.push([x(p.0), y(v)]);
            } else if !run.is_empty() {
                if run.len() >= 2 {
                    line(&mut el, std::mem::take(&mut run), colour, style::LINE, dash);
                }
                run.clear();
            }
        }
        if run.len() >= 2 {
            line(&mut el, run, colour, style::LINE, dash);
        }
    }
    Scene {
        elements: el,
        // The density labels are wider than the response plot's: the page
        // grows to the left so none is cut.
        bounds: Rect::new(
            [(LEFT - 1.0 - label_width).min(0.0), 0.0],
            [LEFT + W + 2.0, TOP + H + 4.0],
        ),
        ..Scene::default()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_reads_the_noise_command_columns_and_names_bad_lines() {
        // invariant: the three leading columns of `noise --csv` are read, the rest ignored
        let d = NoiseData::from_csv(
            "t",
            "frequency_hz,output_density_v_per_root_hz,input_density_v_per_root_hz,R1 thermal\n\
             100,2e-8,4e-9,1e-9\n10,3e-8,,1e-9\n",
        )
        .unwrap();
        assert_eq!(d.points.len(), 2);
        assert_eq!(d.points[0].0, 10.0);
        assert!(d.points[0].2.is_nan());
        assert_eq!(d.points[1].1, 2e-8);
        let e = NoiseData::from_csv("t", "f,o,i\n10,1e-9,1e-9\nx,1,1\n").unwrap_err();
        assert!(e.contains("line 3"), "{e}");
    }
}
