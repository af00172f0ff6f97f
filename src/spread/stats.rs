//! Summary statistics of Monte Carlo samples.

use serde::Serialize;

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Summary {
    pub count: usize,
    pub mean: f64,
    /// Sample standard deviation (n − 1 in the denominator).
    pub standard_deviation: f64,
    pub min: f64,
    pub max: f64,
    /// 0.1 %, 50 % and 99.9 % percentiles.
    pub p0_1: f64,
    pub p50: f64,
    pub p99_9: f64,
}

impl Summary {
    pub fn of(samples: &[f64]) -> Option<Summary> {
        let mut xs: Vec<f64> = samples.iter().copied().filter(|x| x.is_finite()).collect();
        if xs.is_empty() {
            return None;
        }
        xs.sort_by(f64::total_cmp);
        let n = xs.len();
        let mean = xs.iter().sum::<f64>() / n as f64;
        let var = if n > 1 {
            xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1) as f64
        } else {
            0.0
        };
        Some(Summary {
            count: n,
            mean,
            standard_deviation: var.sqrt(),
            min: xs[0],
            max: xs[n - 1],
            p0_1: percentile(&xs, 0.001),
            p50: percentile(&xs, 0.5),
            p99_9: percentile(&xs, 0.999),
        })
    }
}

/// Percentile of sorted data by linear interpolation between closest ranks
/// (the "type 7" definition of Hyndman and Fan, 1996).
pub fn percentile(sorted: &[f64], p: f64) -> f64 {
    let h = (sorted.len() - 1) as f64 * p;
    let lo = h.floor() as usize;
    let hi = h.ceil() as usize;
    sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn percentiles_of_one_to_five() {
        // source: Hyndman & Fan (1996), definition 7: the median of 1..5 is 3, the 25th percentile is 2.
        let xs = [1.0, 2.0, 3.0, 4.0, 5.0];
        assert_eq!(percentile(&xs, 0.5), 3.0);
        assert_eq!(percentile(&xs, 0.25), 2.0);
        let s = Summary::of(&xs).unwrap();
        // source: sample standard deviation of 1..5 is sqrt(2.5).
        assert!((s.standard_deviation - 2.5f64.sqrt()).abs() < 1e-15);
    }
}
