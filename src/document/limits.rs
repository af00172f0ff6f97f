//! Stated limits on the project's analysis settings. Every number in the
//! file that sizes work or memory (sweep points, Monte Carlo runs) is checked
//! against these when the file is read, so no allocation is ever sized by an
//! unchecked file value; the command line checks its own flags against the
//! same numbers (`spread --runs`).

use super::Document;

/// Most sweep points per decade (`analysis.points_per_decade`).
pub const MAX_POINTS_PER_DECADE: u32 = 1_000;
/// Most frequencies in one sweep, over the whole range.
pub const MAX_SWEEP_POINTS: usize = 100_000;
/// Most Monte Carlo runs (`spread.runs`, `spread --runs`).
pub const MAX_SPREAD_RUNS: usize = 1_000_000;
/// Absolute zero, °C: no temperature may be at or below it.
pub const ABSOLUTE_ZERO_CELSIUS: f64 = -273.15;
/// Highest temperature accepted, °C (far past any part's rating; a guard
/// against a typo that would overflow the device equations).
pub const MAX_CELSIUS: f64 = 1_000.0;

/// `spread.runs` or `--runs` against [`MAX_SPREAD_RUNS`].
pub fn check_runs(runs: usize) -> Result<(), String> {
    if runs > MAX_SPREAD_RUNS {
        return Err(format!(
            "{runs} Monte Carlo runs is above the limit of {MAX_SPREAD_RUNS}: ask for fewer"
        ));
    }
    Ok(())
}

/// A temperature field against absolute zero and [`MAX_CELSIUS`].
fn check_celsius(field: &str, t: f64) -> Result<(), String> {
    if !t.is_finite() {
        return Err(format!("{field} is not a finite number"));
    }
    if t <= ABSOLUTE_ZERO_CELSIUS {
        return Err(format!(
            "{field} is {t} °C, at or below absolute zero ({ABSOLUTE_ZERO_CELSIUS} °C): \
             give a real temperature"
        ));
    }
    if t > MAX_CELSIUS {
        return Err(format!(
            "{field} is {t} °C, above the limit of {MAX_CELSIUS} °C"
        ));
    }
    Ok(())
}

/// Every settings limit: `Err((item, message))` for the first one broken.
pub fn check_settings(doc: &Document) -> Result<(), (String, String)> {
    let a = &doc.analysis;
    let analysis = |m: String| ("analysis".to_string(), m);
    if !(a.frequency_start.is_finite() && a.frequency_start > 0.0) {
        return Err(analysis(format!(
            "the sweep needs 0 < frequency_start < frequency_stop: frequency_start is {} Hz",
            a.frequency_start
        )));
    }
    if !(a.frequency_stop.is_finite() && a.frequency_stop > a.frequency_start) {
        return Err(analysis(format!(
            "the sweep needs 0 < frequency_start < frequency_stop: frequency_stop is {} Hz, \
             frequency_start {} Hz",
            a.frequency_stop, a.frequency_start
        )));
    }
    if a.points_per_decade == 0 || a.points_per_decade > MAX_POINTS_PER_DECADE {
        return Err(analysis(format!(
            "points_per_decade is {}: it must be from 1 to {MAX_POINTS_PER_DECADE}",
            a.points_per_decade
        )));
    }
    let points = (a.frequency_stop / a.frequency_start).log10() * f64::from(a.points_per_decade);
    if points > MAX_SWEEP_POINTS as f64 {
        return Err(analysis(format!(
            "the sweep ({} to {} Hz at {} points per decade) has about {points:.0} points, \
             above the limit of {MAX_SWEEP_POINTS}: lower points_per_decade or narrow the range",
            a.frequency_start, a.frequency_stop, a.points_per_decade
        )));
    }
    check_celsius("ambient_celsius", a.ambient_celsius).map_err(analysis)?;
    let s = &doc.spread;
    let spread = |m: String| ("spread".to_string(), m);
    check_runs(s.runs).map_err(|m| spread(format!("runs: {m}")))?;
    check_celsius("ambient_min_celsius", s.ambient_min_celsius).map_err(spread)?;
    check_celsius("ambient_max_celsius", s.ambient_max_celsius).map_err(spread)?;
    for g in &s.matched {
        if !(g.mismatch.is_finite() && (0.0..=1.0).contains(&g.mismatch)) {
            return Err(spread(format!(
                "matched group {}: mismatch is {}; it must be from 0 to 1",
                g.parts.join(", "),
                g.mismatch
            )));
        }
    }
    Ok(())
}
