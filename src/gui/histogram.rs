//! Binning and statistics for the spread view's histograms. Plain Rust (no
//! iced): the drawer draws what [`Histogram`] and [`Stats`] say.

/// Count, mean, standard deviation and extremes of a set of samples.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stats {
    pub count: usize,
    pub mean: f64,
    /// Sample standard deviation (n − 1 in the denominator); 0 for one sample.
    pub sigma: f64,
    pub min: f64,
    pub max: f64,
}

impl Stats {
    /// The statistics of the finite samples; `None` when there are none.
    pub fn of(samples: &[f64]) -> Option<Stats> {
        let xs: Vec<f64> = samples.iter().copied().filter(|x| x.is_finite()).collect();
        if xs.is_empty() {
            return None;
        }
        let n = xs.len() as f64;
        let mean = xs.iter().sum::<f64>() / n;
        let var = if xs.len() > 1 {
            xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0)
        } else {
            0.0
        };
        Some(Stats {
            count: xs.len(),
            mean,
            sigma: var.sqrt(),
            min: xs.iter().copied().fold(f64::INFINITY, f64::min),
            max: xs.iter().copied().fold(f64::NEG_INFINITY, f64::max),
        })
    }
}

/// Equal-width bins from `lo` to `hi`.
#[derive(Debug, Clone, PartialEq)]
pub struct Histogram {
    pub lo: f64,
    pub hi: f64,
    pub counts: Vec<usize>,
}

impl Histogram {
    /// Bin the finite samples into `bins` equal bins spanning their range.
    /// When every sample is the same value the range is widened a little
    /// around it so the one bar has a width.
    pub fn of(samples: &[f64], bins: usize) -> Option<Histogram> {
        let s = Stats::of(samples)?;
        let bins = bins.max(1);
        let (mut lo, mut hi) = (s.min, s.max);
        if hi <= lo {
            let pad = if lo == 0.0 { 1e-12 } else { lo.abs() * 1e-6 };
            lo -= pad;
            hi += pad;
        }
        let mut h = Histogram {
            lo,
            hi,
            counts: vec![0; bins],
        };
        for x in samples.iter().copied().filter(|x| x.is_finite()) {
            let k = h.bin_of(x);
            h.counts[k] += 1;
        }
        Some(h)
    }

    /// The bin that holds `x` (the top edge belongs to the last bin; values
    /// outside are clamped to the end bins).
    pub fn bin_of(&self, x: f64) -> usize {
        let n = self.counts.len();
        let t = (x - self.lo) / (self.hi - self.lo);
        ((t * n as f64).floor().max(0.0) as usize).min(n - 1)
    }

    pub fn width(&self) -> f64 {
        (self.hi - self.lo) / self.counts.len() as f64
    }

    /// Lower and upper edge of bin `k`.
    pub fn edges(&self, k: usize) -> (f64, f64) {
        let w = self.width();
        (self.lo + k as f64 * w, self.lo + (k + 1) as f64 * w)
    }

    pub fn tallest(&self) -> usize {
        self.counts.iter().copied().max().unwrap_or(0)
    }

    /// Position of `x` across the range, 0 at `lo` and 1 at `hi`.
    pub fn fraction(&self, x: f64) -> f64 {
        (x - self.lo) / (self.hi - self.lo)
    }
}

/// A bin count for `n` samples: the square-root rule, kept between 5 and 30.
pub fn bin_count(n: usize) -> usize {
    // common practice (no source): √n bins, bounded so bars stay readable.
    ((n as f64).sqrt().round() as usize).clamp(5, 30)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn samples() -> Vec<f64> {
        // A deterministic spread of values with repeats and both ends.
        (0..257)
            .map(|i| ((i * 37) % 101) as f64 * 0.013 - 0.4)
            .collect()
    }

    #[test]
    fn every_sample_lands_in_exactly_one_bin() {
        let xs = samples();
        let h = Histogram::of(&xs, bin_count(xs.len())).unwrap();
        // invariant: binning partitions the samples — the counts add up to n.
        assert_eq!(h.counts.iter().sum::<usize>(), xs.len());
        for x in &xs {
            let k = h.bin_of(*x);
            let (a, b) = h.edges(k);
            // invariant: a sample lies within the edges of its own bin.
            assert!(*x >= a - 1e-12 && *x <= b + 1e-12, "{x} not in [{a}, {b}]");
        }
    }

    #[test]
    fn bins_cover_min_to_max() {
        let xs = samples();
        let s = Stats::of(&xs).unwrap();
        let h = Histogram::of(&xs, 12).unwrap();
        // invariant: the bins tile [min, max] without gaps.
        assert_eq!(h.lo, s.min);
        assert!((h.edges(11).1 - s.max).abs() < 1e-12);
        for k in 1..12 {
            assert!((h.edges(k - 1).1 - h.edges(k).0).abs() < 1e-12);
        }
        // invariant: the extremes land in the end bins.
        assert_eq!(h.bin_of(s.min), 0);
        assert_eq!(h.bin_of(s.max), 11);
    }

    #[test]
    fn statistics_match_the_textbook_definitions() {
        // from memory: the usual worked example of a standard deviation — for
        // 2, 4, 4, 4, 5, 5, 7, 9 the mean is 5 and the squared deviations sum to
        // 32 (population σ 2); the sample σ (n − 1) is √(32/7).
        let xs = [2.0, 4.0, 4.0, 4.0, 5.0, 5.0, 7.0, 9.0];
        let s = Stats::of(&xs).unwrap();
        assert_eq!(s.count, 8);
        assert!((s.mean - 5.0).abs() < 1e-12);
        assert!((s.sigma - (32.0f64 / 7.0).sqrt()).abs() < 1e-12);
        assert_eq!((s.min, s.max), (2.0, 9.0));
    }

    #[test]
    fn equal_samples_and_non_finite_values_are_handled() {
        let h = Histogram::of(&[3.0, 3.0, 3.0, f64::NAN], 7).unwrap();
        // invariant: non-finite samples are left out; the rest are all counted.
        assert_eq!(h.counts.iter().sum::<usize>(), 3);
        assert!(h.lo < 3.0 && h.hi > 3.0);
        assert!(Stats::of(&[f64::NAN]).is_none());
        assert!(Histogram::of(&[], 5).is_none());
        assert_eq!(Stats::of(&[1.5]).unwrap().sigma, 0.0);
    }

    #[test]
    fn bin_count_follows_the_square_root_rule_within_bounds() {
        // common practice (no source): √n bins.
        assert_eq!(bin_count(400), 20);
        assert_eq!(bin_count(4), 5);
        assert_eq!(bin_count(100_000), 30);
    }
}
