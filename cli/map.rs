//! `coilfield map`: E and B sampled on a plane or in a box, written as a VTK RectilinearGrid
//! (`.vtr`) and, for a plane, a heat map (PNG or SVG) with contour lines at the thresholds.

use crate::plot::{self, HeatMap};
use crate::sample::{self, Grid, Plane};
use crate::thresholds;
use crate::vtk::{self, Array};
use crate::{BadInput, load, output};
use coilfield_solver::field_model::{EValue, FieldModel, distances_from_centre_m};
use coilfield_solver::thresholds::{CAUTION, Method, Quantity};
use serde::Serialize;
use std::path::Path;
use std::process::ExitCode;

/// Which magnitude a heat map shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum PlotQuantity {
    /// |E| (V/m, peak).
    E,
    /// |B| (T, peak).
    B,
}

/// Options of `map`, as given on the command line.
pub struct MapArgs<'a> {
    /// Design file.
    pub design: &'a Path,
    /// Plane of a plane grid.
    pub plane: Option<Plane>,
    /// Offset (m) of the plane along its normal.
    pub offset_m: f64,
    /// `U0,U1,V0,V1` (m).
    pub extent: Option<&'a str>,
    /// `X0,X1,Y0,Y1,Z0,Z1` (m).
    pub bounds: Option<&'a str>,
    /// `NU,NV` or `NX,NY,NZ`.
    pub resolution: &'a str,
    /// `.vtr` output.
    pub vtk: Option<&'a Path>,
    /// `.png` or `.svg` output.
    pub plot: Option<&'a Path>,
    /// Quantity of the heat map.
    pub plot_quantity: PlotQuantity,
    /// Electric solver for E.
    pub electric: crate::capacitance_fem::ElectricSolver,
}

#[derive(Serialize)]
struct MapOut {
    caution: &'static str,
    /// Which electric solver gave E: "bem" or "fem".
    electric_solver: &'static str,
    n_points: usize,
    max_e_mag_v_per_m: Option<f64>,
    max_b_mag_t: Option<f64>,
    points_without_e: usize,
    points_without_b: usize,
    files: Vec<String>,
    warnings: Vec<String>,
}

/// The grid the options describe.
pub fn grid(args: &MapArgs<'_>) -> Result<Grid, BadInput> {
    match (args.plane, args.extent, args.bounds) {
        (Some(p), Some(e), None) => sample::plane_grid(p, args.offset_m, e, args.resolution),
        (None, None, Some(b)) => sample::box_grid(b, args.resolution),
        (Some(_), None, _) => Err(BadInput("--plane needs --extent U0,U1,V0,V1 (m)".into())),
        (None, Some(_), None) => Err(BadInput("--extent needs --plane xz|yz|xy".into())),
        (_, _, Some(_)) => Err(BadInput(
            "--box: give either --plane with --extent, or --box, not both".into(),
        )),
        (None, None, None) => Err(BadInput(
            "map: give --plane xz|yz|xy with --extent U0,U1,V0,V1, or --box X0,X1,Y0,Y1,Z0,Z1"
                .into(),
        )),
    }
}

/// The extension of `path` (lower case) when it is one of `allowed`, else a message naming
/// the option `key`.
pub(crate) fn check_ext(path: &Path, key: &str, allowed: &[&str]) -> Result<String, BadInput> {
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase)
        .unwrap_or_default();
    if allowed.contains(&ext.as_str()) {
        Ok(ext)
    } else {
        Err(BadInput(format!(
            "{key} {}: the file name must end in .{}",
            path.display(),
            allowed.join(" or .")
        )))
    }
}

/// Contour levels (peak, in the map's unit) with their legend texts.
pub(crate) type Contours = Vec<(f64, String)>;

/// The contour levels of a heat map of `quantity` (peak, in `unit`): the same thresholds as
/// `clearance` without command-line additions (the design's `[clearance]` sets and
/// thresholds), each with its legend text; and the warnings of merging them.
pub(crate) fn threshold_contours(
    design: &coilfield_geometry::Design,
    label: &str,
    quantity: Quantity,
    unit: &str,
) -> anyhow::Result<(Contours, Vec<String>)> {
    let (ths, warnings) =
        thresholds::for_design(design, label, design.drive.frequency_hz, None, &[])?;
    let contours = ths
        .iter()
        .filter(|t| t.quantity == quantity && t.method == Method::FieldSearch)
        .map(|t| {
            (
                t.peak_limit(),
                format!("{}: peak {}", t.name, output::si(t.peak_limit(), unit, 3)),
            )
        })
        .collect();
    Ok((contours, warnings))
}

/// Run `coilfield map`.
pub fn run(args: MapArgs<'_>) -> anyhow::Result<ExitCode> {
    // The grid first: a grid out of bounds is refused before the design's work (a drive
    // model's resonance solve).
    let g = grid(&args)?;
    let design = load::design_resolved_with(args.design, args.electric.choice())?.design;
    let label = args.design.display().to_string();
    if args.vtk.is_none() && args.plot.is_none() {
        return Err(
            BadInput("map: give --vtk FILE.vtr and/or --plot FILE.png|FILE.svg".into()).into(),
        );
    }
    if let Some(p) = args.vtk {
        check_ext(p, "--vtk", &["vtr"])?;
    }
    let svg = match args.plot {
        Some(p) => {
            if g.plane.is_none() {
                return Err(BadInput(
                    "--plot: a heat map needs a plane grid (--plane), not --box".into(),
                )
                .into());
            }
            check_ext(p, "--plot", &["png", "svg"])? == "svg"
        }
        None => false,
    };
    let model = FieldModel::with_solver(
        &design,
        &label,
        coilfield_solver::Par::Rayon,
        None,
        args.electric.choice(),
    )?;
    let pts = g.points();
    let samples = model.eval(&pts);
    let n = pts.len();
    // NaN marks "no value" (inside a conductor, on its surface, on a wire): it round-trips
    // through VTK and viewers leave it blank; Inf would ruin their colour ranges.
    let mut e_vec = Vec::with_capacity(3 * n);
    let mut b_vec = Vec::with_capacity(3 * n);
    let mut e_mag = Vec::with_capacity(n);
    let mut b_mag = Vec::with_capacity(n);
    for s in &samples {
        match &s.e {
            EValue::Field(v) => {
                e_vec.extend_from_slice(&[v.x, v.y, v.z]);
                e_mag.push(v.norm());
            }
            _ => {
                e_vec.extend_from_slice(&[f64::NAN; 3]);
                e_mag.push(f64::NAN);
            }
        }
        match s.b {
            Some(v) => {
                b_vec.extend_from_slice(&[v.x, v.y, v.z]);
                b_mag.push(v.norm());
            }
            None => {
                b_vec.extend_from_slice(&[f64::NAN; 3]);
                b_mag.push(f64::NAN);
            }
        }
    }
    let max = |v: &[f64]| {
        v.iter()
            .copied()
            .filter(|x| x.is_finite())
            .fold(None, |m: Option<f64>, x| Some(m.map_or(x, |m| m.max(x))))
    };
    let mut warnings = model.warnings.clone();
    warnings.extend(coilfield_solver::electrostatic::validity_warnings(
        &design,
        &distances_from_centre_m(&design, &pts),
    ));
    let mut files_out: Vec<(std::path::PathBuf, Vec<u8>)> = Vec::new();
    if let Some(p) = args.vtk {
        let bytes = vtk::rectilinear_grid(
            &g.xs_m,
            &g.ys_m,
            &g.zs_m,
            &[
                Array::vectors("E_V_per_m", e_vec),
                Array::scalars("E_mag_V_per_m", e_mag.clone()),
                Array::vectors("B_T", b_vec),
                Array::scalars("B_mag_T", b_mag.clone()),
            ],
        )?;
        files_out.push((p.to_path_buf(), bytes));
    }
    if let Some(p) = args.plot {
        let (u, v) = g.plane_axes().expect("plane grid");
        let (ul, vl) = g.plane.expect("plane grid").axis_names();
        let (values, quantity, unit) = match args.plot_quantity {
            PlotQuantity::E => (&e_mag, Quantity::E, "V/m"),
            PlotQuantity::B => (&b_mag, Quantity::B, "T"),
        };
        let (contours, th_warnings) = threshold_contours(&design, &label, quantity, unit)?;
        warnings.extend(th_warnings);
        let title = match quantity {
            Quantity::E => "peak |E| (V/m); screening estimate, not a safety certificate",
            Quantity::B => "peak |B| (T); screening estimate, not a safety certificate",
        };
        let bytes = plot::heat_map_bytes(
            &HeatMap {
                u,
                v,
                values,
                scale: plot::Scale::Log,
                u_axis: plot::Axis {
                    name: ul,
                    unit: "m",
                },
                v_axis: plot::Axis {
                    name: vl,
                    unit: "m",
                },
                title,
                unit: match quantity {
                    Quantity::E => "V/m",
                    Quantity::B => "T",
                },
                contours: &contours,
            },
            svg,
        )?;
        files_out.push((p.to_path_buf(), bytes));
    }
    for (p, bytes) in &files_out {
        output::write_atomic(p, bytes)?;
    }
    let result = MapOut {
        caution: CAUTION,
        electric_solver: model.electric_solver(),
        n_points: n,
        max_e_mag_v_per_m: max(&e_mag),
        max_b_mag_t: max(&b_mag),
        points_without_e: e_mag.iter().filter(|x| x.is_nan()).count(),
        points_without_b: b_mag.iter().filter(|x| x.is_nan()).count(),
        files: files_out
            .iter()
            .map(|(p, _)| p.display().to_string())
            .collect(),
        warnings,
    };
    println!("{}", crate::output::json_text(&result)?);
    Ok(ExitCode::SUCCESS)
}
