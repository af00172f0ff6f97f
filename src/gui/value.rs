//! Reading what a user types into the inspector: engineering notation such as
//! `4k7`, `2.2µ`, `10n`, `1M`, `3.3 V`, `1e-3`. Plain Rust, no GUI types.

use crate::units::Unit;

/// Parse engineering notation into an SI number: the project-wide parser of
/// `units`, with its message as the inspector shows it. `unit` is the unit the
/// field is in; its symbol (or its word) may follow the number.
pub fn parse(text: &str, unit: Unit) -> Result<f64, String> {
    crate::units::parse(text, unit).map_err(|e| e.to_string())
}

/// The unit a parameter is shown in, by its key.
pub fn unit_of(key: &str) -> Unit {
    use crate::analysis::devices::fet::keys as fet;
    use crate::presets::keys::*;
    match key {
        fet::THRESHOLD_VOLTAGE
        | fet::GATE_JUNCTION_POTENTIAL
        | fet::CAPACITANCE_TEST_VOLTAGE
        | fet::MAX_DRAIN_SOURCE_VOLTAGE
        | fet::MAX_GATE_SOURCE_VOLTAGE => Unit::Volt,
        fet::ZERO_GATE_DRAIN_CURRENT
        | fet::GATE_SATURATION_CURRENT
        | fet::BODY_DIODE_SATURATION_CURRENT
        | fet::MAX_DRAIN_CURRENT => Unit::Ampere,
        fet::GATE_SOURCE_CAPACITANCE
        | fet::GATE_DRAIN_CAPACITANCE
        | fet::DRAIN_SOURCE_CAPACITANCE
        | fet::INPUT_CAPACITANCE
        | fet::REVERSE_TRANSFER_CAPACITANCE
        | fet::OUTPUT_CAPACITANCE => Unit::Farad,
        RESISTANCE | BASE_RESISTANCE | SERIES_RESISTANCE => Unit::Ohm,
        CAPACITANCE | EMITTER_CAPACITANCE | COLLECTOR_CAPACITANCE | JUNCTION_CAPACITANCE => {
            Unit::Farad
        }
        INDUCTANCE => Unit::Henry,
        VOLTAGE
        | AMPLITUDE
        | DC_OFFSET
        | VOLTAGE_RATING
        | FORWARD_EARLY_VOLTAGE
        | REVERSE_EARLY_VOLTAGE
        | EMITTER_POTENTIAL
        | COLLECTOR_POTENTIAL
        | JUNCTION_POTENTIAL
        | MAX_COLLECTOR_EMITTER_VOLTAGE
        | MAX_COLLECTOR_BASE_VOLTAGE
        | MAX_EMITTER_BASE_VOLTAGE
        | MAX_REVERSE_VOLTAGE => Unit::Volt,
        CURRENT
        | SATURATION_CURRENT
        | MAX_COLLECTOR_CURRENT
        | MAX_FORWARD_CURRENT
        | FORWARD_KNEE_CURRENT
        | REVERSE_KNEE_CURRENT => Unit::Ampere,
        POWER_RATING | MAX_POWER => Unit::Watt,
        FREQUENCY => Unit::Hertz,
        FORWARD_TRANSIT_TIME | TRANSIT_TIME => Unit::Second,
        _ => Unit::None,
    }
}

/// When a typed resistance or capacitance is not a preferred value (E24 for
/// resistors, E12 for capacitors), the words that offer its two neighbours,
/// e.g. "4.65 kΩ is not in E24: the neighbours are 4.3 kΩ and 4.7 kΩ".
pub fn preferred_hint(key: &str, value: f64) -> Option<String> {
    use crate::presets::keys::{CAPACITANCE, RESISTANCE};
    let series = match key {
        RESISTANCE => crate::design::eseries::find("E24")?,
        CAPACITANCE => crate::design::eseries::find("E12")?,
        _ => return None,
    };
    if !(value.is_finite() && value > 0.0) || series.contains(value) {
        return None;
    }
    let unit = unit_of(key);
    let f = |v: f64| crate::units::format(v, unit);
    Some(format!(
        "{} is not in {}: the neighbours are {} and {}",
        f(value),
        series.name,
        f(series.down(value)),
        f(series.up(value))
    ))
}

/// Extra constraints a parameter's value must meet, as a message when it fails.
pub fn validate(key: &str, value: f64) -> Result<(), String> {
    use crate::presets::keys::*;
    let positive = [
        RESISTANCE,
        CAPACITANCE,
        INDUCTANCE,
        POWER_RATING,
        FORWARD_BETA,
        SATURATION_CURRENT,
        FREQUENCY,
    ];
    if positive.contains(&key) && value <= 0.0 {
        return Err(format!("{} must be above zero", key.replace('_', " ")));
    }
    if key == TOLERANCE && !(0.0..1.0).contains(&value) {
        return Err("tolerance is a fraction between 0 and 1, e.g. 0.05 for 5 %".into());
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1e-30)
    }

    #[test]
    fn prefixes_and_decimal_marks() {
        // common practice (no source): the prefix letter as decimal mark (4k7 = 4.7 kΩ, 4R7 = 4.7 Ω) as printed on schematics.
        assert!(close(parse("4k7", Unit::Ohm).unwrap(), 4700.0));
        assert!(close(parse("4.7k", Unit::Ohm).unwrap(), 4700.0));
        assert!(close(parse("4R7", Unit::Ohm).unwrap(), 4.7));
        assert!(close(parse("56 kΩ", Unit::Ohm).unwrap(), 56000.0));
        assert!(close(parse("1M", Unit::Ohm).unwrap(), 1e6));
        // source: SI Brochure, 9th ed., table 7 (SI prefixes: m = 1e-3, µ = 1e-6, n = 1e-9, p = 1e-12).
        assert!(close(parse("2.2µ", Unit::Farad).unwrap(), 2.2e-6));
        assert!(close(parse("2u2", Unit::Farad).unwrap(), 2.2e-6));
        assert!(close(parse("100nF", Unit::Farad).unwrap(), 100e-9));
        assert!(close(parse("15p", Unit::Farad).unwrap(), 15e-12));
        assert!(close(parse("10m", Unit::Henry).unwrap(), 10e-3));
        assert!(close(parse("-12 V", Unit::Volt).unwrap(), -12.0));
        assert!(close(parse("1e-3", Unit::Ampere).unwrap(), 1e-3));
    }

    #[test]
    fn bad_text_is_refused_with_a_message() {
        // invariant: text that is not a number never yields one.
        for bad in ["", "abc", "4k7k", "1.2.3", "k", "4kk", "1e999"] {
            let e = parse(bad, Unit::Ohm).unwrap_err();
            assert!(!e.is_empty(), "{bad}");
        }
        assert!(validate("resistance", 0.0).is_err());
        assert!(validate("resistance", 10.0).is_ok());
    }

    #[test]
    fn round_trip_with_the_formatter() {
        // invariant: what the inspector shows parses back to the same value (3 s.f.).
        for v in [4700.0, 56000.0, 2.2e-6, 100e-9, 9.0, 1.5e6] {
            let shown = crate::units::format(v, Unit::Ohm);
            assert!(close(parse(&shown, Unit::Ohm).unwrap(), v), "{shown}");
        }
    }

    #[test]
    fn preferred_hint_offers_the_neighbours() {
        // source: IEC 60063:2015, Table 1 — 4.65 lies between the E24 values 4.3 and 4.7.
        let h = preferred_hint("resistance", 4650.0).unwrap();
        assert!(
            h.contains("4.3 kΩ") && h.contains("4.7 kΩ") && h.contains("E24"),
            "{h}"
        );
        // invariant: a member gets no hint; other keys get none.
        assert!(preferred_hint("resistance", 4700.0).is_none());
        assert!(preferred_hint("voltage", 4650.0).is_none());
        // source: IEC 60063:2015, Table 1 — 3.3 µF is E12, 3.0 µF is not (E24 only).
        assert!(preferred_hint("capacitance", 3.3e-6).is_none());
        assert!(preferred_hint("capacitance", 3.0e-6)
            .unwrap()
            .contains("2.7 µF"));
    }
}
