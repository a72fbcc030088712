//! `coilfield verify`: recompute every validation case from its inputs and compare it with its
//! reference.
//!
//! Each table in `validation/` is a CSV whose last four columns are
//! `reference,tolerance,tolerance_kind,source`; the columns before them are the inputs. The
//! tables are built into the binary; `--tables DIR` reads them from a folder instead, so an
//! edited input row is recomputed.

use crate::{BadInput, Format};
use coilfield_geometry::discretise::ring_model;
use coilfield_geometry::{Model, Role, Shape, Winding};
use coilfield_solver::Par;
use coilfield_solver::elliptic::{cel, ellip_e, ellip_k};
use coilfield_solver::mutual::{Circle, mutual_ring_ring, mutual_ring_ring_coaxial};
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

fn winding(shape: Shape, wire_diameter_m: f64) -> Winding {
    Winding {
        name: "case".into(),
        role: Role::Other,
        model: Model::Ring,
        wire_diameter_m,
        segments_per_turn: None,
        tap: None,
        conductor: Default::default(),
        shape,
    }
}

fn ring_sum(w: &Winding) -> anyhow::Result<f64> {
    let model = ring_model(w).ok_or_else(|| anyhow::anyhow!("no ring model"))?;
    Ok(self_ring_model(&model, Par::Rayon))
}

/// The computed value of one row of a table.
fn compute(table: &str, row: &Row) -> anyhow::Result<f64> {
    Ok(match table {
        "elliptic" => {
            let m = num(row, "x")?;
            match text(row, "function")? {
                "K" => ellip_k(m),
                "E" => ellip_e(m),
                other => anyhow::bail!(BadInput(format!("unknown function '{other}'"))),
            }
        }
        "cel" => cel(
            num(row, "kc")?,
            num(row, "p")?,
            num(row, "a")?,
            num(row, "b")?,
        ),
        "maxwell_coaxial" => {
            mutual_ring_ring_coaxial(num(row, "a_m")?, num(row, "b_m")?, num(row, "d_m")?)
        }
        "rings_general" => {
            let p = Circle {
                centre_m: Point3::origin(),
                axis: z_axis(),
                radius_m: num(row, "rp_m")?,
            };
            let normal = Vector3::new(num(row, "nx")?, num(row, "ny")?, num(row, "nz")?);
            let s = Circle {
                centre_m: Point3::new(num(row, "cx_m")?, num(row, "cy_m")?, num(row, "cz_m")?),
                axis: Unit::new_normalize(normal),
                radius_m: num(row, "rs_m")?,
            };
            mutual_ring_ring(&p, &s)
        }
        "ring_self" => self_ring_round_wire(num(row, "radius_m")?, num(row, "wire_radius_m")?),
        "nagaoka" => nagaoka(num(row, "diameter_over_length")?),
        "rosa_b" => rosa_b(num(row, "turns")? as usize),
        "solenoid" => {
            let a = num(row, "radius_m")?;
            let n = num(row, "turns")?;
            let p = num(row, "pitch_m")?;
            let d = num(row, "wire_diameter_m")?;
            match text(row, "quantity")? {
                "ring_sum" => ring_sum(&winding(
                    Shape::Helix {
                        origin_m: Point3::origin(),
                        axis: z_axis(),
                        radius_m: a,
                        length_m: n * p,
                        turns: n,
                    },
                    d,
                ))?,
                "lorenz_sheet" => lorenz_sheet(a, n, n * p),
                "rosa" => rosa_solenoid(a, n as usize, p, d),
                other => anyhow::bail!(BadInput(format!("unknown quantity '{other}'"))),
            }
        }
        "spiral" => {
            let inner = num(row, "inner_radius_m")?;
            let outer = num(row, "outer_radius_m")?;
            let n = num(row, "turns")?;
            let r_w = num(row, "wire_radius_m")?;
            match text(row, "quantity")? {
                "ring_sum" => ring_sum(&winding(
                    Shape::Spiral {
                        origin_m: Point3::origin(),
                        axis: z_axis(),
                        inner_radius_m: inner,
                        outer_radius_m: outer,
                        turns: n,
                    },
                    2.0 * r_w,
                ))?,
                "wheeler" => wheeler_spiral(inner, outer, n),
                other => anyhow::bail!(BadInput(format!("unknown quantity '{other}'"))),
            }
        }
        "awg" => {
            let gauge = num(row, "gauge")?;
            coilfield_geometry::file::units::awg_diameter_m(gauge as i32)
                .ok_or_else(|| BadInput(format!("gauge {gauge} out of range")))?
        }
        other => anyhow::bail!(BadInput(format!("unknown table '{other}'"))),
    })
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
        let computed = compute(name, &row).map_err(label)?;
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

pub fn run(dir: Option<&Path>, format: Format) -> anyhow::Result<ExitCode> {
    let mut cases = Vec::new();
    for (name, builtin) in TABLES {
        let contents = match dir {
            Some(dir) => {
                let path = dir.join(format!("{name}.csv"));
                std::fs::read_to_string(&path)
                    .map_err(|e| BadInput(format!("{}: {e}", path.display())))?
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
                    "{} {:<16} #{:<3} {}\n      reference {:.12e}  computed {:.12e}  error {:.2e} ({} tol {:.0e})  source: {}",
                    if c.passed { "PASS" } else { "FAIL" },
                    c.table,
                    c.row,
                    inputs.join(" "),
                    c.reference,
                    c.computed,
                    c.error,
                    c.tolerance_kind,
                    c.tolerance,
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
