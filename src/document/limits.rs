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

/// Lowest frequency accepted anywhere (sweep, noise band, spot frequency,
/// signal source), Hz: one cycle in about eleven days.
pub const MIN_FREQUENCY: f64 = 1e-6;
/// Highest frequency accepted anywhere, Hz. The device models are lumped
/// and quasi-static (charges that follow the junction voltages at once); for
/// board-level parts they mean little past a few GHz, and far beyond this
/// limit ω·C, the time steps of a period and the sweep's pivots leave the
/// range where f64 arithmetic holds (a 10³⁰ Hz transient reported "settled,
/// THD 0 %", a 10⁻³⁰ Hz one 305 %).
pub const MAX_FREQUENCY: f64 = 1e11;

/// A frequency (`what` names its key or flag) against [`MIN_FREQUENCY`]
/// and [`MAX_FREQUENCY`].
pub fn check_frequency(what: &str, f: f64) -> Result<(), String> {
    if !f.is_finite() || !(MIN_FREQUENCY..=MAX_FREQUENCY).contains(&f) {
        return Err(format!(
            "{what} is {} Hz, outside the range {} to {}: the device models are lumped              and quasi-static, meaningless far above a few GHz, and beyond this range the              arithmetic of the analyses breaks down; give a frequency inside it",
            crate::units::echo(f),
            crate::units::format(MIN_FREQUENCY, crate::units::Unit::Hertz),
            crate::units::format(MAX_FREQUENCY, crate::units::Unit::Hertz),
        ));
    }
    Ok(())
}

/// Sweep points of a range: log10(stop/start)·per_decade, without forming
/// the ratio (which overflows to ∞ for wide ranges).
pub fn sweep_points(start: f64, stop: f64, per_decade: u32) -> f64 {
    (stop.log10() - start.log10()) * f64::from(per_decade)
}

/// Most characters of the title where it is repeated (a page's `<title>`,
/// the schematic's title block, every plot's caption). A 50 MB title made a
/// 369 MB report in 33 s; the file and the report's heading keep it whole.
pub const MAX_REPEATED_TITLE_CHARS: usize = 200;

/// `title` cut to [`MAX_REPEATED_TITLE_CHARS`] characters, an ellipsis
/// marking the cut.
pub fn repeated_title(title: &str) -> String {
    match title.char_indices().nth(MAX_REPEATED_TITLE_CHARS) {
        None => title.to_string(),
        Some((at, _)) => format!("{}…", &title[..at]),
    }
}

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
    check_frequency("frequency_start", a.frequency_start).map_err(analysis)?;
    check_frequency("frequency_stop", a.frequency_stop).map_err(analysis)?;
    if a.points_per_decade == 0 || a.points_per_decade > MAX_POINTS_PER_DECADE {
        return Err(analysis(format!(
            "points_per_decade is {}: it must be from 1 to {MAX_POINTS_PER_DECADE}",
            a.points_per_decade
        )));
    }
    let points = sweep_points(a.frequency_start, a.frequency_stop, a.points_per_decade);
    if points > MAX_SWEEP_POINTS as f64 {
        return Err(analysis(format!(
            "the sweep ({} to {} Hz at {} points per decade) has about {points:.0} points, \
             above the limit of {MAX_SWEEP_POINTS}: lower points_per_decade or narrow the range",
            a.frequency_start, a.frequency_stop, a.points_per_decade
        )));
    }
    check_celsius("ambient_celsius", a.ambient_celsius).map_err(analysis)?;
    for p in &doc.parts {
        if p.kind != super::PartKind::SignalSource {
            continue;
        }
        if let Some(f) = p.parameters.get(crate::presets::keys::FREQUENCY) {
            check_frequency(crate::presets::keys::FREQUENCY, *f)
                .map_err(|m| (format!("part {}", p.designator), m))?;
        }
    }
    if let Some(super::Waveform::Sine {
        frequency: Some(f), ..
    }) = &doc.signal.waveform
    {
        check_frequency("frequency", *f).map_err(|m| ("signal.waveform".to_string(), m))?;
    }
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
