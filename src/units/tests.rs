//! Tests of the engineering notation: parsing and formatting.

use super::*;

#[test]
fn plain_numbers_never_print_long_digit_strings() {
    // invariant: three significant figures in either notation
    assert_eq!(plain(3.074_204_519_563_88e51), "3.07e51");
    assert_eq!(plain(-2.5e-9), "−2.5e-9");
    assert_eq!(plain(123.456), "123");
    assert_eq!(plain(0.012345), "0.0123");
    assert_eq!(plain(999_999.0), "999999");
    assert_eq!(plain(1_000_000.0), "1e6");
    assert_eq!(plain(f64::NAN), "—");
    assert_eq!(echo(1e300), "1e300");
    assert_eq!(echo(4700.0), "4700");
    assert_eq!(echo(-1e-307), "-1e-307");
    assert_eq!(fixed(30.04, 1), "30.0");
    assert_eq!(fixed(1e300, 1), "1.00e300");
    for v in [1e-300, 1e-7, 1e7, 1e300, f64::MAX] {
        assert!(plain(v).len() <= 10, "{v}: {}", plain(v));
        assert!(echo(v).len() <= 24, "{v}: {}", echo(v));
    }
}

fn ok(text: &str, unit: Unit) -> f64 {
    parse(text, unit).unwrap_or_else(|e| panic!("{e}"))
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-12 * b.abs()
}

#[test]
fn every_written_form_parses() {
    // common practice (no source): engineering notation with SI prefixes and the
    // resistor code of IEC 60062 (prefix or R in place of the decimal point).
    let cases: &[(&str, Unit, f64)] = &[
        ("4.7k", Unit::Ohm, 4700.0),
        ("4k7", Unit::Ohm, 4700.0),
        ("4K7", Unit::Ohm, 4700.0),
        ("4R7", Unit::Ohm, 4.7),
        ("10u", Unit::Farad, 10e-6),
        ("10µ", Unit::Farad, 10e-6),
        ("10μ", Unit::Farad, 10e-6),
        ("4u7", Unit::Farad, 4.7e-6),
        ("100n", Unit::Farad, 100e-9),
        ("1n5", Unit::Farad, 1.5e-9),
        ("22p", Unit::Farad, 22e-12),
        ("3f", Unit::Farad, 3e-15),
        ("2.2M", Unit::Ohm, 2.2e6),
        ("2M2", Unit::Ohm, 2.2e6),
        ("1meg", Unit::Ohm, 1e6),
        ("1MEG", Unit::Ohm, 1e6),
        ("1m", Unit::Ampere, 1e-3),
        ("1G", Unit::Hertz, 1e9),
        ("2T", Unit::Ohm, 2e12),
        ("4.7 kΩ", Unit::Ohm, 4700.0),
        ("4.7kohm", Unit::Ohm, 4700.0),
        ("4.7 k ohms", Unit::Ohm, 4700.0),
        ("4.7k\u{2126}", Unit::Ohm, 4700.0),
        ("100nF", Unit::Farad, 100e-9),
        ("10 mH", Unit::Henry, 10e-3),
        ("12V", Unit::Volt, 12.0),
        ("-5 V", Unit::Volt, -5.0),
        ("−5V", Unit::Volt, -5.0),
        ("+3.3", Unit::Volt, 3.3),
        ("250µA", Unit::Ampere, 250e-6),
        ("1 kHz", Unit::Hertz, 1e3),
        ("20hz", Unit::Hertz, 20.0),
        ("0.25W", Unit::Watt, 0.25),
        ("1ms", Unit::Second, 1e-3),
        ("10 s", Unit::Second, 10.0),
        ("2mS", Unit::Siemens, 2e-3),
        ("  47  ", Unit::None, 47.0),
        (".5", Unit::None, 0.5),
        ("5.", Unit::None, 5.0),
        ("1e3", Unit::None, 1e3),
        ("4.7e-6", Unit::Farad, 4.7e-6),
        ("1E3", Unit::Ohm, 1e3),
        ("0", Unit::Volt, 0.0),
    ];
    for (text, unit, want) in cases {
        let got = ok(text, *unit);
        assert!(close(got, *want), "{text}: {got} ≠ {want}");
    }
    // invariant: "4k7" is exactly the double nearest 4700 (parsed as decimal text).
    assert_eq!(ok("2u2", Unit::Farad), 2.2e-6);
}

#[test]
fn malformed_text_is_refused_with_a_useful_message() {
    // common practice (no source): a value with two prefixes or two points is ambiguous.
    let cases: &[(&str, Unit, &str)] = &[
        (
            "4k7k",
            Unit::Ohm,
            "`4k7k`: expected a number with at most one prefix, like 4.7k or 4k7",
        ),
        ("1mk", Unit::Ohm, "at most one prefix"),
        ("1e3k", Unit::Ohm, "either an exponent or a prefix"),
        ("4k7e3", Unit::Ohm, "at most one prefix"),
        ("4.7.1", Unit::Ohm, "one decimal point"),
        ("", Unit::Ohm, "expected a number"),
        ("   ", Unit::Farad, "expected a number"),
        ("k", Unit::Ohm, "expected a number"),
        ("abc", Unit::Ohm, "expected a number"),
        ("1e", Unit::None, "digits after the exponent"),
        ("inf", Unit::None, "expected a number"),
        ("NaN", Unit::None, "expected a number"),
        ("1e400", Unit::None, "below 1e308"),
        ("4.7kV", Unit::Ohm, "expected ohms (Ω), not volts"),
        ("10uH", Unit::Farad, "expected farads (F), not henries"),
        ("5 V", Unit::None, "plain number without a unit"),
        ("4k 7", Unit::Ohm, "expected a number"),
        ("--5", Unit::Volt, "expected a number"),
        ("4R7", Unit::Farad, "expected a number"),
        ("1mF", Unit::Ohm, "not farads"),
        ("4,7k", Unit::Ohm, "a decimal point, not a comma"),
    ];
    for (text, unit, fragment) in cases {
        match parse(text, *unit) {
            Ok(v) => panic!("{text:?} parsed as {v}"),
            Err(e) => assert!(
                e.to_string().contains(fragment),
                "{text:?}: {e} lacks {fragment:?}"
            ),
        }
    }
}

#[test]
fn formats_to_three_significant_figures() {
    // common practice (no source): 3 significant figures, SI prefix, trailing zeros dropped.
    let cases: &[(f64, Unit, &str)] = &[
        (4700.0, Unit::Ohm, "4.7 kΩ"),
        (4.7e-6, Unit::Farad, "4.7 µF"),
        (1e-7, Unit::Farad, "100 nF"),
        (12.0, Unit::Volt, "12 V"),
        (-5.0, Unit::Volt, "-5 V"),
        (0.0, Unit::Volt, "0 V"),
        (0.0, Unit::None, "0"),
        (1234.5, Unit::Hertz, "1.23 kHz"),
        (999.96, Unit::None, "1 k"),
        (999.4, Unit::Ohm, "999 Ω"),
        (999_960.0, Unit::Ohm, "1 MΩ"),
        (0.99996, Unit::Volt, "1 V"),
        (9.9996, Unit::Volt, "10 V"),
        (99.996, Unit::Volt, "100 V"),
        (-999.96e-6, Unit::Ampere, "-1 mA"),
        (2.5e-18, Unit::Farad, "2.5e-18 F"),
        (3e15, Unit::Ohm, "3e15 Ω"),
        (f64::NAN, Unit::Volt, "—"),
    ];
    for (v, u, want) in cases {
        assert_eq!(format(*v, *u), *want, "{v}");
    }
    assert_eq!(format_signed(4.7, Unit::Volt), "+4.7 V");
    assert_eq!(format_signed(-4.7, Unit::Volt), "-4.7 V");
    assert_eq!(format_signed(0.0, Unit::Volt), "0 V");
}

mod round_trip {
    use super::super::*;
    use proptest::prelude::*;

    proptest! {
        #[test]
        fn format_then_parse_is_within_rounding(
            mantissa in 1.0f64..10.0,
            exponent in -20i32..20,
            negative in any::<bool>(),
            unit in 0usize..10,
        ) {
            // invariant: parse(format(v)) = v within the 3-s.f. rounding (half a unit
            // in the third figure, at most 0.5 % of the value).
            let unit = Unit::ALL[unit];
            let v = mantissa * 10f64.powi(exponent) * if negative { -1.0 } else { 1.0 };
            let text = format(v, unit);
            let back = parse(&text, unit).map_err(|e| TestCaseError::fail(e.to_string()))?;
            prop_assert!((back - v).abs() <= 5e-3 * v.abs() * (1.0 + 1e-9), "{v} → {text} → {back}");
            // invariant: formatting the parsed text again gives the same text.
            prop_assert_eq!(format(back, unit), text);
        }
    }
}

#[test]
fn leakage_level_currents_print_as_about_zero() {
    // invariant: a current at the solver's floor relative to the
    // circuit's largest prints as ≈ 0 A; a real small current beside
    // small currents keeps its value.
    assert_eq!(format_current(1.13e-16, 1e-3), "≈ 0 A");
    assert_eq!(format_current(-2e-15, 5e-3), "≈ 0 A");
    assert_eq!(format_current(2.42e-6, 1e-3), "2.42 µA");
    assert_eq!(format_current(93e-15, 100e-15), "93 fA");
    assert_eq!(format_current(0.0, 1e-3), "0 A");
    assert_eq!(largest_current(&[1e-3, -4e-3, f64::NAN]), 4e-3);
}
