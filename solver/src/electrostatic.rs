//! Axisymmetric electrostatics: boundary elements with ring charges.
//!
//! # Public API
//! ```text
//! pub struct Params { pub panels: usize, pub profile: Profile, pub panel_form: PanelForm,
//!                     pub secondary_sections: Option<usize> }
//!                                   // Default: 1000 panels, linear profile, curved panels, no sections
//! pub enum PanelForm { Curved, Chord }  // panels on the exact generatrix, or straight chords
//! pub enum Profile { Linear, Custom(fn(f64) -> f64), Nodes(NodeProfile) }
//!                                   // V(t)/V_top, t = fraction of the length from the base
//! impl Profile { pub fn nodes(values: &[f64]) -> Result<Profile, SolverError>; }
//! impl NodeProfile {                // piecewise linear through n + 1 equally spaced node values
//!     pub fn new(values: &[f64]) -> Result<NodeProfile, SolverError>; // normalised to 1 at the top
//!     pub fn values(&self) -> &[f64];
//!     pub fn sections(&self) -> usize;
//! }
//! impl Problem {
//!     pub fn from_design(design: &Design, params: &Params, source: &str) -> Result<Problem, DesignError>;
//!     pub fn solve(&self, par: Par) -> Result<Solution, SolverError>;
//! }
//! impl Solution {
//!     pub fn conductor_names(&self) -> &[String];            // electrodes, file order
//!     pub fn capacitance_matrix_f(&self) -> &[Vec<f64>];     // Maxwell matrix (F)
//!     pub fn capacitances_f(&self) -> Vec<f64>;              // diagonal (F)
//!     pub fn self_capacitance_f(&self) -> Option<SelfCapacitance>; // secondary: bare and total
//!     pub fn error_estimate(&self) -> &ErrorEstimate;        // |C(n) - C(n/2)| (F)
//!     pub fn e_field(&self, points_m: &[Point3<f64>], par: Par) -> Vec<FieldSample>; // drive potentials
//!     pub fn panels(&self) -> Vec<PanelResult>;             // sigma (C/m^2), surface field (V/m)
//!     pub fn axis(&self) -> Axis;                           // to revolve the generatrix for VTK
//!     pub fn peak_surface_fields(&self) -> Vec<PeakField>;   // per electrode
//!     pub fn nodal_capacitance(&self) -> Result<&NodalCapacitance, SolverError>;
//! }
//! pub struct NodalCapacitance {     // the secondary in n sections, W = v^T C v / 2
//!     pub node_heights_m: Vec<f64>, pub node_points_m: Vec<Point3<f64>>,
//!     pub matrix_f: DMatrix<f64>,   // (n + 1) x (n + 1), symmetric positive definite (F)
//!     pub error_estimate_f: DMatrix<f64>, // |C(m) - C(m/2)| per entry (F)
//!     pub asymmetry: f64, pub secondary_panels: usize,
//! }
//! impl NodalCapacitance {
//!     pub fn sections(&self) -> usize;
//!     pub fn energy_j(&self, node_v: &[f64]) -> Result<f64, SolverError>; // v^T C v / 2 (J)
//!     pub fn linear_profile_capacitance_f(&self) -> f64;                  // v_j = j/n (F)
//! }
//! pub enum FieldSample { Field(Vector3<f64>), InsideConductor(String), BelowGround }
//! pub fn validity_warnings(design: &Design, distances_m: &[f64]) -> Vec<String>;
//! ```
//!
//! # Method
//! Every surface is a surface of revolution about the common axis (see
//! `coilfield_geometry::check_axisymmetric`), cut along its generatrix into panels carrying a
//! constant surface charge density sigma. The potential of a ring charge Q of radius a at
//! height z0 is phi = Q / (4 pi eps0) (2 / pi) K(m) / sqrt((a + rho)^2 + (z - z0)^2),
//! m = 4 a rho / ((a + rho)^2 + (z - z0)^2) (W. R. Smythe, *Static and Dynamic Electricity*,
//! ch. 5, equation number from memory; K by the arithmetic-geometric mean from the geometry's
//! kc). A panel's potential integrates it over the generatrix with Gauss-Legendre rules whose
//! order grows as the collocation point comes closer; on its own panel the logarithmic
//! singularity K ~ ln(4 / kc) is subtracted and integrated analytically. Collocation at panel
//! midpoints gives a dense system, solved by LU with partial pivoting (blocked, the trailing
//! updates by matrix products). A grounded plane z = z_g adds the image of every ring charge
//! with opposite sign at 2 z_g - z0 (method of images).
//!
//! By default a panel on an arc (sphere, torus) follows the arc exactly; `PanelForm::Chord`
//! makes it the straight chord instead (a conical frustum), whose O(h^2) geometric error lets
//! the tests check that the error estimate |C(n) - C(n/2)| bounds a true error.
//!
//! Panels are graded towards edges (disc rims, cylinder corners, the secondary's ends) where
//! sigma is singular, and are spent on each piece of generatrix in proportion to its length,
//! with at least [`MIN_PANELS_PER_PIECE`] per piece, so small radii of curvature (a thin torus)
//! get their share.
//!
//! # Nodal capacitance matrix
//! With [`Params::secondary_sections`] = n the secondary's panels are cut at the boundaries of
//! n sections of equal height (nodes 0 = base .. n = top) and the solve also gives the nodal
//! matrix C of [`NodalCapacitance`]: the potential on the tube is sum_j v_j h_j(z) with hat
//! functions h_j, and W = v^T C v / 2. Column j comes from one more right-hand side (h_j on
//! the tube, 1 V on electrodes connected at node j) with the same LU factors, and
//! C_ij = sum_k q_k^(j) <h_i>_k over the tube's panels (+ the charge of electrodes connected at
//! node i): the energy (1/2) integral of sigma phi dA of the piecewise-constant sigma, exact in
//! the hats because every panel lies in one section. Collocation makes C slightly asymmetric
//! (reported, then symmetrised). Its error estimate is again the change when the panels per
//! section are halved. The model is the one described in the physics notes for a lumped
//! ladder of the secondary (sections' surface bands with linear potential in each band); the
//! hat-function (piecewise-linear finite element) form of the energy is the standard one
//! (e.g. O. C. Zienkiewicz, *The Finite Element Method*, ch. on one-dimensional elements; from
//! memory).
//!
//! # Limitations
//! - The secondary is its outer surface (a cylinder of radius = winding radius + wire radius,
//!   open at both ends) with a prescribed potential profile; the field close to individual
//!   wires is not modelled.
//! - A disc has no thickness: its sigma is the sum over both faces, and its surface field is
//!   reported as sigma / (2 eps0), exact for an isolated disc by symmetry, an average otherwise.
//!   The secondary's open tube likewise carries the sum of both faces; its panels report
//!   sigma / eps0, which is the outer field where the inner face holds little charge (a tube
//!   longer than its diameter).

use crate::SolverError;
use crate::constants::{C0, EPS0};
use crate::elliptic::{cel_positive_p, k_e_from_kc, k_from_kc};
use crate::par::{Par, map_indexed};
use crate::quadrature::gauss_legendre;
use coilfield_geometry::discretise::wire_length_m;
use coilfield_geometry::{
    Axis, Design, DesignError, ElectrodeShape, End, PotentialSpec, Role, Shape, check_axisymmetric,
    local_frame,
};
use nalgebra::{DMatrix, DMatrixViewMut, Point3, Vector3};
use rayon::prelude::*;
use std::f64::consts::{FRAC_PI_2, PI};

/// Least panels on each piece of generatrix (a sphere is one piece, a cylinder three).
pub const MIN_PANELS_PER_PIECE: usize = 8;

/// Potential profile along the secondary, as a fraction of (top - base) at the fraction t of
/// its length from the base.
#[derive(Debug, Clone, Default)]
pub enum Profile {
    /// V(t) = t (uniform current, no resonance).
    #[default]
    Linear,
    /// A profile from elsewhere (e.g. a closed form); must map [0, 1] to values with
    /// f(0) = 0 and f(1) = 1.
    Custom(fn(f64) -> f64),
    /// Piecewise linear through values at equally spaced nodes (e.g. a mode of a resonance
    /// model on the nodes of [`Params::secondary_sections`]).
    Nodes(NodeProfile),
}

impl Profile {
    /// A [`Profile::Nodes`] through `values` (see [`NodeProfile::new`]).
    pub fn nodes(values: &[f64]) -> Result<Profile, SolverError> {
        NodeProfile::new(values).map(Profile::Nodes)
    }

    fn at(&self, t: f64) -> f64 {
        match self {
            Profile::Linear => t,
            Profile::Custom(f) => f(t),
            Profile::Nodes(p) => p.at(t),
        }
    }
}

/// Values of a potential profile at n + 1 equally spaced nodes along the secondary, node 0 at
/// the base (t = 0) and node n at the top (t = 1), normalised to 1 at the top; linear between
/// neighbouring nodes (the hat-function interpolant). Built only by [`NodeProfile::new`], so it
/// always has at least two finite values and a top value of 1.
#[derive(Debug, Clone, PartialEq)]
pub struct NodeProfile {
    values: Vec<f64>,
}

impl NodeProfile {
    /// The profile through `values` (node 0 = base .. node n = top, n >= 1), divided by the
    /// top value so that the top is 1 (a mode vector can be passed at any scale). The base
    /// value is normally 0 (the profile is a fraction of top - base); other values are
    /// accepted and scale the base end accordingly.
    ///
    /// Errors ([`SolverError::BadProfile`]): fewer than two values, a value that is not
    /// finite, or a top value of 0 (nothing to normalise by).
    pub fn new(values: &[f64]) -> Result<NodeProfile, SolverError> {
        let bad = |reason: String| Err(SolverError::BadProfile { reason });
        if values.len() < 2 {
            return bad(format!(
                "{} value(s) given; a profile needs at least two nodes (base and top)",
                values.len()
            ));
        }
        if let Some(i) = values.iter().position(|v| !v.is_finite()) {
            return bad(format!("value {i} is {}", values[i]));
        }
        let top = values[values.len() - 1];
        if top == 0.0 {
            return bad(
                "the top value is 0, so the profile cannot be normalised to 1 there".into(),
            );
        }
        let values: Vec<f64> = values.iter().map(|v| v / top).collect();
        if let Some(i) = values.iter().position(|v| !v.is_finite()) {
            return bad(format!(
                "value {i} overflows when divided by the top value {top}"
            ));
        }
        Ok(NodeProfile { values })
    }

    /// The normalised node values (top = 1), base first.
    pub fn values(&self) -> &[f64] {
        &self.values
    }

    /// Number of sections n (nodes minus one).
    pub fn sections(&self) -> usize {
        self.values.len() - 1
    }

    /// The interpolant at t in [0, 1] (clamped): v_s + (v_(s+1) - v_s) (x - s), x = t n,
    /// s = the section holding x.
    fn at(&self, t: f64) -> f64 {
        let n = self.sections();
        let x = t.clamp(0.0, 1.0) * n as f64;
        let s = (x.floor() as usize).min(n - 1);
        let f = x - s as f64;
        self.values[s] + (self.values[s + 1] - self.values[s]) * f
    }
}

/// The geometry of a panel on a curved piece of generatrix (arcs of spheres and tori; straight
/// pieces are the same under both).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub enum PanelForm {
    /// Each panel follows the exact generatrix (an arc): the surface is represented exactly and
    /// only the charge density is approximated (constant per panel). The default: on a sphere,
    /// whose exact charge density is constant, it leaves only quadrature and rounding errors.
    #[default]
    Curved,
    /// Each panel is the straight chord between its end points, i.e. a conical frustum in 3-D:
    /// the textbook form of the axisymmetric boundary-element method (e.g. C. A. Brebbia,
    /// J. C. F. Telles, L. C. Wrobel, *Boundary Element Techniques*, Springer, 1984, ch. on
    /// axisymmetric problems; chapter from memory). The inscribed polygonal surface has a
    /// geometric error of O(h^2) in the panel length h, so results converge as O(h^2); used
    /// to show that the coarse-solve error estimate bounds a genuine discretisation error.
    Chord,
}

/// Options of the electrostatic solve; every value is accepted (a `secondary_sections` out of
/// range is reported by [`Solution::nodal_capacitance`], the mesh then being the default one).
#[derive(Debug, Clone)]
pub struct Params {
    /// Panels in total (the coarse error estimate uses half as many). With
    /// `secondary_sections` the secondary may get more than its share, see there.
    pub panels: usize,
    /// The secondary's potential profile.
    pub profile: Profile,
    /// Curved (exact generatrix, default) or straight chord panels on arcs.
    pub panel_form: PanelForm,
    /// Cut the secondary's panels at the boundaries of this many sections of equal height
    /// (equal turns), 1..=[`MAX_SECONDARY_SECTIONS`], and compute the nodal capacitance matrix
    /// ([`Solution::nodal_capacitance`]). `None` (default): panels graded over the whole tube
    /// and no nodal matrix.
    ///
    /// The secondary's share s of `panels` (by length, as for every piece) is spread as m =
    /// max(4, round(s / (n + 2))) panels in each interior section and 2 m in each end section,
    /// graded quadratically towards the tube's end, where sigma is singular (the inner panel
    /// of an end section is then about as long as an interior one). The minimum is
    /// [`MIN_PANELS_PER_SECTION`]: 256 sections give 1032 panels on the secondary, ~0.75 s
    /// with the coarse solve on 2 cores. With one section: the default grading towards both
    /// ends, at least 8 panels. The coarse solve of the error estimate halves m (at least 2).
    pub secondary_sections: Option<usize>,
}

impl Default for Params {
    fn default() -> Self {
        Params {
            panels: 1000,
            profile: Profile::Linear,
            panel_form: PanelForm::Curved,
            secondary_sections: None,
        }
    }
}

/// Most sections [`Params::secondary_sections`] accepts: at 4 panels per section, 512 sections
/// are about 2,000 panels on the secondary, the size the solver handles in about a second.
pub const MAX_SECONDARY_SECTIONS: usize = 512;

/// Least panels per interior section of the secondary (twice as many in its end sections).
pub const MIN_PANELS_PER_SECTION: usize = 4;

/// A piece of generatrix in (rho, z) (m), z along the common axis from its origin.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Curve {
    Line {
        p0: (f64, f64),
        p1: (f64, f64),
    },
    Arc {
        c: (f64, f64),
        r: f64,
        t0: f64,
        t1: f64,
    },
}

/// Where panels cluster on a piece.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Grading {
    Uniform,
    AtEnd,
    AtBothEnds,
    /// The secondary cut into this many sections of equal length (see
    /// [`Params::secondary_sections`]).
    Sections(usize),
}

impl Grading {
    /// Parameters u_0 = 0 < u_1 < ... < u_count = 1 of the panel boundaries on a piece given
    /// `count` panels; for `Sections`, `count` is the piece's share and `min_per_section` the
    /// least panels per interior section.
    fn breakpoints(self, count: usize, min_per_section: usize) -> Vec<f64> {
        let map = |k: usize, n: usize| -> f64 {
            let x = k as f64 / n as f64;
            match self {
                Grading::Uniform => x,
                Grading::AtEnd => (FRAC_PI_2 * x).sin(),
                Grading::AtBothEnds | Grading::Sections(_) => 0.5 * (1.0 - (PI * x).cos()),
            }
        };
        match self {
            Grading::Sections(n) if n >= 2 => section_breakpoints(n, count, min_per_section),
            Grading::Sections(_) => {
                let count = count.max(2 * min_per_section);
                (0..=count).map(|k| map(k, count)).collect()
            }
            _ => (0..=count).map(|k| map(k, count)).collect(),
        }
    }
}

/// Panel boundaries on the secondary cut into `n` >= 2 sections (u = fraction of its length
/// from the base): every section boundary s / n is a panel boundary; m = max(`min`,
/// round(`share` / (n + 2))) equal panels in each interior section; 2 m in each end section at
/// u = (k / 2m)^2 / n from the tube's end, a quadratic grading like the cosine grading of the
/// whole tube near its ends (sigma ~ d^-1/2 there, d the distance from the end), whose inner
/// panel, (4m - 1) / (4 m^2 n) long, nearly matches the interior ones (1 / (m n)).
///
/// Equal panels on both sides of every interior node matter: the kink of a hat function gives
/// sigma a logarithmic singularity there, and a mesh that is symmetric about it keeps the
/// error of constant panels second order (meshes whose panel count jumps at a node were
/// tried and lost both accuracy and the reliability of the coarse-solve estimate).
fn section_breakpoints(n: usize, share: usize, min: usize) -> Vec<f64> {
    let m = ((share as f64 / (n + 2) as f64).round() as usize).max(min);
    let m_end = 2 * m;
    let nf = n as f64;
    let mut u = Vec::with_capacity(n * m + 2 * m + 1);
    for s in 0..n {
        u.push(s as f64 / nf);
        if s == 0 {
            u.extend((1..m_end).map(|k| (k as f64 / m_end as f64).powi(2) / nf));
        } else if s == n - 1 {
            u.extend((1..m_end).map(|k| {
                let x = 1.0 - k as f64 / m_end as f64;
                (s as f64 + 1.0 - x * x) / nf
            }));
        } else {
            u.extend((1..m).map(|k| (s as f64 + k as f64 / m as f64) / nf));
        }
    }
    u.push(1.0);
    u
}

impl Curve {
    fn at(&self, u: f64) -> (f64, f64) {
        match *self {
            Curve::Line { p0, p1 } => (p0.0 + (p1.0 - p0.0) * u, p0.1 + (p1.1 - p0.1) * u),
            Curve::Arc { c, r, t0, t1 } => {
                let t = t0 + (t1 - t0) * u;
                (c.0 + r * t.cos(), c.1 + r * t.sin())
            }
        }
    }
    fn length(&self) -> f64 {
        match *self {
            Curve::Line { p0, p1 } => (p1.0 - p0.0).hypot(p1.1 - p0.1),
            Curve::Arc { r, t0, t1, .. } => r * (t1 - t0).abs(),
        }
    }
}

/// What a surface is.
#[derive(Debug, Clone, PartialEq)]
enum SurfaceKind {
    /// Equipotential electrode number `index` (file order).
    Electrode { index: usize, disc: bool },
    /// The secondary, from axial coordinate `z_base_m` to `z_top_m`.
    Secondary { z_base_m: f64, z_top_m: f64 },
}

/// One panel of the discretisation.
#[derive(Debug, Clone)]
struct Panel {
    surface: usize,
    a: (f64, f64),
    b: (f64, f64),
    mid: (f64, f64),
    length_m: f64,
    curve: Curve,
    u0: f64,
    u1: f64,
    /// The panel's charge per unit sigma as one ring ([`ChargeRing`]), set by
    /// [`Panel::with_charge_ring`].
    ring: ChargeRing,
}

/// A panel's charge seen as one ring, the same everywhere E takes a panel as one ring charge
/// (a distant panel, a cluster, the far expansion) and as the capacitances take its charge:
/// int rho ds over the panel by the 8-point Gauss rule (its charge is sigma 2 pi times it) and
/// the charge's centroid (rho, z) (m). The midpoint's 2 pi rho l missed a curved panel's area
/// by about 5e-7 of a sphere's charge, a step in E where the far expansion takes over.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
struct ChargeRing {
    /// int rho ds (m^2).
    rho_ds_m2: f64,
    /// The centroid (rho, z) (m) of the charge, weighted by rho ds.
    centre: (f64, f64),
}

/// Gauss nodes of a panel's charge ([`ChargeRing`], `Problem::charges`, `far_charges`).
const CHARGE_NODES: usize = 8;

impl Panel {
    /// The panel with its charge ring set ([`ChargeRing`]).
    fn with_charge_ring(mut self) -> Panel {
        let (mut w, mut rc, mut zc) = (0.0, 0.0, 0.0);
        for (rho, z, wk) in panel_nodes(&self, CHARGE_NODES, 0.0, 1.0) {
            w += wk;
            rc += wk * rho;
            zc += wk * z;
        }
        self.ring = if w > 0.0 {
            ChargeRing {
                rho_ds_m2: w,
                centre: (rc / w, zc / w),
            }
        } else {
            ChargeRing {
                rho_ds_m2: 0.0,
                centre: self.mid,
            }
        };
        self
    }
}

/// A panel's result, for export and inspection.
#[derive(Debug, Clone, PartialEq)]
pub struct PanelResult {
    /// The surface it belongs to (electrode or secondary name).
    pub surface: String,
    /// Start of its generatrix piece: (distance from the axis, height along the axis) (m).
    pub start_rho_z_m: [f64; 2],
    /// End of its generatrix piece (m).
    pub end_rho_z_m: [f64; 2],
    /// Surface charge density (C/m^2) at the drive potentials.
    pub sigma_c_per_m2: f64,
    /// Surface field (V/m): |sigma| / eps0 (sigma / (2 eps0) on a disc).
    pub surface_field_v_per_m: f64,
}

/// The largest surface field on an electrode (where breakout would start).
#[derive(Debug, Clone, PartialEq)]
pub struct PeakField {
    /// Electrode name.
    pub name: String,
    /// Surface field (V/m) at the drive potentials.
    pub field_v_per_m: f64,
    /// The panel midpoint where it occurs, at azimuth 0 of the axis frame (m).
    pub at_m: Point3<f64>,
}

/// The secondary's equivalent self-capacitance at its top, C = 2 W / V_top^2.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SelfCapacitance {
    /// With its profile and no electrode connected (F); unconnected electrodes at 0 V.
    pub bare_f: f64,
    /// With its connected electrodes at their terminals' potentials (F); equals `bare_f` when
    /// none is connected.
    pub total_f: f64,
}

/// |C(n) - C(n/2)| for each result (F): the change when the panels are halved.
#[derive(Debug, Clone, PartialEq)]
pub struct ErrorEstimate {
    /// Per entry of the Maxwell matrix (F).
    pub capacitance_matrix_f: Vec<Vec<f64>>,
    /// For the secondary's bare and total self-capacitance (F).
    pub self_capacitance_f: Option<SelfCapacitance>,
}

/// E at a point.
#[derive(Debug, Clone, PartialEq)]
pub enum FieldSample {
    /// The field (V/m, peak of the drive).
    Field(Vector3<f64>),
    /// The point is inside the named electrode.
    InsideConductor(String),
    /// The point is below the grounded plane.
    BelowGround,
}

/// A discretised electrostatic problem (plan once, solve once, evaluate many).
#[derive(Debug, Clone)]
pub struct Problem {
    axis: Axis,
    ground_z: Option<f64>,
    names: Vec<String>,
    surfaces: Vec<(String, SurfaceKind)>,
    shapes: Vec<ElectrodeShape>,
    panels: Vec<Panel>,
    profile: Profile,
    /// [`Params::secondary_sections`] as asked (the mesh follows it when it is in range).
    sections_asked: Option<usize>,
    /// Potential (V) of each electrode under the drive.
    drive_electrode_v: Vec<f64>,
    /// Secondary base and top potentials (V) under the drive.
    drive_secondary_v: (f64, f64),
    /// Electrodes connected to the secondary: (index, end).
    connected: Vec<(usize, End)>,
    coarse: Option<Box<Problem>>,
    /// The secondary without its connected electrodes (panels a subset of these).
    bare: Option<Box<Problem>>,
    /// For a bare problem: the indices of its panels in the full problem.
    keep: Vec<usize>,
}

/// The solved problem.
#[derive(Debug, Clone)]
pub struct Solution {
    problem: Problem,
    matrix_f: Vec<Vec<f64>>,
    self_c: Option<SelfCapacitance>,
    sigma_drive: Vec<f64>,
    error: ErrorEstimate,
    nodal: Result<NodalCapacitance, SolverError>,
}

/// The secondary's nodal capacitance matrix: the secondary cut into n sections of equal height
/// (equal turns), nodes 0 = base .. n = top, the potential on its surface linear along each
/// section between its end nodes, phi(z) = sum_j v_j h_j(z) with hat functions h_j. For node
/// voltages v (V) the electric energy is W = v^T C v / 2 (J). Electrodes connected to the
/// secondary's top (base) take node n's (node 0's) voltage and their charge is in that node's
/// row; every other electrode and the ground plane are at 0 V.
///
/// C_ij = integral over the tube of sigma^(j) h_i dA (+ connected electrodes' charge), sigma^(j)
/// the charge density for v = e_j: n + 1 solves with one factorisation. Symmetric (after
/// symmetrisation, see `asymmetry`) and positive definite (the energy of any non-zero v is
/// positive).
#[derive(Debug, Clone, PartialEq)]
pub struct NodalCapacitance {
    /// Axial coordinate (m) of each node along [`Solution::axis`] from its origin (which is
    /// the secondary's base), base first: z_j = j l / n for a secondary of length l.
    pub node_heights_m: Vec<f64>,
    /// The nodes as points on the axis (m), in the design's frame, base first.
    pub node_points_m: Vec<Point3<f64>>,
    /// The (n + 1) x (n + 1) matrix C (F), symmetric.
    pub matrix_f: DMatrix<f64>,
    /// |C(m) - C(m/2)| per entry (F): the change when the panels per section are halved (the
    /// same estimate as [`ErrorEstimate`]).
    pub error_estimate_f: DMatrix<f64>,
    /// Largest |C_ij - C_ji| / sqrt(C_ii C_jj) of the collocation result before it was
    /// symmetrised (dimensionless): a measure of its discretisation error.
    pub asymmetry: f64,
    /// Panels on the secondary in the solve.
    pub secondary_panels: usize,
    /// Panel charge densities (C/m^2) for 1 V on each node: any node profile's charges are
    /// their sum weighted by the node voltages.
    sigma_columns: Vec<Vec<f64>>,
}

impl NodalCapacitance {
    /// Number of sections n.
    pub fn sections(&self) -> usize {
        self.node_heights_m.len() - 1
    }

    /// Electric energy W = v^T C v / 2 (J) for node voltages `node_v` (V), base first.
    ///
    /// Errors ([`SolverError::NoNodalCapacitance`]): a vector of the wrong length, with a
    /// value that is not finite, or so large that the energy overflows.
    pub fn energy_j(&self, node_v: &[f64]) -> Result<f64, SolverError> {
        let n1 = self.node_heights_m.len();
        if node_v.len() != n1 || node_v.iter().any(|v| !v.is_finite()) {
            return Err(SolverError::NoNodalCapacitance {
                reason: format!(
                    "node voltages: {} finite values needed, got {} ({})",
                    n1,
                    node_v.len(),
                    if node_v.iter().all(|v| v.is_finite()) {
                        "all finite"
                    } else {
                        "some not finite"
                    }
                ),
            });
        }
        let w = 0.5 * self.quadratic_form(node_v);
        if !w.is_finite() {
            return Err(SolverError::NoNodalCapacitance {
                reason: "node voltages so large that the energy overflows".into(),
            });
        }
        Ok(w)
    }

    /// v^T C v for a vector of the right length.
    fn quadratic_form(&self, v: &[f64]) -> f64 {
        let v = nalgebra::DVector::from_column_slice(v);
        v.dot(&(&self.matrix_f * &v))
    }

    /// The secondary's linear-profile self-capacitance v^T C v (F) with v_j = j / n (0 V at the
    /// base, 1 V at the top): 2 W at 1 V, the quantity [`SelfCapacitance::total_f`] gives for
    /// [`Profile::Linear`] (the hats reproduce a linear potential exactly, so the two differ
    /// only by their meshes).
    pub fn linear_profile_capacitance_f(&self) -> f64 {
        let n = self.sections();
        let v: Vec<f64> = (0..=n).map(|j| j as f64 / n as f64).collect();
        self.quadratic_form(&v)
    }
}

/// Potential (V) at (rho, z) of a ring charge of 1 C, radius `a`, at height `z0`, times
/// 4 pi eps0: (2 / pi) K(m) / sqrt(D).
#[inline]
fn ring_potential_unit(a: f64, z0: f64, rho: f64, z: f64) -> f64 {
    let dz = z - z0;
    let big_d = (a + rho) * (a + rho) + dz * dz;
    let small_d = (a - rho) * (a - rho) + dz * dz;
    let kc = (small_d / big_d).sqrt();
    (2.0 / PI) * k_from_kc(kc) / big_d.sqrt()
}

/// Potential (V) at (`rho_m`, `z_m`) of a ring charge `q_c` of radius `a_m` at height `z0_m`.
///
/// phi = Q / (4 pi eps0) (2 / pi) K(m) / sqrt((a + rho)^2 + (z - z0)^2) (Smythe, ch. 5; the
/// potential of a uniformly charged circle). On the axis K = pi / 2 and phi = Q / (4 pi eps0
/// sqrt(a^2 + z^2)) exactly.
pub fn potential_ring_charge_point(q_c: f64, a_m: f64, z0_m: f64, rho_m: f64, z_m: f64) -> f64 {
    q_c / (4.0 * PI * EPS0) * ring_potential_unit(a_m, z0_m, rho_m, z_m)
}

/// (E_rho, E_z) (V/m) at (`rho_m`, `z_m`) of a ring charge `q_c` of radius `a_m` at `z0_m`.
///
/// -grad of [`potential_ring_charge_point`]: E_z = Q (z - z0) E(m) / (2 pi^2 eps0 d sqrt D),
/// E_rho = Q / (4 pi^2 eps0 rho sqrt D) [K - (a^2 - rho^2 + (z - z0)^2)/d E] with
/// d = (a - rho)^2 + (z - z0)^2; written with cel so that the 1/rho cancels:
/// E_rho = Q / (4 pi^2 eps0 sqrt D) cel(kc, 1, -2 (a - rho)/d, 2 (a + rho)/D) (derived here by
/// differentiating the potential; checked against finite differences in the tests).
#[inline]
pub fn e_ring_charge_point(q_c: f64, a_m: f64, z0_m: f64, rho_m: f64, z_m: f64) -> (f64, f64) {
    let dz = z_m - z0_m;
    let big_d = (a_m + rho_m) * (a_m + rho_m) + dz * dz;
    let small_d = (a_m - rho_m) * (a_m - rho_m) + dz * dz;
    let kc = (small_d / big_d).sqrt();
    let sq = big_d.sqrt();
    let pre = q_c / (4.0 * PI * PI * EPS0 * sq);
    let m = 4.0 * a_m * rho_m / big_d;
    let (_, e, _) = k_e_from_kc(kc, m);
    let ez = 2.0 * pre * dz * e / small_d;
    let erho = pre
        * cel_positive_p(
            kc,
            1.0,
            -2.0 * (a_m - rho_m) / small_d,
            2.0 * (a_m + rho_m) / big_d,
        );
    (erho, ez)
}

/// Gauss-Legendre nodes on a panel: (rho, z, weight = rho ds) with `n` points, optionally
/// over the sub-range [v0, v1] of the panel's own parameter.
fn panel_nodes(
    p: &Panel,
    n: usize,
    v0: f64,
    v1: f64,
) -> impl Iterator<Item = (f64, f64, f64)> + '_ {
    let rule = gauss_legendre(n);
    let len = p.length_m * (v1 - v0);
    rule.iter().map(move |&(x, w)| {
        let v = v0 + (v1 - v0) * 0.5 * (x + 1.0);
        let u = p.u0 + (p.u1 - p.u0) * v;
        let (rho, z) = p.curve.at(u);
        (rho, z, 0.5 * w * len * rho)
    })
}

/// (E_rho, E_z) (V/m) at (rho, z) of a panel carrying `sigma` (C/m^2).
fn panel_e(panel: &Panel, sigma: f64, rho: f64, z: f64) -> (f64, f64) {
    let dist = (panel.mid.0 - rho).hypot(panel.mid.1 - z);
    if dist > FAR_SINGLE_NODE * 0.5 * panel.length_m {
        let ring = &panel.ring;
        let (a, z0) = ring.centre;
        return e_ring_charge_fast(sigma * 2.0 * PI * ring.rho_ds_m2, a, z0, rho, z);
    }
    let n = order_for(dist, panel.length_m);
    panel_nodes(panel, n, 0.0, 1.0).fold((0.0, 0.0), |(er, ez), (a, z0, w)| {
        let (e1, e2) = e_ring_charge_fast(sigma * 2.0 * PI * w, a, z0, rho, z);
        (er + e1, ez + e2)
    })
}

/// Beyond this many half-lengths a panel counts as one ring charge ([`ChargeRing`]: its whole
/// charge at its centroid) in E: the neglected spread is then of relative order
/// (2 / 40)^2 / 24 = 1e-4 of that panel's field.
const FAR_SINGLE_NODE: f64 = 40.0;

/// [`e_ring_charge_point`] with K, E and K - E from one AGM and no cel: with
/// c = (a^2 - rho^2 + dz^2)/d = 1 + 2 rho (a - rho)/d, the bracket K - c E becomes
/// (K - E) - 2 rho (a - rho) E / d, and (K - E)/rho stays finite and accurate as rho -> 0
/// because K - E = K sum_n 2^(n-1) c_n^2 is proportional to m, hence to rho.
#[inline]
fn e_ring_charge_fast(q_c: f64, a_m: f64, z0_m: f64, rho_m: f64, z_m: f64) -> (f64, f64) {
    let dz = z_m - z0_m;
    let big_d = (a_m + rho_m) * (a_m + rho_m) + dz * dz;
    let small_d = (a_m - rho_m) * (a_m - rho_m) + dz * dz;
    let m = 4.0 * a_m * rho_m / big_d;
    let kc = (small_d / big_d).sqrt();
    let (_, e, k_minus_e) = k_e_from_kc(kc, m);
    let pre = q_c / (4.0 * PI * PI * EPS0 * big_d.sqrt());
    let ez = 2.0 * pre * dz * e / small_d;
    let erho = if rho_m > 0.0 {
        pre * (k_minus_e / rho_m - 2.0 * (a_m - rho_m) * e / small_d)
    } else {
        0.0
    };
    (erho, ez)
}

/// Gauss-Legendre order for a target at distance `dist` from a panel of length `len`.
#[inline]
fn order_for(dist: f64, len: f64) -> usize {
    let r = dist / (0.5 * len);
    if r > 20.0 {
        2
    } else if r > 6.0 {
        4
    } else if r > 2.5 {
        8
    } else {
        16
    }
}

impl Problem {
    /// Discretise a design's electrodes and secondary. `source` labels messages.
    ///
    /// Errors: not axisymmetric ([`check_axisymmetric`]), or a secondary that is not a helix.
    // The error is geometry's own type, returned once per design: its size costs nothing here.
    #[allow(clippy::result_large_err)]
    pub fn from_design(
        design: &Design,
        params: &Params,
        source: &str,
    ) -> Result<Problem, DesignError> {
        let full = Self::build(design, params, source, true)?;
        Ok(full)
    }

    #[allow(clippy::result_large_err)]
    fn build(
        design: &Design,
        params: &Params,
        source: &str,
        top: bool,
    ) -> Result<Problem, DesignError> {
        let axis = check_axisymmetric(design, source)?;
        let n_hat = axis.direction;
        let ground_z = design.ground.map(|g| (g.z_m - axis.origin_m.z) / n_hat.z);
        let mut surfaces = Vec::new();
        let mut pieces: Vec<(usize, Curve, Grading)> = Vec::new();
        let axial = |p: &Point3<f64>| (p - axis.origin_m).dot(n_hat.as_ref());
        for (index, e) in design.electrodes.iter().enumerate() {
            let s = surfaces.len();
            let (o, a) = e.shape.origin_axis();
            let zc = axial(&o);
            let sign = a.dot(&n_hat).signum();
            match e.shape {
                ElectrodeShape::Sphere { radius_m, .. } => pieces.push((
                    s,
                    Curve::Arc {
                        c: (0.0, zc),
                        r: radius_m,
                        t0: -FRAC_PI_2,
                        t1: FRAC_PI_2,
                    },
                    Grading::Uniform,
                )),
                ElectrodeShape::Torus {
                    major_radius_m,
                    minor_radius_m,
                    ..
                } => pieces.push((
                    s,
                    Curve::Arc {
                        c: (major_radius_m, zc),
                        r: minor_radius_m,
                        t0: 0.0,
                        t1: 2.0 * PI,
                    },
                    Grading::Uniform,
                )),
                ElectrodeShape::Disc { radius_m, .. } => pieces.push((
                    s,
                    Curve::Line {
                        p0: (0.0, zc),
                        p1: (radius_m, zc),
                    },
                    Grading::AtEnd,
                )),
                ElectrodeShape::Cylinder {
                    radius_m, length_m, ..
                } => {
                    let z1 = zc + sign * length_m;
                    pieces.push((
                        s,
                        Curve::Line {
                            p0: (0.0, zc),
                            p1: (radius_m, zc),
                        },
                        Grading::AtEnd,
                    ));
                    pieces.push((
                        s,
                        Curve::Line {
                            p0: (radius_m, zc),
                            p1: (radius_m, z1),
                        },
                        Grading::AtBothEnds,
                    ));
                    pieces.push((
                        s,
                        Curve::Line {
                            p0: (radius_m, z1),
                            p1: (0.0, z1),
                        },
                        Grading::AtEnd,
                    ));
                }
            }
            surfaces.push((
                e.name.clone(),
                SurfaceKind::Electrode {
                    index,
                    disc: matches!(e.shape, ElectrodeShape::Disc { .. }),
                },
            ));
        }
        let mut drive_secondary_v = (0.0, 0.0);
        if let Some(w) = design.windings.iter().find(|w| w.role == Role::Secondary) {
            let Shape::Helix {
                origin_m,
                axis: waxis,
                radius_m,
                length_m,
                ..
            } = w.shape
            else {
                return Err(DesignError::NotAxisymmetric {
                    source_name: source.to_string(),
                    item: format!("winding '{}'", w.name),
                    key: "shape",
                    reason: "the electric model represents the secondary as a cylinder and \
                             needs a helix"
                        .to_string(),
                });
            };
            let zb = axial(&origin_m);
            let zt = zb + waxis.dot(&n_hat).signum() * length_m;
            let r = radius_m + w.wire_radius_m();
            pieces.push((
                surfaces.len(),
                Curve::Line {
                    p0: (r, zb),
                    p1: (r, zt),
                },
                match valid_sections(params.secondary_sections) {
                    Some(n) => Grading::Sections(n),
                    None => Grading::AtBothEnds,
                },
            ));
            surfaces.push((
                w.name.clone(),
                SurfaceKind::Secondary {
                    z_base_m: zb,
                    z_top_m: zt,
                },
            ));
            if let Some(PotentialSpec::Ends { base_v, top_v }) = design.drive.potential(&w.name) {
                drive_secondary_v = (base_v, top_v);
            }
        }
        let secondary_name = design
            .windings
            .iter()
            .find(|w| w.role == Role::Secondary)
            .map(|w| w.name.clone());
        let connected: Vec<(usize, End)> = design
            .electrodes
            .iter()
            .enumerate()
            .filter_map(|(i, e)| {
                let t = e.connect.as_ref()?;
                (Some(&t.winding) == secondary_name.as_ref()).then_some((i, t.end))
            })
            .collect();
        let drive_electrode_v: Vec<f64> = design
            .electrodes
            .iter()
            .map(|e| match &e.connect {
                Some(t) => design.drive.terminal_v(&t.winding, t.end),
                None => match design.drive.potential(&e.name) {
                    Some(PotentialSpec::Uniform(v)) => v,
                    _ => 0.0,
                },
            })
            .collect();

        // Panels per piece: in proportion to length, at least MIN_PANELS_PER_PIECE.
        let total_len: f64 = pieces.iter().map(|p| p.1.length()).sum();
        let budget = params
            .panels
            .max(MIN_PANELS_PER_PIECE * pieces.len().max(1));
        let mut panels = Vec::with_capacity(budget);
        // The coarse solve of the error estimate halves the panels per section too.
        let min_per_section = if top {
            MIN_PANELS_PER_SECTION
        } else {
            MIN_PANELS_PER_SECTION / 2
        };
        for (s, curve, grading) in &pieces {
            let n = ((budget as f64 * curve.length() / total_len).round() as usize)
                .max(MIN_PANELS_PER_PIECE);
            let us = grading.breakpoints(n, min_per_section);
            for w in us.windows(2) {
                let (u0, u1) = (w[0], w[1]);
                let a = curve.at(u0);
                let b = curve.at(u1);
                panels.push(
                    match (params.panel_form, curve) {
                        // A chord panel is its own straight piece from a to b, collocated at the
                        // chord's midpoint (inside the exact surface on a convex arc).
                        (PanelForm::Chord, Curve::Arc { .. }) => {
                            let chord = Curve::Line { p0: a, p1: b };
                            Panel {
                                surface: *s,
                                a,
                                b,
                                mid: chord.at(0.5),
                                length_m: chord.length(),
                                curve: chord,
                                u0: 0.0,
                                u1: 1.0,
                                ring: ChargeRing::default(),
                            }
                        }
                        _ => Panel {
                            surface: *s,
                            a,
                            b,
                            mid: curve.at(0.5 * (u0 + u1)),
                            length_m: curve.length() * (u1 - u0),
                            curve: *curve,
                            u0,
                            u1,
                            ring: ChargeRing::default(),
                        },
                    }
                    .with_charge_ring(),
                );
            }
        }
        let names = design.electrodes.iter().map(|e| e.name.clone()).collect();
        let mut problem = Problem {
            axis,
            ground_z,
            names,
            surfaces,
            shapes: design.electrodes.iter().map(|e| e.shape.clone()).collect(),
            panels,
            // A drive model's mode profile stands in for the default linear one.
            profile: match (&params.profile, &design.drive.secondary_voltage_profile) {
                (Profile::Linear, Some(values)) => {
                    Profile::nodes(values).map_err(|e| DesignError::BadSetting {
                        source_name: source.to_string(),
                        item: "drive".to_string(),
                        key: "secondary voltage profile".to_string(),
                        reason: e.to_string(),
                    })?
                }
                (p, _) => p.clone(),
            },
            sections_asked: params.secondary_sections,
            drive_electrode_v,
            drive_secondary_v,
            connected,
            coarse: None,
            bare: None,
            keep: Vec::new(),
        };
        if top {
            let half = Params {
                panels: params.panels / 2,
                ..params.clone()
            };
            problem.coarse = Some(Box::new(Self::build(design, &half, source, false)?));
            if !problem.connected.is_empty() {
                // The bare secondary: the same panels without those of its connected
                // electrodes, so that its matrix is a submatrix of this one.
                let bare = problem.without_connected();
                problem.bare = Some(Box::new(bare));
                if let Some(c) = problem.coarse.as_mut() {
                    c.bare = Some(Box::new(c.without_connected()));
                }
            }
        }
        Ok(problem)
    }

    /// The problem without the panels of electrodes connected to the secondary, and the
    /// indices of the panels kept.
    fn without_connected(&self) -> Problem {
        let dropped: Vec<usize> = self
            .surfaces
            .iter()
            .enumerate()
            .filter(|(_, (_, kind))| {
                matches!(kind, SurfaceKind::Electrode { index, .. }
                    if self.connected.iter().any(|(i, _)| i == index))
            })
            .map(|(s, _)| s)
            .collect();
        let keep: Vec<usize> = (0..self.panels.len())
            .filter(|&k| !dropped.contains(&self.panels[k].surface))
            .collect();
        Problem {
            panels: keep.iter().map(|&k| self.panels[k].clone()).collect(),
            connected: Vec::new(),
            // Only the full problem gives the nodal matrix.
            sections_asked: None,
            coarse: None,
            bare: None,
            keep,
            ..self.clone()
        }
    }

    /// Number of panels.
    pub fn n_panels(&self) -> usize {
        self.panels.len()
    }

    /// Potential at `(rho, z)` of panel `j` with unit sigma (V per C/m^2), images included.
    fn influence(&self, j: usize, rho: f64, z: f64, self_panel: bool) -> f64 {
        let p = &self.panels[j];
        let direct = if self_panel {
            self_potential(p)
        } else {
            let dist = (p.mid.0 - rho).hypot(p.mid.1 - z);
            let n = order_for(dist, p.length_m);
            panel_nodes(p, n, 0.0, 1.0)
                .map(|(r, zz, w)| w * ring_potential_unit(r, zz, rho, z))
                .sum::<f64>()
        };
        let image = match self.ground_z {
            None => 0.0,
            Some(zg) => {
                let zi = 2.0 * zg - z;
                let dist = (p.mid.0 - rho).hypot(p.mid.1 - zi);
                let n = order_for(dist, p.length_m);
                panel_nodes(p, n, 0.0, 1.0)
                    .map(|(r, zz, w)| w * ring_potential_unit(r, zz, rho, zi))
                    .sum::<f64>()
            }
        };
        // Charge 2 pi rho ds sigma; potential 1/(4 pi eps0) of the unit form.
        (direct - image) * 2.0 * PI / (4.0 * PI * EPS0)
    }

    fn matrix(&self, par: Par) -> DMatrix<f64> {
        let n = self.panels.len();
        let cols: Vec<Vec<f64>> = map_indexed(n, par, |j| {
            (0..n)
                .map(|i| {
                    let (rho, z) = self.panels[i].mid;
                    self.influence(j, rho, z, i == j)
                })
                .collect()
        });
        DMatrix::from_fn(n, n, |i, j| cols[j][i])
    }

    /// Potential (V) of each panel for electrode potentials `v_e` and secondary ends
    /// (base, top).
    fn rhs(&self, v_e: &[f64], sec: (f64, f64)) -> Vec<f64> {
        self.panels
            .iter()
            .map(|p| match self.surfaces[p.surface].1 {
                SurfaceKind::Electrode { index, .. } => v_e[index],
                SurfaceKind::Secondary { z_base_m, z_top_m } => {
                    let t = ((p.mid.1 - z_base_m) / (z_top_m - z_base_m)).clamp(0.0, 1.0);
                    sec.0 + (sec.1 - sec.0) * self.profile.at(t)
                }
            })
            .collect()
    }

    fn has_secondary(&self) -> bool {
        self.surfaces
            .iter()
            .any(|s| matches!(s.1, SurfaceKind::Secondary { .. }))
    }

    /// Charges (C) of the panels for surface charge densities `sigma`.
    fn charges(&self, sigma: &[f64]) -> Vec<f64> {
        self.panels
            .iter()
            .zip(sigma)
            .map(|(p, s)| s * 2.0 * PI * p.ring.rho_ds_m2)
            .collect()
    }

    /// Maxwell matrix, self-capacitances, drive sigma, and the nodal matrix when the
    /// secondary is cut into sections.
    fn solve_core(&self, a: DMatrix<f64>, par: Par) -> Result<CoreResult, SolverError> {
        let lu = BlockedLu::new(a, par)?;
        let ne = self.names.len();
        let mut matrix = vec![vec![0.0; ne]; ne];
        for c in 0..ne {
            let mut v = vec![0.0; ne];
            v[c] = 1.0;
            let sigma = lu.solve(&self.rhs(&v, (0.0, 0.0)));
            let q = self.charges(&sigma);
            for (k, qk) in q.iter().enumerate() {
                if let SurfaceKind::Electrode { index, .. } =
                    self.surfaces[self.panels[k].surface].1
                {
                    matrix[index][c] += qk;
                }
            }
        }
        let (self_bare, self_total) = if self.has_secondary() {
            // Bare: connected electrodes at 0 V here; the caller uses the bare problem when
            // there are connected electrodes. Total: connected electrodes at their terminal.
            let energy = |v_e: &[f64]| {
                let rhs = self.rhs(v_e, (0.0, 1.0));
                let sigma = lu.solve(&rhs);
                let q = self.charges(&sigma);
                q.iter().zip(&rhs).map(|(q, v)| q * v).sum::<f64>()
            };
            let bare = energy(&vec![0.0; ne]);
            let mut v_e = vec![0.0; ne];
            for &(i, end) in &self.connected {
                v_e[i] = match end {
                    End::Top => 1.0,
                    End::Base => 0.0,
                };
            }
            (Some(bare), Some(energy(&v_e)))
        } else {
            (None, None)
        };
        let nodal = match (self.has_secondary(), valid_sections(self.sections_asked)) {
            (true, Some(n)) => Some(self.nodal_matrix(&lu, n, par)),
            _ => None,
        };
        let sigma = lu.solve(&self.rhs(&self.drive_electrode_v, self.drive_secondary_v));
        Ok(CoreResult {
            matrix,
            self_bare,
            self_total,
            sigma,
            nodal,
        })
    }

    /// The node (0 = base, n = top) whose potential a connected electrode takes, if electrode
    /// `index` is connected to the secondary.
    fn connected_node(&self, index: usize, n: usize) -> Option<usize> {
        self.connected
            .iter()
            .find(|(i, _)| *i == index)
            .map(|(_, end)| match end {
                End::Base => 0,
                End::Top => n,
            })
    }

    /// For each panel on the secondary, its section s and the means of the two hats that are
    /// non-zero on it, (h_s, h_(s+1)), weighted like its charge (rho ds); `None` elsewhere.
    ///
    /// The panel's Gauss nodes make the mean exact for the hats, which are linear on a panel
    /// that lies in one section (the mesh puts every section boundary on a panel boundary);
    /// on the cylinder rho is constant, so the mean is the hats' value at the midpoint, and the
    /// sum sum_k q_k h_i(z_k) integrates the piecewise-constant sigma against h_i exactly.
    fn hat_means(&self, n: usize) -> Vec<Option<(usize, f64, f64)>> {
        self.panels
            .iter()
            .map(|p| {
                let SurfaceKind::Secondary { z_base_m, z_top_m } = self.surfaces[p.surface].1
                else {
                    return None;
                };
                let x_of = |z: f64| (z - z_base_m) / (z_top_m - z_base_m) * n as f64;
                let s = (x_of(p.mid.1).floor().max(0.0) as usize).min(n - 1);
                let (mut sum_w, mut sum_wx) = (0.0, 0.0);
                for (_, z, w) in panel_nodes(p, 4, 0.0, 1.0) {
                    sum_w += w;
                    sum_wx += w * (x_of(z) - s as f64).clamp(0.0, 1.0);
                }
                let upper = sum_wx / sum_w;
                Some((s, 1.0 - upper, upper))
            })
            .collect()
    }

    /// Potential (V) of each panel with 1 V on node `j` of n (the hat h_j on the secondary,
    /// electrodes connected at node j at 1 V, every other conductor at 0 V).
    fn rhs_hat(&self, j: usize, n: usize) -> Vec<f64> {
        self.panels
            .iter()
            .map(|p| match self.surfaces[p.surface].1 {
                SurfaceKind::Electrode { index, .. } => {
                    if self.connected_node(index, n) == Some(j) {
                        1.0
                    } else {
                        0.0
                    }
                }
                SurfaceKind::Secondary { z_base_m, z_top_m } => {
                    let x = (p.mid.1 - z_base_m) / (z_top_m - z_base_m) * n as f64;
                    (1.0 - (x - j as f64).abs()).max(0.0)
                }
            })
            .collect()
    }

    /// The nodal capacitance matrix (F) for n sections and the largest asymmetry of the
    /// collocation result before symmetrisation.
    ///
    /// Column j: the charges for 1 V on node j (see [`Problem::rhs_hat`]);
    /// C_ij = sum over secondary panels k of q_k^(j) <h_i>_k plus the charge of the electrodes
    /// connected at node i, so that W = v^T C v / 2 = (1/2) integral of sigma phi dA for the
    /// potential phi = sum_j v_j h_j on the tube (and v_i on electrodes connected at node i).
    /// Collocation is not Galerkin, so C_ij and C_ji differ by the discretisation error; the
    /// result is (C + C^T) / 2.
    fn nodal_matrix(&self, lu: &BlockedLu, n: usize, par: Par) -> NodalCore {
        let means = self.hat_means(n);
        let solved: Vec<(Vec<f64>, Vec<f64>)> = map_indexed(n + 1, par, |j| {
            let sigma = lu.solve(&self.rhs_hat(j, n));
            let q = self.charges(&sigma);
            let mut col = vec![0.0; n + 1];
            for (k, qk) in q.iter().enumerate() {
                if let Some((s, lower, upper)) = means[k] {
                    col[s] += qk * lower;
                    col[s + 1] += qk * upper;
                } else if let SurfaceKind::Electrode { index, .. } =
                    self.surfaces[self.panels[k].surface].1
                {
                    if let Some(i) = self.connected_node(index, n) {
                        col[i] += qk;
                    }
                }
            }
            (col, sigma)
        });
        let (columns, sigma_columns): (Vec<Vec<f64>>, Vec<Vec<f64>>) = solved.into_iter().unzip();
        let raw = DMatrix::from_fn(n + 1, n + 1, |i, j| columns[j][i]);
        let mut asymmetry: f64 = 0.0;
        for i in 0..=n {
            for j in 0..i {
                let scale = (raw[(i, i)] * raw[(j, j)]).abs().sqrt();
                asymmetry = asymmetry.max((raw[(i, j)] - raw[(j, i)]).abs() / scale);
            }
        }
        NodalCore {
            matrix: 0.5 * (&raw + raw.transpose()),
            asymmetry,
            sigma_columns,
        }
    }

    /// Solve: Maxwell matrix, self-capacitance, drive charges, and the coarse estimate; or
    /// [`SolverError::SingularMatrix`] when the boundary-element system has a zero or tiny
    /// pivot, [`SolverError::NotFinite`] when a capacitance or charge comes out infinite or NaN.
    pub fn solve(&self, par: Par) -> Result<Solution, SolverError> {
        // Bare self-capacitance: from the bare problem (a submatrix) when electrodes are
        // connected, else from the problem itself.
        let run = |p: &Problem| -> Result<(CoreResult, Option<f64>), SolverError> {
            let a = p.matrix(par);
            let bare = match p.bare.as_ref() {
                Some(b) => Some(b.solve_core(submatrix(&a, &b.keep), par)?.self_bare),
                None => None,
            };
            let core = p.solve_core(a, par)?;
            let bare = bare.unwrap_or(core.self_bare);
            Ok((core, bare))
        };
        let (core, bare) = run(self)?;
        finite_core(&core, bare, &self.names)?;
        let total = core.self_total;
        let self_c = match (bare, total) {
            (Some(bare_f), Some(total_f)) => Some(SelfCapacitance { bare_f, total_f }),
            _ => None,
        };
        let mut nodal_coarse = None;
        let error = match &self.coarse {
            Some(c) => {
                let (coarse, coarse_bare) = run(c)?;
                let diff = core
                    .matrix
                    .iter()
                    .zip(&coarse.matrix)
                    .map(|(r, s)| r.iter().zip(s).map(|(a, b)| (a - b).abs()).collect())
                    .collect();
                let sc = match (self_c, coarse_bare, coarse.self_total) {
                    (Some(f), Some(b), Some(t)) => Some(SelfCapacitance {
                        bare_f: (f.bare_f - b).abs(),
                        total_f: (f.total_f - t).abs(),
                    }),
                    _ => None,
                };
                nodal_coarse = coarse.nodal.map(|c| c.matrix);
                ErrorEstimate {
                    capacitance_matrix_f: diff,
                    self_capacitance_f: sc,
                }
            }
            None => ErrorEstimate {
                capacitance_matrix_f: Vec::new(),
                self_capacitance_f: None,
            },
        };
        let nodal = self.nodal_result(core.nodal, nodal_coarse);
        Ok(Solution {
            problem: self.clone(),
            matrix_f: core.matrix,
            self_c,
            sigma_drive: core.sigma,
            error,
            nodal,
        })
    }

    /// The nodal capacitance with its error estimate, or why there is none.
    fn nodal_result(
        &self,
        fine: Option<NodalCore>,
        coarse: Option<DMatrix<f64>>,
    ) -> Result<NodalCapacitance, SolverError> {
        let none = |reason: String| Err(SolverError::NoNodalCapacitance { reason });
        let Some((z_base, z_top)) = self.surfaces.iter().find_map(|s| match s.1 {
            SurfaceKind::Secondary { z_base_m, z_top_m } => Some((z_base_m, z_top_m)),
            _ => None,
        }) else {
            return none("the design has no secondary winding".into());
        };
        let n = match self.sections_asked {
            None => return none("Params::secondary_sections was not set".into()),
            Some(n) => match valid_sections(Some(n)) {
                Some(n) => n,
                None => {
                    return none(format!(
                        "Params::secondary_sections = {n} is outside 1..={MAX_SECONDARY_SECTIONS}"
                    ));
                }
            },
        };
        let Some(NodalCore {
            matrix: matrix_f,
            asymmetry,
            sigma_columns,
        }) = fine
        else {
            return none("the solve produced no nodal matrix".into());
        };
        let error_estimate_f = match coarse {
            Some(c) => (&matrix_f - c).abs(),
            None => DMatrix::zeros(n + 1, n + 1),
        };
        let node_heights_m: Vec<f64> = (0..=n)
            .map(|j| z_base + (z_top - z_base) * j as f64 / n as f64)
            .collect();
        let node_points_m = node_heights_m
            .iter()
            .map(|z| self.axis.origin_m + self.axis.direction.as_ref() * *z)
            .collect();
        Ok(NodalCapacitance {
            node_heights_m,
            node_points_m,
            matrix_f,
            error_estimate_f,
            asymmetry,
            sigma_columns,
            secondary_panels: self
                .panels
                .iter()
                .filter(|p| matches!(self.surfaces[p.surface].1, SurfaceKind::Secondary { .. }))
                .count(),
        })
    }
}

/// `sections` if it is in 1..=[`MAX_SECONDARY_SECTIONS`].
fn valid_sections(sections: Option<usize>) -> Option<usize> {
    sections.filter(|n| (1..=MAX_SECONDARY_SECTIONS).contains(n))
}

/// Every capacitance and drive charge of `core` finite, or the first that is not.
fn finite_core(core: &CoreResult, bare: Option<f64>, names: &[String]) -> Result<(), SolverError> {
    let bad = |what: String, v: f64| SolverError::NotFinite {
        what,
        value: v.to_string(),
    };
    for (i, row) in core.matrix.iter().enumerate() {
        for (j, &v) in row.iter().enumerate() {
            if !v.is_finite() {
                return Err(bad(
                    format!("Maxwell capacitance of '{}' and '{}'", names[i], names[j]),
                    v,
                ));
            }
        }
    }
    for (what, v) in [("bare", bare), ("total", core.self_total)] {
        if let Some(v) = v.filter(|v| !v.is_finite()) {
            return Err(bad(format!("the secondary's {what} self-capacitance"), v));
        }
    }
    if let Some(v) = core.sigma.iter().copied().find(|v| !v.is_finite()) {
        return Err(bad("a panel's drive charge density".into(), v));
    }
    Ok(())
}

/// What one factorisation gives.
struct CoreResult {
    /// Maxwell matrix of the electrodes (F).
    matrix: Vec<Vec<f64>>,
    /// Secondary's self-capacitance, connected electrodes at 0 V (F).
    self_bare: Option<f64>,
    /// Secondary's self-capacitance, connected electrodes at their terminal (F).
    self_total: Option<f64>,
    /// Drive sigma (C/m^2).
    sigma: Vec<f64>,
    /// Nodal matrix and the charges behind it.
    nodal: Option<NodalCore>,
}

/// The nodal solves of one factorisation.
struct NodalCore {
    /// Nodal matrix (F), symmetrised.
    matrix: DMatrix<f64>,
    /// Its largest asymmetry before symmetrisation, relative to the diagonal.
    asymmetry: f64,
    /// Panel charge densities (C/m^2) for 1 V on each node (hat j, electrodes at node j).
    sigma_columns: Vec<Vec<f64>>,
}

/// The matrix of a bare problem: rows and columns `keep` of the full one.
fn submatrix(a: &DMatrix<f64>, keep: &[usize]) -> DMatrix<f64> {
    DMatrix::from_fn(keep.len(), keep.len(), |i, j| a[(keep[i], keep[j])])
}

/// Potential at a panel's own midpoint of its unit sigma (times 4 pi eps0 / (2 pi)), the log
/// singularity subtracted and integrated analytically.
///
/// Near s_c (the midpoint), K(m) = ln(4 / kc) + R with R -> 0, and ln(4 / kc) = ln 4 +
/// ln(D)/2 - ln(d)/2, d = |P - P_c|^2 = (s - s_c)^2 q(s) with q smooth (1 on a line, the
/// chord-to-arc ratio squared on an arc). So the integrand g(s) K / sqrt(D) (g = rho') is
/// g/sqrt(D) [R + ln 4 + ln(D)/2 - ln(q)/2] - g/sqrt(D) ln|s - s_c|; the first part and
/// (h(s) - h(s_c)) ln|s - s_c| (h = g/sqrt(D)) are integrated by Gauss-Legendre on each half,
/// and h(s_c) times the integral of ln|s - s_c| in closed form:
/// int_{-l}^{l} ln|x| dx = 2 l (ln l - 1).
fn self_potential(p: &Panel) -> f64 {
    let (rc, zc) = p.mid;
    let half = 0.5 * p.length_m;
    let hc = {
        let big_d = 4.0 * rc * rc;
        rc / big_d.sqrt()
    };
    let mut total = 0.0;
    for (v0, v1) in [(0.0, 0.5), (0.5, 1.0)] {
        for (r, z, w) in panel_nodes(p, 16, v0, v1) {
            // w = rho ds; the distance along the panel from the midpoint:
            let s = {
                // Arc length from the midpoint, from the node's parameter.
                let (dr, dz) = (r - rc, z - zc);
                let chord = dr.hypot(dz);
                match p.curve {
                    Curve::Line { .. } => chord,
                    Curve::Arc { r: rad, .. } => {
                        2.0 * rad * (chord / (2.0 * rad)).clamp(-1.0, 1.0).asin()
                    }
                }
            };
            let ds = w / r.max(f64::MIN_POSITIVE);
            let big_d = (r + rc) * (r + rc) + (z - zc) * (z - zc);
            let small_d = (r - rc) * (r - rc) + (z - zc) * (z - zc);
            let kc = (small_d / big_d).sqrt();
            let k = k_from_kc(kc);
            let log4kc = 4.0_f64.ln() + 0.5 * big_d.ln() - 0.5 * small_d.ln();
            let h = r / big_d.sqrt();
            let smooth =
                h * (k - log4kc + 4.0_f64.ln() + 0.5 * big_d.ln() - 0.5 * (small_d / (s * s)).ln());
            total += ds * (smooth - (h - hc) * s.ln());
        }
    }
    total -= hc * 2.0 * half * (half.ln() - 1.0);
    (2.0 / PI) * total
}

/// LU factorisation with partial pivoting, blocked: the trailing updates are matrix products
/// (nalgebra's gemm), split by columns over rayon's threads when `par` allows.
struct BlockedLu {
    lu: DMatrix<f64>,
    perm: Vec<usize>,
}

const LU_BLOCK: usize = 64;

/// Smallest pivot accepted, relative to the largest entry of the matrix, per unknown: below
/// n * eps the factorisation has lost every digit (G. H. Golub, C. F. Van Loan, "Matrix
/// Computations", 4th ed., 2013, sec. 3.3: the growth of partial pivoting and its backward error
/// bound of order n eps). The boundary-element matrices of valid designs have pivots many
/// orders above it.
fn min_relative_pivot(n: usize) -> f64 {
    n.max(1) as f64 * f64::EPSILON
}

impl BlockedLu {
    /// Factorise `a`, or the error of a zero, tiny or non-finite pivot.
    fn new(mut a: DMatrix<f64>, par: Par) -> Result<BlockedLu, SolverError> {
        let n = a.nrows();
        let scale = a.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let limit = min_relative_pivot(n);
        if !scale.is_finite() || scale == 0.0 {
            return Err(SolverError::SingularMatrix {
                what: "boundary-element system",
                index: 0,
                pivot: scale,
                relative: if scale == 0.0 { 0.0 } else { f64::NAN },
                limit,
            });
        }
        let mut perm: Vec<usize> = (0..n).collect();
        let mut k = 0;
        while k < n {
            let nb = LU_BLOCK.min(n - k);
            // Panel factorisation of columns k..k+nb, with full row swaps.
            for j in k..k + nb {
                let (mut piv, mut best) = (j, a[(j, j)].abs());
                for i in j + 1..n {
                    let v = a[(i, j)].abs();
                    if v > best {
                        best = v;
                        piv = i;
                    }
                }
                if piv != j {
                    a.swap_rows(j, piv);
                    perm.swap(j, piv);
                }
                let d = a[(j, j)];
                // A pivot must be finite and not tiny (NaN is caught by the first test).
                if !d.is_finite() || d.abs() <= limit * scale {
                    return Err(SolverError::SingularMatrix {
                        what: "boundary-element system",
                        index: j,
                        pivot: d,
                        relative: d.abs() / scale,
                        limit,
                    });
                }
                for i in j + 1..n {
                    a[(i, j)] /= d;
                }
                for c in j + 1..k + nb {
                    let f = a[(j, c)];
                    if f != 0.0 {
                        for i in j + 1..n {
                            let l = a[(i, j)];
                            a[(i, c)] -= l * f;
                        }
                    }
                }
            }
            let rest = n - k - nb;
            if rest > 0 {
                // U12 = L11^-1 A12 (unit lower triangular, forward substitution).
                for c in k + nb..n {
                    for j in k..k + nb {
                        let f = a[(j, c)];
                        if f != 0.0 {
                            for i in j + 1..k + nb {
                                let l = a[(i, j)];
                                a[(i, c)] -= l * f;
                            }
                        }
                    }
                }
                let l21 = a.view((k + nb, k), (rest, nb)).into_owned();
                let u12 = a.view((k, k + nb), (nb, rest)).into_owned();
                // A22 -= L21 U12, by column chunks.
                let start = (k + nb) * n;
                let data = &mut a.as_mut_slice()[start..];
                let chunk_cols = 64usize;
                let update = |(c, chunk): (usize, &mut [f64])| {
                    let ncols = chunk.len() / n;
                    let mut view = DMatrixViewMut::from_slice(chunk, n, ncols);
                    let mut a22 = view.view_mut((k + nb, 0), (rest, ncols));
                    let u = u12.view((0, c * chunk_cols), (nb, ncols));
                    a22.gemm(-1.0, &l21, &u, 1.0);
                };
                match par {
                    Par::Seq => data.chunks_mut(chunk_cols * n).enumerate().for_each(update),
                    Par::Rayon => data
                        .par_chunks_mut(chunk_cols * n)
                        .enumerate()
                        .for_each(update),
                }
            }
            k += nb;
        }
        Ok(BlockedLu { lu: a, perm })
    }

    fn solve(&self, b: &[f64]) -> Vec<f64> {
        let n = self.lu.nrows();
        let mut x: Vec<f64> = self.perm.iter().map(|&i| b[i]).collect();
        for j in 0..n {
            let f = x[j];
            if f != 0.0 {
                for (i, xi) in x.iter_mut().enumerate().skip(j + 1) {
                    *xi -= self.lu[(i, j)] * f;
                }
            }
        }
        for j in (0..n).rev() {
            x[j] /= self.lu[(j, j)];
            let f = x[j];
            if f != 0.0 {
                for (i, xi) in x.iter_mut().enumerate().take(j) {
                    *xi -= self.lu[(i, j)] * f;
                }
            }
        }
        x
    }
}

impl Solution {
    /// Electrode names, file order (rows and columns of the Maxwell matrix).
    pub fn conductor_names(&self) -> &[String] {
        &self.problem.names
    }

    /// Maxwell capacitance matrix (F) of the electrodes, file order: column c holds the charges
    /// with 1 V on electrode c and 0 V on every other conductor (the secondary included).
    pub fn capacitance_matrix_f(&self) -> &[Vec<f64>] {
        &self.matrix_f
    }

    /// Each electrode's capacitance (F), the diagonal of the Maxwell matrix (all others at 0 V).
    pub fn capacitances_f(&self) -> Vec<f64> {
        (0..self.matrix_f.len())
            .map(|i| self.matrix_f[i][i])
            .collect()
    }

    /// The secondary's equivalent self-capacitance at its top (None without a secondary).
    pub fn self_capacitance_f(&self) -> Option<SelfCapacitance> {
        self.self_c
    }

    /// |C(n) - C(n/2)| for every result (F).
    pub fn error_estimate(&self) -> &ErrorEstimate {
        &self.error
    }

    /// The secondary's nodal capacitance matrix (see [`NodalCapacitance`]) for the sections of
    /// [`Params::secondary_sections`].
    ///
    /// Errors ([`SolverError::NoNodalCapacitance`]): no secondary, `secondary_sections` not set
    /// or outside 1..=[`MAX_SECONDARY_SECTIONS`].
    pub fn nodal_capacitance(&self) -> Result<&NodalCapacitance, SolverError> {
        self.nodal.as_ref().map_err(Clone::clone)
    }

    /// Number of panels of the solution.
    pub fn n_panels(&self) -> usize {
        self.problem.panels.len()
    }

    /// The common axis of the solution.
    pub fn axis(&self) -> Axis {
        self.problem.axis
    }

    /// Each panel with its sigma and surface field at the drive potentials.
    pub fn panels(&self) -> Vec<PanelResult> {
        self.problem
            .panels
            .iter()
            .zip(&self.sigma_drive)
            .map(|(p, &s)| {
                let disc = matches!(
                    self.problem.surfaces[p.surface].1,
                    SurfaceKind::Electrode { disc: true, .. }
                );
                PanelResult {
                    surface: self.problem.surfaces[p.surface].0.clone(),
                    start_rho_z_m: [p.a.0, p.a.1],
                    end_rho_z_m: [p.b.0, p.b.1],
                    sigma_c_per_m2: s,
                    surface_field_v_per_m: s.abs() / EPS0 / if disc { 2.0 } else { 1.0 },
                }
            })
            .collect()
    }

    /// The largest surface field on each electrode (file order) with node voltages `node_v`
    /// (V) on the secondary's nodes (electrodes connected to it at their node's voltage,
    /// the others at 0 V), from the nodal solves (no further solve): sigma = sum_j v_j
    /// sigma_j. Errors: no nodal matrix, or a vector of the wrong length.
    pub fn peak_surface_fields_for_nodes(
        &self,
        node_v: &[f64],
    ) -> Result<Vec<PeakField>, SolverError> {
        let nodal = self.nodal_capacitance()?;
        if node_v.len() != nodal.sigma_columns.len() {
            return Err(SolverError::NoNodalCapacitance {
                reason: format!(
                    "{} node voltages for {} nodes",
                    node_v.len(),
                    nodal.sigma_columns.len()
                ),
            });
        }
        let sigma: Vec<f64> = (0..self.problem.panels.len())
            .map(|k| {
                node_v
                    .iter()
                    .zip(&nodal.sigma_columns)
                    .map(|(v, col)| v * col[k])
                    .sum()
            })
            .collect();
        Ok(self.peak_fields_of(&sigma))
    }

    /// The largest surface field on each electrode (file order) at the drive potentials.
    pub fn peak_surface_fields(&self) -> Vec<PeakField> {
        self.peak_fields_of(&self.sigma_drive)
    }

    /// The largest surface field on each electrode (file order) for panel charges `sigma`.
    fn peak_fields_of(&self, sigma: &[f64]) -> Vec<PeakField> {
        let panels: Vec<PanelResult> = self
            .problem
            .panels
            .iter()
            .zip(sigma)
            .map(|(p, &s)| {
                let disc = matches!(
                    self.problem.surfaces[p.surface].1,
                    SurfaceKind::Electrode { disc: true, .. }
                );
                PanelResult {
                    surface: self.problem.surfaces[p.surface].0.clone(),
                    start_rho_z_m: [p.a.0, p.a.1],
                    end_rho_z_m: [p.b.0, p.b.1],
                    sigma_c_per_m2: s,
                    surface_field_v_per_m: s.abs() / EPS0 / if disc { 2.0 } else { 1.0 },
                }
            })
            .collect();
        let (x_hat, _) = local_frame(&self.problem.axis.direction);
        let mut out = Vec::new();
        for name in &self.problem.names {
            let best = self
                .problem
                .panels
                .iter()
                .zip(&panels)
                .filter(|(_, r)| &r.surface == name)
                .max_by(|a, b| {
                    a.1.surface_field_v_per_m
                        .total_cmp(&b.1.surface_field_v_per_m)
                });
            if let Some((p, r)) = best {
                out.push(PeakField {
                    name: name.clone(),
                    field_v_per_m: r.surface_field_v_per_m,
                    at_m: self.problem.axis.origin_m
                        + self.problem.axis.direction.as_ref() * p.mid.1
                        + x_hat * p.mid.0,
                });
            }
        }
        out
    }

    /// Groups of [`CLUSTER_PANELS`] consecutive panels with their total charge (C), its
    /// charge-weighted centroid (rho, z) (m) and the group's half-size (m).
    fn clusters(&self) -> Vec<Cluster> {
        let pr = &self.problem;
        (0..pr.panels.len())
            .step_by(CLUSTER_PANELS)
            .map(|first| {
                let last = (first + CLUSTER_PANELS).min(pr.panels.len());
                let qs: Vec<f64> = (first..last)
                    .map(|k| self.sigma_drive[k] * 2.0 * PI * pr.panels[k].ring.rho_ds_m2)
                    .collect();
                let q: f64 = qs.iter().sum();
                let same_sign = qs.iter().all(|x| *x > 0.0) || qs.iter().all(|x| *x < 0.0);
                let (mut rc, mut zc) = (0.0, 0.0);
                if same_sign {
                    for (k, qk) in (first..last).zip(&qs) {
                        rc += qk * pr.panels[k].ring.centre.0;
                        zc += qk * pr.panels[k].ring.centre.1;
                    }
                    rc /= q;
                    zc /= q;
                }
                let half_size = (first..last)
                    .flat_map(|k| [pr.panels[k].a, pr.panels[k].b])
                    .map(|(r, z)| (r - rc).hypot(z - zc))
                    .fold(0.0, f64::max);
                Cluster {
                    first,
                    last,
                    q_c: q,
                    centre: (rc, zc),
                    half_size_m: half_size,
                    same_sign,
                }
            })
            .collect()
    }

    /// (E_rho, E_z) (V/m) of all panels at (rho, z): a distant cluster of one-signed charges
    /// as one ring charge at its charge-weighted centroid (the dipole term vanishes there, the
    /// error is of the quadrupole's relative order (size / distance)^2 < 1/[`CLUSTER_FAR`]^2),
    /// the others panel by panel.
    fn e_clusters(&self, clusters: &[Cluster], rho: f64, z: f64) -> (f64, f64) {
        let pr = &self.problem;
        let (mut er, mut ez) = (0.0, 0.0);
        for c in clusters {
            let dist = (c.centre.0 - rho).hypot(c.centre.1 - z);
            if c.same_sign && dist > CLUSTER_FAR * c.half_size_m {
                let (a, b) = e_ring_charge_fast(c.q_c, c.centre.0, c.centre.1, rho, z);
                er += a;
                ez += b;
                continue;
            }
            for k in c.first..c.last {
                let sigma = self.sigma_drive[k];
                if sigma != 0.0 {
                    let (a, b) = panel_e(&pr.panels[k], sigma, rho, z);
                    er += a;
                    ez += b;
                }
            }
        }
        (er, ez)
    }

    /// The monopole and axial dipole of the drive's panel charges (and their images in the
    /// ground plane), for points beyond [`E_FAR_RATIO`] sizes ([`FarCharges`]).
    fn far_charges(&self) -> FarCharges {
        let pr = &self.problem;
        // Each panel's charge as one ring ([`ChargeRing`]), as the capacitances, the clusters
        // and distant panels take it: its axial dipole about the centre is the Gauss rule's.
        let qz: Vec<(f64, f64)> = pr
            .panels
            .iter()
            .zip(&self.sigma_drive)
            .map(|(p, &sigma)| (sigma * 2.0 * PI * p.ring.rho_ds_m2, p.ring.centre.1))
            .collect();
        let (z_lo, z_hi) = pr
            .panels
            .iter()
            .flat_map(|p| [p.a.1, p.b.1])
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), z| {
                (lo.min(z), hi.max(z))
            });
        // With a grounded plane the images -q at 2 z_g - z make the total charge exactly 0
        // and the dipole about the plane 2 sum q (z - z_g).
        let (centre_z, charge, dipole) = match pr.ground_z {
            Some(zg) => (
                zg,
                0.0,
                2.0 * qz.iter().map(|(q, z)| q * (z - zg)).sum::<f64>(),
            ),
            None => {
                let c = 0.5 * (z_lo + z_hi);
                (
                    c,
                    qz.iter().map(|(q, _)| q).sum::<f64>(),
                    qz.iter().map(|(q, z)| q * (z - c)).sum::<f64>(),
                )
            }
        };
        let size_m = pr
            .panels
            .iter()
            .flat_map(|p| [p.a, p.b])
            .map(|(rho, z)| rho.hypot(z - centre_z))
            .fold(0.0, f64::max);
        FarCharges {
            centre_z_m: centre_z,
            size_m,
            charge_c: charge,
            dipole_c_m: dipole,
        }
    }

    /// The conductor edges of the panel model, where the field of the panels' constant charge
    /// densities is not resolved (the true field is singular at an edge): each end of a
    /// surface's generatrix off the axis (the base and top rims of the secondary's cylinder, a
    /// disc's rim) and each corner where consecutive panels turn by more than
    /// [`EDGE_CORNER_DEG`] (a closed cylinder's rims). In the meridian half-plane of the axis.
    pub fn edges(&self) -> Vec<Edge> {
        let pr = &self.problem;
        let mut out = Vec::new();
        let size = pr
            .panels
            .iter()
            .map(|p| p.a.0.abs().max(p.b.0.abs()))
            .fold(0.0, f64::max);
        let on_axis = |rho: f64| rho <= 1e-9 * size;
        let mut k = 0;
        while k < pr.panels.len() {
            let surface = pr.panels[k].surface;
            let mut j = k + 1;
            while j < pr.panels.len() && pr.panels[j].surface == surface {
                j += 1;
            }
            let name = pr.surfaces[surface].0.clone();
            let generatrix_m: f64 = pr.panels[k..j].iter().map(|p| p.length_m).sum();
            let mut push = |at: (f64, f64), panel_m: f64| {
                out.push(Edge {
                    surface: name.clone(),
                    rho_z_m: at,
                    unresolved_within_m: (EDGE_UNRESOLVED_PANELS * panel_m)
                        .max(EDGE_UNRESOLVED_FRACTION * generatrix_m),
                })
            };
            let (first, last) = (&pr.panels[k], &pr.panels[j - 1]);
            let closed = first.a == last.b;
            if !closed && !on_axis(first.a.0) {
                push(first.a, first.length_m);
            }
            if !closed && !on_axis(last.b.0) {
                push(last.b, last.length_m);
            }
            for m in k + 1..j {
                let (p, q) = (&pr.panels[m - 1], &pr.panels[m]);
                let u = (p.b.0 - p.a.0, p.b.1 - p.a.1);
                let v = (q.b.0 - q.a.0, q.b.1 - q.a.1);
                let cos = (u.0 * v.0 + u.1 * v.1) / (u.0.hypot(u.1) * v.0.hypot(v.1));
                if cos < EDGE_CORNER_DEG.to_radians().cos() {
                    push(q.a, p.length_m.max(q.length_m));
                }
            }
            k = j;
        }
        out
    }

    /// The meridian coordinates (rho, z) (m) of `p` about the problem's axis.
    pub fn meridian_m(&self, p: &Point3<f64>) -> (f64, f64) {
        let pr = &self.problem;
        let r = p - pr.axis.origin_m;
        let z = r.dot(pr.axis.direction.as_ref());
        ((r - pr.axis.direction.as_ref() * z).norm(), z)
    }

    /// E (V/m, peak of the drive potentials) at each point; a point inside an electrode or
    /// below the ground plane is reported as such.
    pub fn e_field(&self, points_m: &[Point3<f64>], par: Par) -> Vec<FieldSample> {
        let pr = &self.problem;
        let n_hat = pr.axis.direction;
        let clusters = self.clusters();
        let far = self.far_charges();
        map_indexed(points_m.len(), par, |i| {
            let p = &points_m[i];
            for (k, shape) in pr.shapes.iter().enumerate() {
                if shape.signed_distance_m(p) < 0.0 {
                    return FieldSample::InsideConductor(pr.names[k].clone());
                }
            }
            let r = p - pr.axis.origin_m;
            let z = r.dot(n_hat.as_ref());
            if let Some(zg) = pr.ground_z {
                if z < zg {
                    return FieldSample::BelowGround;
                }
            }
            let perp = r - n_hat.as_ref() * z;
            let rho = perp.norm();
            let rho_hat = if rho > 0.0 {
                perp / rho
            } else {
                Vector3::zeros()
            };
            if far.applies_at(rho, z) {
                let (er, ez) = far.e_at(rho, z);
                return FieldSample::Field(rho_hat * er + n_hat.as_ref() * ez);
            }
            let (mut er, mut ez) = self.e_clusters(&clusters, rho, z);
            if let Some(zg) = pr.ground_z {
                // The image charge -q at 2 zg - z0, seen from (rho, z), is the real charge seen
                // from the mirrored point with E_rho negated (sign of the charge) and E_z kept
                // (sign of the charge times the mirror).
                let (r2, z2) = self.e_clusters(&clusters, rho, 2.0 * zg - z);
                er -= r2;
                ez += z2;
            }
            FieldSample::Field(rho_hat * er + n_hat.as_ref() * ez)
        })
    }
}

/// Distance from the charges' centre, in units of their size, beyond which E is their
/// monopole and dipole (the charges' total and axial dipole): there the panel sum of charges of both signs (or of
/// charges and their images) cancels, losing about 1e-16 r / size, while the expansion's
/// truncation is about size / r: both near 1e-8 here.
pub const E_FAR_RATIO: f64 = 1e8;

/// The drive's charges seen from far away: total charge Q at the centre (on the axis) and the
/// axial dipole p about it, E = (1 / 4 pi eps0) [Q r^ / r^2 + (3 (p . r^) r^ - p) / r^3]
/// (J. D. Jackson, "Classical Electrodynamics", 3rd ed., 1999, eqs. 4.10 and 4.13).
#[derive(Debug, Clone, Copy)]
struct FarCharges {
    centre_z_m: f64,
    size_m: f64,
    charge_c: f64,
    dipole_c_m: f64,
}

impl FarCharges {
    /// Whether (rho, z) lies beyond [`E_FAR_RATIO`] sizes from the centre.
    fn applies_at(&self, rho_m: f64, z_m: f64) -> bool {
        rho_m.hypot(z_m - self.centre_z_m) > E_FAR_RATIO * self.size_m
    }

    /// (E_rho, E_z) (V/m) at (rho, z); each term divided by r one factor at a time, so that
    /// it underflows only when its true value does.
    fn e_at(&self, rho_m: f64, z_m: f64) -> (f64, f64) {
        let dz = z_m - self.centre_z_m;
        let r = rho_m.hypot(dz);
        let (s, c) = (rho_m / r, dz / r);
        let k = 1.0 / (4.0 * PI * EPS0);
        let mono = k * self.charge_c / r / r;
        let p = k * self.dipole_c_m;
        let (dr, dz_) = (
            3.0 * p * c * s / r / r / r,
            (3.0 * p * c * c - p) / r / r / r,
        );
        (mono * s + dr, mono * c + dz_)
    }
}

/// A corner of a conductor's generatrix counts as an edge ([`Solution::edges`]) when the
/// panels turn by more than this (degrees).
pub const EDGE_CORNER_DEG: f64 = 30.0;

/// A conductor edge of the panel model ([`Solution::edges`]).
#[derive(Debug, Clone, PartialEq)]
pub struct Edge {
    /// The conductor (electrode or secondary) it belongs to.
    pub surface: String,
    /// Its place in the meridian half-plane: (distance from the axis, height along it) (m).
    pub rho_z_m: (f64, f64),
    /// Distance (m) from it within which E is not resolved: [`EDGE_UNRESOLVED_PANELS`] lengths
    /// of the panel there (the larger of two at a corner), and at least
    /// [`EDGE_UNRESOLVED_FRACTION`] of its conductor's generatrix length.
    pub unresolved_within_m: f64,
}

/// Within this many lengths of the panel at an edge E is not resolved: constant charge
/// densities on panels of length h leave errors of order one within about h of an edge, where
/// the true field is singular (common practice of panel methods, no source).
pub const EDGE_UNRESOLVED_PANELS: f64 = 2.0;

/// ... and within this fraction of the conductor's generatrix length: the model's edges are
/// sharp (a thin sheet for the secondary, whose real rim is a round wire), so its edge field
/// there reflects the model's sharpness more than the real conductor's (our own choice, no
/// source).
pub const EDGE_UNRESOLVED_FRACTION: f64 = 0.01;

/// Panels per cluster of the E evaluation.
pub const CLUSTER_PANELS: usize = 8;

/// A cluster counts as one ring charge beyond this many half-sizes.
pub const CLUSTER_FAR: f64 = 80.0;

/// A group of consecutive panels for the E evaluation.
#[derive(Debug, Clone, Copy)]
struct Cluster {
    first: usize,
    last: usize,
    q_c: f64,
    centre: (f64, f64),
    half_size_m: f64,
    same_sign: bool,
}

/// Warnings on the quasi-static assumption at the drive frequency: distances (m) beyond
/// 0.1 lambda / (2 pi), and a secondary whose wire is longer than lambda / 10.
///
/// lambda = c / f. Without a drive frequency a single warning says the check was not made.
pub fn validity_warnings(design: &Design, distances_m: &[f64]) -> Vec<String> {
    let Some(f) = design.drive.frequency_hz else {
        return vec!["no drive frequency: the quasi-static assumption was not checked".to_string()];
    };
    let lambda = C0 / f;
    let limit = 0.1 * lambda / (2.0 * PI);
    let mut out = Vec::new();
    if let Some(d) = distances_m
        .iter()
        .copied()
        .filter(|d| *d > limit)
        .reduce(f64::max)
    {
        out.push(format!(
            "distances up to {d:.3} m exceed 0.1 lambda/(2 pi) = {limit:.3} m at {f:.4e} Hz: \
             the quasi-static near field is a weak approximation there (radiation neglected)"
        ));
    }
    for w in design.windings.iter().filter(|w| w.role == Role::Secondary) {
        let len = wire_length_m(w);
        if len > 0.1 * lambda {
            let meaning = if design.drive.secondary_voltage_profile.is_some() {
                "the fields here take the resonance model's mode along the winding, which \
                 accounts for the distributed winding"
            } else {
                "the resonance model (coilfield resonance, or a [drive] kind) accounts for the \
                 distributed winding; the explicit [drive] here is taken as given (linear \
                 potential, uniform current), an approximation for such a wire"
            };
            out.push(format!(
                "winding '{}': its wire is {} long, {} wavelengths at {} (over 0.1 the current \
                 is not uniform along it: a distributed resonator); {meaning}",
                w.name,
                crate::numtext::si(len, "m", 4),
                crate::numtext::fixed(len / lambda, 3),
                crate::numtext::si(f, "Hz", 4),
            ));
        }
    }
    // Once per command: the callers may gather the same warning from several places.
    let mut seen = std::collections::HashSet::new();
    out.retain(|w| seen.insert(w.clone()));
    out
}

#[cfg(test)]
mod tests {
    /// Parse a design text and solve it with `panels` panels (the common test set-up).
    fn solve_text(text: &str, panels: usize) -> Solution {
        let d = parse_design(text, "t").unwrap();
        Problem::from_design(
            &d,
            &Params {
                panels,
                ..Default::default()
            },
            "t",
        )
        .unwrap()
        .solve(Par::Rayon)
        .unwrap()
    }

    use super::*;
    use coilfield_geometry::parse_design;

    /// Rows (ratio, reference, relative tolerance) of validation/fields_capacitance.csv
    /// (validation/fields_refs.py, mpmath) for one shape.
    fn table(shape: &str) -> Vec<(f64, f64, f64)> {
        let rows: Vec<(f64, f64, f64)> = include_str!("../../validation/fields_capacitance.csv")
            .lines()
            .skip(1)
            .filter(|l| l.starts_with(&format!("{shape},")))
            .map(|l| {
                let f: Vec<&str> = l.splitn(6, ',').collect();
                assert_eq!(f[4], "rel");
                (
                    f[1].parse().unwrap(),
                    f[2].parse().unwrap(),
                    f[3].parse().unwrap(),
                )
            })
            .collect();
        assert!(!rows.is_empty(), "no rows for {shape}");
        rows
    }

    fn sphere_design(radius: f64, z: f64, ground: bool) -> Design {
        let mut text = format!(
            "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, {z}]\nradius = {radius}\n"
        );
        if ground {
            text.push_str("[ground]\nz = 0.0\n");
        }
        parse_design(&text, "t").unwrap()
    }

    fn capacitance(design: &Design, panels: usize) -> (f64, f64) {
        let p = Problem::from_design(
            design,
            &Params {
                panels,
                ..Default::default()
            },
            "t",
        )
        .unwrap();
        let s = p.solve(Par::Rayon).unwrap();
        (
            s.capacitances_f()[0],
            s.error_estimate().capacitance_matrix_f[0][0],
        )
    }

    #[test]
    fn ring_charge_potential_matches_mpmath() {
        // Q = 1 nC, a = 1 m: phi = Q/(4 pi eps0) (2/pi) K(m) / sqrt((a + rho)^2 + z^2) (W. R.
        // Smythe, "Static and Dynamic Electricity", 1950, ch. 5), mpmath 30 digits with the
        // classical eps0 (validation/inline_refs.py, re-run by .ci/test with --check).
        for &(rho, z, want) in &[
            (0.0, 0.0, 8.987_551_787_368_176),
            (0.5, 0.5, 8.168_129_056_488_912),
            (2.0, 0.0, 4.822_639_433_263_318),
        ] {
            let got = potential_ring_charge_point(1e-9, 1.0, 0.0, rho, z);
            assert!(((got - want) / want).abs() < 1e-14, "{rho},{z}: {got}");
        }
    }

    #[test]
    fn ring_charge_field_is_minus_the_gradient() {
        let h = 1e-6;
        for &(rho, z) in &[(0.3, 0.2), (1.4, -0.3), (1e-9, 0.5), (0.9, 0.05)] {
            let phi = |r: f64, z: f64| potential_ring_charge_point(1e-9, 1.0, 0.1, r, z);
            let (er, ez) = e_ring_charge_point(1e-9, 1.0, 0.1, rho, z);
            let fz = -(phi(rho, z + h) - phi(rho, z - h)) / (2.0 * h);
            assert!((ez - fz).abs() < 1e-6 * fz.abs().max(1.0), "{ez} vs {fz}");
            if rho > 1e-3 {
                let fr = -(phi(rho + h, z) - phi(rho - h, z)) / (2.0 * h);
                assert!((er - fr).abs() < 1e-6 * fr.abs().max(1.0), "{er} vs {fr}");
            } else {
                assert!(er.abs() < 1e-6, "{er}");
            }
        }
    }

    #[test]
    fn fast_field_kernel_matches_the_cel_form() {
        for &(rho, z) in &[
            (0.3, 0.2),
            (1.4, -0.3),
            (0.9, 0.05),
            (2.0, 1.0),
            (1e-7, 0.3),
            (0.0, 0.3),
            (30.0, 2.0),
        ] {
            let (a, b) = e_ring_charge_point(1e-9, 1.0, 0.1, rho, z);
            let (c, d) = e_ring_charge_fast(1e-9, 1.0, 0.1, rho, z);
            let scale = a.abs().max(b.abs());
            assert!((a - c).abs() <= 1e-12 * scale, "{rho},{z}: {a} vs {c}");
            assert!((b - d).abs() <= 1e-12 * scale, "{rho},{z}: {b} vs {d}");
        }
    }

    #[test]
    fn isolated_sphere_with_curved_panels_is_exact_to_rounding() {
        // C = 4 pi eps0 a (exact). With curved panels the surface is represented exactly and a
        // constant sigma on every panel is the exact solution for a sphere, so only quadrature
        // and rounding errors remain: this checks the quadrature, not the error estimate (see
        // the chord-panel test below for that).
        let d = sphere_design(0.1, 1.0, false);
        let exact = 4.0 * PI * EPS0 * 0.1;
        for n in [20, 80, 200] {
            let (c, _) = capacitance(&d, n);
            assert!(((c - exact) / exact).abs() < 1e-8, "n={n}: {c} vs {exact}");
        }
    }

    #[test]
    fn isolated_sphere_error_estimate_bounds_the_true_error() {
        // Straight chord panels (conical frusta, PanelForm::Chord) inscribe a polyhedral
        // surface in the sphere: a genuine O(h^2) geometric error, far above rounding, that
        // the coarse solve can be checked against. For an error e(n) ~ k / n^2 the estimate
        // |C(n) - C(n/2)| ~ 3 k / n^2, so it should bound the true error |C(n) - 4 pi eps0 a|
        // with a margin of about 3; the test asserts the bound, that the error is real
        // (> 1e-7 relative) and that it falls at least 3x per doubling of the panels.
        let d = sphere_design(0.1, 1.0, false);
        let exact = 4.0 * PI * EPS0 * 0.1;
        let mut last = f64::INFINITY;
        for n in [20, 40, 80, 160] {
            let p = Problem::from_design(
                &d,
                &Params {
                    panels: n,
                    panel_form: PanelForm::Chord,
                    ..Default::default()
                },
                "t",
            )
            .unwrap();
            let s = p.solve(Par::Rayon).unwrap();
            let c = s.capacitances_f()[0];
            let est = s.error_estimate().capacitance_matrix_f[0][0];
            let err = (c - exact).abs();
            assert!(
                err / exact > 1e-7,
                "n={n}: error {err} is at rounding level"
            );
            assert!(est >= err, "n={n}: estimate {est} below the error {err}");
            assert!(last / err >= 3.0, "n={n}: error {last} -> {err}");
            last = err;
        }
    }

    #[test]
    fn chord_panels_leave_straight_generatrices_unchanged() {
        // A disc's generatrix is straight: both panel forms must give the same matrix.
        let d = disc_design();
        let c = |form| {
            Problem::from_design(
                &d,
                &Params {
                    panels: 60,
                    panel_form: form,
                    ..Default::default()
                },
                "t",
            )
            .unwrap()
            .solve(Par::Seq)
            .unwrap()
            .capacitances_f()[0]
        };
        assert_eq!(c(PanelForm::Curved), c(PanelForm::Chord));
    }

    fn disc_design() -> Design {
        let text = "[[electrode]]\nname = \"plate\"\nshape = \"disc\"\norigin = [0.0, 0.0, 0.0]\naxis = [0.0, 0.0, 1.0]\nradius = 0.2\n";
        parse_design(text, "t").unwrap()
    }

    #[test]
    fn convergence_under_refinement_and_estimate_bound() {
        // The disc (C = 8 eps0 a exact) has a real discretisation error (sigma ~ 1/sqrt at the
        // rim): it must fall at least 3x per doubling, and |C(n) - C(n/2)| must bound it.
        let d = disc_design();
        let exact = 8.0 * EPS0 * 0.2;
        let mut last = f64::INFINITY;
        for n in [50, 100, 200] {
            let (c, est) = capacitance(&d, n);
            let err = (c - exact).abs();
            assert!(last / err >= 3.0, "n={n}: {last} -> {err}");
            assert!(est >= err, "n={n}: estimate {est} below the error {err}");
            last = err;
        }
    }

    #[test]
    fn thin_disc() {
        // C = 8 eps0 a (exact).
        let d = disc_design();
        let exact = 8.0 * EPS0 * 0.2;
        let (c, _) = capacitance(&d, 400);
        assert!(
            ((c - exact) / exact).abs() < 1e-3,
            "{c} vs {exact}: {}",
            (c - exact) / exact
        );
    }

    #[test]
    fn sphere_over_ground() {
        // Image series (W. R. Smythe, "Static and Dynamic Electricity", 1950; mpmath rows of
        // validation/fields_capacitance.csv, recomputed by validation/fields_refs.py --check in
        // .ci/test), down to a gap of a tenth of the radius (h/a = 1.1).
        for (h, want, tol) in table("sphere_over_plane") {
            let d = sphere_design(0.1, 0.1 * h, true);
            let (c, _) = capacitance(&d, 400);
            let got = c / (4.0 * PI * EPS0 * 0.1);
            assert!(
                ((got - want) / want).abs() < tol,
                "h/a={h}: {got} vs {want}"
            );
        }
    }

    #[test]
    fn torus() {
        // Toroidal harmonics (Smythe 1950; mpmath rows of validation/fields_capacitance.csv,
        // recomputed by validation/fields_refs.py --check in .ci/test).
        for (ratio, want, tol) in table("torus") {
            let r = 0.05;
            let text = format!(
                "[[electrode]]\nname = \"ring\"\nshape = \"torus\"\norigin = [0.0, 0.0, 0.0]\naxis = [0.0, 0.0, 1.0]\nmajor_radius = {}\nminor_radius = {r}\n",
                ratio * r
            );
            let d = parse_design(&text, "t").unwrap();
            let (c, _) = capacitance(&d, 300);
            let got = c / (4.0 * PI * EPS0 * r);
            assert!(
                ((got - want) / want).abs() < tol,
                "R/r={ratio}: {got} vs {want}"
            );
        }
    }

    #[test]
    fn field_outside_an_isolated_sphere_is_coulomb() {
        let text = "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 0.0]\nradius = 0.1\n[drive]\npotentials = { ball = 1000.0 }\n";
        let s = solve_text(text, 200);
        let pts = [
            Point3::new(0.3, 0.0, 0.1),
            Point3::new(0.0, 0.0, -0.5),
            Point3::new(0.01, 0.0, 0.0),
        ];
        let got = s.e_field(&pts, Par::Seq);
        for (p, g) in pts.iter().zip(&got) {
            if p.coords.norm() < 0.1 {
                assert_eq!(g, &FieldSample::InsideConductor("ball".to_string()));
                continue;
            }
            let FieldSample::Field(e) = g else {
                panic!("{g:?}")
            };
            // E = V a / r^2 radially.
            let want = p.coords.normalize() * (1000.0 * 0.1 / p.coords.norm_squared());
            assert!((e - want).norm() / want.norm() < 1e-3, "{e} vs {want}");
        }
        // Surface field of a sphere: V / a.
        let peak = &s.peak_surface_fields()[0];
        assert!(
            (peak.field_v_per_m / 1e4 - 1.0).abs() < 5e-3,
            "{}",
            peak.field_v_per_m
        );
    }

    #[test]
    fn field_over_a_grounded_plane_meets_it_normally() {
        let text = "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 0.3]\nradius = 0.1\n[ground]\nz = 0.0\n[drive]\npotentials = { ball = 1000.0 }\n";
        let s = solve_text(text, 200);
        let pts = [
            Point3::new(0.2, 0.1, 0.0),
            Point3::new(0.0, 0.0, 0.0),
            Point3::new(0.1, 0.0, -0.1),
        ];
        let got = s.e_field(&pts, Par::Seq);
        for g in &got[..2] {
            let FieldSample::Field(e) = g else {
                panic!("{g:?}")
            };
            // A grounded conductor: the tangential field vanishes on it; E points down into it.
            assert!(e.x.hypot(e.y) < 1e-9 * e.norm(), "{e}");
            assert!(e.z < 0.0);
        }
        assert_eq!(got[2], FieldSample::BelowGround);
    }

    #[test]
    fn clustered_field_matches_panel_by_panel() {
        let text = "[[winding]]\nname = \"sec\"\nshape = \"helix\"\nrole = \"secondary\"\norigin = [0.0, 0.0, 0.05]\naxis = [0.0, 0.0, 1.0]\nradius = 0.05\nlength = 0.3\nturns = 600\nwire_diameter = 0.0004\n[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 0.45]\nradius = 0.08\nconnect = \"sec:top\"\n[ground]\nz = 0.0\n[drive]\npotentials = { sec = [0.0, 1e5] }\n";
        let s = solve_text(text, 400);
        let clusters = s.clusters();
        let singles: Vec<Cluster> = (0..s.n_panels())
            .map(|k| Cluster {
                first: k,
                last: k + 1,
                q_c: 0.0,
                centre: (0.0, 0.0),
                half_size_m: 0.0,
                same_sign: false,
            })
            .collect();
        for (rho, z) in [(0.5, 0.3), (2.0, 1.0), (0.2, 0.6), (0.06, 0.2), (5.0, 0.1)] {
            let (a, b) = s.e_clusters(&clusters, rho, z);
            let (c, e) = s.e_clusters(&singles, rho, z);
            let scale = c.hypot(e);
            assert!(
                (a - c).hypot(b - e) < 1e-3 * scale,
                "{rho},{z}: ({a},{b}) vs ({c},{e})"
            );
        }
    }

    #[test]
    fn blocked_lu_solves_like_nalgebra() {
        let n = 150;
        let a = DMatrix::from_fn(n, n, |i, j| {
            ((i * 7 + j * 13) % 17) as f64 / 17.0 + if i == j { 0.5 } else { 0.0 }
        });
        let b: Vec<f64> = (0..n).map(|i| (i as f64).sin()).collect();
        let ours = BlockedLu::new(a.clone(), Par::Rayon).unwrap().solve(&b);
        let want = a.lu().solve(&nalgebra::DVector::from_vec(b)).unwrap();
        for i in 0..n {
            assert!((ours[i] - want[i]).abs() < 1e-9 * want.amax(), "{i}");
        }
    }

    #[test]
    fn blocked_lu_refuses_a_zero_or_tiny_pivot() {
        // Exactly singular: two equal rows (a pivot of exactly 0 after elimination), in the
        // panel and in the blocked trailing update (n > LU_BLOCK).
        for n in [5, 150] {
            let mut a = DMatrix::from_fn(n, n, |i, j| {
                ((i * 7 + j * 13) % 17) as f64 / 17.0 + if i == j { 0.5 } else { 0.0 }
            });
            let row = a.row(1).into_owned();
            a.set_row(n - 1, &row);
            let e = BlockedLu::new(a, Par::Seq).err().expect("singular refused");
            assert!(matches!(e, SolverError::SingularMatrix { .. }), "{e}");
        }
        // Singular to working precision: rows differing by 1e-17 of their size.
        let mut a = DMatrix::identity(3, 3);
        a[(0, 1)] = 1.0;
        a[(1, 0)] = 1.0;
        a[(1, 1)] = 1.0 + 1e-17;
        assert!(BlockedLu::new(a, Par::Seq).is_err());
        // A zero matrix and a NaN entry.
        assert!(BlockedLu::new(DMatrix::zeros(4, 4), Par::Seq).is_err());
        let mut a = DMatrix::identity(4, 4);
        a[(2, 2)] = f64::NAN;
        assert!(BlockedLu::new(a, Par::Seq).is_err());
        // Well conditioned but badly scaled (1e-30 everywhere) still factorises: the limit is
        // relative to the largest entry.
        let a = DMatrix::identity(4, 4) * 1e-30;
        assert!(BlockedLu::new(a, Par::Seq).is_ok());
    }

    #[test]
    fn secondary_self_capacitance_is_plausible_against_medhurst() {
        // R. G. Medhurst, "H.F. resistance and self-capacitance of single-layer solenoids",
        // Wireless Engineer 24, 1947, pp. 35-43 and 80-92: C[pF] = H D[cm], H from its table.
        // Measured on coils standing on a ground plane, so only a plausibility band: +-30 %.
        // Here: D = 10 cm, base 5 mm above a grounded plane, linear profile from 0 V at the
        // base. (Seen: ratios 0.82, 0.94, 0.98, 0.83 for the four rows; 0.71 at l/D = 10.)
        for (ld, h) in [(0.5, 0.50), (1.0, 0.46), (2.0, 0.50), (5.0, 0.81)] {
            let len: f64 = ld * 0.1;
            let turns = (len / 0.0005).round();
            let text = format!(
                "[[winding]]\nname = \"sec\"\nshape = \"helix\"\nrole = \"secondary\"\norigin = [0.0, 0.0, 0.005]\naxis = [0.0, 0.0, 1.0]\nradius = 0.05\nlength = {len}\nturns = {turns}\nwire_diameter = 0.0004\n[ground]\nz = 0.0\n"
            );
            let d = parse_design(&text, "t").unwrap();
            let s = Problem::from_design(
                &d,
                &Params {
                    panels: 300,
                    ..Default::default()
                },
                "t",
            )
            .unwrap()
            .solve(Par::Rayon)
            .unwrap();
            let c = s.self_capacitance_f().unwrap().bare_f;
            let medhurst = h * 10.0 * 1e-12;
            assert!(
                (c / medhurst - 1.0).abs() < 0.3,
                "l/D={ld}: {c} vs {medhurst}"
            );
        }
    }

    #[test]
    fn maxwell_matrix_of_two_spheres_is_reciprocal() {
        let text = "[[electrode]]\nname = \"a\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 0.0]\nradius = 0.1\n[[electrode]]\nname = \"b\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 0.3]\nradius = 0.05\n";
        let s = solve_text(text, 300);
        let c = s.capacitance_matrix_f();
        assert_eq!(s.conductor_names(), ["a", "b"]);
        // Green's reciprocity: C_ab = C_ba; induced charges are negative; each diagonal
        // exceeds the isolated sphere's 4 pi eps0 a (the other sphere, grounded, pulls charge).
        assert!((c[0][1] - c[1][0]).abs() < 1e-4 * c[0][0], "{c:?}");
        assert!(c[0][1] < 0.0);
        assert!(c[0][0] > 4.0 * PI * EPS0 * 0.1 && c[1][1] > 4.0 * PI * EPS0 * 0.05);
    }

    #[test]
    fn connected_topload_adds_to_the_self_capacitance() {
        let text = "[[winding]]\nname = \"sec\"\nshape = \"helix\"\nrole = \"secondary\"\norigin = [0.0, 0.0, 0.05]\naxis = [0.0, 0.0, 1.0]\nradius = 0.05\nlength = 0.2\nturns = 400\nwire_diameter = 0.0004\n[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 0.35]\nradius = 0.08\nconnect = \"sec:top\"\n";
        let s = solve_text(text, 300);
        let sc = s.self_capacitance_f().unwrap();
        // The sphere alone would hold 4 pi eps0 a = 8.9 pF at 1 V; with the coil beside it the
        // total lies above the bare coil's and below the sum of the two apart.
        let sphere = 4.0 * PI * EPS0 * 0.08;
        assert!(
            sc.total_f > sc.bare_f && sc.total_f < sc.bare_f + sphere,
            "{sc:?}"
        );
        let est = s.error_estimate().self_capacitance_f.unwrap();
        assert!(
            est.bare_f < 0.01 * sc.bare_f && est.total_f < 0.01 * sc.total_f,
            "{est:?}"
        );
    }

    #[test]
    fn torus_peak_field_sits_on_its_outer_equator() {
        // An isolated charged torus is most strongly curved outwards at its outer equator
        // (rho = R + r, z = 0), where sigma and the surface field peak.
        let text = "[[electrode]]\nname = \"ring\"\nshape = \"torus\"\norigin = [0.0, 0.0, 1.0]\naxis = [0.0, 0.0, 1.0]\nmajor_radius = 0.2\nminor_radius = 0.05\n[drive]\npotentials = { ring = 1e5 }\n";
        let s = solve_text(text, 200);
        let peak = &s.peak_surface_fields()[0];
        assert_eq!(peak.name, "ring");
        let p = peak.at_m;
        assert!(
            (p.x.hypot(p.y) - 0.25).abs() < 2e-3 && (p.z - 1.0).abs() < 3e-3,
            "{p}"
        );
        // Bracketed by the surface fields V / a of two spheres: one of the tube's radius (a
        // smaller, more curved conductor) and one enclosing the torus (a larger one).
        assert!(peak.field_v_per_m < 1e5 / 0.05 && peak.field_v_per_m > 1e5 / 0.25);
    }

    #[test]
    fn custom_profile_slot() {
        let text = "[[winding]]\nname = \"sec\"\nshape = \"helix\"\nrole = \"secondary\"\norigin = [0.0, 0.0, 0.05]\naxis = [0.0, 0.0, 1.0]\nradius = 0.05\nlength = 0.2\nturns = 400\nwire_diameter = 0.0004\n";
        let d = parse_design(text, "t").unwrap();
        let c = |profile| {
            Problem::from_design(
                &d,
                &Params {
                    panels: 200,
                    profile,
                    ..Default::default()
                },
                "t",
            )
            .unwrap()
            .solve(Par::Seq)
            .unwrap()
            .self_capacitance_f()
            .unwrap()
            .bare_f
        };
        let linear = c(Profile::Linear);
        assert_eq!(linear, c(Profile::Custom(|t| t)));
        // A profile that stays low along the coil (t^2, as towards a quarter-wave mode's base)
        // stores less energy for the same top voltage.
        assert!(c(Profile::Custom(|t| t * t)) < linear);
    }

    #[test]
    fn quasi_static_warnings() {
        let text = "[[winding]]\nname = \"sec\"\nshape = \"helix\"\nrole = \"secondary\"\norigin = [0.0, 0.0, 0.05]\naxis = [0.0, 0.0, 1.0]\nradius = 0.05\nlength = 0.4\nturns = 800\nwire_diameter = 0.0004\n[drive]\nfrequency = 250e3\n";
        let d = parse_design(text, "t").unwrap();
        // lambda = 1199 m: 0.1 lambda / 2 pi = 19.1 m; wire 251 m > 119.9 m.
        let w = validity_warnings(&d, &[1.0, 30.0]);
        assert_eq!(w.len(), 2, "{w:?}");
        assert!(
            w[0].contains("30.000 m") && w[0].contains("19.08"),
            "{}",
            w[0]
        );
        // 800 sqrt((2 pi 0.05)^2 + 0.0005^2) m of wire over c / 250 kHz: 0.210 wavelengths.
        let ratio = 800.0 * (2.0 * PI * 0.05f64).hypot(0.0005) / (C0 / 250e3);
        assert!(
            w[1].contains(&format!("{ratio:.3} wavelengths")) && w[1].contains("over 0.1"),
            "{}",
            w[1]
        );
        assert!(validity_warnings(&d, &[1.0]).len() == 1);
    }

    /// A bare secondary as the open tube of radius `a` (winding radius + wire radius), length
    /// `l`, base at height `zb`, over a grounded plane z = 0 or not; `extra` is appended to the
    /// design text (electrodes).
    fn tube_text(a: f64, l: f64, zb: f64, ground: bool, extra: &str) -> String {
        let wire = 0.0004;
        let turns = (l / 0.0005).round();
        let mut t = format!(
            "[[winding]]\nname = \"sec\"\nshape = \"helix\"\nrole = \"secondary\"\norigin = [0.0, 0.0, {zb}]\naxis = [0.0, 0.0, 1.0]\nradius = {}\nlength = {l}\nturns = {turns}\nwire_diameter = {wire}\n",
            a - wire / 2.0
        );
        if ground {
            t.push_str("[ground]\nz = 0.0\n");
        }
        t.push_str(extra);
        t
    }

    fn solve_with(design: &Design, params: Params) -> Solution {
        Problem::from_design(design, &params, "t")
            .unwrap()
            .solve(Par::Rayon)
            .unwrap()
    }

    fn sectioned(design: &Design, panels: usize, n: usize) -> Solution {
        solve_with(
            design,
            Params {
                panels,
                secondary_sections: Some(n),
                ..Default::default()
            },
        )
    }

    /// One row of validation/tube_bem.csv (validation/tube_bem_refs.py: an independent
    /// numpy/scipy boundary-element solve, Richardson-extrapolated).
    struct TubeRow {
        case: String,
        a: f64,
        l: f64,
        zb: f64,
        ground: bool,
        quantity: String,
        n: usize,
        i: usize,
        j: usize,
        reference: f64,
        tolerance: f64,
        kind: String,
    }

    fn tube_rows() -> Vec<TubeRow> {
        let text = include_str!(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../validation/tube_bem.csv"
        ));
        let rows: Vec<TubeRow> = text
            .lines()
            .skip(1)
            .map(|l| {
                let f: Vec<&str> = l.splitn(13, ',').collect();
                TubeRow {
                    case: f[0].to_string(),
                    a: f[1].parse().unwrap(),
                    l: f[2].parse().unwrap(),
                    zb: f[3].parse().unwrap(),
                    ground: !f[4].is_empty(),
                    quantity: f[5].to_string(),
                    n: f[6].parse().unwrap(),
                    i: f[7].parse().unwrap(),
                    j: f[8].parse().unwrap(),
                    reference: f[9].parse().unwrap(),
                    tolerance: f[10].parse().unwrap(),
                    kind: f[11].to_string(),
                }
            })
            .collect();
        assert_eq!(rows.len(), 92, "validation/tube_bem.csv changed shape");
        rows
    }

    fn within(got: f64, row: &TubeRow) -> bool {
        let tol = match row.kind.as_str() {
            "rel" => row.tolerance * row.reference.abs(),
            "abs" => row.tolerance,
            k => panic!("tolerance kind {k}"),
        };
        (got - row.reference).abs() <= tol
    }

    #[test]
    fn nodal_matrix_matches_the_independent_python_solve() {
        // validation/tube_bem.csv (tube_bem_refs.py, accurate to 4e-9 of the diagonal): every
        // entry of the nodal matrix for n = 2 and 4, four tubes (l/D = 4 and 1, free and over
        // ground). Tolerance 1e-4 sqrt(C_ii C_jj); seen at 1000 panels: worst 3.2e-5 (n = 4),
        // 8e-6 (n = 2). The coarse-solve estimate must bound the true error (seen: error /
        // estimate <= 0.4, as for an O(h^2) error; a 1e-9 allowance covers the reference).
        let rows = tube_rows();
        let mut seen = 0;
        for case in ["free_ld4", "free_ld1", "ground_ld4", "ground_ld1"] {
            let first = rows.iter().find(|r| r.case == case).unwrap();
            let d = parse_design(
                &tube_text(first.a, first.l, first.zb, first.ground, ""),
                "t",
            )
            .unwrap();
            for n in [2, 4] {
                let s = sectioned(&d, 1000, n);
                let nc = s.nodal_capacitance().unwrap();
                assert_eq!(nc.sections(), n);
                for r in rows
                    .iter()
                    .filter(|r| r.case == case && r.quantity == "nodal" && r.n == n)
                {
                    let (i, j) = (r.i, r.j);
                    let got = nc.matrix_f[(i, j)];
                    assert!(
                        within(got, r),
                        "{case} n={n} ({i},{j}): {got:e} vs {:e} (tol {:e})",
                        r.reference,
                        r.tolerance
                    );
                    let err = (got - r.reference).abs();
                    let scale = (nc.matrix_f[(i, i)] * nc.matrix_f[(j, j)]).sqrt();
                    assert!(
                        err <= nc.error_estimate_f[(i, j)] + 1e-9 * scale,
                        "{case} n={n} ({i},{j}): error {err:e} above the estimate {:e}",
                        nc.error_estimate_f[(i, j)]
                    );
                    seen += 1;
                }
            }
        }
        assert_eq!(seen, 4 * (6 + 15));
    }

    #[test]
    fn tube_and_linear_profile_match_the_independent_python_solve_by_both_paths() {
        // validation/tube_bem.csv rows `tube` (the tube as one conductor) and `linear` (linear
        // profile, v^T C v), accurate to 1e-12. Paths: the solver's profile path (constant
        // profile, Profile::Linear) on its default mesh, and the nodal matrix (sum of all
        // entries; v_j = j/n) on the sectioned mesh. Tolerance 1e-5 relative; seen at 1000
        // panels: 2e-6 (tube), 1.3e-6 (linear).
        let rows = tube_rows();
        for case in ["free_ld4", "free_ld1", "ground_ld4", "ground_ld1"] {
            let get = |q: &str| {
                rows.iter()
                    .find(|r| r.case == case && r.quantity == q)
                    .unwrap()
            };
            let (tube, linear) = (get("tube"), get("linear"));
            let d =
                parse_design(&tube_text(tube.a, tube.l, tube.zb, tube.ground, ""), "t").unwrap();
            let by_profile = |profile| {
                solve_with(
                    &d,
                    Params {
                        profile,
                        ..Default::default()
                    },
                )
                .self_capacitance_f()
                .unwrap()
                .bare_f
            };
            let c_tube = by_profile(Profile::Custom(|_| 1.0));
            let c_lin = by_profile(Profile::Linear);
            assert!(
                within(c_tube, tube),
                "{case}: tube {c_tube:e} vs {:e}",
                tube.reference
            );
            assert!(
                within(c_lin, linear),
                "{case}: linear {c_lin:e} vs {:e}",
                linear.reference
            );
            let s = sectioned(&d, 1000, 4);
            let nc = s.nodal_capacitance().unwrap();
            let sum = nc.matrix_f.sum();
            let lin = nc.linear_profile_capacitance_f();
            assert!(
                within(sum, tube),
                "{case}: sum {sum:e} vs {:e}",
                tube.reference
            );
            assert!(
                within(lin, linear),
                "{case}: v^T C v {lin:e} vs {:e}",
                linear.reference
            );
        }
    }

    /// Bound on |v^T (C - C_true) v| from the per-entry estimate: sum |v_i| |v_j| E_ij.
    fn energy_bound(nc: &NodalCapacitance, v: &[f64]) -> f64 {
        let mut b = 0.0;
        for (i, vi) in v.iter().enumerate() {
            for (j, vj) in v.iter().enumerate() {
                b += (vi * vj).abs() * nc.error_estimate_f[(i, j)];
            }
        }
        b
    }

    #[test]
    fn nodal_paths_agree_with_the_profile_paths_for_every_section_count() {
        // Hats reproduce a constant and a linear potential exactly, so for every n the sum of
        // all entries is the tube's capacitance and v^T C v (v_j = j/n) the linear-profile
        // self-capacitance: the paths differ only by their meshes (the default graded one and
        // the sectioned one), i.e. within the two coarse-solve estimates. Seen (l/D = 4 over
        // ground, 1000 panels): linear differs by 7e-7 (n = 2) growing to 2.9e-5 (n = 256, 4
        // panels per section), always below the estimates.
        let d = parse_design(&tube_text(0.05, 0.4, 0.02, true, ""), "t").unwrap();
        let profile_path = |profile| {
            let s = solve_with(
                &d,
                Params {
                    profile,
                    ..Default::default()
                },
            );
            (
                s.self_capacitance_f().unwrap().bare_f,
                s.error_estimate().self_capacitance_f.unwrap().bare_f,
            )
        };
        let (c_tube, e_tube) = profile_path(Profile::Custom(|_| 1.0));
        let (c_lin, e_lin) = profile_path(Profile::Linear);
        for n in [1, 2, 3, 8, 32, 256] {
            let s = sectioned(&d, 1000, n);
            let nc = s.nodal_capacitance().unwrap();
            let ones = vec![1.0; n + 1];
            let ramp: Vec<f64> = (0..=n).map(|j| j as f64 / n as f64).collect();
            let sum = nc.matrix_f.sum();
            let lin = nc.linear_profile_capacitance_f();
            assert!(
                (sum - c_tube).abs() <= e_tube + energy_bound(nc, &ones),
                "n={n}: sum {sum:e} vs {c_tube:e}"
            );
            assert!(
                (lin - c_lin).abs() <= e_lin + energy_bound(nc, &ramp),
                "n={n}: v^T C v {lin:e} vs {c_lin:e}"
            );
            // The same mesh's own linear-profile solve is the same sum of charges times
            // potentials: equal to rounding (the hats' means are exact on aligned panels).
            let own = s.self_capacitance_f().unwrap().bare_f;
            assert!((lin / own - 1.0).abs() < 1e-12, "n={n}: {lin:e} vs {own:e}");
        }
    }

    #[test]
    fn quarter_wave_profile_converges_at_second_order_in_the_sections() {
        // The piecewise-linear interpolant of a smooth profile differs from it by O(1/n^2), so
        // v^T C v with v_j = sin(pi j / 2n) tends to the self-capacitance of the exact profile
        // Profile::Custom(sin(pi t / 2)) at second order: the differences must fall about 4x
        // per doubling of n (seen: 3.20, 3.65, 3.81, 3.88 from n = 2 to 32).
        let d = parse_design(&tube_text(0.05, 0.4, 0.02, true, ""), "t").unwrap();
        let exact = solve_with(
            &d,
            Params {
                profile: Profile::Custom(|t| (FRAC_PI_2 * t).sin()),
                ..Default::default()
            },
        )
        .self_capacitance_f()
        .unwrap()
        .bare_f;
        let mut diffs = Vec::new();
        for n in [2usize, 4, 8, 16, 32] {
            let s = sectioned(&d, 1000, n);
            let v: Vec<f64> = (0..=n)
                .map(|j| (FRAC_PI_2 * j as f64 / n as f64).sin())
                .collect();
            let c = 2.0 * s.nodal_capacitance().unwrap().energy_j(&v).unwrap();
            // The interpolant lies below the concave sine: less energy.
            assert!(c < exact, "n={n}: {c:e} vs {exact:e}");
            diffs.push(exact - c);
        }
        for w in diffs.windows(2) {
            let ratio = w[0] / w[1];
            assert!((3.0..4.5).contains(&ratio), "{diffs:?}");
        }
        let last = diffs[diffs.len() - 2] / diffs[diffs.len() - 1];
        assert!((3.7..4.3).contains(&last), "{diffs:?}");
    }

    #[test]
    fn nodal_matrix_is_symmetric_positive_definite() {
        // Energy is positive for any non-zero node voltages: C must be symmetric positive
        // definite (Cholesky), with a positive diagonal; with all nodes at 1 V the tube is one
        // conductor at 1 V whose charge density is positive everywhere, so every row sum
        // (the charge weighted by hat i) is positive. The collocation asymmetry before
        // symmetrising falls with the panels per section (seen: 1.2e-6 at n = 4 and 1000
        // panels, 1.6e-3 at n = 256 with 4 panels per section).
        let d = parse_design(&tube_text(0.05, 0.4, 0.02, true, ""), "t").unwrap();
        for (n, max_asym) in [(4usize, 1e-5), (256, 5e-3)] {
            let s = sectioned(&d, 1000, n);
            let nc = s.nodal_capacitance().unwrap();
            let c = &nc.matrix_f;
            assert_eq!(c.nrows(), n + 1);
            assert_eq!(c, &c.transpose());
            assert!(
                c.clone().cholesky().is_some(),
                "n={n}: not positive definite"
            );
            for i in 0..=n {
                assert!(c[(i, i)] > 0.0);
                assert!(c.row(i).sum() > 0.0, "n={n}: row {i}");
            }
            assert!(
                nc.asymmetry > 0.0 && nc.asymmetry < max_asym,
                "n={n}: {}",
                nc.asymmetry
            );
            assert_eq!(nc.node_heights_m.len(), n + 1);
            // The axis starts at the secondary's base (z = 0.02 m), 0.4 m long.
            assert!(nc.node_heights_m[0].abs() < 1e-15);
            assert!((nc.node_heights_m[n] - 0.4).abs() < 1e-15);
            assert!((nc.node_points_m[n] - Point3::new(0.0, 0.0, 0.42)).norm() < 1e-15);
        }
    }

    #[test]
    fn connected_top_electrode_joins_the_top_node() {
        // A sphere connected to the top takes node n's voltage: its charge adds to row and
        // column n, so C_nn grows, by less than the isolated sphere's 4 pi eps0 r (the coil
        // beside it shares the field); the other diagonal entries change far less (the
        // sphere is then a grounded neighbour). The linear-profile value from the nodal matrix
        // must match the solver's total self-capacitance (electrode at the top's potential)
        // within the estimates. A disc connected to the base likewise joins node 0.
        let n = 8;
        let bare = parse_design(&tube_text(0.05, 0.2, 0.05, false, ""), "t").unwrap();
        let sphere = "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 0.35]\nradius = 0.08\nconnect = \"sec:top\"\n";
        let top = parse_design(&tube_text(0.05, 0.2, 0.05, false, sphere), "t").unwrap();
        let c0 = sectioned(&bare, 1000, n)
            .nodal_capacitance()
            .unwrap()
            .clone();
        let s1 = sectioned(&top, 1000, n);
        let c1 = s1.nodal_capacitance().unwrap();
        let grow = c1.matrix_f[(n, n)] - c0.matrix_f[(n, n)];
        assert!(grow > 0.0 && grow < 4.0 * PI * EPS0 * 0.08, "{grow:e}");
        for i in 0..n {
            let other = (c1.matrix_f[(i, i)] - c0.matrix_f[(i, i)]).abs();
            assert!(other < 0.2 * grow, "node {i}: {other:e} vs {grow:e}");
        }
        let total = s1.self_capacitance_f().unwrap();
        let est = s1.error_estimate().self_capacitance_f.unwrap();
        let ramp: Vec<f64> = (0..=n).map(|j| j as f64 / n as f64).collect();
        let lin = c1.linear_profile_capacitance_f();
        assert!(
            (lin - total.total_f).abs() <= est.total_f + energy_bound(c1, &ramp),
            "{lin:e} vs {:e}",
            total.total_f
        );
        assert!(lin > total.bare_f);

        let disc = "[[electrode]]\nname = \"plate\"\nshape = \"disc\"\norigin = [0.0, 0.0, 0.03]\naxis = [0.0, 0.0, 1.0]\nradius = 0.1\nconnect = \"sec:base\"\n";
        let base = parse_design(&tube_text(0.05, 0.2, 0.05, false, disc), "t").unwrap();
        let c2 = sectioned(&base, 1000, n)
            .nodal_capacitance()
            .unwrap()
            .clone();
        let grow0 = c2.matrix_f[(0, 0)] - c0.matrix_f[(0, 0)];
        // The isolated disc holds 8 eps0 r.
        assert!(grow0 > 0.0 && grow0 < 8.0 * EPS0 * 0.1, "{grow0:e}");
        assert!(c2.matrix_f[(n, n)] - c0.matrix_f[(n, n)] < 0.2 * grow0);
    }

    #[test]
    fn nodal_capacitance_refusals() {
        let d = parse_design(&tube_text(0.05, 0.2, 0.05, false, ""), "t").unwrap();
        let refused = |sections| {
            let s = solve_with(
                &d,
                Params {
                    panels: 100,
                    secondary_sections: sections,
                    ..Default::default()
                },
            );
            match s.nodal_capacitance() {
                Err(SolverError::NoNodalCapacitance { reason }) => reason,
                other => panic!("{sections:?}: {other:?}"),
            }
        };
        assert!(refused(None).contains("not set"));
        assert!(refused(Some(0)).contains("outside 1..=512"));
        assert!(refused(Some(MAX_SECONDARY_SECTIONS + 1)).contains("outside"));
        let no_secondary = solve_with(
            &sphere_design(0.1, 1.0, false),
            Params {
                panels: 50,
                secondary_sections: Some(4),
                ..Default::default()
            },
        );
        assert!(matches!(
            no_secondary.nodal_capacitance(),
            Err(SolverError::NoNodalCapacitance { reason }) if reason.contains("no secondary")
        ));
        let s = sectioned(&d, 100, 2);
        let nc = s.nodal_capacitance().unwrap();
        assert!(nc.energy_j(&[0.0, 1.0]).is_err());
        assert!(nc.energy_j(&[0.0, f64::NAN, 1.0]).is_err());
        assert!(nc.energy_j(&[0.0, 1e200, 1e200]).is_err());
    }

    #[test]
    fn sectioned_mesh_puts_every_section_boundary_on_a_panel_boundary() {
        // Each section boundary z_base + s l / n must be the end of one panel and the start of
        // the next; interior sections hold m equal panels, the end sections 2 m.
        for (n, share, min) in [
            (2usize, 100usize, 4usize),
            (5, 100, 4),
            (256, 1000, 4),
            (7, 30, 2),
        ] {
            let u = section_breakpoints(n, share, min);
            let m = ((share as f64 / (n + 2) as f64).round() as usize).max(min);
            assert_eq!(u.len(), n * m + 2 * m + 1, "n={n}");
            assert!(u.windows(2).all(|w| w[1] > w[0]), "n={n}: not increasing");
            for s in 0..=n {
                let target = s as f64 / n as f64;
                assert!(u.contains(&target), "n={n}: boundary {s} missing");
            }
        }
    }

    #[test]
    fn node_profile_construction() {
        // Normalised to 1 at the top; refused with a reason otherwise.
        let p = NodeProfile::new(&[0.0, 0.35, 0.5]).unwrap();
        assert_eq!(p.values(), &[0.0, 0.7, 1.0]);
        assert_eq!(p.sections(), 2);
        // Interpolation against the hand-written piecewise-linear function.
        for t in [0.0, 0.1, 0.25, 0.5, 0.6, 0.99, 1.0] {
            let want = if t < 0.5 {
                1.4 * t
            } else {
                0.7 + 0.6 * (t - 0.5)
            };
            assert!((p.at(t) - want).abs() < 1e-15, "{t}");
        }
        for bad in [
            &[][..],
            &[1.0],
            &[0.0, f64::NAN, 1.0],
            &[0.5, 0.0],
            &[0.0, 1e300, 1e-300],
        ] {
            assert!(
                matches!(NodeProfile::new(bad), Err(SolverError::BadProfile { .. })),
                "{bad:?}"
            );
        }
    }

    /// The profile through (0, 0), (0.5, 0.7), (1, 1), written out by hand.
    fn kinked(t: f64) -> f64 {
        if t < 0.5 {
            1.4 * t
        } else {
            0.7 + 0.6 * (t - 0.5)
        }
    }

    #[test]
    fn node_profile_drives_fields_and_self_capacitance() {
        // Profile::Nodes through (0, 0.7, 1) must act as the same function given as
        // Profile::Custom: same self-capacitance, same E at points around the coil (to
        // rounding), on the default mesh; and v^T C v with v = (0, 0.7, 1) on the
        // two-section mesh must match it within the estimates (different meshes).
        let text = tube_text(
            0.05,
            0.3,
            0.05,
            true,
            "[drive]\npotentials = { sec = [0.0, 1e5] }\n",
        );
        let d = parse_design(&text, "t").unwrap();
        let run = |profile| {
            solve_with(
                &d,
                Params {
                    panels: 400,
                    profile,
                    ..Default::default()
                },
            )
        };
        let nodes = run(Profile::nodes(&[0.0, 0.7, 1.0]).unwrap());
        let custom = run(Profile::Custom(kinked));
        let cn = nodes.self_capacitance_f().unwrap().bare_f;
        let cc = custom.self_capacitance_f().unwrap().bare_f;
        assert!((cn / cc - 1.0).abs() < 1e-12, "{cn:e} vs {cc:e}");
        let pts = [
            Point3::new(0.2, 0.0, 0.2),
            Point3::new(0.0, 0.1, 0.5),
            Point3::new(0.06, 0.0, 0.3),
        ];
        for (a, b) in nodes
            .e_field(&pts, Par::Seq)
            .iter()
            .zip(&custom.e_field(&pts, Par::Seq))
        {
            let (FieldSample::Field(a), FieldSample::Field(b)) = (a, b) else {
                panic!("{a:?} {b:?}")
            };
            assert!((a - b).norm() <= 1e-12 * b.norm(), "{a} vs {b}");
        }
        let (pa, pb) = (nodes.panels(), custom.panels());
        let top = pb
            .iter()
            .map(|p| p.surface_field_v_per_m)
            .fold(0.0, f64::max);
        assert!(pa.iter().zip(&pb).all(|(x, y)| {
            (x.surface_field_v_per_m - y.surface_field_v_per_m).abs() <= 1e-12 * top
        }));
        let s = sectioned(&d, 400, 2);
        let nc = s.nodal_capacitance().unwrap();
        let v = [0.0, 0.7, 1.0];
        let c = 2.0 * nc.energy_j(&v).unwrap();
        let est = custom.error_estimate().self_capacitance_f.unwrap().bare_f;
        assert!(
            (c - cc).abs() <= est + energy_bound(nc, &v),
            "{c:e} vs {cc:e}"
        );
    }
}
