//! Preferred values against the published tables of IEC 60063:2015, and the
//! rounding invariants.

use biasline::design::eseries::{self, Series};

fn series(name: &str) -> Series {
    eseries::find(name).expect(name)
}

fn same(got: &[f64], want: &[f64]) {
    assert_eq!(got.len(), want.len());
    for (g, w) in got.iter().zip(want) {
        assert!((g - w).abs() < 1e-12, "{g} vs {w}");
    }
}

#[test]
fn e24_is_the_published_table() {
    // source: IEC 60063:2015, Table 1 (E24, two significant figures; includes
    // the irregular 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7 and 8.2).
    let want = [
        1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1,
        5.6, 6.2, 6.8, 7.5, 8.2, 9.1,
    ];
    same(series("E24").mantissas(), &want);
    // source: IEC 60063:2015, Table 1 — E12 and E6 are every second and every fourth E24 value.
    let e12: Vec<f64> = want.iter().step_by(2).copied().collect();
    same(series("E12").mantissas(), &e12);
    same(series("E6").mantissas(), &[1.0, 1.5, 2.2, 3.3, 4.7, 6.8]);
}

#[test]
fn e24_differs_from_the_formula_where_the_standard_says() {
    // source: IEC 60063:2015, Table 1 — the E24 values that are not 10^(i/24)
    // rounded to two figures (historical values kept by the standard).
    let e24 = series("E24");
    let differ: Vec<f64> = e24
        .mantissas()
        .iter()
        .enumerate()
        .filter(|(i, v)| {
            let f = (10f64.powf(*i as f64 / 24.0) * 10.0).round() / 10.0;
            (f - **v).abs() > 1e-9
        })
        .map(|(_, v)| *v)
        .collect();
    assert_eq!(differ, vec![2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2]);
}

#[test]
fn e96_is_the_published_table() {
    // source: IEC 60063:2015, Table 2 (E96, three significant figures),
    // transcribed value by value.
    let want = "100 102 105 107 110 113 115 118 121 124 127 130 133 137 140 143 147 150 154 158 \
                162 165 169 174 178 182 187 191 196 200 205 210 215 221 226 232 237 243 249 255 \
                261 267 274 280 287 294 301 309 316 324 332 340 348 357 365 374 383 392 402 412 \
                422 432 442 453 464 475 487 499 511 523 536 549 562 576 590 604 619 634 649 665 \
                681 698 715 732 750 768 787 806 825 845 866 887 909 931 953 976";
    let want: Vec<f64> = want
        .split_whitespace()
        .map(|s| s.parse::<f64>().unwrap() / 100.0)
        .collect();
    assert_eq!(want.len(), 96);
    same(series("E96").mantissas(), &want);
    // source: IEC 60063:2015, Table 2 — E48 is every second E96 value.
    let e48: Vec<f64> = want.iter().step_by(2).copied().collect();
    same(series("E48").mantissas(), &e48);
}

#[test]
fn e192_spot_values() {
    // source: IEC 60063:2015, Table 2 (E192): spot values, among them 9.20,
    // the one member where the standard departs from 10^(i/192) rounded (9.19).
    let e192 = series("E192");
    let m = e192.mantissas();
    assert_eq!(m.len(), 192);
    for (i, v) in [
        (0, 1.00),
        (1, 1.01),
        (3, 1.04),
        (45, 1.72),
        (100, 3.32),
        (150, 6.04),
        (184, 9.09),
        (185, 9.20),
        (186, 9.31),
        (191, 9.88),
    ] {
        assert!((m[i] - v).abs() < 1e-12, "E192[{i}] = {} not {v}", m[i]);
    }
    // invariant: every other E192 member is E96.
    let e96 = series("E96");
    for (i, v) in e96.mantissas().iter().enumerate() {
        assert_eq!(*v, m[2 * i]);
    }
}

#[test]
fn nearest_is_never_more_than_half_a_step_away() {
    // invariant: the nearest member lies within half the (logarithmic) gap
    // between the two members that bracket the value, and up/down bracket it.
    let mut x = 0.0137f64;
    while x < 3.3e6 {
        for s in eseries::ALL {
            let (d, u, n) = (s.down(x), s.up(x), s.nearest(x));
            assert!(
                d <= x * (1.0 + 1e-12) && u >= x * (1.0 - 1e-12),
                "{} {x}",
                s.name
            );
            let half = 0.5 * (u / d).ln() + 1e-12;
            assert!((n / x).ln().abs() <= half, "{} {x}: {n}", s.name);
            assert!(n == d || n == u);
            // invariant: the series' largest step bounds the rounding.
            let biggest = s
                .mantissas()
                .windows(2)
                .map(|w| w[1] / w[0])
                .chain([10.0 / s.mantissas()[s.len() - 1]])
                .fold(1.0f64, f64::max);
            assert!((n / x).ln().abs() <= 0.5 * biggest.ln() + 1e-12);
        }
        x *= 1.0371;
    }
}

#[test]
fn members_round_to_themselves_in_every_decade() {
    // invariant: a member is its own nearest, up and down; next_up/next_down step to neighbours.
    for s in eseries::ALL {
        for e in -12..=7 {
            for &m in s.mantissas() {
                let v = m * 10f64.powi(e);
                assert!((s.nearest(v) / v - 1.0).abs() < 1e-12, "{} {v}", s.name);
                assert!(s.next_up(v) > v * (1.0 + 1e-9));
                assert!(s.next_down(v) < v * (1.0 - 1e-9));
            }
        }
    }
    let e12 = series("E12");
    // source: IEC 60063:2015, Table 1 — after 8.2 comes 10 of the next decade.
    assert_eq!(e12.next_up(8200.0), 10000.0);
    assert_eq!(e12.next_down(1e-6), 820e-9);
}

#[test]
fn best_pair_beats_rounding_each_value() {
    // invariant: the best divider pair is at least as close as rounding the
    // two exact resistors separately, and its reported value is its ratio.
    let e24 = series("E24");
    for (r1, r2) in [
        (262e3, 50.6e3),
        (47.3e3, 9.1e3),
        (13.7e3, 13.7e3),
        (100e3, 3.3e3),
    ] {
        let f = r2 / (r1 + r2);
        let p = e24.best_divider(r1, f).unwrap();
        assert!((p.second / (p.first + p.second) - p.value).abs() < 1e-15);
        let (a, b) = (e24.nearest(r1), e24.nearest(r2));
        let rounded = (b / (a + b) / f).ln().abs();
        assert!((p.value / f).ln().abs() <= rounded + 1e-15);
    }
    let par = e24.best_parallel(7.15e3).unwrap();
    assert!((par.first * par.second / (par.first + par.second) - par.value).abs() < 1e-9);
    assert!(par.error.abs() <= (e24.nearest(7.15e3) / 7.15e3 - 1.0).abs());
}

#[test]
fn unknown_series_are_refused_with_the_list() {
    // invariant: a name that is not a series gives no series and a message naming the choices.
    assert!(eseries::find("E7").is_none());
    assert!(eseries::find("E").is_none());
    assert_eq!(eseries::find("e96").unwrap().name, "E96");
    let m = eseries::unknown("E7");
    assert!(m.contains("E7") && m.contains("E192"), "{m}");
}
