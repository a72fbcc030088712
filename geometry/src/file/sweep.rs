//! Sweep files: axes over numeric keys of a design, the points they make, and the edit of a
//! base design at the TOML level for one point.
//!
//! # Format (TOML)
//! ```toml
//! base = "design.toml"             # design file, relative to the sweep file
//! metrics = ["coupling.secondary.primary", "gap.secondary.primary"]
//! constraints = ["gap.secondary.primary >= 0.005"]
//!
//! [[axis]]
//! key = "winding.primary.origin[2]" # winding.<name>.<key> or electrode.<name>.<key>,
//!                                    # [i] for a vector component
//! from = 0.0                         # with `to` and `steps` (both ends included) ...
//! to = 0.09
//! steps = 10
//! # scale = "log"                  # log spacing (from, to > 0)
//! # values = [0.01, 0.02]          # ... or the values themselves
//! # group = "g"                    # axes of one group are zipped (equal counts)
//!
//! [[axis]]
//! key = "winding.pickup.tilt_deg"    # the axis turned by this angle (degrees) ...
//! about = [0.0, 1.0, 0.0]            # ... about this direction through the origin
//! values = [0.0, 15.0, 30.0]
//!
//! [[axis]]
//! key = "electrode.topload.major_radius" # an electrode's size or place
//! values = [0.05, 0.06]
//!
//! # Instead of a grid: random or Latin-hypercube points inside each axis's from/to.
//! # [sample]
//! # method = "lhs"                 # random | lhs
//! # count = 1000
//! # seed = 7
//! ```
//!
//! A nameless winding or electrode is named as the design parser names it (`winding-2`,
//! `electrode-1`). Names, shapes, `connect` and `tap_from` cannot be swept; a primary's
//! `tap_turns` can (`winding.primary.tap_turns`, turns), and is set even where the base design
//! has no tap (then counted from the default end).
//!
//! Grid points are the Cartesian product of the axes (groups count as one axis), the first
//! axis varying slowest. Values are plain SI numbers (metres, turns, degrees for `tilt_deg`).
//!
//! # Random points
//! The generator is ChaCha8 (D. J. Bernstein, "ChaCha, a variant of Salsa20", 2008, with 8
//! rounds) from the `rand_chacha` crate, seeded with the 32-byte key whose first 8 bytes are
//! the little-endian `seed` and whose other bytes are zero: the same seed gives the same points
//! on every machine. A uniform number in [0, 1) is `(next_u64 >> 11) * 2^-53`.
//! - `random`: point by point, axis by axis, one uniform number each.
//! - `lhs` (Latin hypercube, M. D. McKay, R. J. Beckman, W. J. Conover, Technometrics 21(2),
//!   1979): axis by axis, a Fisher-Yates shuffle of the `count` strata (index j drawn as
//!   `(next_u64 * (i + 1)) >> 64`), then one uniform offset per point inside its stratum.

use crate::error::DesignError;
use rand_chacha::ChaCha8Rng;
use rand_core::{RngCore, SeedableRng};
use toml::{Table, Value};

/// Most points a sweep may have: every point's values are kept in memory and each distinct axis
/// value is checked alone before any work, so start-up and memory grow with it (a million points
/// start in seconds; 50 million took 3 GB).
pub const MAX_POINTS: usize = 1_000_000;

/// The kind of design table a key path names.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Part {
    /// A `[[winding]]` table.
    Winding,
    /// An `[[electrode]]` table.
    Electrode,
}

impl Part {
    /// The word of key paths and of the design file (`winding`, `electrode`).
    pub fn word(self) -> &'static str {
        match self {
            Part::Winding => "winding",
            Part::Electrode => "electrode",
        }
    }
}

/// Which part of the design an axis changes.
#[derive(Debug, Clone, PartialEq)]
pub enum Target {
    /// `<part>.<name>.<key>` or `<part>.<name>.<key>[index]`.
    Field {
        /// Winding or electrode.
        part: Part,
        /// Its name.
        name: String,
        /// Key inside its table.
        key: String,
        /// Component of a vector key.
        index: Option<usize>,
    },
    /// `<part>.<name>.tilt_deg`: the axis turned by the value (degrees) about `about`.
    Tilt {
        /// Winding or electrode.
        part: Part,
        /// Its name.
        name: String,
        /// Direction of the rotation axis (normalised).
        about: [f64; 3],
    },
}

impl Target {
    /// The kind of table it edits.
    pub fn part(&self) -> Part {
        match self {
            Target::Field { part, .. } | Target::Tilt { part, .. } => *part,
        }
    }

    /// The name of the winding or electrode it edits.
    pub fn name(&self) -> &str {
        match self {
            Target::Field { name, .. } | Target::Tilt { name, .. } => name,
        }
    }
}

/// The values of one axis.
#[derive(Debug, Clone, PartialEq)]
pub enum Values {
    /// Explicit values.
    List(Vec<f64>),
    /// `from`, `to`, optional `steps` (needed for a grid), linear or logarithmic.
    Range {
        /// First value.
        from: f64,
        /// Last value.
        to: f64,
        /// Number of values, both ends included (None: a sampled axis).
        steps: Option<usize>,
        /// Logarithmic spacing.
        log: bool,
    },
}

/// One `[[axis]]` table.
#[derive(Debug, Clone, PartialEq)]
pub struct Axis {
    /// The key as written (the column name in the output).
    pub key: String,
    /// What it changes.
    pub target: Target,
    /// Its values.
    pub values: Values,
    /// Zip group.
    pub group: Option<String>,
}

impl Axis {
    /// How many grid values the axis has (None for a range without steps), without computing
    /// them.
    pub fn grid_len(&self) -> Option<usize> {
        match &self.values {
            Values::List(v) => Some(v.len()),
            Values::Range { steps, .. } => *steps,
        }
    }

    /// The grid values of the axis (None for a range without steps).
    pub fn grid_values(&self) -> Option<Vec<f64>> {
        match &self.values {
            Values::List(v) => Some(v.clone()),
            Values::Range {
                from,
                to,
                steps,
                log,
            } => {
                let n = (*steps)?;
                Some((0..n).map(|i| grid_value(*from, *to, i, n, *log)).collect())
            }
        }
    }

    /// Value at the fraction u in [0, 1] of the axis's bounds (sampled axes).
    fn at_fraction(&self, u: f64) -> f64 {
        match self.values {
            Values::Range { from, to, log, .. } => {
                if log {
                    (from.ln() + u * (to.ln() - from.ln())).exp()
                } else {
                    from + u * (to - from)
                }
            }
            Values::List(_) => f64::NAN,
        }
    }
}

/// Random sampling method.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Method {
    /// Independent uniform points.
    Random,
    /// Latin hypercube.
    Lhs,
}

/// `[sample]` table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Sample {
    /// The method.
    pub method: Method,
    /// Number of points.
    pub count: usize,
    /// Seed of the ChaCha8 generator.
    pub seed: u64,
}

/// A validated sweep file.
#[derive(Debug, Clone, PartialEq)]
pub struct Sweep {
    /// Path of the base design, relative to the sweep file.
    pub base: String,
    /// The axes in file order.
    pub axes: Vec<Axis>,
    /// Random sampling instead of a grid.
    pub sample: Option<Sample>,
    /// Metric names, as written.
    pub metrics: Vec<String>,
    /// Constraints, as written.
    pub constraints: Vec<String>,
}

fn invalid(source: &str, key: impl Into<String>, reason: impl Into<String>) -> DesignError {
    DesignError::SweepFile {
        source_name: source.to_string(),
        key: key.into(),
        reason: reason.into(),
    }
}

fn number(v: &Value) -> Option<f64> {
    match v {
        Value::Float(f) => Some(*f),
        Value::Integer(i) => Some(*i as f64),
        _ => None,
    }
}

/// A parsed key path: the kind of table, its name, the key and the component.
pub type KeyPath = (Part, String, String, Option<usize>);

/// Parse a key path `winding.<name>.<key>`, `electrode.<name>.<key>`, with `[i]` for a vector
/// component.
pub fn parse_key(key: &str) -> Result<KeyPath, String> {
    let (part, rest) = if let Some(rest) = key.strip_prefix("winding.") {
        (Part::Winding, rest)
    } else if let Some(rest) = key.strip_prefix("electrode.") {
        (Part::Electrode, rest)
    } else {
        return Err("a key path starts with `winding.` or `electrode.` (e.g. \
                    `winding.primary.origin[2]`)"
            .to_string());
    };
    let word = part.word();
    let (name, field) = rest
        .split_once('.')
        .ok_or_else(|| format!("expected `{word}.<name>.<key>`"))?;
    if !crate::file::raw::is_valid_name(name) {
        return Err(format!("`{name}` is not a {word} name ([A-Za-z0-9_-]+)"));
    }
    let (field, index) = match field.split_once('[') {
        Some((f, idx)) => {
            let idx = idx
                .strip_suffix(']')
                .and_then(|i| i.parse::<usize>().ok())
                .ok_or_else(|| format!("`[{idx}`: a component index is `[0]`, `[1]`, ..."))?;
            (f, Some(idx))
        }
        None => (field, None),
    };
    if field.is_empty() || !field.bytes().all(|b| b.is_ascii_lowercase() || b == b'_') {
        return Err(format!("`{field}` is not a design key"));
    }
    Ok((part, name.to_string(), field.to_string(), index))
}

/// Parse and check the text of a sweep file (`source` labels messages). Names of windings and
/// metrics are checked later, against the base design.
pub fn parse_sweep(text: &str, source: &str) -> Result<Sweep, DesignError> {
    let mut table: Table = text
        .parse()
        .map_err(|e: toml::de::Error| crate::file::raw::syntax_error(&e, text, source))?;
    const KEYS: &[&str] = &["base", "axis", "sample", "metrics", "constraints"];
    if let Some(k) = table.keys().find(|k| !KEYS.contains(&k.as_str())) {
        return Err(invalid(
            source,
            k.clone(),
            format!("unknown key; allowed: {}", KEYS.join(", ")),
        ));
    }
    let base = match table.remove("base") {
        Some(Value::String(s)) if !s.is_empty() => s,
        Some(_) => return Err(invalid(source, "base", "expected a file name (string)")),
        None => {
            return Err(invalid(
                source,
                "base",
                "missing: name the design file to sweep, e.g. base = \"design.toml\"",
            ));
        }
    };
    let strings = |table: &mut Table, key: &str| -> Result<Vec<String>, DesignError> {
        match table.remove(key) {
            None => Ok(Vec::new()),
            Some(Value::Array(a)) => a
                .into_iter()
                .map(|v| match v {
                    Value::String(s) => Ok(s),
                    _ => Err(invalid(source, key, "expected a list of strings")),
                })
                .collect(),
            Some(_) => Err(invalid(source, key, "expected a list of strings")),
        }
    };
    let metrics = strings(&mut table, "metrics")?;
    if metrics.is_empty() {
        return Err(invalid(
            source,
            "metrics",
            "missing or empty: list what to compute, e.g. metrics = [\"coupling.secondary.primary\"]",
        ));
    }
    let constraints = strings(&mut table, "constraints")?;
    let sample = match table.remove("sample") {
        None => None,
        Some(Value::Table(t)) => Some(parse_sample(t, source)?),
        Some(_) => return Err(invalid(source, "sample", "expected a [sample] table")),
    };
    let axes_value = table
        .remove("axis")
        .ok_or_else(|| invalid(source, "axis", "missing: add at least one [[axis]] table"))?;
    let Value::Array(entries) = axes_value else {
        return Err(invalid(
            source,
            "axis",
            "expected [[axis]] tables (double brackets)",
        ));
    };
    if entries.is_empty() {
        return Err(invalid(source, "axis", "add at least one [[axis]] table"));
    }
    let mut axes = Vec::with_capacity(entries.len());
    for (i, entry) in entries.into_iter().enumerate() {
        let label = format!("axis #{}", i + 1);
        let Value::Table(t) = entry else {
            return Err(invalid(source, label, "expected an [[axis]] table"));
        };
        axes.push(parse_axis(t, &label, source, sample.is_some())?);
    }
    for (i, a) in axes.iter().enumerate() {
        if axes[..i].iter().any(|b| b.key == a.key) {
            return Err(invalid(
                source,
                format!("axis #{} key", i + 1),
                format!("`{}` is swept by an earlier axis too", a.key),
            ));
        }
    }
    let sweep = Sweep {
        base,
        axes,
        sample,
        metrics,
        constraints,
    };
    // Group sizes and the point count are checked here, before any work.
    n_points(&sweep, source)?;
    Ok(sweep)
}

fn parse_sample(mut t: Table, source: &str) -> Result<Sample, DesignError> {
    let method = match t.remove("method") {
        Some(Value::String(s)) if s == "random" => Method::Random,
        Some(Value::String(s)) if s == "lhs" => Method::Lhs,
        _ => {
            return Err(invalid(
                source,
                "sample.method",
                "expected \"random\" or \"lhs\"",
            ));
        }
    };
    let count = match t.remove("count") {
        Some(Value::Integer(n)) if n >= 1 && (n as u64) <= MAX_POINTS as u64 => n as usize,
        _ => {
            return Err(invalid(
                source,
                "sample.count",
                format!("expected a whole number from 1 to {MAX_POINTS}"),
            ));
        }
    };
    let seed = match t.remove("seed") {
        Some(Value::Integer(n)) if n >= 0 => n as u64,
        _ => {
            return Err(invalid(
                source,
                "sample.seed",
                "expected a whole number >= 0 (the same seed gives the same points)",
            ));
        }
    };
    if let Some(k) = t.keys().next() {
        return Err(invalid(
            source,
            format!("sample.{k}"),
            "unknown key; allowed: method, count, seed",
        ));
    }
    Ok(Sample {
        method,
        count,
        seed,
    })
}

fn parse_axis(mut t: Table, label: &str, source: &str, sampled: bool) -> Result<Axis, DesignError> {
    let key = match t.remove("key") {
        Some(Value::String(s)) => s,
        _ => {
            return Err(invalid(
                source,
                format!("{label} key"),
                "missing: e.g. key = \"winding.primary.origin[2]\"",
            ));
        }
    };
    let bad_key = |reason: String| invalid(source, format!("{label} key `{key}`"), reason);
    let (part, name, field, index) = parse_key(&key).map_err(bad_key)?;
    let about = t.remove("about");
    let target = if field == "tilt_deg" {
        if index.is_some() {
            return Err(bad_key("tilt_deg has no components".into()));
        }
        let v = match &about {
            Some(Value::Array(a)) if a.len() == 3 => {
                let v: Vec<f64> = a.iter().filter_map(number).collect();
                (v.len() == 3).then_some(v)
            }
            _ => None,
        };
        let Some(v) = v else {
            return Err(invalid(
                source,
                format!("{label} about"),
                "tilt_deg needs about = [x, y, z], the direction to turn the axis about",
            ));
        };
        let n = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
        if !(n > 0.0 && n.is_finite()) {
            return Err(invalid(
                source,
                format!("{label} about"),
                "must be a nonzero finite direction",
            ));
        }
        Target::Tilt {
            part,
            name,
            about: [v[0] / n, v[1] / n, v[2] / n],
        }
    } else {
        if about.is_some() {
            return Err(invalid(
                source,
                format!("{label} about"),
                "only a tilt_deg axis takes `about`",
            ));
        }
        if matches!(field.as_str(), "name" | "shape" | "connect" | "tap_from") {
            return Err(bad_key(format!("`{field}` is not a number to sweep")));
        }
        Target::Field {
            part,
            name,
            key: field,
            index,
        }
    };
    let group = match t.remove("group") {
        None => None,
        Some(Value::String(s)) if !s.is_empty() => Some(s),
        Some(_) => {
            return Err(invalid(
                source,
                format!("{label} group"),
                "expected a non-empty string",
            ));
        }
    };
    // Axis values of a length key may carry a unit ("95 mm"), read by the one unit parser;
    // counts, directions and angles are plain numbers.
    let takes_length = match &target {
        Target::Field { key, .. } => !matches!(
            key.as_str(),
            "turns" | "tap_turns" | "segments_per_turn" | "axis"
        ),
        Target::Tilt { .. } => false,
    };
    let wire = matches!(&target, Target::Field { key, .. } if key == "wire_diameter");
    let number = |v: &Value| -> Option<f64> {
        match v {
            Value::String(s) if takes_length => if wire {
                crate::file::units::parse_wire_diameter_m(s)
            } else {
                crate::file::units::parse_length_m(s)
            }
            .ok(),
            _ => number(v),
        }
    };
    let values_v = t.remove("values");
    let from = t.remove("from");
    let to = t.remove("to");
    let steps = t.remove("steps");
    let scale = t.remove("scale");
    if let Some(k) = t.keys().next() {
        return Err(invalid(
            source,
            format!("{label} {k}"),
            "unknown key; allowed: key, values, from, to, steps, scale, group, about",
        ));
    }
    let values = if let Some(v) = values_v {
        if from.is_some() || to.is_some() || steps.is_some() || scale.is_some() {
            return Err(invalid(
                source,
                format!("{label} values"),
                "give either values = [...] or from/to/steps, not both",
            ));
        }
        let Value::Array(a) = v else {
            return Err(invalid(
                source,
                format!("{label} values"),
                "expected a list of numbers",
            ));
        };
        if a.is_empty() {
            return Err(invalid(
                source,
                format!("{label} values"),
                "empty axis: give at least one value",
            ));
        }
        let mut out = Vec::with_capacity(a.len());
        for (i, x) in a.iter().enumerate() {
            match number(x) {
                Some(f) if f.is_finite() => out.push(f),
                _ => {
                    return Err(invalid(
                        source,
                        format!("{label} values[{i}]"),
                        "expected a finite number (SI units), or for a length a string with a \
                         unit, e.g. \"95 mm\"",
                    ));
                }
            }
        }
        if sampled {
            return Err(invalid(
                source,
                format!("{label} values"),
                "with [sample], every axis gives bounds from/to, not values",
            ));
        }
        Values::List(out)
    } else {
        let get = |v: Option<Value>, k: &str| -> Result<f64, DesignError> {
            match v.as_ref().and_then(number) {
                Some(f) if f.is_finite() => Ok(f),
                _ => Err(invalid(
                    source,
                    format!("{label} {k}"),
                    "missing or not a finite number (SI units, or for a length a string with a \
                     unit, e.g. \"95 mm\"): give values = [...] or from, to and steps",
                )),
            }
        };
        let from = get(from, "from")?;
        let to = get(to, "to")?;
        let steps = match steps {
            None if sampled => None,
            None => {
                return Err(invalid(
                    source,
                    format!("{label} steps"),
                    "missing: the number of values from `from` to `to`, both included",
                ));
            }
            Some(Value::Integer(n)) if n >= 1 && (n as u64) <= MAX_POINTS as u64 => {
                Some(n as usize)
            }
            Some(Value::Integer(n)) if n < 1 => {
                return Err(invalid(
                    source,
                    format!("{label} steps"),
                    "empty axis: steps must be at least 1",
                ));
            }
            Some(_) => {
                return Err(invalid(
                    source,
                    format!("{label} steps"),
                    format!("expected a whole number from 1 to {MAX_POINTS}"),
                ));
            }
        };
        if sampled && steps.is_some() {
            return Err(invalid(
                source,
                format!("{label} steps"),
                "with [sample], an axis gives only its bounds from/to",
            ));
        }
        let log = match scale {
            None => false,
            Some(Value::String(s)) if s == "linear" => false,
            Some(Value::String(s)) if s == "log" => true,
            Some(_) => {
                return Err(invalid(
                    source,
                    format!("{label} scale"),
                    "expected \"linear\" or \"log\"",
                ));
            }
        };
        if log && !(from > 0.0 && to > 0.0) {
            return Err(invalid(
                source,
                format!("{label} scale"),
                "a log scale needs from > 0 and to > 0",
            ));
        }
        Values::Range {
            from,
            to,
            steps,
            log,
        }
    };
    if group.is_some() && sampled {
        return Err(invalid(
            source,
            format!("{label} group"),
            "groups zip grid axes; sampled axes are independent already",
        ));
    }
    Ok(Axis {
        key,
        target,
        values,
        group,
    })
}

/// Factors of the grid: groups of axis indices varying together, in order of first
/// appearance, with their common count.
fn factors(sweep: &Sweep, source: &str) -> Result<Vec<(Vec<usize>, usize)>, DesignError> {
    let mut out: Vec<(Option<&str>, Vec<usize>, usize)> = Vec::new();
    for (i, a) in sweep.axes.iter().enumerate() {
        let n = a.grid_len().unwrap_or(0);
        match a.group.as_deref() {
            Some(g) => {
                if let Some(f) = out.iter_mut().find(|f| f.0 == Some(g)) {
                    if f.2 != n {
                        let first = &sweep.axes[f.1[0]];
                        return Err(invalid(
                            source,
                            format!("axis #{} group", i + 1),
                            format!(
                                "group `{g}` zips axes of equal length, but `{}` has {n} values \
                                 and `{}` has {}",
                                a.key, first.key, f.2
                            ),
                        ));
                    }
                    f.1.push(i);
                } else {
                    out.push((Some(g), vec![i], n));
                }
            }
            None => out.push((None, vec![i], n)),
        }
    }
    Ok(out.into_iter().map(|(_, ix, n)| (ix, n)).collect())
}

/// Number of points of a sweep.
pub fn n_points(sweep: &Sweep, source: &str) -> Result<usize, DesignError> {
    if let Some(s) = sweep.sample {
        return Ok(s.count);
    }
    let mut total: usize = 1;
    for (_, n) in factors(sweep, source)? {
        total = total
            .checked_mul(n)
            .filter(|&t| t <= MAX_POINTS)
            .ok_or_else(|| {
                invalid(
                    source,
                    "axis",
                    format!("the grid has more than {MAX_POINTS} points"),
                )
            })?;
    }
    Ok(total)
}

/// Value `i` of `n` evenly spaced from `from` to `to` (both included; evenly in the logarithm
/// when `log`), snapped by [`snap_to_short_decimal`]: the one rule of every grid a user gives
/// by its ends and a count (sweep axes, the field map's planes and boxes). The ends are the
/// values given, bit for bit; `n = 1` gives `from`.
pub fn grid_value(from: f64, to: f64, i: usize, n: usize, log: bool) -> f64 {
    if n <= 1 || i == 0 {
        return from;
    }
    if i >= n - 1 {
        return to;
    }
    let t = i as f64 / (n - 1) as f64;
    snap_to_short_decimal(if log {
        (from.ln() + t * (to.ln() - from.ln())).exp()
    } else {
        from + t * (to - from)
    })
}

/// A grid value snapped to the decimal a person would have typed: the shortest decimal of at
/// most 15 significant digits that lies within 4 units in the last place of `v` (0.095, not
/// 0.09499999999999999, for the fifth of 0.08..0.1 in 5 steps). The snapped value is the one
/// computed and printed; a value with no such decimal is kept as it is.
pub fn snap_to_short_decimal(v: f64) -> f64 {
    if v == 0.0 || !v.is_finite() {
        return v;
    }
    let ulp = (f64::from_bits(v.abs().to_bits() + 1) - v.abs()).abs();
    // v rounded to `digits` significant digits, when that lies within 4 ulp of v.
    let near = |digits: usize| {
        let d = digits - 1;
        format!("{v:.d$e}")
            .parse::<f64>()
            .ok()
            .filter(|c| (c - v).abs() <= 4.0 * ulp)
    };
    // Rounding to more digits never moves further from v, so the digits that work form a
    // range up to 15: bisect for its start (4 roundings, not up to 15, per value).
    let (mut lo, mut hi) = (1usize, 15usize);
    let Some(mut best) = near(hi) else {
        return v;
    };
    while lo < hi {
        let mid = (lo + hi) / 2;
        match near(mid) {
            Some(c) => {
                best = c;
                hi = mid;
            }
            None => lo = mid + 1,
        }
    }
    best
}

/// The values of every axis at every point: `points[i][j]` is axis j's value at point i.
pub fn points(sweep: &Sweep, source: &str) -> Result<Vec<Vec<f64>>, DesignError> {
    let n = n_points(sweep, source)?;
    let n_axes = sweep.axes.len();
    if let Some(s) = sweep.sample {
        let mut seed = [0u8; 32];
        seed[..8].copy_from_slice(&s.seed.to_le_bytes());
        let mut rng = ChaCha8Rng::from_seed(seed);
        let mut uniform = move || (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64);
        let mut pts = vec![vec![0.0; n_axes]; n];
        match s.method {
            Method::Random => {
                for p in pts.iter_mut() {
                    for (j, a) in sweep.axes.iter().enumerate() {
                        p[j] = a.at_fraction(uniform());
                    }
                }
            }
            Method::Lhs => {
                let mut seed2 = [0u8; 32];
                seed2[..8].copy_from_slice(&s.seed.to_le_bytes());
                let mut rng = ChaCha8Rng::from_seed(seed2);
                for (j, a) in sweep.axes.iter().enumerate() {
                    let mut strata: Vec<usize> = (0..n).collect();
                    for i in (1..n).rev() {
                        let k = ((u128::from(rng.next_u64()) * (i as u128 + 1)) >> 64) as usize;
                        strata.swap(i, k);
                    }
                    for (p, &stratum) in pts.iter_mut().zip(&strata) {
                        let u = (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64);
                        p[j] = a.at_fraction((stratum as f64 + u) / n as f64);
                    }
                }
            }
        }
        return Ok(pts);
    }
    let facs = factors(sweep, source)?;
    let grids: Vec<Vec<f64>> = sweep
        .axes
        .iter()
        .map(|a| a.grid_values().unwrap_or_default())
        .collect();
    let mut pts = Vec::with_capacity(n);
    for i in 0..n {
        let mut p = vec![0.0; n_axes];
        // Mixed-radix digits of i, the last factor fastest.
        let mut rest = i;
        for (axes, count) in facs.iter().rev() {
            let digit = rest % count;
            rest /= count;
            for &j in axes {
                p[j] = grids[j][digit];
            }
        }
        pts.push(p);
    }
    Ok(pts)
}

/// Set the axes' values in a copy of the base design's table. The message of an error names the
/// key and says why (no such winding, no such key, not a vector, ...). (The sweep command edits
/// one item's table at a time with [`apply_to_item`]; this whole-design form serves the tests.)
#[cfg(test)]
fn apply(base: &Table, axes: &[Axis], values: &[f64]) -> Result<Table, String> {
    let mut t = base.clone();
    for (axis, &v) in axes.iter().zip(values) {
        let target = &axis.target;
        let (_, item) = item_table_mut(&mut t, target.part(), target.name())
            .map_err(|e| format!("{}: {e}", axis.key))?;
        apply_to_item(item, target, v).map_err(|e| format!("{}: {e}", axis.key))?;
    }
    Ok(t)
}

/// Name of the `number`-th (from 1) table of its kind when it has no `name` key, as the design
/// parser names it.
fn default_name(part: Part, number: usize) -> String {
    format!("{}-{number}", part.word())
}

fn item_tables(t: &Table, part: Part) -> &[Value] {
    match t.get(part.word()) {
        Some(Value::Array(items)) => items,
        _ => &[],
    }
}

fn name_of(item: &Value, part: Part, index: usize) -> String {
    match item.get("name").and_then(|n| n.as_str()) {
        Some(n) => n.to_string(),
        None => default_name(part, index + 1),
    }
}

fn no_such_item(t: &Table, part: Part, name: &str) -> String {
    let word = part.word();
    let items = item_tables(t, part);
    if items.is_empty() {
        return format!("the base design has no [[{word}]] tables");
    }
    let names: Vec<String> = items
        .iter()
        .enumerate()
        .map(|(i, w)| name_of(w, part, i))
        .collect();
    format!(
        "the base design has no {word} named `{name}` ({word}s: {})",
        names.join(", ")
    )
}

/// The index (file order) and the table of the winding or electrode named `name` in a design
/// table.
pub fn item_table<'t>(t: &'t Table, part: Part, name: &str) -> Result<(usize, &'t Table), String> {
    item_tables(t, part)
        .iter()
        .enumerate()
        .find(|(i, w)| name_of(w, part, *i) == name)
        .and_then(|(i, w)| w.as_table().map(|w| (i, w)))
        .ok_or_else(|| no_such_item(t, part, name))
}

#[cfg(test)]
fn item_table_mut<'t>(
    t: &'t mut Table,
    part: Part,
    name: &str,
) -> Result<(usize, &'t mut Table), String> {
    let (index, _) = item_table(t, part, name)?;
    match t.get_mut(part.word()) {
        Some(Value::Array(items)) => items[index]
            .as_table_mut()
            .map(|w| (index, w))
            .ok_or_else(|| format!("{} #{} is not a table", part.word(), index + 1)),
        _ => Err(format!("the base design has no [[{}]] tables", part.word())),
    }
}

/// Set one axis value in the table of the winding or electrode the axis names (`item`). The
/// message of an error says why (no such key, not a vector, ...).
pub fn apply_to_item(item: &mut Table, target: &Target, v: f64) -> Result<(), String> {
    match target {
        Target::Field {
            part,
            name,
            key,
            index,
        } => match index {
            None => {
                let was_integer = matches!(item.get(key), Some(Value::Integer(_)));
                let new = if was_integer && v.fract() == 0.0 && v.abs() < 9e15 {
                    Value::Integer(v as i64)
                } else {
                    Value::Float(v)
                };
                if matches!(item.get(key), Some(Value::Array(_))) {
                    return Err(format!("`{key}` is a vector: name a component, `{key}[0]`"));
                }
                item.insert(key.clone(), new);
            }
            Some(i) => {
                let Some(Value::Array(a)) = item.get_mut(key) else {
                    return Err(format!(
                        "{} `{name}` has no vector key `{key}` in the base design",
                        part.word()
                    ));
                };
                let len = a.len();
                let slot = a.get_mut(*i).ok_or_else(|| {
                    format!("component [{i}] is out of range (`{key}` has {len})")
                })?;
                *slot = Value::Float(v);
            }
        },
        Target::Tilt { part, name, about } => {
            let axis_v: Option<Vec<f64>> = match item.get("axis") {
                Some(Value::Array(a)) if a.len() == 3 => a.iter().map(number).collect(),
                _ => None,
            };
            let Some(x) = axis_v else {
                return Err(format!(
                    "{} `{name}` has no axis = [x, y, z] in the base design to tilt",
                    part.word()
                ));
            };
            item.insert("axis".into(), Value::Array(rotated(&x, about, v)));
        }
    }
    Ok(())
}

/// Rodrigues' rotation of x by `angle_deg` about the unit vector k:
/// x cos + (k x x) sin + k (k . x)(1 - cos).
fn rotated(x: &[f64], k: &[f64; 3], angle_deg: f64) -> Vec<Value> {
    let (s, c) = angle_deg.to_radians().sin_cos();
    let kx = [
        k[1] * x[2] - k[2] * x[1],
        k[2] * x[0] - k[0] * x[2],
        k[0] * x[1] - k[1] * x[0],
    ];
    let kd = k[0] * x[0] + k[1] * x[1] + k[2] * x[2];
    (0..3)
        .map(|i| Value::Float(x[i] * c + kx[i] * s + k[i] * kd * (1.0 - c)))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    const SWEEP: &str = r#"
base = "d.toml"
metrics = ["coupling.a.b"]
[[axis]]
key = "winding.a.origin[2]"
from = 0.0
to = 1.0
steps = 3
[[axis]]
key = "winding.b.radius"
values = [0.1, 0.2]
group = "g"
[[axis]]
key = "winding.b.turns"
values = [1, 2]
group = "g"
"#;

    #[test]
    fn grid_values_are_snapped_to_short_decimals() {
        // Linear interpolation from 0.05 to 0.1 in 11 steps gives 0.05500000000000001 and
        // 0.08499999999999999 in binary floating point; the grid holds the decimals the user
        // meant, and values that are not near a short decimal are kept.
        let text = SWEEP.replace(
            "from = 0.0\nto = 1.0\nsteps = 3",
            "from = 0.05\nto = 0.1\nsteps = 11",
        );
        let s = parse_sweep(&text, "s.toml").unwrap();
        assert_eq!(0.05 + 0.7 * (0.1 - 0.05), 0.084_999_999_999_999_99);
        let expected = [
            0.05, 0.055, 0.06, 0.065, 0.07, 0.075, 0.08, 0.085, 0.09, 0.095, 0.1,
        ];
        assert_eq!(s.axes[0].grid_values().unwrap(), expected);
        assert_eq!(snap_to_short_decimal(1.0 / 3.0), 1.0 / 3.0);
        assert_eq!(snap_to_short_decimal(-0.30000000000000004), -0.3);
        assert_eq!(snap_to_short_decimal(1e-300), 1e-300);
    }

    #[test]
    fn snapping_by_bisection_agrees_with_trying_every_digit_count() {
        // The brute-force reference: the shortest of 1..=15 significant digits tried in turn.
        fn by_every_count(v: f64) -> f64 {
            let ulp = (f64::from_bits(v.abs().to_bits() + 1) - v.abs()).abs();
            (0..15usize)
                .filter_map(|d| format!("{v:.d$e}").parse::<f64>().ok())
                .find(|c| (c - v).abs() <= 4.0 * ulp)
                .unwrap_or(v)
        }
        // Grid values of many ranges and step counts (short decimals, near misses, values no
        // short decimal is near), and random bit patterns over the normal range.
        let mut values = Vec::new();
        for (from, to) in [
            (0.05, 0.1),
            (0.08, 0.2125),
            (-1.0, 3.0),
            (1e-9, 2e-6),
            (3e5, 1.7e6),
        ] {
            for n in [3_usize, 7, 11, 101, 999] {
                values.extend((0..n).map(|i| from + i as f64 / (n - 1) as f64 * (to - from)));
            }
        }
        let mut state = 0x005e_ed0f_5aa9_u64;
        for _ in 0..20_000 {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            let v = f64::from_bits(state);
            if v.is_normal() {
                values.push(v);
            }
        }
        for v in values {
            assert_eq!(
                snap_to_short_decimal(v).to_bits(),
                by_every_count(v).to_bits(),
                "{v:e}"
            );
        }
    }

    #[test]
    fn axis_values_of_lengths_take_units() {
        // A length key reads "95 mm" through the one unit parser; a count does not.
        let text = SWEEP
            .replace("values = [0.1, 0.2]", "values = [\"100 mm\", \"0.2 m\"]")
            .replace("from = 0.0\nto = 1.0", "from = \"0 cm\"\nto = \"1 m\"");
        let s = parse_sweep(&text, "s.toml").unwrap();
        assert_eq!(s.axes[1].grid_values().unwrap(), vec![0.1, 0.2]);
        assert_eq!(s.axes[0].grid_values().unwrap(), vec![0.0, 0.5, 1.0]);
        let turns = SWEEP.replace("values = [1, 2]", "values = [\"1 m\", 2]");
        assert!(parse_sweep(&turns, "s.toml").is_err());
    }

    #[test]
    fn grid_is_a_product_with_the_first_axis_slowest_and_groups_zipped() {
        let s = parse_sweep(SWEEP, "s.toml").unwrap();
        let p = points(&s, "s.toml").unwrap();
        assert_eq!(
            p,
            vec![
                vec![0.0, 0.1, 1.0],
                vec![0.0, 0.2, 2.0],
                vec![0.5, 0.1, 1.0],
                vec![0.5, 0.2, 2.0],
                vec![1.0, 0.1, 1.0],
                vec![1.0, 0.2, 2.0],
            ]
        );
    }

    #[test]
    fn unequal_groups_are_refused() {
        let text = SWEEP.replace("values = [1, 2]", "values = [1, 2, 3]");
        let e = parse_sweep(&text, "s.toml").unwrap_err().to_string();
        assert!(e.contains("group `g`") && e.contains("3 values"), "{e}");
    }

    #[test]
    fn latin_hypercube_puts_one_point_in_every_stratum() {
        // McKay, Beckman & Conover 1979: each axis's n strata hold exactly one point each.
        let text = r#"
base = "d.toml"
metrics = ["coupling.a.b"]
[sample]
method = "lhs"
count = 50
seed = 3
[[axis]]
key = "winding.a.origin[2]"
from = 0.0
to = 5.0
[[axis]]
key = "winding.b.radius"
from = 0.01
to = 1.0
scale = "log"
"#;
        let s = parse_sweep(text, "s.toml").unwrap();
        let p = points(&s, "s.toml").unwrap();
        let mut strata: Vec<usize> = p.iter().map(|x| (x[0] / 5.0 * 50.0) as usize).collect();
        strata.sort_unstable();
        assert_eq!(strata, (0..50).collect::<Vec<_>>());
        let mut log_strata: Vec<usize> = p
            .iter()
            .map(|x| ((x[1] / 0.01).ln() / 100f64.ln() * 50.0) as usize)
            .collect();
        log_strata.sort_unstable();
        assert_eq!(log_strata, (0..50).collect::<Vec<_>>());
        // Same seed, same points; another seed, other points.
        assert_eq!(points(&s, "s.toml").unwrap(), p);
        let other = parse_sweep(&text.replace("seed = 3", "seed = 4"), "s.toml").unwrap();
        assert_ne!(points(&other, "s.toml").unwrap(), p);
    }

    #[test]
    fn tilt_turns_the_axis_about_the_given_direction() {
        let base: Table = "[[winding]]\nname = \"a\"\naxis = [0.0, 0.0, 1.0]\n"
            .parse()
            .unwrap();
        let axis = Axis {
            key: "winding.a.tilt_deg".into(),
            target: Target::Tilt {
                part: Part::Winding,
                name: "a".into(),
                about: [0.0, 1.0, 0.0],
            },
            values: Values::List(vec![90.0]),
            group: None,
        };
        let t = apply(&base, &[axis], &[90.0]).unwrap();
        let a = t["winding"][0]["axis"].as_array().unwrap();
        // A right-handed quarter turn about +y takes +z to +x.
        assert!((a[0].as_float().unwrap() - 1.0).abs() < 1e-15);
        assert!(a[2].as_float().unwrap().abs() < 1e-15);
    }

    #[test]
    fn tap_turns_is_swept_and_tap_from_is_not() {
        let text = SWEEP.replace("winding.a.origin[2]", "winding.a.tap_turns");
        let s = parse_sweep(&text, "s.toml").unwrap();
        let base: Table = "[[winding]]\nname = \"a\"\ntap_turns = 3\n"
            .parse()
            .unwrap();
        let t = apply(&base, &s.axes[..1], &[2.5]).unwrap();
        assert_eq!(t["winding"][0]["tap_turns"].as_float(), Some(2.5));
        let text = SWEEP.replace("winding.a.origin[2]", "winding.a.tap_from");
        let e = parse_sweep(&text, "s.toml").unwrap_err().to_string();
        assert!(
            e.contains("tap_from") && e.contains("not a number to sweep"),
            "{e}"
        );
    }

    #[test]
    fn bad_key_paths_are_named() {
        for (key, want) in [
            ("primary.radius", "starts with `winding.` or `electrode.`"),
            ("electrode.top", "electrode.<name>.<key>"),
            ("winding.primary", "winding.<name>.<key>"),
            ("winding.primary.origin[x]", "component index"),
            ("winding.pri mary.radius", "not a winding name"),
        ] {
            let text = SWEEP.replace("winding.a.origin[2]", key);
            let e = parse_sweep(&text, "s.toml").unwrap_err().to_string();
            assert!(e.contains("axis #1 key") && e.contains(want), "{key}: {e}");
        }
    }
}
