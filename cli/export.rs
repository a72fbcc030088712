//! `coilfield export DESIGN --vtk DIR`: the windings as polylines and the electrodes as
//! surfaces, one VTK XML PolyData file each, and a `.pvd` collection of them.
//!
//! Every file is computed before any is written, and each is replaced atomically, so a failure
//! leaves the folder as it was.

use crate::vtk::{self, Array, Cells};
use crate::{BadInput, load, output};
use coilfield_geometry::discretise::filament_model;
use coilfield_geometry::{Design, Electrode, Shape, Winding, local_frame};
use coilfield_solver::electrostatic::Solution;
use coilfield_solver::field_model;
use std::f64::consts::TAU;
use std::path::Path;

/// Samples along an electrode's generatrix and around its axis in the exported surface.
const SURFACE_N_GENERATRIX: usize = 96;
/// Samples in azimuth of an exported electrode surface.
const SURFACE_N_AZIMUTH: usize = 64;

/// Per-point surface quantities of an electrode (one value per point of its surface mesh).
pub struct SurfaceData {
    /// Surface charge density (C/m^2, at the peak drive potentials).
    pub sigma_c_per_m2: Vec<f64>,
    /// Normal field at the surface (V/m, peak).
    pub e_surface_v_per_m: Vec<f64>,
}

/// A winding as polylines: one cell per turn, with `turn_index` and `current_peak_A` as point
/// and cell data. The current is the drive's peak current times the filament weight (N for N
/// coincident turns of a ring). The whole wire is drawn; of a tapped winding, the idle part
/// carries 0 A (a cell ends where a turn ends and where the tap is).
pub fn winding_vtp(w: &Winding, current_a: f64) -> anyhow::Result<Vec<u8>> {
    let model = filament_model(&w.without_tap());
    let mut pts: Vec<[f64; 3]> = model.points_m.iter().map(|p| [p.x, p.y, p.z]).collect();
    let n_seg = model.n_segments();
    if model.closed && !pts.is_empty() {
        // Close the line explicitly so viewers draw the last filament.
        pts.push(pts[0]);
    }
    // Turn of each filament: the curve is sampled at equal steps of angle, so filament k
    // belongs to turn floor(k * turns / n_seg); a polyline is one "turn".
    let turns = match w.shape {
        Shape::Polyline { .. } | Shape::Ring { .. } => 1.0,
        ref s => s.turns().unwrap_or(1.0),
    };
    let turn_of = |k: usize| {
        ((k as f64 * turns / n_seg.max(1) as f64).floor())
            .min(turns.ceil() - 1.0)
            .max(0.0)
    };
    // Filament k spans t in [k, k + 1] / n_seg; it carries current when its middle lies in
    // the tap's active range (all of them without a tap).
    let (t0, t1) = w.active_range();
    let i_peak = current_a * model.weight;
    let current_of = |k: usize| {
        let t_mid = (k as f64 + 0.5) / n_seg.max(1) as f64;
        if (t0..=t1).contains(&t_mid) {
            i_peak
        } else {
            0.0
        }
    };
    let mut cells: Vec<Vec<u64>> = Vec::new();
    let mut cell_turn = Vec::new();
    let mut cell_current = Vec::new();
    let mut current_cell: Vec<u64> = Vec::new();
    let mut last = None;
    for k in 0..n_seg {
        let key = (turn_of(k), current_of(k));
        if last != Some(key) {
            if !current_cell.is_empty() {
                cells.push(std::mem::take(&mut current_cell));
            }
            current_cell.push(k as u64);
            cell_turn.push(key.0);
            cell_current.push(key.1);
            last = Some(key);
        }
        current_cell.push((k + 1) as u64);
    }
    if !current_cell.is_empty() {
        cells.push(current_cell);
    }
    let point_turn: Vec<f64> = (0..pts.len())
        .map(|k| turn_of(k.min(n_seg.saturating_sub(1))))
        .collect();
    // A point carries the current of the filament that starts there (the last point, of the
    // filament that ends there).
    let point_current: Vec<f64> = (0..pts.len())
        .map(|k| current_of(k.min(n_seg.saturating_sub(1))))
        .collect();
    vtk::poly_data(
        &pts,
        Cells::Lines,
        &cells,
        &[
            Array::scalars("turn_index", point_turn),
            Array::scalars("current_peak_A", point_current),
        ],
        &[
            Array::scalars("turn_index", cell_turn),
            Array::scalars("current_peak_A", cell_current),
        ],
    )
}

/// The surface mesh of an electrode.
pub struct Mesh {
    /// Points (m), generatrix-major: point (i, j) is generatrix sample i (of
    /// `SURFACE_N_GENERATRIX + 1`) at azimuth j (of `SURFACE_N_AZIMUTH`).
    pub points_m: Vec<[f64; 3]>,
    /// Quadrilaterals as point indices.
    pub quads: Vec<Vec<u64>>,
}

/// The surface mesh of an electrode, a surface of revolution of its generatrix.
pub fn electrode_mesh(e: &Electrode) -> Mesh {
    let (o, n) = e.shape.origin_axis();
    let (x_hat, y_hat) = local_frame(&n);
    let mut pts = Vec::new();
    for i in 0..=SURFACE_N_GENERATRIX {
        let (rho, zeta) = e
            .shape
            .generatrix_at(i as f64 / SURFACE_N_GENERATRIX as f64);
        for j in 0..SURFACE_N_AZIMUTH {
            let phi = TAU * j as f64 / SURFACE_N_AZIMUTH as f64;
            let p = o + n.as_ref() * zeta + (x_hat * phi.cos() + y_hat * phi.sin()) * rho;
            pts.push([p.x, p.y, p.z]);
        }
    }
    let id = |i: usize, j: usize| (i * SURFACE_N_AZIMUTH + j % SURFACE_N_AZIMUTH) as u64;
    let mut quads = Vec::new();
    for i in 0..SURFACE_N_GENERATRIX {
        for j in 0..SURFACE_N_AZIMUTH {
            quads.push(vec![id(i, j), id(i, j + 1), id(i + 1, j + 1), id(i + 1, j)]);
        }
    }
    Mesh {
        points_m: pts,
        quads,
    }
}

/// An electrode as a surface of quadrilaterals, with surface data when a solution is given.
pub fn electrode_vtp(e: &Electrode, data: Option<&SurfaceData>) -> anyhow::Result<Vec<u8>> {
    let Mesh {
        points_m: pts,
        quads,
        ..
    } = electrode_mesh(e);
    let mut point_data = Vec::new();
    if let Some(d) = data {
        point_data.push(Array::scalars("sigma_C_per_m2", d.sigma_c_per_m2.clone()));
        point_data.push(Array::scalars(
            "E_surface_V_per_m",
            d.e_surface_v_per_m.clone(),
        ));
    }
    vtk::poly_data(&pts, Cells::Polys, &quads, &point_data, &[])
}

/// Run the command: compute every file, then write them.
pub fn run(design_path: &Path, dir: &Path) -> anyhow::Result<std::process::ExitCode> {
    let design: Design = load::design_resolved(design_path)?.design;
    if dir.exists() && !dir.is_dir() {
        return Err(BadInput(format!(
            "--vtk {}: exists and is not a folder",
            dir.display()
        ))
        .into());
    }
    let mut files: Vec<(String, Vec<u8>)> = Vec::new();
    for w in &design.windings {
        let i = design.drive.current_a(&w.name);
        files.push((format!("winding-{}.vtp", w.name), winding_vtp(w, i)?));
    }
    // Surface charge and field need the electrostatic solution, which needs a potential.
    let solution = if !design.electrodes.is_empty() && field_model::has_potentials(&design) {
        Some(field_model::electrostatic_solution(
            &design,
            &design_path.display().to_string(),
            coilfield_solver::Par::Rayon,
        )?)
    } else {
        if !design.electrodes.is_empty() {
            eprintln!(
                "warning: no conductor has a potential in [drive] potentials: electrodes exported without surface charge and field"
            );
        }
        None
    };
    for e in &design.electrodes {
        let data = solution.as_ref().map(|s| surface_data(e, s));
        files.push((
            format!("electrode-{}.vtp", e.name),
            electrode_vtp(e, data.as_ref())?,
        ));
    }
    let names: Vec<String> = files.iter().map(|(n, _)| n.clone()).collect();
    files.push(("design.pvd".into(), vtk::pvd(&names)));
    std::fs::create_dir_all(dir).map_err(|e| {
        BadInput(format!(
            "--vtk {}: cannot create the folder: {e}",
            dir.display()
        ))
    })?;
    for (name, bytes) in &files {
        output::write_atomic(&dir.join(name), bytes)?;
    }
    let listing: String = files
        .iter()
        .map(|(name, _)| format!("{}\n", dir.join(name).display()))
        .collect();
    output::print_stdout(&listing)?;
    Ok(std::process::ExitCode::SUCCESS)
}

/// Surface charge density and surface field at every point of an electrode's mesh: each
/// generatrix sample takes the values of the nearest panel of that electrode (panels carry a
/// constant sigma each).
pub fn surface_data(e: &Electrode, sol: &Solution) -> SurfaceData {
    let axis = sol.axis();
    let (o, n) = e.shape.origin_axis();
    let base_z = (o - axis.origin_m).dot(axis.direction.as_ref());
    let sign = n.dot(axis.direction.as_ref()).signum();
    let panels: Vec<_> = sol
        .panels()
        .into_iter()
        .filter(|p| p.surface == e.name)
        .collect();
    let dist = |p: &coilfield_solver::electrostatic::PanelResult, rho: f64, z: f64| {
        let (a, b) = (p.start_rho_z_m, p.end_rho_z_m);
        let (dx, dz) = (b[0] - a[0], b[1] - a[1]);
        let len2 = dx * dx + dz * dz;
        let t = if len2 > 0.0 {
            (((rho - a[0]) * dx + (z - a[1]) * dz) / len2).clamp(0.0, 1.0)
        } else {
            0.0
        };
        (rho - a[0] - t * dx).hypot(z - a[1] - t * dz)
    };
    let mut sigma = Vec::new();
    let mut field = Vec::new();
    for i in 0..=SURFACE_N_GENERATRIX {
        let (rho, zeta) = e
            .shape
            .generatrix_at(i as f64 / SURFACE_N_GENERATRIX as f64);
        let z = base_z + sign * zeta;
        let best = panels
            .iter()
            .min_by(|a, b| dist(a, rho, z).total_cmp(&dist(b, rho, z)));
        let (s, f) = best.map_or((f64::NAN, f64::NAN), |p| {
            (p.sigma_c_per_m2, p.surface_field_v_per_m)
        });
        for _ in 0..SURFACE_N_AZIMUTH {
            sigma.push(s);
            field.push(f);
        }
    }
    SurfaceData {
        sigma_c_per_m2: sigma,
        e_surface_v_per_m: field,
    }
}
