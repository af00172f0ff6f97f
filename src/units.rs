//! Engineering notation at the edges: parse "4k7", "2.2µ"; format to 3 s.f.
//!
//! # What [`parse`] accepts
//! - A decimal number with an optional sign (`-`, `+` or `−`) and an
//!   optional exponent: `4.7`, `-12`, `.5`, `1e3`, `4.7e-6`.
//! - At most one SI prefix after the number: `f p n u µ μ m k K M G T`, and
//!   `meg` (any case) as a second spelling of mega. Letters are case-sensitive
//!   where it matters: `m` is milli and `M` is mega (`1m` is 0.001, `1M` and
//!   `1meg` are 1 000 000); `k` and `K` are both kilo.
//! - The prefix may stand in the place of the decimal point (the resistor
//!   code of IEC 60062): `4k7` = 4.7k, `2M2`, `4u7`, `1n5`. For ohms, `R`
//!   marks the point with no prefix: `4R7` = 4.7 Ω.
//! - Then optionally the unit the caller expects: `Ω`, `ohm`/`ohms`, `F`,
//!   `H`, `V`, `A`, `W`, `Hz`, `s`, `S`. A different unit is an error that
//!   names both.
//! - Spaces around and between the pieces: ` 4.7 k Ω `.
//!
//! An exponent together with a prefix (`1e3k`), two prefixes (`4k7k`,
//! `1mk`), a second point (`4.7.1`), a decimal comma (`4,7k`, which could be
//! a thousands separator), a number that is not finite, or text
//! that is not a number is refused with a [`UnitError`] that shows the text
//! and what was expected.

use std::fmt;

/// The unit a number is shown in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Unit {
    Ohm,
    Farad,
    Henry,
    Volt,
    Ampere,
    Watt,
    Hertz,
    Second,
    Siemens,
    None,
}

impl Unit {
    pub const ALL: [Unit; 10] = [
        Unit::Ohm,
        Unit::Farad,
        Unit::Henry,
        Unit::Volt,
        Unit::Ampere,
        Unit::Watt,
        Unit::Hertz,
        Unit::Second,
        Unit::Siemens,
        Unit::None,
    ];

    pub fn symbol(self) -> &'static str {
        match self {
            Unit::Ohm => "Ω",
            Unit::Farad => "F",
            Unit::Henry => "H",
            Unit::Volt => "V",
            Unit::Ampere => "A",
            Unit::Watt => "W",
            Unit::Hertz => "Hz",
            Unit::Second => "s",
            Unit::Siemens => "S",
            Unit::None => "",
        }
    }

    /// The word for the unit in messages.
    pub fn name(self) -> &'static str {
        match self {
            Unit::Ohm => "ohms",
            Unit::Farad => "farads",
            Unit::Henry => "henries",
            Unit::Volt => "volts",
            Unit::Ampere => "amperes",
            Unit::Watt => "watts",
            Unit::Hertz => "hertz",
            Unit::Second => "seconds",
            Unit::Siemens => "siemens",
            Unit::None => "a plain number",
        }
    }

    /// Every spelling of the unit that [`parse`] accepts after the number.
    fn spellings(self) -> &'static [&'static str] {
        match self {
            Unit::Ohm => &["ohms", "ohm", "Ohms", "Ohm", "Ω", "\u{2126}"],
            Unit::Farad => &["F"],
            Unit::Henry => &["H"],
            Unit::Volt => &["V"],
            Unit::Ampere => &["A"],
            Unit::Watt => &["W"],
            Unit::Hertz => &["Hz", "hz"],
            Unit::Second => &["s"],
            Unit::Siemens => &["S"],
            Unit::None => &[],
        }
    }
}

/// Why a text is not a value.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct UnitError {
    /// The text as the user wrote it.
    pub text: String,
    /// What was expected, as a phrase after "expected".
    pub expected: String,
}

impl fmt::Display for UnitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "`{}`: expected {}", self.text, self.expected)
    }
}

impl std::error::Error for UnitError {}

/// SI prefixes: spelling and power of ten. Longer spellings first.
const PREFIXES: &[(&str, i32)] = &[
    ("meg", 6),
    ("MEG", 6),
    ("Meg", 6),
    ("f", -15),
    ("p", -12),
    ("n", -9),
    ("u", -6),
    ("µ", -6),
    ("μ", -6),
    ("m", -3),
    ("k", 3),
    ("K", 3),
    ("M", 6),
    ("G", 9),
    ("T", 12),
];

fn prefix_at(s: &str) -> Option<(&'static str, i32)> {
    PREFIXES
        .iter()
        .find(|(p, _)| s.starts_with(p))
        .map(|(p, e)| (*p, *e))
}

/// Read a value written in engineering notation (see the module notes).
pub fn parse(text: &str, unit: Unit) -> Result<f64, UnitError> {
    let fail = |expected: String| UnitError {
        text: text.to_string(),
        expected,
    };
    let example = match unit {
        Unit::Ohm => "like 4.7k or 4k7",
        Unit::Farad => "like 100n or 2.2µ",
        Unit::Henry => "like 10m or 4.7µ",
        Unit::Hertz => "like 1k or 20",
        Unit::Volt => "like 12 or -5",
        Unit::Ampere => "like 1m or 250µ",
        _ => "like 4.7k or 100m",
    };
    let mut rest = text.trim();
    if rest.is_empty() {
        return Err(fail(format!("a number, {example}")));
    }
    if rest.contains(',') {
        return Err(fail(format!("a decimal point, not a comma, {example}")));
    }

    // Strip the unit (the caller's, or name a different one).
    let mut unit_seen = false;
    if let Some(s) = unit
        .spellings()
        .iter()
        .find(|s| rest.ends_with(*s) && rest.len() > s.len())
    {
        rest = rest[..rest.len() - s.len()].trim_end();
        unit_seen = true;
    }
    if !unit_seen {
        for other in Unit::ALL.iter().filter(|u| **u != unit) {
            if other
                .spellings()
                .iter()
                .any(|s| rest.ends_with(*s) && rest.len() > s.len())
            {
                let want = if unit == Unit::None {
                    "a plain number without a unit".to_string()
                } else {
                    format!("{} ({})", unit.name(), unit.symbol())
                };
                return Err(fail(format!("{want}, not {}", other.name())));
            }
        }
    }

    // Sign.
    let mut negative = false;
    if let Some(c) = rest.chars().next() {
        if c == '-' || c == '+' || c == '−' {
            negative = c != '+';
            rest = rest[c.len_utf8()..].trim_start();
        }
    }

    let one_prefix = || fail(format!("a number with at most one prefix, {example}"));

    // Mantissa: digits with at most one point, or a prefix (or R) as the point.
    let mut int_digits = String::new();
    let mut frac_digits = String::new();
    let mut seen_point = false;
    let mut power: i32 = 0;
    let mut prefix_used = false;
    let mut chars = rest.char_indices().peekable();
    let mut end = rest.len();
    while let Some(&(i, c)) = chars.peek() {
        if c.is_ascii_digit() {
            if seen_point {
                frac_digits.push(c);
            } else {
                int_digits.push(c);
            }
            chars.next();
        } else if c == '.' {
            if seen_point {
                return Err(fail(format!("a number with one decimal point, {example}")));
            }
            seen_point = true;
            chars.next();
        } else {
            // A prefix between digits stands in for the point (4k7).
            let after = &rest[i..];
            let code = if unit == Unit::Ohm && after.starts_with('R') {
                Some(("R", 0))
            } else {
                prefix_at(after)
            };
            match code {
                Some((p, e))
                    if !seen_point
                        && !int_digits.is_empty()
                        && after[p.len()..].starts_with(|c: char| c.is_ascii_digit()) =>
                {
                    seen_point = true;
                    power = e;
                    prefix_used = true;
                    for _ in 0..p.chars().count() {
                        chars.next();
                    }
                }
                _ => {
                    end = i;
                    break;
                }
            }
        }
    }
    if int_digits.is_empty() && frac_digits.is_empty() {
        return Err(fail(format!("a number, {example}")));
    }
    let mut tail = rest[end..].trim_start();

    // Exponent.
    let mut exponent: i32 = 0;
    if tail.starts_with(['e', 'E']) {
        let digits = &tail[1..];
        let (sign, digits) = match digits.chars().next() {
            Some('-') => (-1, &digits[1..]),
            Some('+') => (1, &digits[1..]),
            _ => (1, digits),
        };
        let n = digits.chars().take_while(|c| c.is_ascii_digit()).count();
        if n == 0 {
            return Err(fail(format!("digits after the exponent `e`, {example}")));
        }
        if prefix_used {
            return Err(one_prefix());
        }
        exponent = sign
            * digits[..n]
                .parse::<i32>()
                .unwrap_or(i32::MAX / 2)
                .min(100_000);
        tail = digits[n..].trim_start();
        if !tail.is_empty() && prefix_at(tail).is_some() {
            return Err(fail(format!(
                "either an exponent or a prefix, not both, {example}"
            )));
        }
    }

    // A trailing prefix.
    if !tail.is_empty() {
        match prefix_at(tail) {
            Some((p, e)) if !prefix_used => {
                power = e;
                tail = tail[p.len()..].trim_start();
            }
            _ => {
                return Err(if prefix_used || prefix_at(tail).is_some() {
                    one_prefix()
                } else if unit_seen {
                    fail(format!("a number, {example}"))
                } else {
                    let unit_hint = if unit == Unit::None {
                        String::new()
                    } else {
                        format!(" and optionally {}", unit.symbol())
                    };
                    fail(format!("a number{unit_hint}, {example}"))
                });
            }
        }
    }
    if !tail.is_empty() {
        return Err(if prefix_at(tail).is_some() {
            one_prefix()
        } else {
            fail(format!("a number, {example}"))
        });
    }

    let digits = format!(
        "{}{}.{}e{}",
        if negative { "-" } else { "" },
        if int_digits.is_empty() {
            "0"
        } else {
            &int_digits
        },
        if frac_digits.is_empty() {
            "0"
        } else {
            &frac_digits
        },
        exponent.saturating_add(power)
    );
    let value: f64 = digits
        .parse()
        .map_err(|_| fail(format!("a number, {example}")))?;
    if !value.is_finite() {
        return Err(fail("a number below 1e308".into()));
    }
    Ok(value)
}

const FORMAT_PREFIXES: [(f64, &str); 10] = [
    (1e12, "T"),
    (1e9, "G"),
    (1e6, "M"),
    (1e3, "k"),
    (1.0, ""),
    (1e-3, "m"),
    (1e-6, "µ"),
    (1e-9, "n"),
    (1e-12, "p"),
    (1e-15, "f"),
];

/// A temperature in °C with `decimals` places; a value no device survives
/// (a junction heated by a fault, |T| ≥ 100,000 °C) in scientific notation
/// instead of a 26-digit number.
pub fn celsius(value: f64, decimals: usize) -> String {
    if value.abs() < 1e5 {
        format!("{value:.decimals$} °C")
    } else {
        format!("{value:.2e} °C")
    }
}

/// A noise density in one fixed unit so densities compare at a glance:
/// voltage in nV/√Hz, current in pA/√Hz, three significant figures (never
/// "696 pV/√Hz" beside "3.1 nV/√Hz"). Other units fall back to [`format`].
pub fn format_density(value: f64, unit: Unit) -> String {
    let (scale, name) = match unit {
        Unit::Volt => (1e9, "nV/√Hz"),
        Unit::Ampere => (1e12, "pA/√Hz"),
        _ => return format!("{}/√Hz", format(value, unit)),
    };
    if !value.is_finite() {
        return format!("— {name}");
    }
    let v = value * scale;
    if !v.is_finite() || v.abs() >= 1e6 {
        // Far past any real density (1e300 V/√Hz: no gain from the source),
        // even past f64 once scaled: in the base unit, as `format` writes
        // large numbers (never hundreds of digits).
        return format!("{}/√Hz", format(value, unit));
    }
    if v == 0.0 {
        return format!("0 {name}");
    }
    let digits = (2 - v.abs().log10().floor() as i32).clamp(0, 12) as usize;
    format!("{v:.digits$} {name}")
}

/// Relative floor of the "none in this model" rule: a figure the model makes
/// zero by construction (hre, gμ without a base-current Early term) comes out
/// as rounding noise (10⁻⁵⁹, say); below this fraction of its natural scale
/// it prints as 0 with [`NONE_IN_MODEL`], on cards and in reports alike.
pub const NEGLIGIBLE_RELATIVE: f64 = 1e-12;
/// What such a figure prints as.
pub const NONE_IN_MODEL: &str = "0 (none in this model)";

/// Is `value` negligible against `scale` by [`NEGLIGIBLE_RELATIVE`]?
pub fn negligible(value: f64, scale: f64) -> bool {
    value.abs() <= NEGLIGIBLE_RELATIVE * scale.abs()
}

/// Format to 3 significant figures with an SI prefix, e.g. `4.7 kΩ`.
///
/// Trailing zeros are dropped; a value that rounds up to the next prefix is
/// shown with it (999.96 → `1 k`). Values beyond the prefixes (below 1 f or
/// from 1000 T) are written with an exponent, e.g. `2.5e-18 F`; NaN and
/// infinities show as `—`.
pub fn format(value: f64, unit: Unit) -> String {
    if !value.is_finite() {
        return "—".into();
    }
    let sym = unit.symbol();
    let join =
        |number: String, prefix: &str| format!("{number} {prefix}{sym}").trim_end().to_string();
    if value == 0.0 {
        return join("0".into(), "");
    }
    let mag = value.abs();
    // A value that rounds to 1000 of one prefix moves up to the next.
    let choice = FORMAT_PREFIXES
        .iter()
        .copied()
        .find(|(s, _)| mag >= *s * 0.9995);
    let Some((scale, prefix)) = choice.filter(|_| mag < 999.5e12) else {
        let s = format!("{:.2e}", value);
        let (m, e) = s.split_once('e').expect("exponent form");
        return join(format!("{}e{e}", trim_zeros(m)), "");
    };
    let v = value / scale;
    let digits = if v.abs() >= 99.95 {
        0
    } else if v.abs() >= 9.995 {
        1
    } else {
        2
    };
    join(trim_zeros(&format!("{:.*}", digits, v)), prefix)
}

/// Where plain numbers switch to scientific notation: from 10⁶ up and below
/// 10⁻⁶, so a gain of 3·10⁵¹ prints as `3.07e51`, never as 52 digits.
const PLAIN_LIMITS: (f64, f64) = (1e-6, 1e6);

/// A plain number (a ratio, no unit) to three significant figures: `0.0123`,
/// `1.50`, `230`; beyond [`PLAIN_LIMITS`] in scientific notation (`3.07e51`);
/// NaN and infinities as `—`. The minus sign is `−`.
pub fn plain(value: f64) -> String {
    if !value.is_finite() {
        return "—".into();
    }
    if value == 0.0 {
        return "0".into();
    }
    let mag = value.abs();
    let s = if mag < PLAIN_LIMITS.0 || mag >= PLAIN_LIMITS.1 {
        let s = format!("{value:.2e}");
        let (m, e) = s.split_once('e').expect("exponent form");
        format!("{}e{e}", trim_zeros(m))
    } else {
        let digits = (2 - mag.log10().floor() as i32).max(0) as usize;
        format!("{value:.digits$}")
    };
    match s.strip_prefix('-') {
        Some(rest) => format!("−{rest}"),
        None => s,
    }
}

/// A number the user gave, echoed in a message: its shortest exact form
/// (`4700`, `0.25`) for everyday magnitudes, scientific beyond
/// [`PLAIN_LIMITS`] (`1e300`, never 301 digits).
pub fn echo(value: f64) -> String {
    let mag = value.abs();
    if !value.is_finite() || value == 0.0 || (PLAIN_LIMITS.0..PLAIN_LIMITS.1).contains(&mag) {
        format!("{value}")
    } else {
        format!("{value:e}")
    }
}

/// `value` with `decimals` places (`30.0`), or scientific notation from
/// 10⁶ up (`1.00e300`), so a typo never prints hundreds of digits.
pub fn fixed(value: f64, decimals: usize) -> String {
    if value.is_finite() && value.abs() >= PLAIN_LIMITS.1 {
        format!("{value:.2e}")
    } else {
        format!("{value:.decimals$}")
    }
}

/// Like [`format`] but with a sign on positive values too (`+4.7 V`), for
/// readouts where the direction matters.
pub fn format_signed(value: f64, unit: Unit) -> String {
    let s = format(value, unit);
    if value > 0.0 && value.is_finite() {
        format!("+{s}")
    } else {
        s
    }
}

fn trim_zeros(s: &str) -> String {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s.to_string()
    }
}

/// Currents smaller than this fraction of the largest current in the
/// circuit are at the solver's floor (Kirchhoff's law holds to 1e-10 of the
/// largest current at a node): they print as "≈ 0 A", not as a leakage-level
/// number like 1.13e-16 A.
pub const CURRENT_FLOOR_RELATIVE: f64 = 1e-11;

/// A current for the screen, the drawing and the text report: "≈ 0 A" when
/// it is below [`CURRENT_FLOOR_RELATIVE`] of `largest` (the largest current
/// magnitude in the circuit), else [`format`] in amperes. The JSON keeps
/// the exact number.
pub fn format_current(value: f64, largest: f64) -> String {
    if value.is_finite() && value != 0.0 && value.abs() < CURRENT_FLOOR_RELATIVE * largest.abs() {
        return "≈ 0 A".into();
    }
    format(value, Unit::Ampere)
}

/// The largest finite magnitude of `currents` (0 when there is none).
pub fn largest_current<'a>(currents: impl IntoIterator<Item = &'a f64>) -> f64 {
    currents
        .into_iter()
        .filter(|i| i.is_finite())
        .fold(0.0, |m, i| m.max(i.abs()))
}

#[cfg(test)]
mod tests;
