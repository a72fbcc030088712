//! The excitation of a design (`[drive]`) and the image windings of a conducting ground plane.
//!
//! # Design-file keys (`[drive]`)
//! ```toml
//! [drive]
//! frequency = 250e3                                  # Hz, positive
//! currents = { primary = 40.0, secondary = 1.2 }     # signed peak A in each winding
//! potentials = { topload = 150e3, secondary = [0.0, 150e3] }  # peak V; a winding: [base, top]
//! ```
//! A snapshot model: currents are signed peak amplitudes, all in phase; potentials are peak
//! values at the voltage peak. Fields scale linearly with the drive. A winding absent from
//! `currents` carries no current; an electrode absent from `potentials` and not connected is
//! at 0 V. A connected electrode takes its terminal's potential and must not appear in
//! `potentials`. Only the secondary winding has a surface in the electric model, so only it may
//! have a potential.

use crate::error::DesignError;
use crate::file::raw::{Ctx, RawNumber, type_phrase};
use crate::model::drive::{Drive, PotentialSpec};
use serde::Deserialize;
use toml::Value;

/// Parse the `[drive]` table (names are checked later, by [`check_drive`]).
pub(crate) fn parse_drive(value: Value, source: &str) -> Result<Drive, DesignError> {
    let ctx = Ctx {
        source,
        item: "drive".to_string(),
    };
    let wrong = |key: &str, reason: String| DesignError::WrongType {
        source_name: source.to_string(),
        item: "drive".to_string(),
        key: key.to_string(),
        reason,
    };
    let Value::Table(table) = value else {
        return Err(DesignError::WrongType {
            source_name: source.to_string(),
            item: "top level".to_string(),
            key: "drive".to_string(),
            reason: format!("expected a [drive] table, got {}", type_phrase(&value)),
        });
    };
    let mut drive = Drive::default();
    for (key, value) in table {
        match key.as_str() {
            "frequency" => {
                let f: RawNumber = RawNumber::deserialize(value.clone()).map_err(|_| {
                    wrong(
                        "frequency",
                        format!("expected a number in Hz, got {}", type_phrase(&value)),
                    )
                })?;
                let hz = f.as_f64();
                if !hz.is_finite() {
                    return Err(ctx.not_finite("frequency", "a finite frequency in Hz", f.shown()));
                }
                if hz <= 0.0 {
                    return Err(ctx.not_positive(
                        "frequency",
                        "a positive frequency in Hz",
                        f.shown(),
                    ));
                }
                drive.frequency_hz = Some(hz);
            }
            "currents" | "potentials" => {
                let Value::Table(entries) = value else {
                    return Err(wrong(
                        &key,
                        format!(
                            "expected a table such as {{ primary = 40.0 }}, got {}",
                            type_phrase(&value)
                        ),
                    ));
                };
                for (name, v) in entries {
                    let sub = format!("{key}.{name}");
                    let number = |v: &Value| -> Result<f64, DesignError> {
                        let x = match v {
                            Value::Integer(n) => *n as f64,
                            Value::Float(x) => *x,
                            other => {
                                return Err(wrong(
                                    &sub,
                                    format!("expected a number, got {}", type_phrase(other)),
                                ));
                            }
                        };
                        if !x.is_finite() {
                            return Err(ctx.not_finite(&sub, "a finite number", x.to_string()));
                        }
                        Ok(x)
                    };
                    if key == "currents" {
                        drive.currents_a.push((name.clone(), number(&v)?));
                    } else {
                        let spec = match &v {
                            Value::Array(a) if a.len() == 2 => PotentialSpec::Ends {
                                base_v: number(&a[0])?,
                                top_v: number(&a[1])?,
                            },
                            Value::Array(_) => {
                                return Err(wrong(
                                    &sub,
                                    "a winding's potentials are two numbers, [base_V, top_V]"
                                        .to_string(),
                                ));
                            }
                            other => PotentialSpec::Uniform(number(other)?),
                        };
                        drive.potentials_v.push((name.clone(), spec));
                    }
                }
            }
            _ => {
                return Err(DesignError::UnknownKey {
                    source_name: source.to_string(),
                    item: "drive".to_string(),
                    key,
                    shape: "[drive] table".to_string(),
                    allowed: "frequency, currents, potentials".to_string(),
                });
            }
        }
    }
    Ok(drive)
}
