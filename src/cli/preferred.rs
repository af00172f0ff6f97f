//! `biasline preferred`: the preferred values around a value, and the best
//! pair of preferred values for a parallel value or a divider fraction.

use super::*;
use biasline::design::eseries::{self, Pair, Series};
use biasline::units::{self, Unit};

/// What to find.
#[derive(Debug, Clone, clap::Args)]
pub struct PreferredArgs {
    /// The value: a resistance like 4.9k, from 1m to 1T (or, with --divider, the output
    /// fraction b/(a + b), like 0.1).
    pub value: String,
    /// Series: E6, E12, E24, E48, E96 or E192.
    #[arg(long, default_value = "E24")]
    pub series: String,
    /// Find two resistors whose parallel value is nearest the value.
    #[arg(long, conflicts_with = "divider")]
    pub parallel: bool,
    /// Find two resistors a (top) and b (bottom) whose fraction b/(a + b)
    /// is nearest the value.
    #[arg(long)]
    pub divider: bool,
    /// With --divider: the resistance the pair should lie near (default 10k).
    #[arg(long, default_value = "10k", requires = "divider")]
    pub around: String,
}

fn percent(e: f64) -> String {
    format!("{:+.3} %", 100.0 * e)
}

fn ohms(v: f64) -> String {
    units::format(v, Unit::Ohm)
}

/// Resistances the command takes, Ω: 1 mΩ to 1 TΩ (outside them the
/// series' members and pair sums lose their digits; 1e-300 gave "0 Ω").
pub const RANGE: (f64, f64) = (1e-3, 1e12);

fn resistance(text: &str, what: &str) -> Result<f64, Failure> {
    let v = units::parse(text, Unit::Ohm)
        .ok()
        .filter(|v| v.is_finite() && *v > 0.0)
        .ok_or_else(|| {
            Failure::cannot(format!(
                "{what}: {text:?} is not a resistance above 0, like 4k7"
            ))
        })?;
    if !(RANGE.0..=RANGE.1).contains(&v) {
        return Err(Failure::cannot(format!(
            "{what}: {} is outside the range this command works in, 1 mΩ to 1 TΩ",
            ohms(v)
        )));
    }
    Ok(v)
}

fn pair_line(out: &mut dyn Write, s: Series, p: &Pair, what: &str) -> std::io::Result<()> {
    writeln!(
        out,
        "{}: {} and {} give {what} ({} from the target)",
        s.name,
        ohms(p.first),
        ohms(p.second),
        percent(p.error)
    )
}

/// Run the command.
pub fn run(a: &PreferredArgs, out: &mut dyn Write) -> Result<i32, Failure> {
    let s = eseries::find(&a.series).ok_or_else(|| Failure::cannot(eseries::unknown(&a.series)))?;
    if a.divider {
        let f: f64 = a
            .value
            .trim()
            .parse()
            .ok()
            // Within 1e-6 of 0 or 1 a pair of series members cannot resolve it.
            .filter(|f: &f64| (1e-6..=1.0 - 1e-6).contains(f))
            .ok_or_else(|| {
                Failure::cannot(format!(
                    "--divider: {:?} is not a fraction between 0 and 1 (0.000001 to 0.999999), like 0.1",
                    a.value
                ))
            })?;
        let around = resistance(&a.around, "--around")?;
        let p = s
            .best_divider(around, f)
            .ok_or_else(|| Failure::cannot("no pair found"))?;
        pair_line(
            out,
            s,
            &p,
            &format!("b/(a + b) = {:.5} (top a, bottom b)", p.value),
        )
        .map_err(io)?;
        return Ok(EXIT_CLEAN);
    }
    let v = resistance(&a.value, "value")?;
    if a.parallel {
        let p = s
            .best_parallel(v)
            .ok_or_else(|| Failure::cannot("no pair found"))?;
        pair_line(out, s, &p, &format!("{} in parallel", ohms(p.value))).map_err(io)?;
        return Ok(EXIT_CLEAN);
    }
    let near = s.nearest(v);
    if s.contains(v) {
        writeln!(out, "{}: {} is a preferred value", s.name, ohms(v)).map_err(io)?;
    } else {
        writeln!(
            out,
            "{}: nearest {} ({}), below {}, above {}",
            s.name,
            ohms(near),
            percent(near / v - 1.0),
            ohms(s.down(v)),
            ohms(s.up(v))
        )
        .map_err(io)?;
    }
    Ok(EXIT_CLEAN)
}
