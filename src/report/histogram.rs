//! A Monte Carlo histogram as a small SVG: bars of run counts, the nominal
//! value (solid) and the spec limits (dashed, warning colour), with labelled
//! axes. Text in the page's embedded font.

use crate::render::svg::escape;
use std::fmt::Write;

/// What one histogram shows.
pub struct Histogram<'a> {
    pub title: &'a str,
    pub samples: &'a [f64],
    pub nominal: Option<f64>,
    pub limits: (Option<f64>, Option<f64>),
    /// Writes a value as axis text (with its unit).
    pub label: &'a dyn Fn(f64) -> String,
}

const W: f64 = 170.0;
const H: f64 = 92.0;
const LEFT: f64 = 18.0;
const RIGHT: f64 = 6.0;
const TOP: f64 = 12.0;
const BOTTOM: f64 = 18.0;
/// Number of bars.
pub const BINS: usize = 30;

fn n(v: f64) -> String {
    let s = format!("{v:.2}");
    let s = s.trim_end_matches('0').trim_end_matches('.').to_string();
    if s == "-0" {
        "0".into()
    } else {
        s
    }
}

/// Counts per bin over [lo, hi] (a value equal to hi goes in the last bin).
pub fn counts(samples: &[f64], lo: f64, hi: f64, bins: usize) -> Vec<usize> {
    let mut c = vec![0; bins];
    let w = (hi - lo) / bins as f64;
    for &x in samples.iter().filter(|x| x.is_finite()) {
        let k = if w > 0.0 {
            (((x - lo) / w).floor().max(0.0) as usize).min(bins - 1)
        } else {
            bins / 2
        };
        c[k] += 1;
    }
    c
}

/// The SVG (width 85 mm).
pub fn svg(h: &Histogram) -> String {
    let finite: Vec<f64> = h
        .samples
        .iter()
        .copied()
        .filter(|x| x.is_finite())
        .collect();
    let mut lo = finite.iter().copied().fold(f64::INFINITY, f64::min);
    let mut hi = finite.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    for v in [h.nominal, h.limits.0, h.limits.1].into_iter().flatten() {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if !lo.is_finite() || !hi.is_finite() {
        lo = 0.0;
        hi = 1.0;
    }
    if hi <= lo {
        let d = if lo == 0.0 { 1.0 } else { lo.abs() * 0.01 };
        lo -= d;
        hi += d;
    }
    let pad = (hi - lo) * 0.04;
    let (lo, hi) = (lo - pad, hi + pad);
    let c = counts(&finite, lo, hi, BINS);
    let top = c.iter().copied().max().unwrap_or(0).max(1) as f64;
    let pw = W - LEFT - RIGHT;
    let ph = H - TOP - BOTTOM;
    let x = |v: f64| LEFT + (v - lo) / (hi - lo) * pw;
    let y = |k: f64| TOP + ph - k / top * ph;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"85mm\" height=\"{}mm\" viewBox=\"0 0 {} {}\" font-family=\"{}\" font-kerning=\"none\">",
        n(H / 2.0),
        n(W),
        n(H),
        crate::scene::text::FAMILY
    );
    let _ = writeln!(s, "<title>{}</title>", escape(h.title));
    let _ = writeln!(
        s,
        "<rect x=\"0\" y=\"0\" width=\"{}\" height=\"{}\" fill=\"#ffffff\"/>",
        n(W),
        n(H)
    );
    let _ = writeln!(
        s,
        "<text x=\"{}\" y=\"7\" font-size=\"5\" font-weight=\"bold\" fill=\"#23262f\">{}</text>",
        n(LEFT),
        escape(h.title)
    );
    let bw = pw / BINS as f64;
    for (k, &count) in c.iter().enumerate() {
        if count == 0 {
            continue;
        }
        let _ = writeln!(
            s,
            "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"#5b21b6\" fill-opacity=\"0.55\" stroke=\"#5b21b6\" stroke-width=\"0.3\"/>",
            n(LEFT + k as f64 * bw),
            n(y(count as f64)),
            n(bw),
            n(TOP + ph - y(count as f64))
        );
    }
    // Frame, count axis.
    let _ = writeln!(
        s,
        "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"none\" stroke=\"#23262f\" stroke-width=\"0.4\"/>",
        n(LEFT),
        n(TOP),
        n(pw),
        n(ph)
    );
    for k in [0.0, top] {
        let _ = writeln!(
            s,
            "<text x=\"{}\" y=\"{}\" font-size=\"3.6\" text-anchor=\"end\" fill=\"#5c6170\">{}</text>",
            n(LEFT - 1.0),
            n(y(k) + 1.2),
            k
        );
    }
    let _ = writeln!(
        s,
        "<text x=\"3.5\" y=\"{}\" font-size=\"3.6\" fill=\"#5c6170\" transform=\"rotate(-90 3.5 {})\" text-anchor=\"middle\">runs per bar</text>",
        n(TOP + ph / 2.0),
        n(TOP + ph / 2.0)
    );
    // Value axis: ends and middle.
    for v in [lo, (lo + hi) / 2.0, hi] {
        let anchor = if v == lo {
            "start"
        } else if v == hi {
            "end"
        } else {
            "middle"
        };
        let _ = writeln!(
            s,
            "<text x=\"{}\" y=\"{}\" font-size=\"3.6\" text-anchor=\"{anchor}\" fill=\"#5c6170\">{}</text>",
            n(x(v)),
            n(TOP + ph + 5.0),
            escape(&(h.label)(v))
        );
    }
    let mut legend = Vec::new();
    if let Some(v) = h.nominal {
        let _ = writeln!(
            s,
            "<path d=\"M{} {} L{} {}\" stroke=\"#23262f\" stroke-width=\"0.8\"/>",
            n(x(v)),
            n(TOP),
            n(x(v)),
            n(TOP + ph)
        );
        legend.push(format!("nominal {} (solid)", (h.label)(v)));
    }
    for v in [h.limits.0, h.limits.1].into_iter().flatten() {
        let _ = writeln!(
            s,
            "<path d=\"M{} {} L{} {}\" stroke=\"#b91c1c\" stroke-width=\"0.8\" stroke-dasharray=\"2 1.2\"/>",
            n(x(v)),
            n(TOP),
            n(x(v)),
            n(TOP + ph)
        );
        legend.push(format!("limit {} (dashed)", (h.label)(v)));
    }
    let _ = writeln!(
        s,
        "<text x=\"{}\" y=\"{}\" font-size=\"3.6\" fill=\"#23262f\">{}</text>",
        n(LEFT),
        n(TOP + ph + 11.0),
        escape(&legend.join(", "))
    );
    s.push_str("</svg>\n");
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_sample_lands_in_one_bin() {
        // invariant: the bar counts of a histogram add up to the number of finite samples.
        let xs: Vec<f64> = (0..1000).map(|k| (k as f64 * 0.37).sin()).collect();
        let c = counts(&xs, -1.0, 1.0, BINS);
        assert_eq!(c.iter().sum::<usize>(), xs.len());
        // invariant: a uniform grid of samples fills equal bins equally.
        let ys: Vec<f64> = (0..300).map(|k| (k as f64 + 0.5) / 300.0).collect();
        assert!(counts(&ys, 0.0, 1.0, 30).iter().all(|&k| k == 10));
    }
}
