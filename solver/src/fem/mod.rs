//! Axisymmetric finite-element electrostatics: conductors, dielectric regions of revolution,
//! a grounded enclosure or open space, on the (r, z) half-plane.
//!
//! # Public API
//! ```text
//! Domain::from_design(design, source) -> Result<Domain, FromDesignError>  // or build one directly
//! FemProblem::new(domain) -> Result<FemProblem, SolverError>              // checks its parts, meshes
//! FemProblem::solve(&self) -> Result<FemSolution, SolverError>           // factor once, all solves
//! FemSolution::capacitance_matrix_f / error_estimate_f / self_capacitance_f / probe / e_field
//! cases::reference_domain(case, parameters) -> Result<Domain, CaseError>   // validation rows
//! ```
//!
//! # Method
//! The r-weighted weak form of div(eps grad phi) = 0: find phi with the conductors' potentials
//! such that integral of eps grad phi . grad v r dr dz = 0 for every test function v vanishing
//! on them (the 2 pi of the revolution cancels). Linear (P1) triangles: K_ij = sum over
//! elements of eps_r (integral of r over T) grad N_i . grad N_j, exact for linear r. The
//! boundary conditions are the conductors' potentials (a profile linear in z on the
//! secondary's winding surface), 0 V on a ground plane and enclosure, and the natural
//! condition on the axis (the r weight makes it regular). The open far boundary is the Kelvin
//! transformation of an outer disc ([`mesh`]).
//!
//! K is assembled in `nalgebra-sparse` CSR; the free block is factored once by `faer`'s
//! sparse Cholesky (`sp_cholesky`), which orders the unknowns by approximate minimum degree
//! itself and factors supernodally: `nalgebra-sparse`'s own Cholesky has no fill-reducing
//! ordering, and a 2-D mesh in its natural order fills in ~n^1.5 entries. One right-hand side
//! per conductor (plus the drive's), solved with the same factors.
//!
//! The capacitance matrix is the energy form C_ij = 2 pi eps0 phi_i^T K phi_j with phi_i the
//! solution for conductor i at 1 V (its profile, for the secondary) and every other at 0 V:
//! for uniform conductors this is the Maxwell matrix (charges by reaction), symmetric by
//! construction. Its a-posteriori error estimate is the recovery (Zienkiewicz-Zhu) estimate of
//! the energy-norm error: the discrete energy of a Dirichlet problem exceeds the exact one by
//! the energy of the error, so C_ii is high by about 2 pi eps0 eta_i^2 (an estimate, not a
//! bound; it is conservative across dielectric interfaces, where the recovery is done on
//! each side separately).
//!
//! # Limitations
//! - The secondary is a sheet (its outer surface, radius + wire radius) with a linear
//!   potential profile: the enamel and the field between turns are not seen.
//! - Dielectrics and the enclosure act on E only; B, L and M ignore them.
//! - Linear elements: errors fall as h^2 in the capacitance (see the convergence table in the
//!   tests) and as h in the field near sharp edges.

pub mod cases;
pub mod domain;
pub mod mesh;
mod nodal;
pub mod parts;
mod solve;

pub use domain::{
    Area, Conductor, Domain, DriveV, FromDesignError, Outer, Piece, Profile2d, Region,
};
pub use mesh::{Kelvin, Mesh, mesh_domain};
pub use nodal::FemNodal;
pub use solve::{Probe, SurfacePeak};

use crate::electrostatic::PeakField;
use crate::error::SolverError;
use coilfield_geometry::{Design, local_frame};
use nalgebra::{Point3, Vector3};
use nalgebra_sparse::CsrMatrix;
use solve::{
    Excitation, Locator, TWO_PI_EPS0, assemble, drive_excitation, energy_product, probe,
    recovery_error, solve_all, surface_peaks, unit_excitation,
};

/// Which electric solver serves a computation of E and the capacitances.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum ElectricSolver {
    /// Boundary elements ([`crate::electrostatic`]): conductors in free space over a ground
    /// plane.
    Bem,
    /// Finite elements on the (r, z) half-plane (this module): dielectrics, an enclosure.
    Fem,
    /// Finite elements when the design has a dielectric or an enclosure, else boundary
    /// elements.
    #[default]
    Auto,
}

impl ElectricSolver {
    /// Whether the finite-element solver serves `design`.
    pub fn uses_fem(self, design: &Design) -> bool {
        match self {
            ElectricSolver::Bem => false,
            ElectricSolver::Fem => true,
            ElectricSolver::Auto => design.media.acts_on_field(),
        }
    }

    /// The name of the solver that serves `design`: "bem" or "fem".
    pub fn name_for(self, design: &Design) -> &'static str {
        if self.uses_fem(design) { "fem" } else { "bem" }
    }
}

/// The warning every finite-element result carries.
pub const E_ONLY_WARNING: &str = "dielectrics and the enclosure act on E only: inductances, \
     couplings and B ignore them";

/// A meshed finite-element problem (plan once, solve once, evaluate many).
#[derive(Debug, Clone)]
pub struct FemProblem {
    domain: Domain,
    mesh: Mesh,
}

/// The solved problem.
#[derive(Debug, Clone)]
pub struct FemSolution {
    domain: Domain,
    mesh: Mesh,
    locator: Locator,
    /// Nodal potentials: one per conductor, then the drive's if there is one.
    potentials: Vec<Vec<f64>>,
    matrix_f: Vec<Vec<f64>>,
    error_f: Vec<Vec<f64>>,
}

impl FemProblem {
    /// Mesh a half-plane problem.
    pub fn new(domain: Domain) -> Result<FemProblem, SolverError> {
        let mesh = mesh_domain(&domain)?;
        Ok(FemProblem { domain, mesh })
    }

    /// The half-plane problem of a design's electric model, meshed.
    pub fn from_design(design: &Design, source: &str) -> Result<FemProblem, FromDesignError> {
        let domain = Domain::from_design(design, source)?;
        Ok(FemProblem::new(domain)?)
    }

    /// The secondary's fine nodal capacitance matrix on this mesh ([`FemNodal`]).
    pub fn nodal(&self) -> Result<FemNodal, SolverError> {
        FemNodal::new(&self.domain, &self.mesh)
    }

    /// The mesh.
    pub fn mesh(&self) -> &Mesh {
        &self.mesh
    }

    /// The domain.
    pub fn domain(&self) -> &Domain {
        &self.domain
    }

    /// Assemble, factor once and solve for every conductor (and the drive).
    pub fn solve(&self) -> Result<FemSolution, SolverError> {
        let (k, weights): (CsrMatrix<f64>, Vec<f64>) = assemble(&self.mesh, &self.domain);
        let n_c = self.domain.conductors.len();
        let mut excitations: Vec<Excitation> = (0..n_c)
            .map(|c| unit_excitation(&self.mesh, &self.domain, c))
            .collect();
        if let Some(ex) = drive_excitation(&self.mesh, &self.domain) {
            excitations.push(ex);
        }
        let potentials = solve_all(&k, &excitations)?;
        let locator = Locator::new(&self.mesh);
        let mut matrix_f = vec![vec![0.0; n_c]; n_c];
        for i in 0..n_c {
            for j in i..n_c {
                let c = TWO_PI_EPS0 * energy_product(&k, &potentials[i], &potentials[j]);
                matrix_f[i][j] = c;
                matrix_f[j][i] = c;
            }
        }
        let diag_err: Vec<f64> = (0..n_c)
            .map(|i| TWO_PI_EPS0 * recovery_error(&self.mesh, &locator, &weights, &potentials[i]))
            .collect();
        let error_f = (0..n_c)
            .map(|i| {
                (0..n_c)
                    .map(|j| (diag_err[i] * diag_err[j]).sqrt())
                    .collect()
            })
            .collect();
        Ok(FemSolution {
            domain: self.domain.clone(),
            mesh: self.mesh.clone(),
            locator,
            potentials,
            matrix_f,
            error_f,
        })
    }
}

impl FemSolution {
    /// Conductor names, in the order of the matrix (electrodes in file order, then the
    /// secondary).
    pub fn conductor_names(&self) -> Vec<String> {
        self.domain
            .conductors
            .iter()
            .map(|c| c.name.clone())
            .collect()
    }

    /// The capacitance matrix (F): C_ij = 2 pi eps0 phi_i^T K phi_j, the Maxwell matrix for
    /// uniform conductors; the secondary's row and column are those of its linear profile
    /// (0 V at its base, 1 V at its top).
    pub fn capacitance_matrix_f(&self) -> &[Vec<f64>] {
        &self.matrix_f
    }

    /// Recovery estimate (F) of the error of each entry: 2 pi eps0 eta_i^2 on the diagonal,
    /// the geometric mean of the two diagonal estimates off it.
    pub fn error_estimate_f(&self) -> &[Vec<f64>] {
        &self.error_f
    }

    /// The secondary's self-capacitance (F) at its top, C = 2 W / V_top^2 with its linear
    /// profile, its connected electrodes at their terminals' potentials and every other
    /// conductor at 0 V; and its recovery error estimate (F). None without a secondary.
    pub fn self_capacitance_f(&self) -> Option<(f64, f64)> {
        let drive = self.domain.drive.as_ref()?;
        let s = drive.secondary?;
        // v: 1 on the secondary and on electrodes tied to its top, 0 elsewhere.
        let v: Vec<f64> = (0..self.matrix_f.len())
            .map(|i| {
                if i == s || drive.connected[i] == Some(true) {
                    1.0
                } else {
                    0.0
                }
            })
            .collect();
        let mut c = 0.0;
        let mut e = 0.0;
        for i in 0..v.len() {
            for j in 0..v.len() {
                c += v[i] * self.matrix_f[i][j] * v[j];
                e += v[i] * self.error_f[i][j] * v[j];
            }
        }
        Some((c, e))
    }

    /// The mesh.
    pub fn mesh(&self) -> &Mesh {
        &self.mesh
    }

    /// Nodal potential (V) of solution `index`: conductor `index` at 1 V, or, for index =
    /// the number of conductors, the drive.
    pub fn nodal_potential_v(&self, index: usize) -> Option<&[f64]> {
        self.potentials.get(index).map(|v| v.as_slice())
    }

    /// Potential and E at (r, z) (m) of solution `index` (see
    /// [`FemSolution::nodal_potential_v`]).
    pub fn probe(&self, index: usize, r_m: f64, z_m: f64) -> Option<Probe> {
        let phi = self.potentials.get(index)?;
        Some(probe(&self.mesh, &self.locator, phi, [r_m, z_m]))
    }

    /// The largest surface field (V/m) on each conductor (in the order of the matrix) for
    /// solution `index` (see [`FemSolution::nodal_potential_v`]), and the vertex (r, z) (m)
    /// where it occurs; None for a conductor without a vertex or an index without a solution.
    pub fn peak_surface_fields_rz(&self, index: usize) -> Vec<SurfacePeak> {
        match self.potentials.get(index) {
            Some(phi) => surface_peaks(&self.mesh, &self.locator, &self.domain, phi),
            None => vec![None; self.domain.conductors.len()],
        }
    }

    /// The largest surface field on each conductor under the design's drive, in the design's
    /// frame (at azimuth 0 of the axis frame), as the boundary-element solver reports it;
    /// empty for a domain not built from a design or without drive potentials.
    pub fn peak_surface_fields(&self) -> Vec<PeakField> {
        let Some(axis) = self.domain.axis else {
            return Vec::new();
        };
        let index = self.domain.conductors.len();
        if self.potentials.len() <= index {
            return Vec::new();
        }
        let (x_hat, _) = local_frame(&axis.direction);
        self.peak_surface_fields_rz(index)
            .into_iter()
            .zip(&self.domain.conductors)
            .filter_map(|(p, c)| {
                let (e, [r, z]) = p?;
                Some(PeakField {
                    name: c.name.clone(),
                    field_v_per_m: e,
                    at_m: axis.origin_m + axis.direction.as_ref() * z + x_hat * r,
                })
            })
            .collect()
    }

    /// Potential (V) and E (V/m) at points of the design's frame under the drive; None for a
    /// domain not built from a design (no axis or no drive) or a point inside a conductor or
    /// outside the domain (the field there is zero).
    pub fn e_field(&self, points_m: &[Point3<f64>]) -> Vec<Option<(f64, Vector3<f64>)>> {
        let (Some(axis), Some(_)) = (self.domain.axis, self.domain.drive.as_ref()) else {
            return vec![None; points_m.len()];
        };
        let index = self.domain.conductors.len();
        let n = axis.direction.into_inner();
        points_m
            .iter()
            .map(|p| {
                let d = p - axis.origin_m;
                let z = d.dot(&n);
                let radial = d - n * z;
                let r = radial.norm();
                match self.probe(index, r, z)? {
                    Probe::Field { phi_v, e_v_per_m } => {
                        let r_hat = if r > 0.0 {
                            radial / r
                        } else {
                            Vector3::zeros()
                        };
                        Some((phi_v, r_hat * e_v_per_m[0] + n * e_v_per_m[1]))
                    }
                    _ => None,
                }
            })
            .collect()
    }
}
