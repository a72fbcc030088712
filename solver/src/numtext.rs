//! The one number formatter of every text output: data files (CSV, JSON, sweep rows) and tables.
//!
//! - Data files get [`shortest`]: the fewest digits that read back to the same `f64`, plain or
//!   exponent form, whichever is shorter; [`json_number`] and [`clean_json`] do the same for
//!   JSON. Never `-0`: a negative zero prints as `0`.
//! - Tables get [`si`]: one SI-prefix rule (G, M, k, none, m, µ, n, p, f, a), the prefix chosen
//!   after rounding so 999.96 µH reads `1.000 mH`, never `1000.0 µH`. [`si_like`] prints a value
//!   in the prefix of another (an error estimate in the unit of its value).
//!
//! Nothing here prints; the CLI and the sweep rows call these functions.

/// The SI prefixes of table output, largest first, with their scale.
const PREFIXES: [(f64, &str); 10] = [
    (1e9, "G"),
    (1e6, "M"),
    (1e3, "k"),
    (1.0, ""),
    (1e-3, "m"),
    (1e-6, "µ"),
    (1e-9, "n"),
    (1e-12, "p"),
    (1e-15, "f"),
    (1e-18, "a"),
];

/// `v` without a negative zero (`-0.0` becomes `0.0`; every other value is unchanged).
pub fn no_negative_zero(v: f64) -> f64 {
    if v == 0.0 { 0.0 } else { v }
}

/// Shortest round-trip text of a float for data files: the fewest digits that read back to the
/// same value, in plain or exponent form, whichever is shorter (plain on a tie). `-0` prints as
/// `0`; NaN as `NaN` and infinities as `inf` / `-inf` (CSV readers take these; JSON uses
/// [`json_number`]).
pub fn shortest(v: f64) -> String {
    let mut s = String::with_capacity(24);
    push_shortest(&mut s, v);
    s
}

/// [`shortest`] appended to `out`, without a text of its own: sweep rows are built of many
/// numbers per point, on every thread.
///
/// The digits are formatted once, in exponent form (`d.ddde±x`, the same shortest digits as the
/// plain form: both come from the standard library's shortest round-trip conversion); the plain
/// form is laid out from those digits when it is not longer.
pub fn push_shortest(out: &mut String, v: f64) {
    use std::fmt::Write;
    if v.is_nan() {
        out.push_str("NaN");
        return;
    }
    let v = no_negative_zero(v);
    if v.is_infinite() {
        out.push_str(if v > 0.0 { "inf" } else { "-inf" });
        return;
    }
    let mut exp = StackText::default();
    // Writing at most 24 bytes ("-d.dddddddddddddddde-308") into 32 cannot fail.
    let _ = write!(exp, "{v:e}");
    let text = exp.as_str();
    let (mantissa, e) = text.split_once('e').unwrap_or((text, "0"));
    let e: i32 = e.parse().unwrap_or(0);
    let (sign, mantissa) = match mantissa.strip_prefix('-') {
        Some(m) => ("-", m),
        None => ("", mantissa),
    };
    let (lead, frac) = mantissa.split_once('.').unwrap_or((mantissa, ""));
    let n_digits = (lead.len() + frac.len()) as i32;
    // Plain length without the sign: digits with zeros to the point, or "0." and leading zeros.
    let plain_len = if e >= 0 {
        n_digits.max(e + 1) + i32::from(n_digits > e + 1)
    } else {
        2 + (-e - 1) + n_digits
    };
    if text.len() < sign.len() + plain_len as usize {
        out.push_str(text);
        return;
    }
    out.push_str(sign);
    let digits = lead.bytes().chain(frac.bytes());
    if e >= 0 {
        let point = (e + 1) as usize;
        for (k, d) in digits.enumerate() {
            if k == point {
                out.push('.');
            }
            out.push(char::from(d));
        }
        for _ in n_digits..=e {
            out.push('0');
        }
    } else {
        out.push_str("0.");
        for _ in 0..(-e - 1) {
            out.push('0');
        }
        digits.for_each(|d| out.push(char::from(d)));
    }
}

/// A short text on the stack (the exponent form of one float).
#[derive(Default)]
struct StackText {
    bytes: [u8; 32],
    len: usize,
}

impl StackText {
    fn as_str(&self) -> &str {
        // Only whole `&str`s are written in.
        std::str::from_utf8(&self.bytes[..self.len]).unwrap_or("")
    }
}

impl std::fmt::Write for StackText {
    fn write_str(&mut self, s: &str) -> std::fmt::Result {
        let end = self.len + s.len();
        let slot = self.bytes.get_mut(self.len..end).ok_or(std::fmt::Error)?;
        slot.copy_from_slice(s.as_bytes());
        self.len = end;
        Ok(())
    }
}

/// A float as a JSON number (shortest round trip, no `-0`); null for NaN and infinities, which
/// JSON cannot hold.
pub fn json_number(v: f64) -> serde_json::Value {
    serde_json::Number::from_f64(no_negative_zero(v))
        .map(serde_json::Value::Number)
        .unwrap_or(serde_json::Value::Null)
}

/// Rewrite every negative zero in a JSON value as `0` (serde writes `-0.0` otherwise).
pub fn clean_json(value: &mut serde_json::Value) {
    match value {
        serde_json::Value::Number(n) if n.is_f64() && n.as_f64() == Some(0.0) => {
            *value = serde_json::json!(0.0);
        }
        serde_json::Value::Array(items) => items.iter_mut().for_each(clean_json),
        serde_json::Value::Object(map) => map.values_mut().for_each(clean_json),
        _ => {}
    }
}

/// The prefix scale and symbol of a magnitude already rounded to `digits` significant digits.
fn prefix_of(value: f64, digits: usize) -> (f64, &'static str) {
    let mag = round_significant(value.abs(), digits);
    PREFIXES
        .iter()
        .copied()
        .find(|(s, _)| mag >= *s * (1.0 - 1e-12))
        .unwrap_or(PREFIXES[PREFIXES.len() - 1])
}

/// The SI prefix (scale and symbol) that [`si`] chooses for `value` at `digits` significant
/// digits: the one rule of every prefixed output, tables and plot axes alike (an axis reads in
/// the prefix of its largest magnitude, so 0.02 m to 0.3 m reads in mm).
pub fn si_prefix(value: f64, digits: usize) -> (f64, &'static str) {
    if value == 0.0 || !value.is_finite() {
        return (1.0, "");
    }
    prefix_of(value, digits)
}

/// `v` rounded to `digits` significant digits (through its decimal text, so it is the value a
/// reader sees).
fn round_significant(v: f64, digits: usize) -> f64 {
    if v == 0.0 || !v.is_finite() {
        return v;
    }
    let d = digits.max(1) - 1;
    format!("{v:.d$e}").parse().unwrap_or(v)
}

/// A value with an SI prefix and unit for tables, e.g. `15.7002 µH`, to `digits` significant
/// digits. Zero prints as `0 unit`; a value that is not finite as `NaN unit` or `inf unit`
/// (callers print words for missing values where they can).
pub fn si(value: f64, unit: &str, digits: usize) -> String {
    if !value.is_finite() {
        return format!("{} {unit}", shortest(value));
    }
    if value == 0.0 {
        return format!("0 {unit}");
    }
    let (scale, prefix) = prefix_of(value, digits);
    scaled_text(value, scale, prefix, unit, digits)
}

/// `value` in the SI prefix that [`si`] would choose for `like`, to `digits` significant digits
/// of `value` (at least one decimal place less than needed is never shown: tiny values print in
/// exponent form of that prefix). Used for an estimate beside its value: `31.479 pF ± 1.6e-4 pF`.
pub fn si_like(value: f64, like: f64, unit: &str, digits: usize) -> String {
    if !value.is_finite() {
        return format!("{} {unit}", shortest(value));
    }
    if like == 0.0 || !like.is_finite() {
        return si(value, unit, digits);
    }
    let (scale, prefix) = prefix_of(like, digits);
    let scaled = no_negative_zero(value / scale);
    if scaled == 0.0 {
        return format!("0 {prefix}{unit}");
    }
    if scaled.abs() < 1e-3 {
        let d = digits.max(1) - 1;
        return format!("{scaled:.d$e} {prefix}{unit}");
    }
    scaled_text(value, scale, prefix, unit, digits)
}

fn scaled_text(value: f64, scale: f64, prefix: &str, unit: &str, digits: usize) -> String {
    let scaled = no_negative_zero(value / scale);
    let int_digits = round_significant(scaled.abs(), digits).log10().floor() as i64 + 1;
    let decimals = (digits as i64 - int_digits).max(0) as usize;
    let text = format!("{scaled:.decimals$}");
    // A value that rounds to zero at these decimals must not read "-0.00".
    let text = if text
        .trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.')
    {
        text.trim_start_matches('-').to_string()
    } else {
        text
    };
    format!("{text} {prefix}{unit}")
}

/// A ratio as a percentage for text, to `digits` significant digits in plain decimals (never an
/// exponent): 1e-4 reads `0.01 %`, 2.345e-7 with 2 digits `0.000023 %`.
pub fn percent(ratio: f64, digits: usize) -> String {
    if !ratio.is_finite() {
        return format!("{} %", shortest(ratio));
    }
    let v = no_negative_zero(round_significant(100.0 * ratio, digits));
    // Display of f64 never uses an exponent: the plain decimal of the rounded value.
    format!("{v} %")
}

/// A plain number to `decimals` places for tables, never `-0`.
pub fn fixed(value: f64, decimals: usize) -> String {
    if !value.is_finite() {
        return shortest(value);
    }
    let text = format!("{value:.decimals$}");
    if text
        .trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.')
    {
        text.trim_start_matches('-').to_string()
    } else {
        text
    }
}

/// An axis tick for plots: `value` to the precision of an axis spanning `span` (five
/// significant digits of the span), trailing zeros dropped, never `-0`; so a grid value of
/// 0.09499999999999999 on a 0.1-wide axis reads `0.095`.
pub fn axis_tick(value: f64, span: f64) -> String {
    if !value.is_finite() {
        return shortest(value);
    }
    let span = if span.is_finite() && span > 0.0 {
        span
    } else {
        value.abs().max(1.0)
    };
    let decimals = (4 - span.log10().floor() as i64).clamp(0, 17) as usize;
    let text = fixed(value, decimals);
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn percentages_never_print_an_exponent() {
        // 1e-5 relative as Rust's `{:e}` would print it ("1e-5") is what text must not show.
        assert_eq!(percent(1e-4, 2), "0.01 %");
        assert_eq!(percent(1e-5, 2), "0.001 %");
        assert_eq!(percent(2.345e-7, 2), "0.000023 %");
        assert_eq!(percent(-0.0, 2), "0 %");
        assert_eq!(percent(0.0123456, 3), "1.23 %");
    }

    #[test]
    fn data_numbers_are_shortest_round_trip_text() {
        // The text must read back to the same bits (IEEE 754 round trip) and be no longer
        // than both Rust forms it picks from.
        for v in [
            4.940_784_630_798_269e-7,
            0.1,
            1.0,
            1e21,
            123_456.0,
            -2.5e-9,
            0.3,
        ] {
            let t = shortest(v);
            assert_eq!(t.parse::<f64>().unwrap().to_bits(), v.to_bits(), "{t}");
            assert!(t.len() <= format!("{v}").len() && t.len() <= format!("{v:e}").len());
        }
        assert_eq!(shortest(1e-7), "1e-7");
        assert_eq!(shortest(f64::INFINITY), "inf");
        assert_eq!(shortest(f64::NEG_INFINITY), "-inf");
    }

    #[test]
    fn shortest_text_is_the_shorter_of_the_standard_forms() {
        // Reference: the standard library's plain (`{}`) and exponent (`{:e}`) shortest
        // round-trip texts, the shorter one (plain on a tie), over powers of ten at every
        // exponent, their neighbours, and a million pseudo-random bit patterns.
        fn reference(v: f64) -> String {
            let v = no_negative_zero(v);
            let (plain, exp) = (format!("{v}"), format!("{v:e}"));
            if exp.len() < plain.len() { exp } else { plain }
        }
        let mut values: Vec<f64> = (-330..=310)
            .map(|k| format!("1e{k}").parse::<f64>().unwrap())
            .flat_map(|p| [p, -p, f64::from_bits(p.to_bits() + 1), 1.5 * p, 123.456 * p])
            .collect();
        values.extend([
            0.0,
            -0.0,
            f64::MIN_POSITIVE,
            5e-324,
            f64::MAX,
            0.095,
            1e15,
            1e16,
        ]);
        let mut state = 0x9e37_79b9_7f4a_7c15_u64;
        for _ in 0..1_000_000 {
            // xorshift64 (Marsaglia 2003), a bit pattern per step; NaN patterns are skipped.
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            let v = f64::from_bits(state);
            if !v.is_nan() {
                values.push(v);
            }
        }
        for v in values {
            assert_eq!(shortest(v), reference(v), "{v:e}");
        }
        assert_eq!(shortest(0.3), "0.3");
        assert_eq!(shortest(-0.0), "0");
        assert_eq!(shortest(f64::NAN), "NaN");
    }

    #[test]
    fn json_has_no_negative_zero() {
        let mut v = serde_json::json!({"a": [-0.0, 1.5], "b": {"c": -0.0}});
        clean_json(&mut v);
        assert_eq!(v.to_string(), r#"{"a":[0.0,1.5],"b":{"c":0.0}}"#);
        assert_eq!(json_number(-0.0).to_string(), "0.0");
        assert_eq!(json_number(f64::INFINITY), serde_json::Value::Null);
    }

    #[test]
    fn si_prefix_is_chosen_after_rounding() {
        assert_eq!(si(15.700_16e-6, "H", 6), "15.7002 µH");
        assert_eq!(si(0.5, "m", 3), "500 mm");
        assert_eq!(si(-2.5e-9, "H", 3), "-2.50 nH");
        // 999.96 µH to four digits is 1.000 mH, not "1000 µH".
        assert_eq!(si(999.96e-6, "H", 4), "1.000 mH");
        assert_eq!(si(9.6e-17, "F", 2), "96 aF");
        assert_eq!(si(-0.0, "V", 3), "0 V");
        assert_eq!(si_prefix(0.3, 3), (1e-3, "m"));
        assert_eq!(si_prefix(8.2e-5, 3), (1e-6, "µ"));
        assert_eq!(si_prefix(0.0, 3), (1.0, ""));
    }

    #[test]
    fn axis_ticks_read_at_the_axis_precision() {
        assert_eq!(axis_tick(0.094_999_999_999_999_99, 0.1), "0.095");
        assert_eq!(axis_tick(-1e-17, 2.0), "0");
        assert_eq!(axis_tick(1500.0, 3000.0), "1500");
        assert_eq!(axis_tick(12.5, 100.0), "12.5");
        assert_eq!(axis_tick(-0.25, 1.0), "-0.25");
    }

    #[test]
    fn an_estimate_prints_in_the_unit_of_its_value() {
        assert_eq!(si_like(1.6e-16, 31.479e-12, "F", 2), "1.6e-4 pF");
        assert_eq!(si_like(0.12e-12, 31.479e-12, "F", 2), "0.12 pF");
        assert_eq!(fixed(-0.0001, 2), "0.00");
    }
}
