//! What every table of an input file shares: values as written (lengths with units, numbers
//! that remember whether they were integers), the place a message points to, and how values
//! read in messages.

use crate::error::DesignError;
use crate::file::units::{Quantity, parse_length_m, parse_quantity, parse_wire_diameter_m};
use crate::limits::{MAX_COORDINATE_M, MAX_NAME_CHARS, MAX_SIZE_M, MIN_SIZE_M, range_phrase};
use nalgebra::{Point3, Unit, Vector3};
use serde::Deserialize;
use toml::Value;

/// Whether a name matches `[A-Za-z0-9_-]+` and has at most [`MAX_NAME_CHARS`] characters.
///
/// Names end up in file names, table headers and command lines; this set needs no quoting in any
/// of them, and the length keeps table columns readable.
pub fn is_valid_name(name: &str) -> bool {
    !name.is_empty()
        && name.len() <= MAX_NAME_CHARS
        && name
            .bytes()
            .all(|b| b.is_ascii_alphanumeric() || b == b'_' || b == b'-')
}

/// Message for a TOML syntax error, with a 1-based line and column computed from the span: the
/// one form for design, sweep and seek files.
pub fn syntax_error(err: &toml::de::Error, text: &str, source: &str) -> DesignError {
    let offset = err.span().map_or(0, |span| span.start).min(text.len());
    // The span is a byte offset; step back to a character boundary before slicing.
    let mut boundary = offset;
    while !text.is_char_boundary(boundary) {
        boundary -= 1;
    }
    let before = &text[..boundary];
    let line = before.matches('\n').count() + 1;
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    let column = before[line_start..].chars().count() + 1;
    let mut reason = err.message().trim().to_string();
    // The commonest slip: a length with a unit written without quotes (radius = 5 mm).
    if reason.contains("must be quoted") {
        reason.push_str("; a length with a unit is a string: write it in quotes, e.g. \"5 mm\"");
    }
    DesignError::Syntax {
        source_name: source.to_string(),
        line,
        column,
        reason,
    }
}

/// "a string \"x\"", "an integer 3", ...: how a value reads in a message.
pub(crate) fn type_phrase(value: &Value) -> String {
    match value {
        Value::String(s) => format!("the string \"{s}\""),
        Value::Integer(n) => format!("the integer {n}"),
        Value::Float(x) => format!("the number {x}"),
        Value::Boolean(b) => format!("the boolean {b}"),
        Value::Datetime(d) => format!("the date-time {d}"),
        Value::Array(_) => "an array".to_string(),
        Value::Table(_) => "a table".to_string(),
    }
}

/// A length as written: a TOML number (metres) or a string with a unit, parsed later so that a
/// bad unit gets its own message.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum RawLength {
    Number(f64),
    Text(String),
}

impl<'de> Deserialize<'de> for RawLength {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        struct Visitor;
        impl serde::de::Visitor<'_> for Visitor {
            type Value = RawLength;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("a length: a number in metres or a string with a unit, e.g. \"55 mm\"")
            }
            fn visit_f64<E>(self, v: f64) -> Result<RawLength, E> {
                Ok(RawLength::Number(v))
            }
            fn visit_i64<E>(self, v: i64) -> Result<RawLength, E> {
                // Lengths this large are refused later anyway; the rounding cannot matter.
                Ok(RawLength::Number(v as f64))
            }
            fn visit_u64<E>(self, v: u64) -> Result<RawLength, E> {
                Ok(RawLength::Number(v as f64))
            }
            fn visit_str<E>(self, v: &str) -> Result<RawLength, E> {
                Ok(RawLength::Text(v.to_string()))
            }
        }
        deserializer.deserialize_any(Visitor)
    }
}

/// A number as written, keeping whether it was a TOML integer (counts must be whole numbers).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum RawNumber {
    Int(i64),
    Float(f64),
}

impl RawNumber {
    pub(crate) fn as_f64(self) -> f64 {
        match self {
            RawNumber::Int(n) => n as f64,
            RawNumber::Float(x) => x,
        }
    }

    /// The value as a whole number, if it is one (an integer, or a float with no fraction).
    pub(crate) fn as_whole(self) -> Option<i64> {
        match self {
            RawNumber::Int(n) => Some(n),
            // The range test keeps the cast exact; out-of-range floats are not whole numbers
            // this program could use.
            RawNumber::Float(x) if x.is_finite() && x.fract() == 0.0 && x.abs() < 9e15 => {
                Some(x as i64)
            }
            RawNumber::Float(_) => None,
        }
    }

    pub(crate) fn shown(self) -> String {
        match self {
            RawNumber::Int(n) => n.to_string(),
            RawNumber::Float(x) => shown_float(x),
        }
    }
}

/// A length as a message shows it: the number as written, or the string and its value `v_m` in
/// metres.
pub(crate) fn shown_length(raw: &RawLength, v_m: f64) -> String {
    match raw {
        RawLength::Number(x) => shown_float(*x),
        RawLength::Text(text) => format!("\"{text}\" (= {} m)", crate::error::sig(v_m)),
    }
}

/// A float as a message shows it: plain decimals in the usual range, else in exponent form
/// (1e308 reads "1e308", not 309 digits).
pub(crate) fn shown_float(x: f64) -> String {
    if x == 0.0 || !x.is_finite() || (1e-4..1e15).contains(&x.abs()) {
        x.to_string()
    } else {
        format!("{x:e}")
    }
}

impl<'de> Deserialize<'de> for RawNumber {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        struct Visitor;
        impl serde::de::Visitor<'_> for Visitor {
            type Value = RawNumber;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("a number")
            }
            fn visit_f64<E>(self, v: f64) -> Result<RawNumber, E> {
                Ok(RawNumber::Float(v))
            }
            fn visit_i64<E>(self, v: i64) -> Result<RawNumber, E> {
                Ok(RawNumber::Int(v))
            }
            fn visit_u64<E: serde::de::Error>(self, v: u64) -> Result<RawNumber, E> {
                i64::try_from(v)
                    .map(RawNumber::Int)
                    .map_err(|_| E::custom(format!("the number {v} is too large")))
            }
        }
        deserializer.deserialize_any(Visitor)
    }
}

/// Where a message points: the file and the winding.
pub(crate) struct Ctx<'a> {
    pub(crate) source: &'a str,
    pub(crate) item: String,
}

impl Ctx<'_> {
    /// The typed form `T` of a table (keys checked already). A well-typed table is read
    /// without tracking paths (a sweep reads a table per point and tracking costs more than
    /// the copy); a table that fails is read again with its path tracked, so the message names
    /// the key (`origin[1]`) and says why.
    pub(crate) fn typed<T: serde::de::DeserializeOwned>(
        &self,
        table: toml::Table,
    ) -> Result<T, DesignError> {
        if let Ok(t) = T::deserialize(table.clone()) {
            return Ok(t);
        }
        serde_path_to_error::deserialize(table).map_err(|err| DesignError::WrongType {
            source_name: self.source.to_string(),
            item: self.item.clone(),
            key: err.path().to_string(),
            reason: err.inner().message().to_string(),
        })
    }

    /// The `name` key of the `number`-th table of kind `kind` ("winding", "electrode", ...):
    /// `<kind>-<number>` when absent; a valid name also becomes the item every later message
    /// names (`<kind> '<name>'`). `example` is a typical name for the message on a wrong type.
    /// The key stays in the table.
    pub(crate) fn read_name(
        &mut self,
        table: &toml::Table,
        kind: &str,
        example: &str,
        number: usize,
    ) -> Result<String, DesignError> {
        match table.get("name") {
            None => Ok(format!("{kind}-{number}")),
            Some(Value::String(name)) if is_valid_name(name) => {
                self.item = format!("{kind} '{name}'");
                Ok(name.clone())
            }
            Some(Value::String(name)) => Err(DesignError::BadName {
                source_name: self.source.to_string(),
                item: self.item.clone(),
                name: name.clone(),
            }),
            Some(other) => Err(DesignError::WrongType {
                source_name: self.source.to_string(),
                item: self.item.clone(),
                key: "name".to_string(),
                reason: format!(
                    "expected a string such as \"{example}\", got {}",
                    type_phrase(other)
                ),
            }),
        }
    }

    /// Removes and returns the `shape` key of a table whose shapes are `names`; the message
    /// names the shapes when it is absent, unknown or not a string.
    pub(crate) fn take_shape(
        &self,
        table: &mut toml::Table,
        names: &[&str],
    ) -> Result<String, DesignError> {
        match table.remove("shape") {
            None => Err(self.missing(
                "shape",
                &format!("give shape = one of {}", names.join(", ")),
            )),
            Some(Value::String(s)) if names.contains(&s.as_str()) => Ok(s),
            Some(Value::String(s)) => Err(self.unknown_value("shape", &s, names)),
            Some(other) => Err(DesignError::WrongType {
                source_name: self.source.to_string(),
                item: self.item.clone(),
                key: "shape".to_string(),
                reason: format!(
                    "expected one of the strings {}, got {}",
                    names.join(", "),
                    type_phrase(&other)
                ),
            }),
        }
    }

    pub(crate) fn missing(&self, key: &str, hint: &str) -> DesignError {
        DesignError::MissingKey {
            source_name: self.source.to_string(),
            item: self.item.clone(),
            key: key.to_string(),
            hint: hint.to_string(),
        }
    }

    pub(crate) fn not_positive(&self, key: &str, expected: &str, value: String) -> DesignError {
        DesignError::NotPositive {
            source_name: self.source.to_string(),
            item: self.item.clone(),
            key: key.to_string(),
            expected: expected.to_string(),
            value,
        }
    }

    pub(crate) fn not_finite(&self, key: &str, expected: &str, value: String) -> DesignError {
        DesignError::NotFinite {
            source_name: self.source.to_string(),
            item: self.item.clone(),
            key: key.to_string(),
            expected: expected.to_string(),
            value,
        }
    }

    pub(crate) fn too_large(&self, key: &str, value: String, limit: String) -> DesignError {
        DesignError::TooLarge {
            source_name: self.source.to_string(),
            item: self.item.clone(),
            key: key.to_string(),
            value,
            limit,
        }
    }

    pub(crate) fn out_of_range(&self, key: &str, value: String, range: String) -> DesignError {
        DesignError::OutOfRange {
            source_name: self.source.to_string(),
            item: self.item.clone(),
            key: key.to_string(),
            value,
            range,
        }
    }

    pub(crate) fn bad_unit(&self, key: &str, reason: String) -> DesignError {
        DesignError::BadUnit {
            source_name: self.source.to_string(),
            item: self.item.clone(),
            key: key.to_string(),
            reason,
        }
    }

    pub(crate) fn unknown_value(&self, key: &str, value: &str, allowed: &[&str]) -> DesignError {
        DesignError::UnknownValue {
            source_name: self.source.to_string(),
            item: self.item.clone(),
            key: key.to_string(),
            value: value.to_string(),
            allowed: allowed.join(", "),
        }
    }

    /// A length in metres as written (a number in metres or a string with a unit); messages
    /// show it with [`shown_length`] (built only on the error path: designs are parsed once
    /// per sweep point).
    pub(crate) fn metres(
        &self,
        key: &str,
        raw: &RawLength,
        wire: bool,
    ) -> Result<f64, DesignError> {
        match raw {
            RawLength::Number(v) => Ok(*v),
            RawLength::Text(text) => {
                let parsed = if wire {
                    parse_wire_diameter_m(text)
                } else {
                    parse_length_m(text)
                };
                parsed.map_err(|e| self.bad_unit(key, e))
            }
        }
    }

    /// A physical quantity as written (a TOML number in SI units or a string with a unit,
    /// [`parse_quantity`]), finite; and how to show it in messages.
    pub(crate) fn quantity(
        &self,
        key: &str,
        value: &Value,
        q: Quantity,
    ) -> Result<(f64, String), DesignError> {
        let (v, shown) = match value {
            Value::Integer(n) => (*n as f64, n.to_string()),
            Value::Float(x) => (*x, shown_float(*x)),
            Value::String(text) => (
                parse_quantity(text, q).map_err(|reason| self.bad_unit(key, reason))?,
                format!("\"{text}\""),
            ),
            other => {
                return Err(DesignError::WrongType {
                    source_name: self.source.to_string(),
                    item: self.item.clone(),
                    key: key.to_string(),
                    reason: format!(
                        "expected {} (a number in {}, or a string with a unit such as \"{}\"), \
                         got {}",
                        q.phrase(),
                        q.si_unit(),
                        q.example(),
                        type_phrase(other)
                    ),
                });
            }
        };
        if !v.is_finite() {
            return Err(self.not_finite(
                key,
                &format!("{} that is finite ({})", q.phrase(), q.si_unit()),
                shown,
            ));
        }
        let (min, max) = q.magnitude_range();
        if v != 0.0 && !(min..=max).contains(&v.abs()) {
            return Err(self.out_of_range(
                key,
                shown,
                format!(
                    "a magnitude {} (or 0 where the key allows it)",
                    range_phrase(min, max, q.si_unit())
                ),
            ));
        }
        Ok((v, shown))
    }

    /// A positive physical quantity (see [`Ctx::quantity`]).
    pub(crate) fn positive_quantity(
        &self,
        key: &str,
        value: &Value,
        q: Quantity,
    ) -> Result<f64, DesignError> {
        let (v, shown) = self.quantity(key, value, q)?;
        if v <= 0.0 {
            return Err(self.not_positive(
                key,
                &format!(
                    "a positive {} ({})",
                    q.phrase()
                        .trim_start_matches("an ")
                        .trim_start_matches("a "),
                    q.si_unit()
                ),
                shown,
            ));
        }
        Ok(v)
    }

    /// A physical quantity >= 0 (see [`Ctx::quantity`]).
    pub(crate) fn non_negative_quantity(
        &self,
        key: &str,
        value: &Value,
        q: Quantity,
    ) -> Result<f64, DesignError> {
        let (v, shown) = self.quantity(key, value, q)?;
        if v < 0.0 {
            return Err(self.not_positive(
                key,
                &format!("{} of at least 0 {}", q.phrase(), q.si_unit()),
                shown,
            ));
        }
        Ok(v)
    }

    /// A finite length of any sign (coordinates).
    pub(crate) fn coordinate(&self, key: &str, raw: &RawLength) -> Result<f64, DesignError> {
        let v = self.metres(key, raw, false)?;
        if !v.is_finite() {
            return Err(self.not_finite(key, "a finite length in metres", shown_length(raw, v)));
        }
        if v.abs() > MAX_COORDINATE_M {
            return Err(self.out_of_range(
                key,
                shown_length(raw, v),
                format!("a coordinate from -{MAX_COORDINATE_M:e} m to {MAX_COORDINATE_M:e} m"),
            ));
        }
        Ok(v)
    }

    /// A finite, positive length (sizes).
    pub(crate) fn size(&self, key: &str, raw: &RawLength, wire: bool) -> Result<f64, DesignError> {
        let v = self.metres(key, raw, wire)?;
        const EXPECTED: &str = "a positive length in metres";
        if !v.is_finite() {
            return Err(self.not_finite(key, EXPECTED, shown_length(raw, v)));
        }
        if v <= 0.0 {
            return Err(self.not_positive(key, EXPECTED, shown_length(raw, v)));
        }
        if !(MIN_SIZE_M..=MAX_SIZE_M).contains(&v) {
            return Err(self.out_of_range(
                key,
                shown_length(raw, v),
                range_phrase(MIN_SIZE_M, MAX_SIZE_M, "m"),
            ));
        }
        Ok(v)
    }

    pub(crate) fn required_size(
        &self,
        key: &str,
        raw: &Option<RawLength>,
        hint: &str,
    ) -> Result<f64, DesignError> {
        let raw = raw.as_ref().ok_or_else(|| self.missing(key, hint))?;
        self.size(key, raw, false)
    }

    pub(crate) fn point(
        &self,
        key: &str,
        raw: &[RawLength; 3],
    ) -> Result<Point3<f64>, DesignError> {
        let mut xyz = [0.0; 3];
        for (i, (slot, c)) in xyz.iter_mut().zip(raw).enumerate() {
            *slot = match c {
                // A plain number in range needs no key text (sweeps read points per point).
                RawLength::Number(v) if v.is_finite() && v.abs() <= MAX_COORDINATE_M => *v,
                _ => self.coordinate(&format!("{key}[{i}]"), c)?,
            };
        }
        Ok(Point3::from(xyz))
    }

    pub(crate) fn origin(&self, raw: &Option<[RawLength; 3]>) -> Result<Point3<f64>, DesignError> {
        let raw = raw.as_ref().ok_or_else(|| {
            self.missing(
                "origin",
                "give the centre of the winding's start as origin = [x, y, z] (lengths)",
            )
        })?;
        self.point("origin", raw)
    }

    pub(crate) fn axis(
        &self,
        raw: &Option<[RawNumber; 3]>,
    ) -> Result<Unit<Vector3<f64>>, DesignError> {
        let raw = raw.ok_or_else(|| {
            self.missing(
                "axis",
                "give the winding axis as axis = [x, y, z], e.g. [0.0, 0.0, 1.0]",
            )
        })?;
        let mut v = Vector3::zeros();
        for (i, c) in raw.iter().enumerate() {
            let x = c.as_f64();
            if !x.is_finite() {
                return Err(self.not_finite(&format!("axis[{i}]"), "a finite number", c.shown()));
            }
            v[i] = x;
        }
        // Scale by the largest component before normalising, so that neither 1e-200 nor 1e200
        // components under- or overflow the norm.
        let largest = v.amax();
        if largest == 0.0 {
            return Err(DesignError::ZeroAxis {
                source_name: self.source.to_string(),
                item: self.item.clone(),
                key: "axis".to_string(),
            });
        }
        Ok(Unit::new_normalize(v / largest))
    }
}
