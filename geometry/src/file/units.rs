//! Physical quantities written with units ("55 mm", "171 kHz", "30 nF", "300 kV/m") and wire
//! gauges ("AWG 22") parsed to SI: the one unit scanner of the workspace.
//!
//! An input file may give a quantity either as a bare TOML number, which is SI (metres, hertz,
//! farads, ...), or as a string holding a number and a unit. Parsing happens here, at the
//! boundary; everything past this module works in plain `f64` SI values.
//!
//! Errors are the reason as a sentence that says what to write instead; the caller adds the
//! file, the table and the key (`crate::file::raw::Ctx`).
//!
//! # Example
//! ```
//! use coilfield_geometry::file::units::{Quantity, parse_length_m, parse_quantity, parse_wire_diameter_m};
//! assert_eq!(parse_length_m("55 mm").unwrap(), 0.055);
//! assert!((parse_wire_diameter_m("AWG 22").unwrap() - 0.6438e-3).abs() < 1e-7);
//! assert_eq!(parse_quantity("171 kHz", Quantity::Frequency).unwrap(), 171e3);
//! ```

use crate::constants::MU0;

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

/// Units of an electric field strength and their factor to V/m.
pub const ELECTRIC_FIELD_UNITS: &[(&str, f64)] = &[
    ("V/m", 1.0),
    ("kV/m", 1e3),
    ("MV/m", 1e6),
    ("V/cm", 1e2),
    ("kV/cm", 1e5),
];

/// Units of a magnetic flux density and their factor to T; "A/m" gives a magnetic field
/// strength H, turned into the flux density B = mu0 H of free space.
pub const FLUX_DENSITY_UNITS: &[(&str, f64)] = &[
    ("T", 1.0),
    ("mT", 1e-3),
    ("uT", 1e-6),
    ("\u{b5}T", 1e-6),
    ("\u{3bc}T", 1e-6),
    ("nT", 1e-9),
    ("A/m", MU0),
];

/// Units of a frequency and their factor to Hz.
pub const FREQUENCY_UNITS: &[(&str, f64)] =
    &[("Hz", 1.0), ("kHz", 1e3), ("MHz", 1e6), ("GHz", 1e9)];

/// Units of a voltage and their factor to V.
pub const VOLTAGE_UNITS: &[(&str, f64)] = &[("V", 1.0), ("mV", 1e-3), ("kV", 1e3), ("MV", 1e6)];

/// Units of a current and their factor to A.
pub const CURRENT_UNITS: &[(&str, f64)] = &[
    ("A", 1.0),
    ("mA", 1e-3),
    ("uA", 1e-6),
    ("\u{b5}A", 1e-6),
    ("\u{3bc}A", 1e-6),
    ("kA", 1e3),
];

/// Units of a capacitance and their factor to F.
pub const CAPACITANCE_UNITS: &[(&str, f64)] = &[
    ("F", 1.0),
    ("mF", 1e-3),
    ("uF", 1e-6),
    ("\u{b5}F", 1e-6),
    ("\u{3bc}F", 1e-6),
    ("nF", 1e-9),
    ("pF", 1e-12),
];

/// Units of an inductance and their factor to H.
pub const INDUCTANCE_UNITS: &[(&str, f64)] = &[
    ("H", 1.0),
    ("mH", 1e-3),
    ("uH", 1e-6),
    ("\u{b5}H", 1e-6),
    ("\u{3bc}H", 1e-6),
    ("nH", 1e-9),
];

/// Units of a resistance and their factor to ohm (written "ohm" or with U+03A9 OMEGA or U+2126
/// OHM SIGN).
pub const RESISTANCE_UNITS: &[(&str, f64)] = &[
    ("ohm", 1.0),
    ("mohm", 1e-3),
    ("kohm", 1e3),
    ("Mohm", 1e6),
    ("\u{3a9}", 1.0),
    ("m\u{3a9}", 1e-3),
    ("k\u{3a9}", 1e3),
    ("M\u{3a9}", 1e6),
    ("\u{2126}", 1.0),
    ("m\u{2126}", 1e-3),
    ("k\u{2126}", 1e3),
    ("M\u{2126}", 1e6),
];

/// Units of a duration and their factor to s.
pub const TIME_UNITS: &[(&str, f64)] = &[
    ("s", 1.0),
    ("ms", 1e-3),
    ("us", 1e-6),
    ("\u{b5}s", 1e-6),
    ("\u{3bc}s", 1e-6),
    ("ns", 1e-9),
];

/// A physical quantity that an input file may write with a unit.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    /// Length (m).
    Length,
    /// Electric field strength (V/m).
    ElectricField,
    /// Magnetic flux density (T), or a magnetic field strength in A/m.
    FluxDensity,
    /// Frequency (Hz).
    Frequency,
    /// Voltage (V).
    Voltage,
    /// Current (A).
    Current,
    /// Capacitance (F).
    Capacitance,
    /// Inductance (H).
    Inductance,
    /// Resistance (ohm).
    Resistance,
    /// Duration (s).
    Time,
}

const ALL_QUANTITIES: [Quantity; 10] = [
    Quantity::Length,
    Quantity::ElectricField,
    Quantity::FluxDensity,
    Quantity::Frequency,
    Quantity::Voltage,
    Quantity::Current,
    Quantity::Capacitance,
    Quantity::Inductance,
    Quantity::Resistance,
    Quantity::Time,
];

impl Quantity {
    /// The units this quantity may carry and their factors to SI.
    pub fn units(self) -> &'static [(&'static str, f64)] {
        match self {
            Quantity::Length => LENGTH_UNITS,
            Quantity::ElectricField => ELECTRIC_FIELD_UNITS,
            Quantity::FluxDensity => FLUX_DENSITY_UNITS,
            Quantity::Frequency => FREQUENCY_UNITS,
            Quantity::Voltage => VOLTAGE_UNITS,
            Quantity::Current => CURRENT_UNITS,
            Quantity::Capacitance => CAPACITANCE_UNITS,
            Quantity::Inductance => INDUCTANCE_UNITS,
            Quantity::Resistance => RESISTANCE_UNITS,
            Quantity::Time => TIME_UNITS,
        }
    }

    /// The quantity in words, for messages ("a length").
    pub fn phrase(self) -> &'static str {
        match self {
            Quantity::Length => "a length",
            Quantity::ElectricField => "an electric field strength",
            Quantity::FluxDensity => "a magnetic flux density",
            Quantity::Frequency => "a frequency",
            Quantity::Voltage => "a voltage",
            Quantity::Current => "a current",
            Quantity::Capacitance => "a capacitance",
            Quantity::Inductance => "an inductance",
            Quantity::Resistance => "a resistance",
            Quantity::Time => "a duration",
        }
    }

    /// The magnitudes accepted for this quantity when it is not zero (SI units): wide enough
    /// for any coil, narrow enough that every product and square the models form stays a finite
    /// f64 (a current of 1e308 A gives infinite fields). See [`crate::limits`].
    pub fn magnitude_range(self) -> (f64, f64) {
        match self {
            Quantity::Length => (crate::limits::MIN_SIZE_M, crate::limits::MAX_SIZE_M),
            Quantity::ElectricField => (1e-9, 1e12),
            Quantity::FluxDensity => (1e-15, 1e6),
            Quantity::Frequency => (1e-3, 1e12),
            Quantity::Voltage => (1e-9, 1e9),
            Quantity::Current => (1e-12, 1e7),
            Quantity::Capacitance => (1e-18, 1e3),
            Quantity::Inductance => (1e-15, 1e3),
            Quantity::Resistance => (1e-9, 1e12),
            Quantity::Time => (1e-15, 1e6),
        }
    }

    /// The SI unit in which a bare number is read.
    pub fn si_unit(self) -> &'static str {
        match self {
            Quantity::Length => "m",
            Quantity::ElectricField => "V/m",
            Quantity::FluxDensity => "T",
            Quantity::Frequency => "Hz",
            Quantity::Voltage => "V",
            Quantity::Current => "A",
            Quantity::Capacitance => "F",
            Quantity::Inductance => "H",
            Quantity::Resistance => "ohm",
            Quantity::Time => "s",
        }
    }

    /// An example value with a unit, for messages.
    pub fn example(self) -> &'static str {
        match self {
            Quantity::Length => "55 mm",
            Quantity::ElectricField => "300 kV/m",
            Quantity::FluxDensity => "27 uT",
            Quantity::Frequency => "171 kHz",
            Quantity::Voltage => "12 kV",
            Quantity::Current => "3 A",
            Quantity::Capacitance => "30 nF",
            Quantity::Inductance => "2 uH",
            Quantity::Resistance => "2 ohm",
            Quantity::Time => "2 ms",
        }
    }

    /// Comma-separated list of the allowed unit names, for messages.
    pub fn allowed_units(self) -> String {
        self.units()
            .iter()
            .map(|(name, _)| *name)
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// Comma-separated list of the allowed length units, for messages.
pub fn allowed_units() -> String {
    Quantity::Length.allowed_units()
}

/// Parse a string such as "171 kHz", "30nF" or "1e-3 m" holding `quantity` into its SI value.
///
/// The space between number and unit is optional. Units are case-sensitive ("mm", not "MM";
/// "MHz", not "mhz"), because SI prefixes are (m is milli, M is mega). A wire gauge is refused;
/// see [`parse_wire_diameter_m`].
///
/// The result is not checked for sign or size: that is the caller's business, which knows what
/// the value is for. It may be infinite when the number overflows (e.g. "1e400 m").
///
/// The error is the reason, a sentence saying what to write instead.
pub fn parse_quantity(text: &str, quantity: Quantity) -> Result<f64, String> {
    let example = quantity.example();
    let trimmed = text.trim();
    if trimmed.is_empty() {
        return Err(format!(
            "the {} is an empty string; write a number and a unit, e.g. \"{example}\"",
            quantity
                .phrase()
                .trim_start_matches("an ")
                .trim_start_matches("a ")
        ));
    }
    if is_gauge(trimmed) {
        return Err(format!(
            "\"{text}\" is a wire gauge, which is accepted only for wire_diameter; give {}",
            quantity.phrase()
        ));
    }
    let number_len = number_prefix_len(trimmed);
    if number_len == 0 {
        return Err(no_number(text, example));
    }
    let (number_text, rest) = trimmed.split_at(number_len);
    // The scanner only admits digits, one point, a sign and an exponent, so this parse fails only
    // for shapes like "." or "+", which are not numbers either.
    let value: f64 = number_text.parse().map_err(|_| no_number(text, example))?;
    let unit = rest.trim();
    if unit.is_empty() {
        return Err(format!(
            "\"{trimmed}\" has no unit; write e.g. \"{trimmed} {}\", or a bare number (without \
             quotes) for {}",
            example.split_whitespace().last().unwrap_or(""),
            si_phrase(quantity)
        ));
    }
    if let Some((_, scale)) = quantity.units().iter().find(|(name, _)| *name == unit) {
        return Ok(value * scale);
    }
    let other = ALL_QUANTITIES
        .iter()
        .find(|q| **q != quantity && q.units().iter().any(|(name, _)| *name == unit));
    Err(match other {
        Some(q) => format!(
            "\"{text}\": '{unit}' is a unit of {}, not of {}; allowed units: {}",
            q.phrase(),
            quantity
                .phrase()
                .trim_start_matches("an ")
                .trim_start_matches("a "),
            quantity.allowed_units()
        ),
        None => format!(
            "unknown unit '{unit}' in \"{text}\"; allowed units: {}",
            quantity.allowed_units()
        ),
    })
}

/// How a bare number is read, for messages ("metres").
fn si_phrase(quantity: Quantity) -> &'static str {
    match quantity {
        Quantity::Length => "metres",
        Quantity::ElectricField => "V/m",
        Quantity::FluxDensity => "tesla",
        Quantity::Frequency => "hertz",
        Quantity::Voltage => "volts",
        Quantity::Current => "amperes",
        Quantity::Capacitance => "farads",
        Quantity::Inductance => "henries",
        Quantity::Resistance => "ohms",
        Quantity::Time => "seconds",
    }
}

fn no_number(text: &str, example: &str) -> String {
    format!(
        "\"{text}\" does not start with a number; write a number and a unit, e.g. \"{example}\""
    )
}

/// Parse a length string such as "55 mm", "2.5cm", "1e-3 m" or "400 µm" into metres (see
/// [`parse_quantity`]).
pub fn parse_length_m(text: &str) -> Result<f64, String> {
    parse_quantity(text, Quantity::Length)
}

/// Parse a wire diameter string into metres: a length as [`parse_length_m`] takes, or an
/// American Wire Gauge written "AWG 22", "AWG22" or "awg 22" (gauges 0000 to 40; 0000 may be
/// written "4/0", 000 "3/0", 00 "2/0", 0 "1/0").
pub fn parse_wire_diameter_m(text: &str) -> Result<f64, String> {
    let trimmed = text.trim();
    if is_gauge(trimmed) {
        let bad = || {
            format!(
                "\"{text}\" is not a wire gauge this program knows; write \"AWG n\" with n from 1 \
                 to 40, or 0, 00, 000, 0000 (also written 1/0, 2/0, 3/0, 4/0)"
            )
        };
        let gauge = parse_awg(trimmed).ok_or_else(bad)?;
        // parse_awg only returns gauges within the table, so the diameter exists.
        return awg_diameter_m(gauge).ok_or_else(bad);
    }
    parse_length_m(text)
}

/// Smallest American Wire Gauge accepted: 0000 (also written 4/0) is gauge number -3.
pub const AWG_MIN: i32 = -3;

/// Largest American Wire Gauge accepted.
pub const AWG_MAX: i32 = 40;

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

/// Enamel builds this program knows by name (the design file's `insulation = "heavy"`).
pub const ENAMEL_BUILDS: &[&str] = &["heavy"];

/// Overall diameter (in inches) of heavy-build enamelled round magnet wire by AWG, even gauges
/// 14 to 36: the nominal figures of the magnet-wire tables as recalled, from memory (no source
/// at hand; check the maker's sheet, builds differ by a few micrometres).
const HEAVY_BUILD_OVERALL_IN: [(i32, f64); 12] = [
    (14, 0.0666),
    (16, 0.0532),
    (18, 0.0425),
    (20, 0.0340),
    (22, 0.0271),
    (24, 0.0218),
    (26, 0.0175),
    (28, 0.0140),
    (30, 0.0113),
    (32, 0.0091),
    (34, 0.0072),
    (36, 0.0058),
];

/// Overall diameter (m) of enamelled wire of gauge `gauge` in the named build (`"heavy"`), or
/// `None` where the table has no entry. A convenience for close-wound coils; the table is from
/// memory (see [`ENAMEL_BUILDS`]), so a measured `insulated_diameter` is better.
pub fn enamel_overall_diameter_m(build: &str, gauge: i32) -> Option<f64> {
    if !build.eq_ignore_ascii_case("heavy") {
        return None;
    }
    HEAVY_BUILD_OVERALL_IN
        .iter()
        .find(|(g, _)| *g == gauge)
        .map(|(_, inches)| inches * 0.0254)
}

/// The gauges with an enamel-build entry, for messages ("14, 16, ..., 36").
pub fn enamel_gauges() -> String {
    HEAVY_BUILD_OVERALL_IN
        .iter()
        .map(|(g, _)| g.to_string())
        .collect::<Vec<_>>()
        .join(", ")
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
        let msg = parse_length_m("3 yd").unwrap_err();
        assert!(msg.starts_with("unknown unit 'yd'"), "{msg}");
        assert!(msg.contains("'yd'"), "{msg}");
        for unit in ["m", "cm", "mm", "um", "in", "ft"] {
            assert!(msg.contains(unit), "{msg} lacks {unit}");
        }
        // SI prefixes are case-sensitive: MM would be megametres.
        assert!(
            parse_length_m("5 MM")
                .unwrap_err()
                .starts_with("unknown unit 'MM'")
        );
    }

    #[test]
    fn missing_unit_empty_and_no_number() {
        assert!(parse_length_m("55").unwrap_err().contains("has no unit"));
        assert!(
            parse_length_m("   ")
                .unwrap_err()
                .contains("is an empty string")
        );
        assert!(
            parse_length_m("mm 55")
                .unwrap_err()
                .contains("does not start with a number")
        );
        assert!(
            parse_length_m("inf m")
                .unwrap_err()
                .contains("does not start with a number")
        );
        assert!(
            parse_length_m("NaN mm")
                .unwrap_err()
                .contains("does not start with a number")
        );
        assert!(
            parse_length_m(". m")
                .unwrap_err()
                .contains("does not start with a number")
        );
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
                parse_wire_diameter_m(text)
                    .unwrap_err()
                    .contains("is not a wire gauge this program knows"),
                "{text}"
            );
        }
    }

    #[test]
    fn gauge_refused_for_other_lengths() {
        assert!(
            parse_length_m("AWG 22")
                .unwrap_err()
                .contains("accepted only for wire_diameter")
        );
    }

    #[test]
    fn other_quantities_take_si_prefixes() {
        // SI prefixes: BIPM, SI Brochure, 9th ed., 2019, table 7.
        let cases = [
            ("171 kHz", Quantity::Frequency, 171e3),
            ("30nF", Quantity::Capacitance, 30e-9),
            ("12 kV", Quantity::Voltage, 12e3),
            ("2 uH", Quantity::Inductance, 2e-6),
            ("5 ohm", Quantity::Resistance, 5.0),
            ("3 mA", Quantity::Current, 3e-3),
            ("300 kV/m", Quantity::ElectricField, 3e5),
            ("27 uT", Quantity::FluxDensity, 27e-6),
            ("2 ms", Quantity::Time, 2e-3),
        ];
        for (text, q, want) in cases {
            assert!(close(parse_quantity(text, q).unwrap(), want), "{text}");
        }
        // An H level in A/m is the flux density mu0 H of free space.
        let b = parse_quantity("1 A/m", Quantity::FluxDensity).unwrap();
        assert!(close(b, 4e-7 * std::f64::consts::PI));
    }

    #[test]
    fn a_unit_of_another_quantity_is_named() {
        let msg = parse_quantity("30 nF", Quantity::Inductance).unwrap_err();
        assert!(msg.contains("'nF' is a unit of a capacitance"), "{msg}");
        let msg = parse_quantity("171 kHz", Quantity::Length).unwrap_err();
        assert!(msg.contains("unit of a frequency"), "{msg}");
        let msg = parse_quantity("171", Quantity::Frequency).unwrap_err();
        assert!(msg.contains("\"171 kHz\""), "{msg}");
    }

    #[test]
    fn wire_diameter_also_takes_lengths() {
        assert!(close(parse_wire_diameter_m("0.4 mm").unwrap(), 0.4e-3));
    }
}
