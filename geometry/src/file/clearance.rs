//! Clearance settings of a design (`[clearance]`): the thresholds that `coilfield clearance`
//! and the contour lines of `coilfield map` use, and where clearance looks.
//!
//! # Design-file keys (`[clearance]`, every key optional)
//! ```toml
//! [clearance]
//! defaults = ["breakdown", "long_gap_gradient", "icnirp_public", "icnirp_occupational"]
//! long_gap_gradient = "300 kV/m"   # E: V/m (number) or a string with V/m, kV/m, MV/m, V/cm, kV/cm
//! max_distance = "30 m"            # length, at least 0.01 m: farthest distance searched
//! heights = ["20 cm", 0.45]        # lengths >= 0 along the secondary's axis from its base
//! distances = [1.0, 2.0, 3.0]      # lengths >= 0 from the axis at the top electrode's height
//!
//! [[clearance.threshold]]
//! name = "fence"                   # [A-Za-z0-9_-]+, unique
//! quantity = "B"                   # E | B
//! limit = "5 uT"                   # E as above; B: T (number) or T, mT, uT, nT, or A/m (B = mu0 H)
//! basis = "rms"                    # rms (compared with peak / sqrt 2) | peak
//! source = "site rule 12 (2024)"   # where the value comes from (required)
//! ```
//! `defaults` picks the built-in threshold sets (all four when absent; `[]` for none):
//! `breakdown` (air breakdown in a uniform field), `long_gap_gradient` (the mean gradient of
//! long gaps, `long_gap_gradient`), `icnirp_public` and `icnirp_occupational` (ICNIRP 2010 and
//! 2020 reference levels for that population, where the drive frequency is in their range).
//! A threshold with the name of a built-in one replaces it. `heights` adds horizontal rays to
//! those at the secondary's base, middle and top and the top electrode's centre.

use crate::error::DesignError;
use crate::file::raw::{Ctx, RawLength, is_valid_name, type_phrase};
use crate::file::units::{Quantity, parse_quantity};
use crate::model::clearance::{
    ALL_SETS, ClearanceSettings, DEFAULT_SET_NAMES, DefaultSet, FieldQuantity, LimitBasis,
    MIN_MAX_DISTANCE_M, ThresholdSpec,
};
use toml::{Table, Value};

const KEYS: &[&str] = &[
    "defaults",
    "long_gap_gradient",
    "max_distance",
    "heights",
    "distances",
    "threshold",
];

const THRESHOLD_KEYS: &[&str] = &["name", "quantity", "limit", "basis", "source"];

fn bad(ctx: &Ctx<'_>, key: &str, reason: String) -> DesignError {
    DesignError::BadSetting {
        source_name: ctx.source.to_string(),
        item: ctx.item.clone(),
        key: key.to_string(),
        reason,
    }
}

fn wrong(ctx: &Ctx<'_>, key: &str, reason: String) -> DesignError {
    DesignError::WrongType {
        source_name: ctx.source.to_string(),
        item: ctx.item.clone(),
        key: key.to_string(),
        reason,
    }
}

/// A field limit as written (a number in SI, or a string with a unit), in V/m or T; finite
/// and positive.
fn field_value(
    ctx: &Ctx<'_>,
    key: &str,
    value: &Value,
    quantity: FieldQuantity,
) -> Result<f64, DesignError> {
    let q = match quantity {
        FieldQuantity::E => Quantity::ElectricField,
        FieldQuantity::B => Quantity::FluxDensity,
    };
    let (v, shown) = match value {
        Value::Integer(n) => (*n as f64, n.to_string()),
        Value::Float(x) => (*x, x.to_string()),
        Value::String(text) => (
            parse_quantity(text, q).map_err(|reason| bad(ctx, key, reason))?,
            format!("\"{text}\""),
        ),
        other => {
            return Err(wrong(
                ctx,
                key,
                format!(
                    "expected a number or a string with a unit ({}), got {}",
                    q.allowed_units(),
                    type_phrase(other)
                ),
            ));
        }
    };
    let expected = match quantity {
        FieldQuantity::E => "a positive field strength (V/m)",
        FieldQuantity::B => "a positive flux density (T)",
    };
    if !v.is_finite() {
        return Err(ctx.not_finite(key, expected, shown));
    }
    if v <= 0.0 {
        return Err(ctx.not_positive(key, expected, shown));
    }
    Ok(v)
}

/// A length >= 0 (m), from a number or a string with a unit.
fn non_negative_length(ctx: &Ctx<'_>, key: &str, value: &Value) -> Result<f64, DesignError> {
    let raw: RawLength = value.clone().try_into().map_err(|_| {
        wrong(
            ctx,
            key,
            format!(
                "expected a length (metres, or a string such as \"2 m\"), got {}",
                type_phrase(value)
            ),
        )
    })?;
    let v = ctx.coordinate(key, &raw)?;
    if v < 0.0 {
        return Err(bad(
            ctx,
            key,
            format!("{v} m is negative; give a length >= 0"),
        ));
    }
    Ok(v)
}

/// A list of lengths >= 0.
fn lengths(ctx: &Ctx<'_>, key: &str, value: &Value) -> Result<Vec<f64>, DesignError> {
    let Value::Array(items) = value else {
        return Err(wrong(
            ctx,
            key,
            format!("expected a list of lengths, got {}", type_phrase(value)),
        ));
    };
    items
        .iter()
        .enumerate()
        .map(|(i, v)| non_negative_length(ctx, &format!("{key}[{i}]"), v))
        .collect()
}

fn string<'v>(ctx: &Ctx<'_>, key: &str, value: &'v Value) -> Result<&'v str, DesignError> {
    match value {
        Value::String(s) => Ok(s),
        other => Err(wrong(
            ctx,
            key,
            format!("expected a string, got {}", type_phrase(other)),
        )),
    }
}

/// Parse the `[clearance]` table.
pub(crate) fn parse_clearance(
    value: Value,
    source: &str,
) -> Result<ClearanceSettings, DesignError> {
    let ctx = Ctx {
        source,
        item: "clearance".to_string(),
    };
    let Value::Table(table) = value else {
        return Err(DesignError::WrongType {
            source_name: source.to_string(),
            item: "top level".to_string(),
            key: "clearance".to_string(),
            reason: format!("expected a [clearance] table, got {}", type_phrase(&value)),
        });
    };
    let mut out = ClearanceSettings::default();
    for (key, value) in &table {
        match key.as_str() {
            "defaults" => out.defaults = default_sets(&ctx, value)?,
            "long_gap_gradient" => {
                out.long_gap_gradient_v_per_m =
                    Some(field_value(&ctx, key, value, FieldQuantity::E)?)
            }
            "max_distance" => {
                let d = non_negative_length(&ctx, key, value)?;
                if d < MIN_MAX_DISTANCE_M {
                    return Err(bad(
                        &ctx,
                        key,
                        format!("{d} m is too short; give at least {MIN_MAX_DISTANCE_M} m"),
                    ));
                }
                out.max_distance_m = Some(d);
            }
            "heights" => out.heights_m = lengths(&ctx, key, value)?,
            "distances" => out.distances_m = lengths(&ctx, key, value)?,
            "threshold" => out.thresholds = thresholds(source, value)?,
            _ => {
                return Err(DesignError::UnknownKey {
                    source_name: source.to_string(),
                    item: "clearance".to_string(),
                    key: key.clone(),
                    shape: "[clearance] table".to_string(),
                    allowed: KEYS.join(", "),
                });
            }
        }
    }
    Ok(out)
}

fn default_sets(ctx: &Ctx<'_>, value: &Value) -> Result<Vec<DefaultSet>, DesignError> {
    let Value::Array(items) = value else {
        return Err(wrong(
            ctx,
            "defaults",
            format!(
                "expected a list of set names ({}), got {}",
                DEFAULT_SET_NAMES.join(", "),
                type_phrase(value)
            ),
        ));
    };
    let mut sets = Vec::new();
    for (i, v) in items.iter().enumerate() {
        let key = format!("defaults[{i}]");
        let name = string(ctx, &key, v)?;
        let k = DEFAULT_SET_NAMES
            .iter()
            .position(|n| *n == name)
            .ok_or_else(|| ctx.unknown_value(&key, name, DEFAULT_SET_NAMES))?;
        if !sets.contains(&ALL_SETS[k]) {
            sets.push(ALL_SETS[k]);
        }
    }
    Ok(sets)
}

fn thresholds(source: &str, value: &Value) -> Result<Vec<ThresholdSpec>, DesignError> {
    let Value::Array(items) = value else {
        return Err(DesignError::WrongType {
            source_name: source.to_string(),
            item: "clearance".to_string(),
            key: "threshold".to_string(),
            reason: format!(
                "expected [[clearance.threshold]] tables (double brackets), got {}",
                type_phrase(value)
            ),
        });
    };
    let mut out: Vec<ThresholdSpec> = Vec::new();
    for (idx, v) in items.iter().enumerate() {
        let number = idx + 1;
        let Value::Table(t) = v else {
            return Err(DesignError::WrongType {
                source_name: source.to_string(),
                item: format!("clearance threshold #{number}"),
                key: "threshold".to_string(),
                reason: format!("expected a table, got {}", type_phrase(v)),
            });
        };
        let spec = threshold(t, number, source)?;
        if let Some(j) = out.iter().position(|o| o.name == spec.name) {
            return Err(DesignError::DuplicateName {
                source_name: source.to_string(),
                item: format!("clearance threshold #{number}"),
                name: spec.name,
                first: format!("clearance threshold #{}", j + 1),
            });
        }
        out.push(spec);
    }
    Ok(out)
}

fn threshold(t: &Table, number: usize, source: &str) -> Result<ThresholdSpec, DesignError> {
    let mut ctx = Ctx {
        source,
        item: format!("clearance threshold #{number}"),
    };
    if let Some(key) = t.keys().find(|k| !THRESHOLD_KEYS.contains(&k.as_str())) {
        return Err(DesignError::UnknownKey {
            source_name: source.to_string(),
            item: ctx.item,
            key: key.clone(),
            shape: "clearance threshold".to_string(),
            allowed: THRESHOLD_KEYS.join(", "),
        });
    }
    let get =
        |ctx: &Ctx<'_>, key: &str, hint: &str| t.get(key).ok_or_else(|| ctx.missing(key, hint));
    let name = string(&ctx, "name", get(&ctx, "name", "give name = \"fence\"")?)?.to_string();
    if !is_valid_name(&name) {
        return Err(DesignError::BadName {
            source_name: source.to_string(),
            item: ctx.item,
            name,
        });
    }
    ctx.item = format!("clearance threshold '{name}'");
    let q = string(
        &ctx,
        "quantity",
        get(&ctx, "quantity", "give quantity = \"E\" or \"B\"")?,
    )?;
    let quantity = match q {
        "E" => FieldQuantity::E,
        "B" => FieldQuantity::B,
        other => return Err(ctx.unknown_value("quantity", other, &["E", "B"])),
    };
    let limit_si = field_value(
        &ctx,
        "limit",
        get(
            &ctx,
            "limit",
            "give the limit with its unit, e.g. limit = \"27 uT\"",
        )?,
        quantity,
    )?;
    let b = string(
        &ctx,
        "basis",
        get(
            &ctx,
            "basis",
            "give basis = \"rms\" (exposure levels) or \"peak\"",
        )?,
    )?;
    let basis = match b {
        "rms" => LimitBasis::Rms,
        "peak" => LimitBasis::Peak,
        other => return Err(ctx.unknown_value("basis", other, &["rms", "peak"])),
    };
    let source_text = string(
        &ctx,
        "source",
        get(
            &ctx,
            "source",
            "say where the value comes from (author, title, year, table), or \"common \
             practice, no source\"",
        )?,
    )?
    .trim()
    .to_string();
    if source_text.is_empty() {
        return Err(bad(
            &ctx,
            "source",
            "is empty; say where the value comes from".to_string(),
        ));
    }
    Ok(ThresholdSpec {
        name,
        quantity,
        limit_si,
        basis,
        source: source_text,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::constants::MU0;
    use crate::file::design::parse_design;

    const WINDING: &str = "[[winding]]\nname = \"loop\"\nshape = \"ring\"\norigin = [0.0, 0.0, 1.0]\naxis = [0.0, 0.0, 1.0]\nradius = 0.1\nwire_diameter = 0.001\n";

    fn parse(clearance: &str) -> Result<ClearanceSettings, String> {
        parse_design(&format!("{WINDING}\n{clearance}"), "d.toml")
            .map(|d| d.clearance)
            .map_err(|e| e.to_string())
    }

    fn err(clearance: &str, parts: &[&str]) {
        let msg = parse(clearance).unwrap_err();
        assert!(msg.starts_with("d.toml: "), "{msg}");
        for p in parts {
            assert!(msg.contains(p), "message lacks {p:?}: {msg}");
        }
    }

    #[test]
    fn absent_table_keeps_every_default_set() {
        let s = parse("").unwrap();
        assert_eq!(s, ClearanceSettings::default());
        assert_eq!(s.defaults.len(), 4);
    }

    #[test]
    fn full_table_parses_with_units() {
        let s = parse(
            r#"
[clearance]
defaults = ["breakdown", "icnirp_public"]
long_gap_gradient = "250 kV/m"
max_distance = "12 m"
heights = ["20 cm", 0.45]
distances = [1, "150 cm"]

[[clearance.threshold]]
name = "fence"
quantity = "B"
limit = "5 uT"
basis = "rms"
source = "site rule 12 (invented for this test)"

[[clearance.threshold]]
name = "h_level"
quantity = "B"
limit = "1 A/m"
basis = "peak"
source = "common practice, no source"

[[clearance.threshold]]
name = "spark"
quantity = "E"
limit = 1.5e6
basis = "peak"
source = "from memory"
"#,
        )
        .unwrap();
        assert_eq!(
            s.defaults,
            vec![DefaultSet::Breakdown, DefaultSet::IcnirpPublic]
        );
        assert_eq!(s.long_gap_gradient_v_per_m, Some(250e3));
        assert_eq!(s.max_distance_m, Some(12.0));
        assert_eq!(s.heights_m, vec![0.2, 0.45]);
        assert_eq!(s.distances_m, vec![1.0, 1.5]);
        let t = &s.thresholds;
        assert_eq!(t[0].quantity, FieldQuantity::B);
        assert!((t[0].limit_si - 5e-6).abs() < 1e-20);
        assert_eq!(t[0].basis, LimitBasis::Rms);
        assert!((t[1].limit_si - MU0).abs() < 1e-20);
        assert_eq!(t[2].limit_si, 1.5e6);
        assert!(
            parse("[clearance]\ndefaults = []\n")
                .unwrap()
                .defaults
                .is_empty()
        );
    }

    #[test]
    fn bad_values_name_the_file_and_key() {
        err(
            "[clearance]\nmax_distnce = 3.0\n",
            &["clearance", "max_distnce", "unknown key", "max_distance"],
        );
        err(
            "[clearance]\ndistances = [1.0, -2.0]\n",
            &["clearance", "distances[1]", "negative"],
        );
        err(
            "[clearance]\nheights = [nan]\n",
            &["heights[0]", "not finite"],
        );
        err(
            "[clearance]\nlong_gap_gradient = -3.0\n",
            &["long_gap_gradient", "positive"],
        );
        err(
            "[clearance]\nlong_gap_gradient = nan\n",
            &["long_gap_gradient", "not finite"],
        );
        err(
            "[clearance]\nlong_gap_gradient = \"3 uT\"\n",
            &["long_gap_gradient", "is a unit of a magnetic flux density"],
        );
        err(
            "[clearance]\nmax_distance = 0.001\n",
            &["max_distance", "at least 0.01 m"],
        );
        err(
            "[clearance]\ndefaults = [\"icnirp\"]\n",
            &["defaults[0]", "icnirp_public"],
        );
        let t = "[[clearance.threshold]]\nname = \"fence\"\nquantity = \"B\"\nlimit = \"5 uT\"\nbasis = \"rms\"\nsource = \"x\"\n";
        err(
            &t.replace("\"B\"", "\"H\""),
            &["clearance threshold 'fence'", "quantity", "\"H\""],
        );
        err(
            &t.replace("5 uT", "5 kV/m"),
            &[
                "clearance threshold 'fence'",
                "limit",
                "is a unit of an electric field strength",
            ],
        );
        err(
            &t.replace("5 uT", "-5 uT"),
            &["clearance threshold 'fence'", "limit", "positive"],
        );
        err(
            &t.replace("5 uT", "5 furlongs"),
            &["limit", "unknown unit 'furlongs'"],
        );
        err(&t.replace("\"rms\"", "\"average\""), &["basis", "average"]);
        err(
            &t.replace("source = \"x\"\n", ""),
            &["clearance threshold 'fence'", "source", "missing"],
        );
        err(
            &t.replace("source = \"x\"", "source = \"x\"\nunit = \"T\""),
            &["'unit'", "unknown key"],
        );
        err(&format!("{t}{t}"), &["clearance threshold #2", "fence"]);
    }
}
