//! The `field` command: E and B at points, from the one field evaluator
//! (`coilfield_solver::field_model`).

use crate::sample;
use crate::{BadInput, load, output};
use coilfield_solver::Par;
use coilfield_solver::electrostatic::validity_warnings;
use coilfield_solver::field_model::{FieldModel, NoValue, Sample, distances_from_centre_m};
use coilfield_solver::numtext::shortest;
use nalgebra::{Point3, Vector3};
use serde::Serialize;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

/// Output formats of `field`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum FieldFormat {
    /// Aligned text.
    Table,
    /// JSON (documented shape).
    Json,
    /// CSV with a header naming each column's unit.
    Csv,
}

#[derive(Serialize)]
struct PointOut {
    position_m: [f64; 3],
    e_field_v_per_m: Option<[f64; 3]>,
    e_mag_v_per_m: Option<f64>,
    b_field_t: Option<[f64; 3]>,
    b_mag_t: Option<f64>,
}

#[derive(Serialize)]
struct FieldOut {
    /// Which electric solver gave E: "bem" or "fem".
    electric_solver: &'static str,
    points: Vec<PointOut>,
    warnings: Vec<String>,
}

fn arr(v: Vector3<f64>) -> [f64; 3] {
    [v.x, v.y, v.z]
}

/// Where a point came from, for messages.
enum Origin {
    At(String),
    Csv(PathBuf, usize),
}

impl Origin {
    fn label(&self) -> String {
        match self {
            Origin::At(t) => format!("--at {t}"),
            Origin::Csv(p, line) => format!("--points {} line {line}", p.display()),
        }
    }
}

/// Run `coilfield field`.
pub fn run(
    design_path: &Path,
    at: &[String],
    points: Option<&Path>,
    format: FieldFormat,
    out: Option<&Path>,
    solver: crate::capacitance_fem::ElectricSolver,
) -> anyhow::Result<ExitCode> {
    let design = load::design_resolved_with(design_path, solver.choice())?.design;
    let mut pts = Vec::new();
    let mut origins = Vec::new();
    for t in at {
        pts.push(sample::point("--at", t)?);
        origins.push(Origin::At(t.clone()));
    }
    if let Some(p) = points {
        for (k, q) in sample::points_csv(p)?.into_iter().enumerate() {
            pts.push(q);
            origins.push(Origin::Csv(p.to_path_buf(), k + 2));
        }
    }
    if pts.is_empty() {
        return Err(
            BadInput("field: give at least one --at x,y,z or --points FILE.csv".into()).into(),
        );
    }
    let model = FieldModel::with_solver(
        &design,
        &design_path.display().to_string(),
        Par::Rayon,
        None,
        solver.choice(),
    )?;
    let samples = model.eval(&pts);
    let mut warnings = model.warnings.clone();
    warnings.extend(validity_warnings(
        &design,
        &distances_from_centre_m(&design, &pts),
    ));
    let mut rows = Vec::with_capacity(pts.len());
    for ((p, s), o) in pts.iter().zip(&samples).zip(&origins) {
        let (row, warning) = point_row(p, s, o)?;
        warnings.extend(warning);
        rows.push(row);
    }
    let result = FieldOut {
        electric_solver: model.electric_solver(),
        points: rows,
        warnings,
    };
    let text = match format {
        FieldFormat::Json => crate::output::json_text(&result)? + "\n",
        FieldFormat::Csv => csv_text(&result),
        FieldFormat::Table => table_text(&result),
    };
    if let Some(path) = out {
        output::write_atomic(path, text.as_bytes())?;
    }
    crate::output::print_stdout(&text)?;
    if format != FieldFormat::Json {
        for w in &result.warnings {
            eprintln!("warning: {w}");
        }
    }
    Ok(ExitCode::SUCCESS)
}

/// The output row of one point, and the warning it raises, if any.
///
/// The values and markers are the field model's ([`Sample`]), as on a `map` grid. A point
/// inside a conductor is bad input when it was typed with `--at` (the user asked for that point
/// alone), but on a list of points (`--points`) it is one sample among many: its fields are
/// left without a value and a warning names the point and the reason, as for a point on a wire
/// or beyond the model's range.
fn point_row(
    p: &Point3<f64>,
    s: &Sample,
    o: &Origin,
) -> Result<(PointOut, Option<String>), BadInput> {
    let position_m = [p.x, p.y, p.z];
    let at = format!("{}: the point ({}, {}, {}) m", o.label(), p.x, p.y, p.z);
    let mut warning = None;
    if let Some(why) = s.no_value() {
        if let (Origin::At(_), NoValue::Inside(_) | NoValue::BelowGround) = (o, why) {
            return Err(BadInput(format!("{at} {}; move it outside", why.reason())));
        }
        warning = Some(format!(
            "{at} {} (null in JSON, NaN in CSV and table)",
            why.reason()
        ));
    }
    let e = s.e.as_ref().ok().copied();
    let b = s.b.as_ref().ok().copied();
    let row = PointOut {
        position_m,
        e_field_v_per_m: e.map(arr),
        e_mag_v_per_m: s.e_mag(),
        b_field_t: b.map(arr),
        b_mag_t: s.b_mag(),
    };
    Ok((row, warning))
}

/// A value for CSV and table output: NaN where there is none (JSON has null instead).
fn opt(v: Option<f64>) -> String {
    v.map_or("NaN".to_string(), shortest)
}

fn csv_text(r: &FieldOut) -> String {
    let mut s = String::from(
        "x_m,y_m,z_m,ex_v_per_m,ey_v_per_m,ez_v_per_m,e_mag_v_per_m,bx_t,by_t,bz_t,b_mag_t\n",
    );
    for p in &r.points {
        let e = p.e_field_v_per_m.map_or([None; 3], |v| v.map(Some));
        let b = p.b_field_t.map_or([None; 3], |v| v.map(Some));
        s.push_str(&format!(
            "{},{},{},{},{},{},{},{},{},{},{}\n",
            shortest(p.position_m[0]),
            shortest(p.position_m[1]),
            shortest(p.position_m[2]),
            opt(e[0]),
            opt(e[1]),
            opt(e[2]),
            opt(p.e_mag_v_per_m),
            opt(b[0]),
            opt(b[1]),
            opt(b[2]),
            opt(p.b_mag_t)
        ));
    }
    s
}

fn table_text(r: &FieldOut) -> String {
    let mut s = String::from("Peak fields of the drive: vectors (x, y, z) and magnitudes\n\n");
    s.push_str(&format!(
        "{:>30}  {:>36}  {:>12}  {:>36}  {:>12}\n",
        "point (x, y, z) m", "E (x, y, z)", "|E|", "B (x, y, z)", "|B|"
    ));
    for p in &r.points {
        let pos = format!(
            "({}, {}, {})",
            shortest(p.position_m[0]),
            shortest(p.position_m[1]),
            shortest(p.position_m[2])
        );
        let e = p
            .e_mag_v_per_m
            .map_or("NaN".to_string(), |x| output::si(x, "V/m", 4));
        let b = p
            .b_mag_t
            .map_or("NaN".to_string(), |x| output::si(x, "T", 4));
        // Each vector in the SI prefix of its magnitude, so the components read side by side.
        let vector = |v: Option<[f64; 3]>, mag: Option<f64>, unit: &str| match (v, mag) {
            (Some(v), Some(m)) => format!(
                "({}, {}, {})",
                coilfield_solver::numtext::si_like(v[0], m, unit, 4),
                coilfield_solver::numtext::si_like(v[1], m, unit, 4),
                coilfield_solver::numtext::si_like(v[2], m, unit, 4)
            ),
            _ => "NaN".to_string(),
        };
        let ev = vector(p.e_field_v_per_m, p.e_mag_v_per_m, "V/m");
        let bv = vector(p.b_field_t, p.b_mag_t, "T");
        s.push_str(&format!(
            "{pos:>30}  {ev:>36}  {e:>12}  {bv:>36}  {b:>12}\n"
        ));
    }
    s
}
