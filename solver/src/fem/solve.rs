//! Assembly, factorisation, solves, capacitances, the recovery error estimate and the field
//! evaluation of the finite-element electrostatic model.

use super::domain::{Domain, Profile2d};
use super::mesh::{Kelvin, Mesh};
use crate::constants::EPS0;
use crate::error::SolverError;
use faer::Mat;
use faer::linalg::solvers::Solve;
use faer::sparse::{SparseColMat, SymbolicSparseColMat};
use nalgebra_sparse::{CooMatrix, CsrMatrix};
use std::f64::consts::PI;

/// Degree-5 seven-point rule on a triangle (barycentric a, b, c and weight summing to 1):
/// J. Radon (1948), as tabulated by D. A. Dunavant, Int. J. Numer. Methods Eng. 21 (1985)
/// 1129-1148, rule of degree 5 (values recalled from that table).
const RULE7: [(f64, f64, f64, f64); 7] = {
    const A1: f64 = 0.059_715_871_789_770;
    const B1: f64 = 0.470_142_064_105_115;
    const A2: f64 = 0.797_426_985_353_087;
    const B2: f64 = 0.101_286_507_323_456;
    const W0: f64 = 0.225;
    const W1: f64 = 0.132_394_152_788_506;
    const W2: f64 = 0.125_939_180_544_827;
    [
        (1.0 / 3.0, 1.0 / 3.0, 1.0 / 3.0, W0),
        (A1, B1, B1, W1),
        (B1, A1, B1, W1),
        (B1, B1, A1, W1),
        (A2, B2, B2, W2),
        (B2, A2, B2, W2),
        (B2, B2, A2, W2),
    ]
};

/// Signed area (m^2) and the gradients of the three hat functions (1/m) of a triangle.
fn shape_gradients(nodes: &[[f64; 2]], t: &[usize; 3]) -> (f64, [[f64; 2]; 3]) {
    let [p0, p1, p2] = t.map(|i| nodes[i]);
    let area2 = (p1[0] - p0[0]) * (p2[1] - p0[1]) - (p2[0] - p0[0]) * (p1[1] - p0[1]);
    let g = |a: [f64; 2], b: [f64; 2]| [(a[1] - b[1]) / area2, (b[0] - a[0]) / area2];
    (0.5 * area2, [g(p1, p2), g(p2, p0), g(p0, p1)])
}

/// The element weight integral of eps_r r (times R^2 / |x' - c|^2 in the Kelvin disc) over a
/// triangle (m^3): the r-weighted weak form of div(eps grad phi) = 0 (the 2 pi of the
/// revolution and eps0 are applied to the energies).
fn element_weight(mesh: &Mesh, domain: &Domain, t: usize) -> f64 {
    let tri = &mesh.triangles[t];
    let (area, _) = shape_gradients(&mesh.nodes, tri);
    let area = area.abs();
    let [a, b, c] = tri.map(|i| mesh.nodes[i]);
    if mesh.is_exterior(t) {
        let k = mesh
            .kelvin
            .expect("exterior triangles come with their Kelvin map");
        RULE7
            .iter()
            .map(|&(l0, l1, l2, w)| {
                let r = l0 * a[0] + l1 * b[0] + l2 * c[0];
                let z = l0 * a[1] + l1 * b[1] + l2 * c[1] - k.centre_z;
                w * r * k.radius * k.radius / (r * r + z * z)
            })
            .sum::<f64>()
            * area
    } else {
        let eps = mesh.region[t].map_or(1.0, |r| domain.regions[r].relative_permittivity);
        eps * area * (a[0] + b[0] + c[0]) / 3.0
    }
}

/// The stiffness matrix K (m) with K_ij = sum over elements of w_T grad N_i . grad N_j, in
/// CSR; the energy of a nodal potential phi is W = pi eps0 phi^T K phi.
pub(crate) fn assemble(mesh: &Mesh, domain: &Domain) -> (CsrMatrix<f64>, Vec<f64>) {
    let n = mesh.nodes.len();
    let mut coo = CooMatrix::new(n, n);
    let mut weights = Vec::with_capacity(mesh.triangles.len());
    for (t, tri) in mesh.triangles.iter().enumerate() {
        let (_, g) = shape_gradients(&mesh.nodes, tri);
        let w = element_weight(mesh, domain, t);
        weights.push(w);
        for i in 0..3 {
            for j in 0..3 {
                coo.push(tri[i], tri[j], w * (g[i][0] * g[j][0] + g[i][1] * g[j][1]));
            }
        }
    }
    (CsrMatrix::from(&coo), weights)
}

/// One excitation: the potential (V) of every fixed node.
pub(crate) type Excitation = Vec<Option<f64>>;

/// The potential (V) of every fixed node when conductor `k` is at 1 V (its profile for the
/// secondary) and everything else at 0 V.
pub(crate) fn unit_excitation(mesh: &Mesh, domain: &Domain, k: usize) -> Excitation {
    fixed_values(mesh, |c, z| {
        if c == k {
            domain.conductors[c].profile.fraction(z)
        } else {
            0.0
        }
    })
}

/// Fixed values: conductor nodes take `value(conductor, z)`, grounded nodes 0 V.
pub(crate) fn fixed_values(mesh: &Mesh, value: impl Fn(usize, f64) -> f64) -> Excitation {
    mesh.nodes
        .iter()
        .enumerate()
        .map(|(i, p)| match (mesh.conductor[i], mesh.grounded[i]) {
            (Some(c), _) => Some(value(c, p[1])),
            (None, true) => Some(0.0),
            (None, false) => None,
        })
        .collect()
}

/// The drive's excitation of a domain built from a design.
pub(crate) fn drive_excitation(mesh: &Mesh, domain: &Domain) -> Option<Excitation> {
    let drive = domain.drive.as_ref()?;
    Some(fixed_values(mesh, |c, z| {
        let (vb, vt) = drive.conductor_v[c];
        match domain.conductors[c].profile {
            Profile2d::Uniform => vt,
            p @ Profile2d::Linear { .. } => {
                vb + (vt - vb) * drive.secondary_fraction(p.fraction(z))
            }
        }
    }))
}

/// Solve K phi = 0 at the free nodes for every excitation with one factorisation (faer's
/// supernodal sparse Cholesky with its AMD ordering).
pub(crate) fn solve_all(
    k: &CsrMatrix<f64>,
    excitations: &[Excitation],
) -> Result<Vec<Vec<f64>>, SolverError> {
    let n = k.nrows();
    let Some(first) = excitations.first() else {
        return Ok(Vec::new());
    };
    let mut free_index = vec![usize::MAX; n];
    let mut free = Vec::new();
    for i in 0..n {
        if first[i].is_none() {
            free_index[i] = free.len();
            free.push(i);
        }
    }
    let nf = free.len();
    let mut col_ptr = Vec::with_capacity(nf + 1);
    let mut row_idx = Vec::new();
    let mut vals = Vec::new();
    col_ptr.push(0usize);
    let mut rhs = Mat::<f64>::zeros(nf, excitations.len());
    for (fi, &i) in free.iter().enumerate() {
        let row = k.row(i);
        for (&j, &v) in row.col_indices().iter().zip(row.values()) {
            if free_index[j] != usize::MAX {
                row_idx.push(free_index[j]);
                vals.push(v);
            } else {
                for (e, ex) in excitations.iter().enumerate() {
                    rhs[(fi, e)] -= v * ex[j].unwrap_or(0.0);
                }
            }
        }
        col_ptr.push(row_idx.len());
    }
    // K is symmetric: the CSR rows of the free block are its CSC columns.
    let symbolic = SymbolicSparseColMat::new_checked(nf, nf, col_ptr, None, row_idx);
    let kff = SparseColMat::<usize, f64>::new(symbolic, vals);
    let llt = kff
        .sp_cholesky(faer::Side::Lower)
        .map_err(|_| SolverError::NotPositiveDefinite {
            quantity: "the finite-element stiffness matrix".to_string(),
        })?;
    llt.solve_in_place(rhs.as_mut());
    Ok(excitations
        .iter()
        .enumerate()
        .map(|(e, ex)| {
            (0..n)
                .map(|i| match ex[i] {
                    Some(v) => v,
                    None => rhs[(free_index[i], e)],
                })
                .collect()
        })
        .collect())
}

/// phi_a^T K phi_b (m V^2): 2 pi eps0 times it is the mutual energy term of the capacitance
/// matrix.
pub(crate) fn energy_product(k: &CsrMatrix<f64>, a: &[f64], b: &[f64]) -> f64 {
    let mut sum = 0.0;
    for (i, row) in k.row_iter().enumerate() {
        let kb: f64 = row
            .col_indices()
            .iter()
            .zip(row.values())
            .map(|(&j, &v)| v * b[j])
            .sum();
        sum += a[i] * kb;
    }
    sum
}

/// Point location and gradient recovery on a mesh.
#[derive(Debug, Clone)]
pub(crate) struct Locator {
    /// Per part (inner, Kelvin): grid origin, cell size, cells per side, triangle lists.
    grids: Vec<Grid>,
    /// Triangles around each node (CSR).
    around_ptr: Vec<usize>,
    around: Vec<usize>,
    /// Triangles wholly inside one conductor (their gradient is 0, they take no part in the
    /// recovery).
    dead: Vec<bool>,
}

#[derive(Debug, Clone)]
struct Grid {
    lo: [f64; 2],
    cell: f64,
    nx: usize,
    ny: usize,
    cells: Vec<Vec<usize>>,
}

impl Grid {
    fn new(mesh: &Mesh, tris: std::ops::Range<usize>) -> Grid {
        let mut lo = [f64::INFINITY; 2];
        let mut hi = [f64::NEG_INFINITY; 2];
        for t in tris.clone() {
            for &i in &mesh.triangles[t] {
                for d in 0..2 {
                    lo[d] = lo[d].min(mesh.nodes[i][d]);
                    hi[d] = hi[d].max(mesh.nodes[i][d]);
                }
            }
        }
        let count = tris.len().max(1) as f64;
        let span = (hi[0] - lo[0]).max(hi[1] - lo[1]).max(1e-30);
        let cell = span / count.sqrt().max(1.0);
        let nx = (((hi[0] - lo[0]) / cell).ceil() as usize).max(1);
        let ny = (((hi[1] - lo[1]) / cell).ceil() as usize).max(1);
        let mut cells = vec![Vec::new(); nx * ny];
        for t in tris {
            let ps = mesh.triangles[t].map(|i| mesh.nodes[i]);
            let (x0, x1) = (
                ps.iter().map(|p| p[0]).fold(f64::INFINITY, f64::min),
                ps.iter().map(|p| p[0]).fold(f64::NEG_INFINITY, f64::max),
            );
            let (y0, y1) = (
                ps.iter().map(|p| p[1]).fold(f64::INFINITY, f64::min),
                ps.iter().map(|p| p[1]).fold(f64::NEG_INFINITY, f64::max),
            );
            let ix = |x: f64| (((x - lo[0]) / cell) as usize).min(nx - 1);
            let iy = |y: f64| (((y - lo[1]) / cell) as usize).min(ny - 1);
            for cx in ix(x0)..=ix(x1) {
                for cy in iy(y0)..=iy(y1) {
                    cells[cy * nx + cx].push(t);
                }
            }
        }
        Grid {
            lo,
            cell,
            nx,
            ny,
            cells,
        }
    }

    fn find(&self, mesh: &Mesh, p: [f64; 2]) -> Option<(usize, [f64; 3])> {
        let fx = (p[0] - self.lo[0]) / self.cell;
        let fy = (p[1] - self.lo[1]) / self.cell;
        if fx < -1e-9 || fy < -1e-9 || fx > self.nx as f64 + 1e-9 || fy > self.ny as f64 + 1e-9 {
            return None;
        }
        let cx = (fx.max(0.0) as usize).min(self.nx - 1);
        let cy = (fy.max(0.0) as usize).min(self.ny - 1);
        let mut best: Option<(usize, [f64; 3], f64)> = None;
        for &t in &self.cells[cy * self.nx + cx] {
            let l = barycentric(&mesh.nodes, &mesh.triangles[t], p);
            let worst = l.iter().copied().fold(f64::INFINITY, f64::min);
            if best.as_ref().is_none_or(|b| worst > b.2) {
                best = Some((t, l, worst));
            }
        }
        best.filter(|b| b.2 > -1e-9).map(|b| (b.0, b.1))
    }
}

fn barycentric(nodes: &[[f64; 2]], t: &[usize; 3], p: [f64; 2]) -> [f64; 3] {
    let [a, b, c] = t.map(|i| nodes[i]);
    let det = (b[0] - a[0]) * (c[1] - a[1]) - (c[0] - a[0]) * (b[1] - a[1]);
    let l1 = ((p[0] - a[0]) * (c[1] - a[1]) - (c[0] - a[0]) * (p[1] - a[1])) / det;
    let l2 = ((b[0] - a[0]) * (p[1] - a[1]) - (p[0] - a[0]) * (b[1] - a[1])) / det;
    [1.0 - l1 - l2, l1, l2]
}

impl Locator {
    pub(crate) fn new(mesh: &Mesh) -> Locator {
        let mut grids = vec![Grid::new(mesh, 0..mesh.n_inner_triangles)];
        if mesh.triangles.len() > mesh.n_inner_triangles {
            grids.push(Grid::new(
                mesh,
                mesh.n_inner_triangles..mesh.triangles.len(),
            ));
        }
        let n = mesh.nodes.len();
        let mut count = vec![0usize; n + 1];
        for t in &mesh.triangles {
            for &i in t {
                count[i + 1] += 1;
            }
        }
        for i in 0..n {
            count[i + 1] += count[i];
        }
        let mut fill = count.clone();
        let mut around = vec![0; count[n]];
        for (ti, t) in mesh.triangles.iter().enumerate() {
            for &i in t {
                around[fill[i]] = ti;
                fill[i] += 1;
            }
        }
        let dead = mesh
            .triangles
            .iter()
            .map(|t| {
                let c = mesh.conductor[t[0]];
                c.is_some() && t.iter().all(|&i| mesh.conductor[i] == c) && {
                    // A sheet's triangles touch it with one edge at most; three nodes on one
                    // conductor means inside it unless the conductor is a curved sheet.
                    true
                }
            })
            .collect();
        Locator {
            grids,
            around_ptr: count,
            around,
            dead,
        }
    }

    /// The triangle of the (mapped) point in part `part` (0 inner, 1 Kelvin).
    fn find(&self, mesh: &Mesh, part: usize, p: [f64; 2]) -> Option<(usize, [f64; 3])> {
        self.grids.get(part)?.find(mesh, p)
    }

    /// The recovered gradient (V/m, in the part's own coordinates) of `phi` at node `i` as
    /// seen from triangle `t`: the area-weighted mean of the element gradients around the node
    /// in the same part and region, off conductors' insides (O. C. Zienkiewicz and J. Z. Zhu,
    /// "A simple error estimator and adaptive procedure for practical engineering analysis",
    /// Int. J. Numer. Methods Eng. 24 (1987) 337-357: averaged nodal gradients).
    fn recovered(&self, mesh: &Mesh, phi: &[f64], t: usize, i: usize) -> [f64; 2] {
        let (mut g, mut wsum) = ([0.0; 2], 0.0);
        for &s in &self.around[self.around_ptr[i]..self.around_ptr[i + 1]] {
            if self.dead[s]
                || mesh.is_exterior(s) != mesh.is_exterior(t)
                || mesh.region[s] != mesh.region[t]
            {
                continue;
            }
            let (area, gs) = gradient(mesh, phi, s);
            g[0] += area * gs[0];
            g[1] += area * gs[1];
            wsum += area;
        }
        if wsum > 0.0 {
            [g[0] / wsum, g[1] / wsum]
        } else {
            gradient(mesh, phi, t).1
        }
    }
}

/// |area| (m^2) and grad phi (V/m) of triangle `t`.
fn gradient(mesh: &Mesh, phi: &[f64], t: usize) -> (f64, [f64; 2]) {
    let tri = &mesh.triangles[t];
    let (area, g) = shape_gradients(&mesh.nodes, tri);
    let mut out = [0.0; 2];
    for k in 0..3 {
        out[0] += phi[tri[k]] * g[k][0];
        out[1] += phi[tri[k]] * g[k][1];
    }
    (area.abs(), out)
}

/// The recovery estimate of the energy-norm error squared, sum over elements of
/// integral of w |G* - grad phi_h|^2 (m V^2, the same units as phi^T K phi): for a Dirichlet
/// problem the discrete energy exceeds the exact one by the energy norm of the error, so
/// 2 pi eps0 times this estimates C_h - C of a self-capacitance (Zienkiewicz and Zhu 1987).
pub(crate) fn recovery_error(mesh: &Mesh, loc: &Locator, weights: &[f64], phi: &[f64]) -> f64 {
    (0..mesh.triangles.len())
        .filter(|&t| !loc.dead[t])
        .map(|t| {
            let (_, g) = gradient(mesh, phi, t);
            let mean: f64 = mesh.triangles[t]
                .iter()
                .map(|&i| {
                    let r = loc.recovered(mesh, phi, t, i);
                    (r[0] - g[0]).powi(2) + (r[1] - g[1]).powi(2)
                })
                .sum::<f64>()
                / 3.0;
            weights[t] * mean
        })
        .sum()
}

/// What lies at a point of the half-plane.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Probe {
    /// Potential (V) and field (E_r, E_z) (V/m).
    Field {
        /// Potential (V).
        phi_v: f64,
        /// (E_r, E_z) (V/m).
        e_v_per_m: [f64; 2],
    },
    /// Inside the named conductor (its index): E = 0.
    InsideConductor(usize),
    /// Outside the meshed domain (beyond a grounded wall, below the ground plane).
    Outside,
}

/// Potential and recovered E of the nodal potential `phi` at (r, z) (m).
pub(crate) fn probe(mesh: &Mesh, loc: &Locator, phi: &[f64], p: [f64; 2]) -> Probe {
    let p = [p[0].abs(), p[1]];
    let (part, q, kelvin) = match mesh.kelvin {
        Some(k) if p[0].hypot(p[1] - k.centre_z) > k.radius => (1, k.map(p), Some(k)),
        _ => (0, p, None),
    };
    let Some((t, l)) = loc.find(mesh, part, q) else {
        return Probe::Outside;
    };
    if loc.dead[t] {
        return Probe::InsideConductor(mesh.conductor[mesh.triangles[t][0]].unwrap_or(0));
    }
    let tri = mesh.triangles[t];
    let phi_v: f64 = (0..3).map(|k| l[k] * phi[tri[k]]).sum();
    let mut g = [0.0; 2];
    for k in 0..3 {
        let r = loc.recovered(mesh, phi, t, tri[k]);
        g[0] += l[k] * r[0];
        g[1] += l[k] * r[1];
    }
    if let Some(k) = kelvin {
        g = kelvin_gradient(k, p, g);
    }
    Probe::Field {
        phi_v,
        e_v_per_m: [-g[0], -g[1]],
    }
}

/// grad_x phi from grad_x' phi under the inversion: (dx'/dx)^T g' with
/// dx'/dx = s (I - 2 d d^T / |d|^2), s = R^2 / |d|^2, d = x - c.
fn kelvin_gradient(k: Kelvin, p: [f64; 2], g: [f64; 2]) -> [f64; 2] {
    let d = [p[0], p[1] - k.centre_z];
    let d2 = d[0] * d[0] + d[1] * d[1];
    let s = k.radius * k.radius / d2;
    let dot = d[0] * g[0] + d[1] * g[1];
    [
        s * (g[0] - 2.0 * d[0] * dot / d2),
        s * (g[1] - 2.0 * d[1] * dot / d2),
    ]
}

/// 2 pi eps0 (F/m): the factor from phi^T K phi (m V^2) to twice the energy per volt squared.
pub(crate) const TWO_PI_EPS0: f64 = 2.0 * PI * EPS0;

/// A conductor's largest surface field (V/m) and the vertex (r, z) (m) where it occurs.
pub type SurfacePeak = Option<(f64, [f64; 2])>;

/// The largest |E| (V/m) on each conductor's surface for the nodal potential `phi`, with the
/// vertex (r, z) (m) where it occurs: per conductor vertex, the field of each element touching
/// it from outside the conductor, recovered (Zienkiewicz-Zhu averaging over the elements of
/// the same region around the vertex) on a closed conductor, the element's own gradient on a
/// sheet (a disc, the winding surface), whose two faces carry different fields that an
/// average would mix. None for a conductor without a vertex.
pub(crate) fn surface_peaks(
    mesh: &Mesh,
    loc: &Locator,
    domain: &Domain,
    phi: &[f64],
) -> Vec<SurfacePeak> {
    let mut best: Vec<SurfacePeak> = vec![None; domain.conductors.len()];
    for (i, c) in mesh.conductor.iter().enumerate() {
        let Some(c) = *c else { continue };
        let sheet = domain.conductors[c].area.is_none();
        for &t in &loc.around[loc.around_ptr[i]..loc.around_ptr[i + 1]] {
            if loc.dead[t] || mesh.is_exterior(t) {
                continue;
            }
            let g = if sheet {
                gradient(mesh, phi, t).1
            } else {
                loc.recovered(mesh, phi, t, i)
            };
            let e = g[0].hypot(g[1]);
            if best[c].is_none_or(|b| e > b.0) {
                best[c] = Some((e, mesh.nodes[i]));
            }
        }
    }
    best
}

/// K phi (m V): its entries at the fixed nodes are the reactions whose sums over a
/// conductor's nodes, times 2 pi eps0, are its charge (C) for the potential phi.
pub(crate) fn reactions(k: &CsrMatrix<f64>, phi: &[f64]) -> Vec<f64> {
    k.row_iter()
        .map(|row| {
            row.col_indices()
                .iter()
                .zip(row.values())
                .map(|(&j, &v)| v * phi[j])
                .sum()
        })
        .collect()
}
