//! Lengths with units ("55 mm", "1.5 in") and wire gauges ("AWG 22") parsed to SI metres.
//!
//! A design file may give a length either as a bare TOML number, which is metres, or as a string
//! holding a number and a unit. Parsing happens here, at the boundary; everything past this
//! module works in plain `f64` metres.
//!
//! # Example
//! ```
//! use coilfield_geometry::units::{parse_length_m, parse_wire_diameter_m};
//! assert_eq!(parse_length_m("55 mm").unwrap(), 0.055);
//! assert!((parse_wire_diameter_m("AWG 22").unwrap() - 0.6438e-3).abs() < 1e-7);
//! ```

/// Units a length string may carry, with their size in metres.
///
/// Sources: the SI prefixes (BIPM, "The International System of Units (SI Brochure)", 9th ed.,
/// 2019, table 7); the inch as exactly 0.0254 m and the foot as exactly 0.3048 m (Thompson and
/// Taylor, "Guide for the Use of the International System of Units (SI)", NIST Special
/// Publication 811, 2008, appendix B.8).
pub const LENGTH_UNITS: &[(&str, f64)] = &[
    ("m", 1.0),
    ("cm", 1e-2),
    ("mm", 1e-3),
    ("um", 1e-6),
    // U+00B5 MICRO SIGN, what most keyboards type for "µ".
    ("\u{b5}m", 1e-6),
    // U+03BC GREEK SMALL LETTER MU, which the SI Brochure prints and some editors insert.
    ("\u{3bc}m", 1e-6),
    ("in", 0.0254),
    ("ft", 0.3048),
];

/// Smallest American Wire Gauge accepted: 0000 (also written 4/0) is gauge number -3.
pub const AWG_MIN: i32 = -3;

/// Largest American Wire Gauge accepted.
pub const AWG_MAX: i32 = 40;

/// A length or gauge string that cannot be read. Each variant says what to write instead.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum UnitError {
    /// The string is empty or blank. Write a number and a unit, e.g. "55 mm".
    #[error("the length is an empty string; write a number and a unit, e.g. \"55 mm\"")]
    Empty,
    /// The string does not start with a number. Put the number first: "55 mm", not "mm 55".
    #[error("\"{text}\" does not start with a number; write a number and a unit, e.g. \"55 mm\"")]
    NoNumber {
        /// The string as written.
        text: String,
    },
    /// A number without a unit inside a string is ambiguous. Add the unit, or write a bare TOML
    /// number (not a string) for metres.
    #[error(
        "\"{text}\" has no unit; write e.g. \"{text} mm\", or a bare number (without quotes) for \
         metres"
    )]
    MissingUnit {
        /// The string as written.
        text: String,
    },
    /// The unit is not one of [`LENGTH_UNITS`].
    #[error("unknown unit '{unit}' in \"{text}\"; allowed units: {allowed}")]
    UnknownUnit {
        /// The unit as written.
        unit: String,
        /// The whole string as written.
        text: String,
        /// The allowed units, comma separated.
        allowed: String,
    },
    /// An "AWG ..." string whose gauge is not 0000 (4/0) to 40.
    #[error(
        "\"{text}\" is not a wire gauge this program knows; write \"AWG n\" with n from 1 to 40, \
         or 0, 00, 000, 0000 (also written 1/0, 2/0, 3/0, 4/0)"
    )]
    BadGauge {
        /// The string as written.
        text: String,
    },
    /// A wire gauge was given for a length other than a wire diameter.
    #[error("\"{text}\" is a wire gauge, which is accepted only for wire_diameter; give a length")]
    GaugeNotAllowed {
        /// The string as written.
        text: String,
    },
}

/// Comma-separated list of the allowed unit names, for messages.
pub fn allowed_units() -> String {
    LENGTH_UNITS
        .iter()
        .map(|(name, _)| *name)
        .collect::<Vec<_>>()
        .join(", ")
}

/// Parse a length string such as "55 mm", "2.5cm", "1e-3 m" or "400 µm" into metres.
///
/// The space between number and unit is optional. Units are case-sensitive ("mm", not "MM"),
/// because SI prefixes are (m is milli, M is mega). A wire gauge is refused here; see
/// [`parse_wire_diameter_m`].
///
/// The result is not checked for sign or size: that is the caller's business, which knows what
/// the length is for. It may be infinite when the number overflows (e.g. "1e400 m").
pub fn parse_length_m(text: &str) -> Result<f64, UnitError> {
    let trimmed = text.trim();
    if trimmed.is_empty() {
        return Err(UnitError::Empty);
    }
    if is_gauge(trimmed) {
        return Err(UnitError::GaugeNotAllowed {
            text: text.to_string(),
        });
    }
    let number_len = number_prefix_len(trimmed);
    if number_len == 0 {
        return Err(UnitError::NoNumber {
            text: text.to_string(),
        });
    }
    let (number_text, rest) = trimmed.split_at(number_len);
    // The scanner only admits digits, one point, a sign and an exponent, so this parse fails only
    // for shapes like "." or "+", which are not numbers either.
    let value: f64 = number_text.parse().map_err(|_| UnitError::NoNumber {
        text: text.to_string(),
    })?;
    let unit = rest.trim();
    if unit.is_empty() {
        return Err(UnitError::MissingUnit {
            text: trimmed.to_string(),
        });
    }
    match LENGTH_UNITS.iter().find(|(name, _)| *name == unit) {
        Some((_, scale_m)) => Ok(value * scale_m),
        None => Err(UnitError::UnknownUnit {
            unit: unit.to_string(),
            text: text.to_string(),
            allowed: allowed_units(),
        }),
    }
}

/// Parse a wire diameter string into metres: a length as [`parse_length_m`] takes, or an
/// American Wire Gauge written "AWG 22", "AWG22" or "awg 22" (gauges 0000 to 40; 0000 may be
/// written "4/0", 000 "3/0", 00 "2/0", 0 "1/0").
pub fn parse_wire_diameter_m(text: &str) -> Result<f64, UnitError> {
    let trimmed = text.trim();
    if is_gauge(trimmed) {
        let gauge = parse_awg(trimmed).ok_or_else(|| UnitError::BadGauge {
            text: text.to_string(),
        })?;
        // parse_awg only returns gauges within the table, so the diameter exists.
        return awg_diameter_m(gauge).ok_or_else(|| UnitError::BadGauge {
            text: text.to_string(),
        });
    }
    parse_length_m(text)
}

/// Diameter (m) of the bare round conductor of American Wire Gauge `gauge` (0000 = -3, 000 = -2,
/// 00 = -1, then 0 to 40); `None` outside [`AWG_MIN`]..=[`AWG_MAX`].
///
/// d = 0.127 mm * 92^((36 - n) / 39), from ASTM International, "ASTM B258: Standard
/// Specification for Standard Nominal Diameters and Cross-Sectional Areas of AWG Sizes of Solid
/// Round Wires Used as Electrical Conductors" (edition year from memory: 2018). The standard rounds the tabulated diameters;
/// this function returns the unrounded value of the defining formula.
pub fn awg_diameter_m(gauge: i32) -> Option<f64> {
    if !(AWG_MIN..=AWG_MAX).contains(&gauge) {
        return None;
    }
    let exponent = f64::from(36 - gauge) / 39.0;
    Some(0.127e-3 * 92f64.powf(exponent))
}

/// Gauge number of an "AWG ..." string (0000 and 4/0 are -3), or `None` if it is not a known gauge.
pub fn parse_awg(text: &str) -> Option<i32> {
    let trimmed = text.trim();
    if !is_gauge(trimmed) {
        return None;
    }
    // "awg" is ASCII, so slicing off three bytes stays on a character boundary.
    let number = trimmed[3..].trim();
    let gauge = match number {
        "0000" | "4/0" => -3,
        "000" | "3/0" => -2,
        "00" | "2/0" => -1,
        "0" | "1/0" => 0,
        _ => {
            // Only plain decimal digits: "+5" or "05" would be odd ways to write a gauge.
            if number.is_empty()
                || !number.bytes().all(|b| b.is_ascii_digit())
                || number.starts_with('0')
            {
                return None;
            }
            number.parse::<i32>().ok()?
        }
    };
    (AWG_MIN..=AWG_MAX).contains(&gauge).then_some(gauge)
}

/// Whether a trimmed string is meant as a wire gauge (starts with "awg" in any case).
fn is_gauge(trimmed: &str) -> bool {
    trimmed
        .get(..3)
        .is_some_and(|prefix| prefix.eq_ignore_ascii_case("awg"))
}

/// Length in bytes of the decimal number at the start of `s`: optional sign, digits with at most
/// one point, then an optional exponent `e`/`E` with optional sign and at least one digit.
///
/// A hand scanner rather than trying `parse` on every prefix, because `f64::from_str` also takes
/// "inf" and "NaN", which must not pass as lengths.
fn number_prefix_len(s: &str) -> usize {
    let bytes = s.as_bytes();
    let mut i = 0;
    if i < bytes.len() && (bytes[i] == b'+' || bytes[i] == b'-') {
        i += 1;
    }
    let mut digits = 0;
    let mut seen_point = false;
    while i < bytes.len() {
        match bytes[i] {
            b'0'..=b'9' => digits += 1,
            b'.' if !seen_point => seen_point = true,
            _ => break,
        }
        i += 1;
    }
    if digits == 0 {
        return 0;
    }
    // An exponent counts only if digits follow it, so "5 em" would leave "em" as the unit.
    if i < bytes.len() && (bytes[i] == b'e' || bytes[i] == b'E') {
        let mut j = i + 1;
        if j < bytes.len() && (bytes[j] == b'+' || bytes[j] == b'-') {
            j += 1;
        }
        let exp_start = j;
        while j < bytes.len() && bytes[j].is_ascii_digit() {
            j += 1;
        }
        if j > exp_start {
            i = j;
        }
    }
    i
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1e-300)
    }

    #[test]
    fn metres() {
        assert!(close(parse_length_m("0.4 m").unwrap(), 0.4));
        assert!(close(parse_length_m("0.4m").unwrap(), 0.4));
    }

    #[test]
    fn centimetres() {
        assert!(close(parse_length_m("2.5 cm").unwrap(), 0.025));
        assert!(close(parse_length_m("2.5cm").unwrap(), 0.025));
    }

    #[test]
    fn millimetres() {
        assert!(close(parse_length_m("55 mm").unwrap(), 0.055));
        assert!(close(parse_length_m("55mm").unwrap(), 0.055));
        assert!(close(parse_length_m("  55   mm  ").unwrap(), 0.055));
    }

    #[test]
    fn micrometres_all_spellings() {
        for text in [
            "400 um",
            "400um",
            "400 \u{b5}m",
            "400\u{b5}m",
            "400 \u{3bc}m",
        ] {
            assert!(close(parse_length_m(text).unwrap(), 400e-6), "{text}");
        }
    }

    #[test]
    fn inches_and_feet_are_exact() {
        assert!(close(parse_length_m("1.5 in").unwrap(), 0.0381));
        assert!(close(parse_length_m("1.5in").unwrap(), 0.0381));
        assert!(close(parse_length_m("3 ft").unwrap(), 0.9144));
        assert!(close(parse_length_m("3ft").unwrap(), 0.9144));
    }

    #[test]
    fn exponents_signs_and_points() {
        assert!(close(parse_length_m("1e-3 m").unwrap(), 1e-3));
        assert!(close(parse_length_m("1e-3m").unwrap(), 1e-3));
        assert!(close(parse_length_m("2.5E2 mm").unwrap(), 0.25));
        assert!(close(parse_length_m("1e+1 cm").unwrap(), 0.1));
        assert!(close(parse_length_m(".5 m").unwrap(), 0.5));
        assert!(close(parse_length_m("5. mm").unwrap(), 0.005));
        // The sign is kept; rejecting negative sizes is the validator's job.
        assert!(close(parse_length_m("-5 cm").unwrap(), -0.05));
        assert!(close(parse_length_m("+5 cm").unwrap(), 0.05));
    }

    #[test]
    fn unknown_unit_names_it_and_lists_allowed() {
        let err = parse_length_m("3 yd").unwrap_err();
        let msg = err.to_string();
        assert!(matches!(err, UnitError::UnknownUnit { ref unit, .. } if unit == "yd"));
        assert!(msg.contains("'yd'"), "{msg}");
        for unit in ["m", "cm", "mm", "um", "in", "ft"] {
            assert!(msg.contains(unit), "{msg} lacks {unit}");
        }
        // SI prefixes are case-sensitive: MM would be megametres.
        assert!(matches!(
            parse_length_m("5 MM"),
            Err(UnitError::UnknownUnit { .. })
        ));
    }

    #[test]
    fn missing_unit_empty_and_no_number() {
        assert!(matches!(
            parse_length_m("55"),
            Err(UnitError::MissingUnit { .. })
        ));
        assert!(matches!(parse_length_m("   "), Err(UnitError::Empty)));
        assert!(matches!(
            parse_length_m("mm 55"),
            Err(UnitError::NoNumber { .. })
        ));
        assert!(matches!(
            parse_length_m("inf m"),
            Err(UnitError::NoNumber { .. })
        ));
        assert!(matches!(
            parse_length_m("NaN mm"),
            Err(UnitError::NoNumber { .. })
        ));
        assert!(matches!(
            parse_length_m(". m"),
            Err(UnitError::NoNumber { .. })
        ));
    }

    #[test]
    fn overflow_gives_infinity_for_the_validator_to_refuse() {
        assert!(parse_length_m("1e400 m").unwrap().is_infinite());
    }

    #[test]
    fn awg_22_matches_astm_b258() {
        // ASTM B258 tabulates AWG 22 as 0.6438 mm.
        let d_mm = parse_wire_diameter_m("AWG 22").unwrap() * 1e3;
        assert_eq!(format!("{d_mm:.4}"), "0.6438");
    }

    #[test]
    fn awg_spellings() {
        let d = awg_diameter_m(22).unwrap();
        for text in ["AWG 22", "AWG22", "awg 22", "Awg  22", " AWG 22 "] {
            assert_eq!(parse_wire_diameter_m(text).unwrap(), d, "{text}");
        }
        assert_eq!(parse_awg("AWG 0000"), Some(-3));
        assert_eq!(parse_awg("AWG 4/0"), Some(-3));
        assert_eq!(parse_awg("AWG 000"), Some(-2));
        assert_eq!(parse_awg("AWG 3/0"), Some(-2));
        assert_eq!(parse_awg("AWG 00"), Some(-1));
        assert_eq!(parse_awg("AWG 2/0"), Some(-1));
        assert_eq!(parse_awg("AWG 0"), Some(0));
        assert_eq!(parse_awg("AWG 1/0"), Some(0));
        assert_eq!(parse_awg("AWG 40"), Some(40));
    }

    #[test]
    fn awg_formula_end_points() {
        // By the definition of the scale, gauge 36 is exactly 0.005 in and 0000 exactly 0.46 in.
        assert!(close(awg_diameter_m(36).unwrap(), 0.127e-3));
        assert!((awg_diameter_m(-3).unwrap() - 0.46 * 0.0254).abs() < 1e-12);
        // ASTM B258 tabulates AWG 10 as 2.588 mm and AWG 40 as 0.0799 mm.
        assert_eq!(format!("{:.3}", awg_diameter_m(10).unwrap() * 1e3), "2.588");
        assert_eq!(
            format!("{:.4}", awg_diameter_m(40).unwrap() * 1e3),
            "0.0799"
        );
        assert_eq!(awg_diameter_m(41), None);
        assert_eq!(awg_diameter_m(-4), None);
    }

    #[test]
    fn bad_gauges() {
        for text in [
            "AWG 41", "AWG", "AWG -1", "AWG 5/0", "AWG 22.5", "AWG 022", "AWG x",
        ] {
            assert!(
                matches!(parse_wire_diameter_m(text), Err(UnitError::BadGauge { .. })),
                "{text}"
            );
        }
    }

    #[test]
    fn gauge_refused_for_other_lengths() {
        assert!(matches!(
            parse_length_m("AWG 22"),
            Err(UnitError::GaugeNotAllowed { .. })
        ));
    }

    #[test]
    fn wire_diameter_also_takes_lengths() {
        assert!(close(parse_wire_diameter_m("0.4 mm").unwrap(), 0.4e-3));
    }
}
