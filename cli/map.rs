//! `coilfield map`: E and B sampled on a plane or in a box, written as a VTK RectilinearGrid
//! (`.vtr`) and, for a plane, a heat map (PNG or SVG) with contour lines at the thresholds.

use crate::plot::{self, HeatMap};
use crate::sample::{self, Grid, Plane};
use crate::thresholds;
use crate::vtk::{self, Array};
use crate::{BadInput, load, output};
use coilfield_solver::field_model::{FieldModel, Sample, distances_from_centre_m, magnitude};
use coilfield_solver::thresholds::{CAUTION, Method, Quantity};
use nalgebra::Point3;
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
    /// The largest |E| among the points with a value, those near a conductor edge set aside.
    max_e_mag_v_per_m: Option<f64>,
    /// Where it occurs (m).
    max_e_at_m: Option<[f64; 3]>,
    /// The largest |B| among the points with a value.
    max_b_mag_t: Option<f64>,
    /// Where it occurs (m).
    max_b_at_m: Option<[f64; 3]>,
    /// Points set aside from the |E| summary: within `edge_distance_panels` panel lengths of a
    /// conductor edge, where the panels do not resolve E.
    near_edge: NearEdge,
    points_without_e: usize,
    points_without_b: usize,
    files: Vec<String>,
    warnings: Vec<String>,
}

/// Which points the |E| summary sets aside ([`coilfield_solver::electrostatic::Edge`]).
const NEAR_EDGE_RULE: &str = "within 2 panel lengths or 1% of the conductor's generatrix \
     length (the larger) of a conductor edge";

/// The points of a map set aside from its |E| summary near conductor edges.
#[derive(Serialize)]
struct NearEdge {
    /// The stated distance, in words.
    rule: &'static str,
    /// How many points were set aside.
    points_skipped: usize,
    /// The largest |E| among them (V/m): edges are where breakdown starts.
    max_e_mag_v_per_m: Option<f64>,
    /// Where it occurs (m).
    max_e_at_m: Option<[f64; 3]>,
}

/// The largest of `values` (NaN = no value) among the points `keep` allows, with its point.
fn peak(
    values: &[f64],
    pts: &[Point3<f64>],
    keep: impl Fn(usize) -> bool,
) -> Option<(f64, [f64; 3])> {
    values
        .iter()
        .enumerate()
        .filter(|(k, x)| x.is_finite() && keep(*k))
        .fold(None, |m: Option<(f64, usize)>, (k, &x)| match m {
            Some((best, _)) if best >= x => m,
            _ => Some((x, k)),
        })
        .map(|(x, k)| (x, [pts[k].x, pts[k].y, pts[k].z]))
}

/// One warning per reason of the points without a value: how many, and the first of them.
fn no_value_warnings(samples: &[Sample], pts: &[Point3<f64>]) -> Vec<String> {
    let mut seen: Vec<(String, usize, Point3<f64>)> = Vec::new();
    for (s, p) in samples.iter().zip(pts) {
        let Some(why) = s.no_value() else { continue };
        let reason = why.reason();
        match seen.iter_mut().find(|(r, _, _)| *r == reason) {
            Some(entry) => entry.1 += 1,
            None => seen.push((reason, 1, *p)),
        }
    }
    seen.into_iter()
        .map(|(reason, n, p)| {
            let what = if reason.contains("E is not") {
                "no E"
            } else {
                "no E or B"
            };
            format!(
                "{n} grid point(s), the first ({}, {}, {}) m, {reason}: {what} there (NaN in \
                 the VTK file, grey in the heat map)",
                p.x, p.y, p.z
            )
        })
        .collect()
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

/// The warnings of a heat map of `values` (in `unit`) on `scale` with `contours`: one per
/// threshold (or group of coincident thresholds) it draws no line for, in the words of its
/// legend ([`plot::plan_contours`]). Thresholds the map's values never reach (or all exceed)
/// get no line; the figure's legend says so, and so does the command (`map`, `report --html`),
/// once each.
pub(crate) fn contour_warnings(
    values: &[f64],
    contours: &[(f64, String)],
    scale: plot::Scale,
    unit: &str,
) -> Vec<String> {
    plot::plan_contours(values, contours, scale, unit)
        .notes
        .into_iter()
        .map(|note| format!("heat map contour: {note}"))
        .collect()
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
    // NaN marks "no value" (the field model's rule: on a wire, inside a conductor, below the
    // ground for E, beyond the model's range): it round-trips through VTK and viewers leave it
    // blank; Inf would ruin their colour ranges.
    let mut e_vec = Vec::with_capacity(3 * n);
    let mut b_vec = Vec::with_capacity(3 * n);
    let mut e_mag = Vec::with_capacity(n);
    let mut b_mag = Vec::with_capacity(n);
    for s in &samples {
        for (value, vec, mag) in [
            (&s.e, &mut e_vec, &mut e_mag),
            (&s.b, &mut b_vec, &mut b_mag),
        ] {
            match value {
                Ok(v) => {
                    vec.extend_from_slice(&[v.x, v.y, v.z]);
                    mag.push(magnitude(v));
                }
                Err(_) => {
                    vec.extend_from_slice(&[f64::NAN; 3]);
                    mag.push(f64::NAN);
                }
            }
        }
    }
    let near_edge = model.near_edge(&pts);
    let e_peak = peak(&e_mag, &pts, |k| !near_edge[k]);
    let e_edge_peak = peak(&e_mag, &pts, |k| near_edge[k]);
    let b_peak = peak(&b_mag, &pts, |_| true);
    let mut warnings = model.warnings.clone();
    warnings.extend(no_value_warnings(&samples, &pts));
    let n_near_edge = near_edge.iter().filter(|x| **x).count();
    if let Some((e, at)) = e_edge_peak {
        warnings.push(format!(
            "{n_near_edge} grid point(s) {NEAR_EDGE_RULE} are left out of max_e_mag_v_per_m \
             (the boundary elements do not resolve E there); the largest |E| among them is {} \
             at ({}, {}, {}) m: edges are where breakdown starts",
            output::si(e, "V/m", 4),
            at[0],
            at[1],
            at[2]
        ));
    }
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
        let scale = plot::Scale::Log;
        warnings.extend(contour_warnings(values, &contours, scale, unit));
        let title = match quantity {
            Quantity::E => "peak |E| (V/m); screening estimate, not a safety certificate",
            Quantity::B => "peak |B| (T); screening estimate, not a safety certificate",
        };
        let bytes = plot::heat_map_bytes(
            &HeatMap {
                u,
                v,
                values,
                scale,
                u_axis: plot::Axis::metres(ul),
                v_axis: plot::Axis::metres(vl),
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
        max_e_mag_v_per_m: e_peak.map(|(x, _)| x),
        max_e_at_m: e_peak.map(|(_, at)| at),
        max_b_mag_t: b_peak.map(|(x, _)| x),
        max_b_at_m: b_peak.map(|(_, at)| at),
        near_edge: NearEdge {
            rule: NEAR_EDGE_RULE,
            points_skipped: n_near_edge,
            max_e_mag_v_per_m: e_edge_peak.map(|(x, _)| x),
            max_e_at_m: e_edge_peak.map(|(_, at)| at),
        },
        points_without_e: e_mag.iter().filter(|x| x.is_nan()).count(),
        points_without_b: b_mag.iter().filter(|x| x.is_nan()).count(),
        files: files_out
            .iter()
            .map(|(p, _)| p.display().to_string())
            .collect(),
        warnings,
    };
    crate::output::print_stdout(&(crate::output::json_text(&result)? + "\n"))?;
    Ok(ExitCode::SUCCESS)
}
