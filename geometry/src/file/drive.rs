//! The `[drive]` table of a design file: the excitation.
//!
//! # Design-file keys (`[drive]`)
//! An explicit drive (no `kind`) gives the fields' sources directly:
//! ```toml
//! [drive]
//! frequency = "250 kHz"                              # Hz (number) or a string with a unit
//! currents = { primary = 40.0, secondary = "1.2 A" } # signed peak A in each winding
//! potentials = { topload = "150 kV", secondary = [0.0, 150e3] }  # peak V; a winding: [base, top]
//! ```
//! A snapshot model: currents are signed peak amplitudes, all in phase; potentials are peak
//! values at the voltage peak. Fields scale linearly with the drive. A winding absent from
//! `currents` carries no current; an electrode absent from `potentials` and not connected is
//! at 0 V. A connected electrode takes its terminal's potential and must not appear in
//! `potentials`. Only the secondary winding has a surface in the electric model, so only it may
//! have a potential.
//!
//! A drive model (`kind`) derives every current and potential from the resonance model:
//! ```toml
//! [drive]
//! kind = "spark_gap"             # spark_gap | driven
//! tank_capacitance = "30 nF"     # spark_gap (required), driven (optional series capacitor)
//! charge_voltage = "12 kV"       # spark_gap: peak charge voltage of the tank capacitor
//! gap_resistance = "2 ohm"       # spark_gap: the arc's resistance while it conducts
//! break_rate = "120 Hz"          # spark_gap, optional: bangs per second
//! primary_current = "3 A"        # driven: peak primary current, or primary_voltage (peak V)
//! frequency = "171 kHz"          # driven, optional: the drive frequency
//! lead_inductance = "2 uH"       # optional: the primary's leads, in series with it
//! secondary_base = "ground"      # optional: ground (default) | primary_return
//! ```
//! With `kind`, `currents` and `potentials` are errors naming the key, and so are keys of the
//! other kind; `frequency` is not allowed for a spark gap (it rings at the coupled modes).
//! Every quantity takes a bare number in SI units or a string with a unit
//! ([`crate::file::units`]).

use crate::error::DesignError;
use crate::file::raw::{Ctx, type_phrase};
use crate::file::units::Quantity;
use crate::model::drive::{
    Drive, DriveKind, Driven, PotentialSpec, PrimaryAmplitude, SecondaryBase, SparkGap,
};
use toml::Value;

/// Keys of `[drive]`.
const DRIVE_KEYS: &[&str] = &[
    "frequency",
    "currents",
    "potentials",
    "kind",
    "tank_capacitance",
    "charge_voltage",
    "gap_resistance",
    "break_rate",
    "primary_current",
    "primary_voltage",
    "lead_inductance",
    "secondary_base",
];

/// Values of `kind`.
const KIND_NAMES: &[&str] = &["spark_gap", "driven"];

/// Parse the `[drive]` table (names are checked later, by `check_drive`).
pub(crate) fn parse_drive(value: Value, source: &str) -> Result<Drive, DesignError> {
    let ctx = Ctx {
        source,
        item: "drive".to_string(),
    };
    let Value::Table(table) = value else {
        return Err(DesignError::WrongType {
            source_name: source.to_string(),
            item: "top level".to_string(),
            key: "drive".to_string(),
            reason: format!("expected a [drive] table, got {}", type_phrase(&value)),
        });
    };
    if let Some(key) = table.keys().find(|k| !DRIVE_KEYS.contains(&k.as_str())) {
        return Err(DesignError::UnknownKey {
            source_name: source.to_string(),
            item: "drive".to_string(),
            key: key.clone(),
            shape: "[drive] table".to_string(),
            allowed: DRIVE_KEYS.join(", "),
        });
    }
    let kind_name = match table.get("kind") {
        None => None,
        Some(Value::String(k)) if KIND_NAMES.contains(&k.as_str()) => Some(k.as_str()),
        Some(Value::String(k)) => return Err(ctx.unknown_value("kind", k, KIND_NAMES)),
        Some(other) => {
            return Err(wrong(
                &ctx,
                "kind",
                format!(
                    "expected one of the strings {}, got {}",
                    KIND_NAMES.join(", "),
                    type_phrase(other)
                ),
            ));
        }
    };
    // Which keys belong to which kind: a key of another kind is an error naming it.
    let only = |key: &str, kinds: &[Option<&str>], why: &str| -> Result<(), DesignError> {
        if table.contains_key(key) && !kinds.contains(&kind_name) {
            return Err(DesignError::BadSetting {
                source_name: source.to_string(),
                item: "drive".to_string(),
                key: key.to_string(),
                reason: why.to_string(),
            });
        }
        Ok(())
    };
    let explicit = "it belongs to an explicit drive; with kind set, the drive model derives the \
                    currents and potentials of every winding and electrode (remove the key)";
    only("currents", &[None], explicit)?;
    only("potentials", &[None], explicit)?;
    only(
        "frequency",
        &[None, Some("driven")],
        "a spark gap rings at the coupled system's own frequencies; remove frequency (the \
         exposure levels use the secondary's first resonance)",
    )?;
    only(
        "tank_capacitance",
        &[Some("spark_gap"), Some("driven")],
        "it needs kind = \"spark_gap\" or \"driven\"",
    )?;
    for key in ["charge_voltage", "gap_resistance", "break_rate"] {
        only(key, &[Some("spark_gap")], "it needs kind = \"spark_gap\"")?;
    }
    for key in ["primary_current", "primary_voltage"] {
        only(key, &[Some("driven")], "it needs kind = \"driven\"")?;
    }
    for key in ["lead_inductance", "secondary_base"] {
        only(
            key,
            &[Some("spark_gap"), Some("driven")],
            "it needs a drive model: kind = \"spark_gap\" or \"driven\"",
        )?;
    }

    let mut drive = Drive::default();
    if let Some(v) = table.get("frequency") {
        drive.frequency_hz = Some(ctx.positive_quantity("frequency", v, Quantity::Frequency)?);
    }
    for (key, q) in [
        ("currents", Quantity::Current),
        ("potentials", Quantity::Voltage),
    ] {
        let Some(value) = table.get(key) else {
            continue;
        };
        let Value::Table(entries) = value else {
            return Err(wrong(
                &ctx,
                key,
                format!(
                    "expected a table such as {{ primary = 40.0 }}, got {}",
                    type_phrase(value)
                ),
            ));
        };
        for (name, v) in entries {
            let sub = format!("{key}.{name}");
            if key == "currents" {
                drive
                    .currents_a
                    .push((name.clone(), ctx.quantity(&sub, v, q)?.0));
                continue;
            }
            let spec = match v {
                Value::Array(a) if a.len() == 2 => PotentialSpec::Ends {
                    base_v: ctx.quantity(&format!("{sub}[0]"), &a[0], q)?.0,
                    top_v: ctx.quantity(&format!("{sub}[1]"), &a[1], q)?.0,
                },
                Value::Array(_) => {
                    return Err(wrong(
                        &ctx,
                        &sub,
                        "a winding's potentials are two numbers, [base_V, top_V]".to_string(),
                    ));
                }
                other => PotentialSpec::Uniform(ctx.quantity(&sub, other, q)?.0),
            };
            drive.potentials_v.push((name.clone(), spec));
        }
    }
    let get = |key: &str| table.get(key);
    let required = |key: &str, hint: &str| get(key).ok_or_else(|| ctx.missing(key, hint));
    drive.kind = match kind_name {
        None => DriveKind::Explicit,
        Some("spark_gap") => DriveKind::SparkGap(SparkGap {
            tank_capacitance_f: ctx.positive_quantity(
                "tank_capacitance",
                required(
                    "tank_capacitance",
                    "give the primary (tank) capacitor, e.g. tank_capacitance = \"30 nF\"",
                )?,
                Quantity::Capacitance,
            )?,
            charge_voltage_v: ctx.positive_quantity(
                "charge_voltage",
                required(
                    "charge_voltage",
                    "give the peak charge voltage of the tank capacitor, e.g. charge_voltage = \
                     \"12 kV\"",
                )?,
                Quantity::Voltage,
            )?,
            gap_resistance_ohm: ctx.non_negative_quantity(
                "gap_resistance",
                required(
                    "gap_resistance",
                    "give the arc's resistance while it conducts, e.g. gap_resistance = \"2 ohm\" \
                     (a few ohms is common practice, no source: your value decides the losses)",
                )?,
                Quantity::Resistance,
            )?,
            break_rate_hz: get("break_rate")
                .map(|v| ctx.positive_quantity("break_rate", v, Quantity::Frequency))
                .transpose()?,
        }),
        _ => {
            let amplitude = match (get("primary_current"), get("primary_voltage")) {
                (Some(i), None) => PrimaryAmplitude::CurrentA(ctx.positive_quantity(
                    "primary_current",
                    i,
                    Quantity::Current,
                )?),
                (None, Some(v)) => PrimaryAmplitude::VoltageV(ctx.positive_quantity(
                    "primary_voltage",
                    v,
                    Quantity::Voltage,
                )?),
                (Some(_), Some(_)) => {
                    return Err(DesignError::BadSetting {
                        source_name: source.to_string(),
                        item: "drive".to_string(),
                        key: "primary_voltage".to_string(),
                        reason: "give the primary's current or its voltage, not both".to_string(),
                    });
                }
                (None, None) => {
                    return Err(ctx.missing(
                        "primary_current",
                        "give the peak primary current, e.g. primary_current = \"3 A\", or \
                         the peak primary voltage, primary_voltage = \"...\"",
                    ));
                }
            };
            DriveKind::Driven(Driven { amplitude })
        }
    };
    drive.tank_capacitance_f = get("tank_capacitance")
        .filter(|_| kind_name == Some("driven"))
        .map(|v| ctx.positive_quantity("tank_capacitance", v, Quantity::Capacitance))
        .transpose()?;
    if let Some(v) = get("lead_inductance") {
        drive.lead_inductance_h =
            ctx.non_negative_quantity("lead_inductance", v, Quantity::Inductance)?;
    }
    drive.secondary_base = match get("secondary_base") {
        None => SecondaryBase::Ground,
        Some(Value::String(s)) if s == "ground" => SecondaryBase::Ground,
        Some(Value::String(s)) if s == "primary_return" => SecondaryBase::PrimaryReturn,
        Some(Value::String(s)) => {
            return Err(ctx.unknown_value("secondary_base", s, &["ground", "primary_return"]));
        }
        Some(other) => {
            return Err(wrong(
                &ctx,
                "secondary_base",
                format!(
                    "expected \"ground\" or \"primary_return\", got {}",
                    type_phrase(other)
                ),
            ));
        }
    };
    Ok(drive)
}

fn wrong(ctx: &Ctx<'_>, key: &str, reason: String) -> DesignError {
    DesignError::WrongType {
        source_name: ctx.source.to_string(),
        item: ctx.item.clone(),
        key: key.to_string(),
        reason,
    }
}
