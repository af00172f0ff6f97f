//! Engineering notation at the edges: parse "4k7", "2.2µ"; format to 3 s.f.

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
}

/// Format to 3 significant figures with an SI prefix, e.g. `4.7 kΩ`.
pub fn format(value: f64, unit: Unit) -> String {
    if !value.is_finite() {
        return "—".into();
    }
    if value == 0.0 {
        return format!("0 {}", unit.symbol()).trim_end().to_string();
    }
    let prefixes = [
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
    let mag = value.abs();
    let (scale, prefix) = prefixes
        .iter()
        .copied()
        .find(|(s, _)| mag >= *s * 0.9995)
        .unwrap_or((1e-15, "f"));
    let v = value / scale;
    let digits = if v.abs() >= 99.95 {
        0
    } else if v.abs() >= 9.995 {
        1
    } else {
        2
    };
    let mut s = format!("{:.*}", digits, v);
    if s.contains('.') {
        s = s.trim_end_matches('0').trim_end_matches('.').to_string();
    }
    format!("{s} {prefix}{}", unit.symbol())
        .trim_end()
        .to_string()
}
