//! `coilfield capacitance --electric-solver fem`: the capacitances from the axisymmetric
//! finite-element model (dielectrics, a grounded enclosure), and the VTK file of its mesh.

use crate::{Format, output, vtk};
use coilfield_geometry::Design;
use coilfield_solver::fem::{FemProblem, FemSolution, FromDesignError};
use serde::Serialize;
use std::path::Path;
use std::process::ExitCode;

/// Which electric solver serves a command.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum ElectricSolver {
    /// Boundary elements (conductors in free space over a ground plane).
    Bem,
    /// Finite elements on the (r, z) half-plane (dielectrics, enclosure).
    Fem,
    /// fem when the design has a dielectric or an enclosure, else bem.
    Auto,
}

impl ElectricSolver {
    /// The solver library's choice.
    pub fn choice(self) -> coilfield_solver::fem::ElectricSolver {
        match self {
            ElectricSolver::Bem => coilfield_solver::fem::ElectricSolver::Bem,
            ElectricSolver::Fem => coilfield_solver::fem::ElectricSolver::Fem,
            ElectricSolver::Auto => coilfield_solver::fem::ElectricSolver::Auto,
        }
    }

    /// Whether the finite-element solver serves this design.
    pub fn uses_fem(self, design: &Design) -> bool {
        self.choice().uses_fem(design)
    }
}

/// The warning every finite-element result carries.
pub use coilfield_solver::fem::E_ONLY_WARNING;

#[derive(Serialize)]
struct ConductorOut {
    name: String,
    kind: &'static str,
    capacitance_f: f64,
    error_estimate_f: f64,
}

/// A conductor's largest surface field (V/m) and its place (m), in both solvers' output.
#[derive(Serialize)]
pub(crate) struct PeakOut {
    pub(crate) name: String,
    pub(crate) field_v_per_m: f64,
    pub(crate) at_m: [f64; 3],
    pub(crate) above_air_breakdown: bool,
}

#[derive(Serialize)]
struct CapOut {
    solver: &'static str,
    conductors: Vec<ConductorOut>,
    matrix_f: Vec<Vec<f64>>,
    matrix_error_estimate_f: Vec<Vec<f64>>,
    n_elements: usize,
    n_nodes: usize,
    /// The largest |E| on each conductor's surface at the drive potentials, with its place.
    peak_surface_fields: Vec<PeakOut>,
    warnings: Vec<String>,
}

/// Mesh and solve a design with the finite-element model; a refused mesh is bad input.
pub fn solve_design(design: &Design, label: &str) -> anyhow::Result<FemSolution> {
    let problem = FemProblem::from_design(design, label).map_err(|e| match e {
        FromDesignError::Design(d) => anyhow::Error::new(*d),
        FromDesignError::Solver(s) => anyhow::Error::new(s),
    })?;
    Ok(problem.solve()?)
}

/// Run `coilfield capacitance` with the finite-element solver.
pub fn run(
    design: &Design,
    label: &str,
    format: Format,
    out: Option<&Path>,
    mesh_vtk: Option<&Path>,
) -> anyhow::Result<ExitCode> {
    let sol = solve_design(design, label)?;
    let names = sol.conductor_names();
    let matrix = sol.capacitance_matrix_f().to_vec();
    let err = sol.error_estimate_f().to_vec();
    let secondary = design
        .windings
        .iter()
        .find(|w| w.role == coilfield_geometry::Role::Secondary)
        .map(|w| w.name.clone());
    let mut conductors: Vec<ConductorOut> = names
        .iter()
        .enumerate()
        .map(|(i, n)| ConductorOut {
            name: n.clone(),
            kind: if Some(n) == secondary.as_ref() {
                "secondary_profile"
            } else {
                "electrode"
            },
            capacitance_f: matrix[i][i],
            error_estimate_f: err[i][i],
        })
        .collect();
    if let (Some((c, e)), Some(name)) = (sol.self_capacitance_f(), secondary) {
        conductors.push(ConductorOut {
            name,
            kind: "secondary",
            capacitance_f: c,
            error_estimate_f: e,
        });
    }
    let mut warnings = vec![E_ONLY_WARNING.to_string()];
    let peak_surface_fields: Vec<PeakOut> = if coilfield_solver::field_model::has_potentials(design)
    {
        sol.peak_surface_fields()
            .into_iter()
            .map(|p| PeakOut {
                above_air_breakdown: p.field_v_per_m
                    >= coilfield_solver::resonance::AIR_BREAKDOWN_V_PER_M,
                name: p.name,
                field_v_per_m: p.field_v_per_m,
                at_m: [p.at_m.x, p.at_m.y, p.at_m.z],
            })
            .collect()
    } else {
        warnings.push(
            "no conductor has a potential in [drive] potentials: peak surface fields not \
                 computed"
                .to_string(),
        );
        Vec::new()
    };
    let result = CapOut {
        solver: "fem",
        conductors,
        matrix_f: matrix,
        matrix_error_estimate_f: err,
        n_elements: sol.mesh().elements(),
        n_nodes: sol.mesh().nodes.len(),
        peak_surface_fields,
        warnings,
    };
    if let Some(p) = mesh_vtk {
        output::write_atomic(p, &mesh_vtu(&sol)?)?;
    }
    let text = match format {
        Format::Json => serde_json::to_string_pretty(&result)? + "\n",
        Format::Table => table(&result),
    };
    if let Some(p) = out {
        output::write_atomic(p, text.as_bytes())?;
    }
    crate::output::print_stdout(&text)?;
    Ok(ExitCode::SUCCESS)
}

/// The inner part of the mesh as a VTK unstructured grid in the (r, z) half-plane (x = r,
/// y = 0, z = z; m), with the drive's potential (V) and recovered E (V/m) at the vertices
/// (the unit solution of the first conductor when the design has no drive potentials).
pub fn mesh_vtu(sol: &FemSolution) -> anyhow::Result<Vec<u8>> {
    let mesh = sol.mesh();
    let n = mesh.n_inner_nodes;
    let index = sol.conductor_names().len();
    let index = if sol.nodal_potential_v(index).is_some() {
        index
    } else {
        0
    };
    let phi = sol
        .nodal_potential_v(index)
        .ok_or_else(|| anyhow::anyhow!("no solution to export"))?;
    let points: Vec<[f64; 3]> = mesh.nodes[..n].iter().map(|p| [p[0], 0.0, p[1]]).collect();
    let mut e = Vec::with_capacity(3 * n);
    for p in &mesh.nodes[..n] {
        // Nudged off the axis and off conductor surfaces by nothing: the probe takes the
        // triangle the vertex belongs to; inside a conductor E is 0.
        match sol.probe(index, p[0], p[1]) {
            Some(coilfield_solver::fem::Probe::Field { e_v_per_m, .. }) => {
                e.extend_from_slice(&[e_v_per_m[0], 0.0, e_v_per_m[1]])
            }
            _ => e.extend_from_slice(&[0.0, 0.0, 0.0]),
        }
    }
    let cells: Vec<Vec<u64>> = mesh.triangles[..mesh.n_inner_triangles]
        .iter()
        .map(|t| t.iter().map(|&i| i as u64).collect())
        .collect();
    let region: Vec<f64> = mesh.region[..mesh.n_inner_triangles]
        .iter()
        .map(|r| r.map_or(-1.0, |r| r as f64))
        .collect();
    vtk::unstructured_triangles(
        &points,
        &cells,
        &[
            vtk::Array::scalars("potential_V", phi[..n].to_vec()),
            vtk::Array::vectors("E_V_per_m", e),
        ],
        &[vtk::Array::scalars("dielectric_index", region)],
    )
}

fn table(r: &CapOut) -> String {
    let mut s = format!(
        "Capacitances (finite elements: {} elements, {} nodes; error estimate = recovery \
         estimate of the energy error)\n\n",
        r.n_elements, r.n_nodes
    );
    s.push_str(&format!(
        "{:<24} {:<18} {:>14} {:>14}\n",
        "conductor", "kind", "C", "error est."
    ));
    for c in &r.conductors {
        s.push_str(&format!(
            "{:<24} {:<18} {:>14} {:>14}\n",
            c.name,
            c.kind,
            output::si(c.capacitance_f, "F", 5),
            format!("{:.1e} F", c.error_estimate_f),
        ));
    }
    s.push_str(
        "\nCapacitance matrix (F), electrodes in file order, then the secondary's profile:\n",
    );
    for row in &r.matrix_f {
        let cells: Vec<String> = row.iter().map(|v| format!("{v:>12.4e}")).collect();
        s.push_str(&format!("  {}\n", cells.join(" ")));
    }
    if !r.peak_surface_fields.is_empty() {
        s.push_str("\nPeak surface field at the drive potentials (peak values):\n");
        for p in &r.peak_surface_fields {
            s.push_str(&format!(
                "  {:<24} {:>14} at ({:.4}, {:.4}, {:.4}) m\n",
                p.name,
                output::si(p.field_v_per_m, "V/m", 4),
                p.at_m[0],
                p.at_m[1],
                p.at_m[2]
            ));
        }
    }
    for w in &r.warnings {
        s.push_str(&format!("\nwarning: {w}"));
    }
    s.push('\n');
    s
}
