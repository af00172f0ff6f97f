//! Preferred values: the E-series of IEC 60063 (E6, E12, E24, E48, E96,
//! E192) as data, with nearest / next up / next down and a "best pair"
//! search (two values whose ratio or parallel combination hits a target).
//!
//! The tables are the published ones, not the formula 10^(i/n): E24 has the
//! irregular 2.7 … 4.7 and 8.2, and E192 has 9.20 where the formula rounds
//! to 9.19 (tests/suite/eseries.rs compares every value).

/// One E-series: its name and the mantissas of one decade (1 ≤ m < 10).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Series {
    pub name: &'static str,
    values: &'static [f64],
}

const E6: [f64; 6] = [1.0, 1.5, 2.2, 3.3, 4.7, 6.8];
const E12: [f64; 12] = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2];
const E24: [f64; 24] = [
    1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6,
    6.2, 6.8, 7.5, 8.2, 9.1,
];
/// E192 in hundredths; E96 is every second entry, E48 every fourth.
const E192_HUNDREDTHS: [u16; 192] = [
    100, 101, 102, 104, 105, 106, 107, 109, 110, 111, 113, 114, 115, 117, 118, 120, 121, 123, 124,
    126, 127, 129, 130, 132, 133, 135, 137, 138, 140, 142, 143, 145, 147, 149, 150, 152, 154, 156,
    158, 160, 162, 164, 165, 167, 169, 172, 174, 176, 178, 180, 182, 184, 187, 189, 191, 193, 196,
    198, 200, 203, 205, 208, 210, 213, 215, 218, 221, 223, 226, 229, 232, 234, 237, 240, 243, 246,
    249, 252, 255, 258, 261, 264, 267, 271, 274, 277, 280, 284, 287, 291, 294, 298, 301, 305, 309,
    312, 316, 320, 324, 328, 332, 336, 340, 344, 348, 352, 357, 361, 365, 370, 374, 379, 383, 388,
    392, 397, 402, 407, 412, 417, 422, 427, 432, 437, 442, 448, 453, 459, 464, 470, 475, 481, 487,
    493, 499, 505, 511, 517, 523, 530, 536, 542, 549, 556, 562, 569, 576, 583, 590, 597, 604, 612,
    619, 626, 634, 642, 649, 657, 665, 673, 681, 690, 698, 706, 715, 723, 732, 741, 750, 759, 768,
    777, 787, 796, 806, 816, 825, 835, 845, 856, 866, 876, 887, 898, 909, 920, 931, 942, 953, 965,
    976, 988,
];

const fn every(step: usize) -> [f64; 192] {
    // Mantissas of E192 (step 1), E96 (2) or E48 (4), padded with zeros.
    let mut out = [0.0; 192];
    let mut i = 0;
    while i * step < 192 {
        out[i] = E192_HUNDREDTHS[i * step] as f64 / 100.0;
        i += 1;
    }
    out
}
const E48_PADDED: [f64; 192] = every(4);
const E96_PADDED: [f64; 192] = every(2);
const E192_PADDED: [f64; 192] = every(1);

/// Every series the program knows, coarsest first.
pub const ALL: [Series; 6] = [
    Series {
        name: "E6",
        values: &E6,
    },
    Series {
        name: "E12",
        values: &E12,
    },
    Series {
        name: "E24",
        values: &E24,
    },
    Series {
        name: "E48",
        values: E48_PADDED.split_at(48).0,
    },
    Series {
        name: "E96",
        values: E96_PADDED.split_at(96).0,
    },
    Series {
        name: "E192",
        values: &E192_PADDED,
    },
];

/// The series named `name` (`E24`, `e24` or `24`).
pub fn find(name: &str) -> Option<Series> {
    let n = name.trim();
    let n = n
        .strip_prefix('E')
        .or_else(|| n.strip_prefix('e'))
        .unwrap_or(n);
    ALL.iter().copied().find(|s| &s.name[1..] == n)
}

/// The message for a series name that does not exist.
pub fn unknown(name: &str) -> String {
    let names: Vec<&str> = ALL.iter().map(|s| s.name).collect();
    format!(
        "no preferred-value series named '{name}'; the series are {}",
        names.join(", ")
    )
}

impl Series {
    /// Mantissas of one decade, ascending, 1 ≤ m < 10.
    pub fn mantissas(&self) -> &'static [f64] {
        self.values
    }

    /// Members per decade.
    pub fn len(&self) -> usize {
        self.values.len()
    }

    pub fn is_empty(&self) -> bool {
        self.values.is_empty()
    }

    /// The ratio of one step, 10^(1/n).
    pub fn step(&self) -> f64 {
        10f64.powf(1.0 / self.len() as f64)
    }

    /// The series values just below and just above (or equal to) `value`:
    /// `(down, up)` with `down ≤ value ≤ up`; equal when `value` is a member.
    fn bracket(&self, value: f64) -> (f64, f64) {
        let e = value.log10().floor();
        let decade = 10f64.powf(e);
        let m = value / decade;
        let vals = self.values;
        // A member within rounding of m counts as m itself.
        let exact = |x: f64| (x - m).abs() <= 1e-9 * m;
        if let Some(&x) = vals.iter().find(|&&x| exact(x)) {
            return (x * decade, x * decade);
        }
        if exact(10.0) {
            return (10.0 * decade, 10.0 * decade);
        }
        match vals.iter().position(|&x| x > m) {
            Some(0) => (vals[vals.len() - 1] * decade / 10.0, vals[0] * decade),
            Some(k) => (vals[k - 1] * decade, vals[k] * decade),
            None => (vals[vals.len() - 1] * decade, 10.0 * decade),
        }
    }

    /// Round `value` to the nearest member, nearest by ratio (the geometric
    /// middle between two members is the boundary). Non-positive or
    /// non-finite values come back unchanged.
    pub fn nearest(&self, value: f64) -> f64 {
        if !(value.is_finite() && value > 0.0) {
            return value;
        }
        let (d, u) = self.bracket(value);
        clean(if value / d <= u / value { d } else { u })
    }

    /// The smallest member ≥ `value` (the value itself when it is a member).
    pub fn up(&self, value: f64) -> f64 {
        if !(value.is_finite() && value > 0.0) {
            return value;
        }
        clean(self.bracket(value).1)
    }

    /// The largest member ≤ `value`.
    pub fn down(&self, value: f64) -> f64 {
        if !(value.is_finite() && value > 0.0) {
            return value;
        }
        clean(self.bracket(value).0)
    }

    /// The member after `value` (strictly above).
    pub fn next_up(&self, value: f64) -> f64 {
        let u = self.up(value);
        if (u - value).abs() <= 1e-9 * value {
            self.up(value * (1.0 + 1e-6) * 1.0000001)
        } else {
            u
        }
    }

    /// The member before `value` (strictly below).
    pub fn next_down(&self, value: f64) -> f64 {
        let d = self.down(value);
        if (d - value).abs() <= 1e-9 * value {
            self.down(value * (1.0 - 1e-6))
        } else {
            d
        }
    }

    /// Is `value` a member (to rounding)?
    pub fn contains(&self, value: f64) -> bool {
        value > 0.0 && (self.nearest(value) - value).abs() <= 1e-9 * value
    }

    /// Members from `low` to `high` inclusive, ascending.
    pub fn members(&self, low: f64, high: f64) -> Vec<f64> {
        let mut out = Vec::new();
        if !(low > 0.0 && high >= low && high.is_finite()) {
            return out;
        }
        let mut v = self.up(low);
        while v <= high * (1.0 + 1e-12) {
            out.push(v);
            v = self.next_up(v);
        }
        out
    }

    /// Two members whose `combine`d value comes nearest (by ratio) to
    /// `target`, each searched within a decade either side of `around`.
    fn best_pair_by(
        &self,
        around: f64,
        target: f64,
        combine: impl Fn(f64, f64) -> f64,
    ) -> Option<Pair> {
        if !(target.is_finite() && target > 0.0 && around.is_finite() && around > 0.0) {
            return None;
        }
        let cands = self.members(around / 10.0, around * 10.0);
        let mut best: Option<Pair> = None;
        for &a in &cands {
            for &b in &cands {
                let v = combine(a, b);
                let err = (v / target).ln().abs();
                if best.as_ref().is_none_or(|p| err < p.error.abs()) {
                    best = Some(Pair {
                        first: a,
                        second: b,
                        value: v,
                        error: v / target - 1.0,
                    });
                }
            }
        }
        best
    }

    /// Two members `a`, `b` (near `around`) whose ratio b/(a + b) — a
    /// divider's output fraction — is nearest `fraction`.
    pub fn best_divider(&self, around: f64, fraction: f64) -> Option<Pair> {
        if !(fraction > 0.0 && fraction < 1.0) {
            return None;
        }
        self.best_pair_by(around, fraction, |a, b| b / (a + b))
    }

    /// Two members (near `target`…10·`target`) whose parallel value is nearest `target`.
    pub fn best_parallel(&self, target: f64) -> Option<Pair> {
        self.best_pair_by(target * 3.0, target, |a, b| a * b / (a + b))
    }
}

/// A pair of members and what they combine to.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Pair {
    pub first: f64,
    pub second: f64,
    /// The ratio or parallel value they give.
    pub value: f64,
    /// value/target − 1.
    pub error: f64,
}

/// Remove the binary noise of mantissa × 10^e (4.7 × 1000 → 4700 exactly).
fn clean(v: f64) -> f64 {
    // Four significant digits through the decimal text, so 4.7e-6 is the
    // literal 4.7e-6. (Scaling by 10^(e − 3) instead underflowed to 0 near
    // the smallest doubles and gave NaN for a 1e-307 Ω resistor.)
    if !(v.is_finite() && v > 0.0) {
        return v;
    }
    format!("{v:.3e}").parse().unwrap_or(v)
}

/// Default series for capacitors when the resistors use `resistor_series`:
/// E6 for E6, E12 for everything finer (film and electrolytic parts are rarely
/// stocked finer; common practice).
pub fn capacitor_default(resistor_series: Series) -> Series {
    if resistor_series.name == "E6" {
        ALL[0]
    } else {
        ALL[1]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nearest_up_down_on_e12() {
        let e12 = find("E12").unwrap();
        // invariant: rounding to a member and the order of members
        assert_eq!(e12.nearest(4650.0), 4700.0);
        assert_eq!(e12.up(4701.0), 5600.0);
        assert_eq!(e12.down(4699.0), 3900.0);
        assert_eq!(e12.next_up(4700.0), 5600.0);
        assert_eq!(e12.next_down(1000.0), 820.0);
        assert_eq!(e12.nearest(9.9e-6), 10e-6);
        assert!(find("E7").is_none());
    }
}
