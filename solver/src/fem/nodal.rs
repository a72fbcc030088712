//! The secondary's nodal capacitance matrix on a finite-element mesh: the electric part of the
//! resonance model with dielectrics and an enclosure.
//!
//! The mesh's own vertices on the winding surface, and every electrode, are the fine basis:
//! one solve per basis function with one factorisation, and the fine matrix by reactions,
//! C_pq = 2 pi eps0 (K phi_q)_p summed over the nodes of p (the discrete charge of p when q is
//! at 1 V and everything else at 0 V, equal to the energy form phi_p^T K phi_q since K phi_q
//! vanishes at the free nodes). The matrix of n sections of equal length follows without
//! another solve: the section nodes' hat functions, interpolated at the surface's vertices,
//! are combinations of the fine basis, C_n = P^T C P, which is the finite-element energy of
//! those boundary values exactly. Electrodes connected to the secondary follow its base or
//! top node; the others stay at 0 V.

use super::domain::Domain;
use super::mesh::Mesh;
use super::solve::SurfacePeak;
use super::solve::{
    Excitation, Locator, TWO_PI_EPS0, assemble, reactions, solve_all, surface_peaks,
    unit_excitation,
};
use crate::error::SolverError;
use nalgebra::DMatrix;

/// The fine nodal matrix of a secondary on a mesh (see the module doc).
#[derive(Debug, Clone)]
pub struct FemNodal {
    domain: Domain,
    mesh: Mesh,
    secondary: usize,
    /// Mesh vertices on the winding surface, base to top, and their fraction t in [0, 1] of
    /// the length from the base.
    sheet: Vec<(usize, f64)>,
    /// Fine capacitance matrix (F): the sheet's vertices, then the conductors other than
    /// the secondary (in domain order).
    matrix_f: DMatrix<f64>,
    /// Conductor index of each fine basis function after the sheet's.
    others: Vec<usize>,
}

impl FemNodal {
    /// Solve the fine basis of a meshed problem with a secondary.
    ///
    /// Errors: no secondary in the domain ([`SolverError::NoNodalCapacitance`]), a stiffness
    /// matrix that is not positive definite.
    pub fn new(domain: &Domain, mesh: &Mesh) -> Result<FemNodal, SolverError> {
        let secondary = domain
            .drive
            .as_ref()
            .and_then(|d| d.secondary)
            .ok_or_else(|| SolverError::NoNodalCapacitance {
                reason: "the finite-element model has no secondary".into(),
            })?;
        let profile = domain.conductors[secondary].profile;
        let mut sheet: Vec<(usize, f64)> = mesh
            .conductor
            .iter()
            .enumerate()
            .filter(|(_, c)| **c == Some(secondary))
            .map(|(i, _)| (i, profile.fraction(mesh.nodes[i][1])))
            .collect();
        sheet.sort_by(|a, b| a.1.total_cmp(&b.1));
        let others: Vec<usize> = (0..domain.conductors.len())
            .filter(|&c| c != secondary)
            .collect();
        let (k, _) = assemble(mesh, domain);
        let mut excitations: Vec<Excitation> = sheet
            .iter()
            .map(|&(node, _)| {
                (0..mesh.nodes.len())
                    .map(|i| {
                        if mesh.conductor[i].is_some() || mesh.grounded[i] {
                            Some(if i == node { 1.0 } else { 0.0 })
                        } else {
                            None
                        }
                    })
                    .collect()
            })
            .collect();
        excitations.extend(others.iter().map(|&c| unit_excitation(mesh, domain, c)));
        let potentials = solve_all(&k, &excitations)?;
        let m = excitations.len();
        let mut matrix_f = DMatrix::zeros(m, m);
        for (q, phi) in potentials.iter().enumerate() {
            let r = reactions(&k, phi);
            for (p, &(node, _)) in sheet.iter().enumerate() {
                matrix_f[(p, q)] = TWO_PI_EPS0 * r[node];
            }
            for (o, &c) in others.iter().enumerate() {
                let sum: f64 = (0..mesh.nodes.len())
                    .filter(|&i| mesh.conductor[i] == Some(c))
                    .map(|i| r[i])
                    .sum();
                matrix_f[(sheet.len() + o, q)] = TWO_PI_EPS0 * sum;
            }
        }
        // Symmetric up to the solver's rounding: keep it exactly so.
        let matrix_f = (&matrix_f + matrix_f.transpose()) * 0.5;
        Ok(FemNodal {
            domain: domain.clone(),
            mesh: mesh.clone(),
            secondary,
            sheet,
            matrix_f,
            others,
        })
    }

    /// The fine basis values (V) of node voltages `node_v` (n + 1 values at equal steps from
    /// the secondary's base to its top): the sheet's vertices interpolate them, connected
    /// electrodes take their terminal's value, the others 0 V.
    fn fine_values(&self, node_v: &[f64]) -> Vec<f64> {
        let n = node_v.len().saturating_sub(1).max(1);
        let at = |t: f64| {
            let x = t.clamp(0.0, 1.0) * n as f64;
            let j = (x.floor() as usize).min(n - 1).min(node_v.len() - 1);
            let next = node_v.get(j + 1).copied().unwrap_or(node_v[j]);
            node_v[j] + (next - node_v[j]) * (x - j as f64)
        };
        let connected = self
            .domain
            .drive
            .as_ref()
            .map(|d| d.connected.clone())
            .unwrap_or_default();
        let mut v: Vec<f64> = self.sheet.iter().map(|&(_, t)| at(t)).collect();
        v.extend(self.others.iter().map(|&c| match connected.get(c) {
            Some(Some(true)) => node_v[node_v.len() - 1],
            Some(Some(false)) => node_v[0],
            _ => 0.0,
        }));
        v
    }

    /// The (n + 1) x (n + 1) nodal capacitance matrix (F) of n sections of equal length, base
    /// node first: C_n = P^T C P with P the hat functions at the fine basis.
    pub fn section_matrix_f(&self, n: usize) -> DMatrix<f64> {
        let n = n.max(1);
        let m = self.matrix_f.nrows();
        let mut p = DMatrix::zeros(m, n + 1);
        for j in 0..=n {
            let mut unit = vec![0.0; n + 1];
            unit[j] = 1.0;
            for (i, v) in self.fine_values(&unit).into_iter().enumerate() {
                p[(i, j)] = v;
            }
        }
        p.transpose() * &self.matrix_f * p
    }

    /// The secondary's self-capacitance (F) at its top with node voltages `node_v` (1 at the
    /// top): 2 W / V_top^2 = v^T C v of the fine values.
    pub fn capacitance_for_nodes_f(&self, node_v: &[f64]) -> f64 {
        let v = nalgebra::DVector::from_vec(self.fine_values(node_v));
        v.dot(&(&self.matrix_f * &v))
    }

    /// The largest surface field (V/m) of each conductor for node voltages `node_v` (V), with
    /// the vertex (r, z) (m) where it occurs: one more solve with those boundary values.
    pub fn peak_fields_for_nodes(&self, node_v: &[f64]) -> Result<Vec<SurfacePeak>, SolverError> {
        let fine = self.fine_values(node_v);
        let mut value = vec![None; self.mesh.nodes.len()];
        for (i, slot) in value.iter_mut().enumerate() {
            if self.mesh.conductor[i].is_some() || self.mesh.grounded[i] {
                *slot = Some(0.0);
            }
        }
        for (p, &(node, _)) in self.sheet.iter().enumerate() {
            value[node] = Some(fine[p]);
        }
        for (o, &c) in self.others.iter().enumerate() {
            for (i, slot) in value.iter_mut().enumerate() {
                if self.mesh.conductor[i] == Some(c) {
                    *slot = Some(fine[self.sheet.len() + o]);
                }
            }
        }
        let (k, _) = assemble(&self.mesh, &self.domain);
        let phi = solve_all(&k, &[value])?.remove(0);
        let loc = Locator::new(&self.mesh);
        Ok(surface_peaks(&self.mesh, &loc, &self.domain, &phi))
    }

    /// Index of the secondary among the domain's conductors.
    pub fn secondary(&self) -> usize {
        self.secondary
    }

    /// The domain.
    pub fn domain(&self) -> &Domain {
        &self.domain
    }

    /// Elements of the mesh.
    pub fn elements(&self) -> usize {
        self.mesh.elements()
    }
}
