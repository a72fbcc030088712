//! `coilfield verify`: recompute every validation case from its inputs and compare it with its
//! reference.
//!
//! Each table in `validation/` is a CSV whose last four columns are
//! `reference,tolerance,tolerance_kind,source`; the columns before them are the inputs. The
//! tables are built into the binary; `--tables DIR` reads them from a folder instead, so an
//! edited input row is recomputed.

use crate::{BadInput, Format};
use coilfield_geometry::discretise::ring_model;
use coilfield_geometry::file::winding::MAX_TURNS;
use coilfield_geometry::{Winding, limits, winding_from_table};
use coilfield_solver::Par;
use coilfield_solver::elliptic::{cel, ellip_e, ellip_k};
use coilfield_solver::mutual::{Circle, mutual_ring_ring, mutual_ring_ring_coaxial};
use coilfield_solver::numtext::shortest;
use coilfield_solver::self_inductance::{
    lorenz_sheet, nagaoka, rosa_b, rosa_solenoid, self_ring_model, self_ring_round_wire,
    wheeler_spiral,
};
use nalgebra::{Point3, Unit, Vector3};
use serde::Serialize;
use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::Path;
use std::process::ExitCode;

/// The tables, by name, with their built-in contents.
const TABLES: [(&str, &str); 10] = [
    ("elliptic", include_str!("../validation/elliptic.csv")),
    ("cel", include_str!("../validation/cel.csv")),
    (
        "maxwell_coaxial",
        include_str!("../validation/maxwell_coaxial.csv"),
    ),
    (
        "rings_general",
        include_str!("../validation/rings_general.csv"),
    ),
    ("ring_self", include_str!("../validation/ring_self.csv")),
    ("nagaoka", include_str!("../validation/nagaoka.csv")),
    ("rosa_b", include_str!("../validation/rosa_b.csv")),
    ("solenoid", include_str!("../validation/solenoid.csv")),
    ("spiral", include_str!("../validation/spiral.csv")),
    ("awg", include_str!("../validation/awg.csv")),
];

/// One validation case, recomputed.
#[derive(Debug, Serialize)]
struct Case {
    table: String,
    row: usize,
    inputs: BTreeMap<String, String>,
    reference: f64,
    computed: f64,
    error: f64,
    tolerance: f64,
    tolerance_kind: String,
    passed: bool,
    source: String,
}

#[derive(Debug, Serialize)]
struct Summary {
    cases: Vec<Case>,
    passed: usize,
    failed: usize,
}

type Row = BTreeMap<String, String>;

fn num(row: &Row, key: &str) -> anyhow::Result<f64> {
    let text = row
        .get(key)
        .ok_or_else(|| BadInput(format!("column '{key}' missing")))?;
    text.trim()
        .parse::<f64>()
        .map_err(|_| BadInput(format!("column '{key}': '{text}' is not a number")).into())
}

fn text<'a>(row: &'a Row, key: &str) -> anyhow::Result<&'a str> {
    row.get(key)
        .map(|s| s.trim())
        .ok_or_else(|| BadInput(format!("column '{key}' missing")).into())
}

fn z_axis() -> Unit<Vector3<f64>> {
    Vector3::z_axis()
}

/// A row's winding through the design file's checks of a winding by itself
/// ([`winding_from_table`]: sizes and turns in range, wire thinner than the pitch), so that a
/// row no design file could hold is refused by name, as in a design file.
fn checked_winding(label: &str, keys: &[(&str, toml::Value)]) -> anyhow::Result<Winding> {
    let mut table = toml::Table::new();
    table.insert("name".into(), "case".into());
    table.insert("model".into(), "ring".into());
    table.insert("origin".into(), toml::Value::Array(vec![0.0.into(); 3]));
    table.insert(
        "axis".into(),
        toml::Value::Array(vec![0.0.into(), 0.0.into(), 1.0.into()]),
    );
    for (k, v) in keys {
        table.insert((*k).into(), v.clone());
    }
    Ok(winding_from_table(table, 1, label)?)
}

/// A size column (m) inside the design file's range ([`limits::MIN_SIZE_M`] to
/// [`limits::MAX_SIZE_M`]).
fn size(row: &Row, key: &str) -> anyhow::Result<f64> {
    let v = num(row, key)?;
    if !(limits::MIN_SIZE_M..=limits::MAX_SIZE_M).contains(&v) {
        anyhow::bail!(BadInput(format!(
            "column '{key}': {v:e} m is outside the accepted range {}",
            limits::range_phrase(limits::MIN_SIZE_M, limits::MAX_SIZE_M, "m")
        )));
    }
    Ok(v)
}

/// A coordinate column (m) inside the design file's range.
fn coordinate(row: &Row, key: &str) -> anyhow::Result<f64> {
    let v = num(row, key)?;
    if !v.is_finite() || v.abs() > limits::MAX_COORDINATE_M {
        anyhow::bail!(BadInput(format!(
            "column '{key}': {v:e} m is outside the accepted range of a coordinate, \
             -{0:e} m to {0:e} m",
            limits::MAX_COORDINATE_M
        )));
    }
    Ok(v)
}

/// A whole count column from 1 to `max`.
fn count(row: &Row, key: &str, max: f64) -> anyhow::Result<usize> {
    let v = num(row, key)?;
    if !v.is_finite() || v < 1.0 || v > max || v.fract() != 0.0 {
        anyhow::bail!(BadInput(format!(
            "column '{key}': {v:e} is not a whole number from 1 to {max:e}"
        )));
    }
    Ok(v as usize)
}

/// A finite number column inside `[lo, hi]`.
fn bounded(row: &Row, key: &str, lo: f64, hi: f64) -> anyhow::Result<f64> {
    let v = num(row, key)?;
    if !(lo..=hi).contains(&v) {
        anyhow::bail!(BadInput(format!(
            "column '{key}': {v:e} is outside the accepted range {lo:e} to {hi:e}"
        )));
    }
    Ok(v)
}

/// `v` unless it is zero.
fn nonzero(v: f64, key: &str) -> anyhow::Result<f64> {
    if v == 0.0 {
        anyhow::bail!(BadInput(format!("column '{key}': must not be 0")));
    }
    Ok(v)
}

fn ring_sum(w: &Winding) -> anyhow::Result<f64> {
    let model = ring_model(w).ok_or_else(|| anyhow::anyhow!("no ring model"))?;
    Ok(self_ring_model(&model, Par::Rayon))
}

/// The computed value of one row of a table.
fn compute(table: &str, row: &Row, label: &str) -> anyhow::Result<f64> {
    let value = match table {
        "elliptic" => {
            let m = bounded(row, "x", -1e15, 1.0)?;
            match text(row, "function")? {
                "K" => ellip_k(m),
                "E" => ellip_e(m),
                other => anyhow::bail!(BadInput(format!("unknown function '{other}'"))),
            }
        }
        "cel" => cel(
            bounded(row, "kc", 1e-300, 1e300)?,
            nonzero(bounded(row, "p", -1e300, 1e300)?, "p")?,
            bounded(row, "a", -1e300, 1e300)?,
            bounded(row, "b", -1e300, 1e300)?,
        ),
        "maxwell_coaxial" => mutual_ring_ring_coaxial(
            size(row, "a_m")?,
            size(row, "b_m")?,
            coordinate(row, "d_m")?,
        ),
        "rings_general" => {
            let p = Circle {
                centre_m: Point3::origin(),
                axis: z_axis(),
                radius_m: size(row, "rp_m")?,
            };
            let normal = Vector3::new(
                bounded(row, "nx", -1.0, 1.0)?,
                bounded(row, "ny", -1.0, 1.0)?,
                bounded(row, "nz", -1.0, 1.0)?,
            );
            if normal.norm() < 1e-6 {
                anyhow::bail!(BadInput("columns nx, ny, nz: no direction".into()));
            }
            let s = Circle {
                centre_m: Point3::new(
                    coordinate(row, "cx_m")?,
                    coordinate(row, "cy_m")?,
                    coordinate(row, "cz_m")?,
                ),
                axis: Unit::new_normalize(normal),
                radius_m: size(row, "rs_m")?,
            };
            mutual_ring_ring(&p, &s)
        }
        "ring_self" => {
            let w = checked_winding(
                label,
                &[
                    ("shape", "ring".into()),
                    ("radius", num(row, "radius_m")?.into()),
                    ("wire_diameter", (2.0 * num(row, "wire_radius_m")?).into()),
                ],
            )?;
            self_ring_round_wire(num(row, "radius_m")?, 0.5 * w.wire_diameter_m)
        }
        "nagaoka" => nagaoka(bounded(row, "diameter_over_length", 1e-9, 1e9)?),
        "rosa_b" => rosa_b(count(row, "turns", MAX_TURNS)?),
        "solenoid" => {
            let a = num(row, "radius_m")?;
            let n = num(row, "turns")?;
            let p = num(row, "pitch_m")?;
            let d = num(row, "wire_diameter_m")?;
            // Every quantity's inputs pass the checks of the helix they describe.
            let helix = checked_winding(
                label,
                &[
                    ("shape", "helix".into()),
                    ("radius", a.into()),
                    ("length", (n * p).into()),
                    ("turns", n.into()),
                    ("wire_diameter", d.into()),
                ],
            )?;
            match text(row, "quantity")? {
                "ring_sum" => ring_sum(&helix)?,
                "lorenz_sheet" => lorenz_sheet(a, n, n * p),
                "rosa" => rosa_solenoid(a, count(row, "turns", MAX_TURNS)?, p, d),
                other => anyhow::bail!(BadInput(format!("unknown quantity '{other}'"))),
            }
        }
        "spiral" => {
            let inner = num(row, "inner_radius_m")?;
            let outer = num(row, "outer_radius_m")?;
            let n = num(row, "turns")?;
            let r_w = num(row, "wire_radius_m")?;
            let spiral = checked_winding(
                label,
                &[
                    ("shape", "spiral".into()),
                    ("inner_radius", inner.into()),
                    ("outer_radius", outer.into()),
                    ("turns", n.into()),
                    ("wire_diameter", (2.0 * r_w).into()),
                ],
            )?;
            match text(row, "quantity")? {
                "ring_sum" => ring_sum(&spiral)?,
                "wheeler" => wheeler_spiral(inner, outer, n),
                other => anyhow::bail!(BadInput(format!("unknown quantity '{other}'"))),
            }
        }
        "awg" => {
            let gauge = bounded(row, "gauge", -10.0, 100.0)?;
            coilfield_geometry::file::units::awg_diameter_m(gauge as i32)
                .ok_or_else(|| BadInput(format!("gauge {gauge} out of range")))?
        }
        other => anyhow::bail!(BadInput(format!("unknown table '{other}'"))),
    };
    // Inputs in range give finite values; a non-finite one is a defect, never a pass or fail.
    if !value.is_finite() {
        anyhow::bail!(BadInput(format!(
            "the computed value is {value}, not a finite number"
        )));
    }
    Ok(value)
}

fn read_table(name: &str, contents: &str) -> anyhow::Result<Vec<Case>> {
    let mut reader = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .from_reader(contents.as_bytes());
    let headers = reader
        .headers()
        .map_err(|e| BadInput(format!("{name}.csv: {e}")))?
        .clone();
    let mut cases = Vec::new();
    for (idx, record) in reader.records().enumerate() {
        let record = record.map_err(|e| BadInput(format!("{name}.csv: {e}")))?;
        let row: Row = headers
            .iter()
            .zip(record.iter())
            .map(|(h, v)| (h.to_string(), v.to_string()))
            .collect();
        let label = |e: anyhow::Error| BadInput(format!("{name}.csv row {}: {e}", idx + 1));
        let reference = num(&row, "reference").map_err(label)?;
        let tolerance = num(&row, "tolerance").map_err(label)?;
        let tolerance_kind = text(&row, "tolerance_kind").map_err(label)?.to_string();
        let source = text(&row, "source").map_err(label)?.to_string();
        let computed = compute(name, &row, "the row").map_err(label)?;
        let error = match tolerance_kind.as_str() {
            "abs" => (computed - reference).abs(),
            "rel" => ((computed - reference) / reference).abs(),
            other => {
                return Err(label(anyhow::anyhow!(
                    "tolerance_kind '{other}' is not rel or abs"
                ))
                .into());
            }
        };
        let inputs = row
            .into_iter()
            .filter(|(k, _)| {
                !matches!(
                    k.as_str(),
                    "reference" | "tolerance" | "tolerance_kind" | "source"
                )
            })
            .collect();
        cases.push(Case {
            table: name.to_string(),
            row: idx + 1,
            inputs,
            reference,
            computed,
            error,
            tolerance,
            passed: error <= tolerance,
            tolerance_kind,
            source,
        });
    }
    Ok(cases)
}

/// `v` to `digits` significant digits (an error beside its tolerance needs no more), through
/// its decimal text so that [`shortest`] prints just those digits.
fn round_to(v: f64, digits: usize) -> f64 {
    let d = digits.max(1) - 1;
    format!("{v:.d$e}").parse().unwrap_or(v)
}

pub fn run(dir: Option<&Path>, format: Format) -> anyhow::Result<ExitCode> {
    let mut cases = Vec::new();
    for (name, builtin) in TABLES {
        let contents = match dir {
            Some(dir) => {
                let path = dir.join(format!("{name}.csv"));
                crate::load::text(&path, "validation table")?
            }
            None => builtin.to_string(),
        };
        cases.extend(read_table(name, &contents)?);
    }
    let passed = cases.iter().filter(|c| c.passed).count();
    let failed = cases.len() - passed;
    match format {
        Format::Json => {
            let summary = Summary {
                cases,
                passed,
                failed,
            };
            println!("{}", crate::output::json_text(&summary)?);
        }
        Format::Table => {
            let mut s = String::new();
            for c in &cases {
                let inputs: Vec<String> =
                    c.inputs.iter().map(|(k, v)| format!("{k}={v}")).collect();
                let _ = writeln!(
                    s,
                    "{} {:<16} #{:<3} {}\n      reference {}  computed {}  error {} ({} tol {})  source: {}",
                    if c.passed { "PASS" } else { "FAIL" },
                    c.table,
                    c.row,
                    inputs.join(" "),
                    shortest(c.reference),
                    shortest(c.computed),
                    shortest(round_to(c.error, 3)),
                    c.tolerance_kind,
                    shortest(c.tolerance),
                    c.source
                );
            }
            let _ = writeln!(s, "{passed} passed, {failed} failed");
            print!("{s}");
        }
    }
    Ok(if failed == 0 {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    })
}
