//! Axisymmetric electrostatics: boundary elements with ring charges.
//!
//! # Public API
//! ```text
//! pub struct Params { pub panels: usize, pub profile: Profile, pub panel_form: PanelForm }
//!                                   // Default: 1000 panels, linear profile, curved panels
//! pub enum PanelForm { Curved, Chord }  // panels on the exact generatrix, or straight chords
//! pub enum Profile { Linear, Custom(fn(f64) -> f64) }  // V(t)/V_top, t = fraction of the length from the base
//! impl Problem {
//!     pub fn from_design(design: &Design, params: &Params, source: &str) -> Result<Problem, DesignError>;
//!     pub fn solve(&self, par: Par) -> Solution;
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
//! # Limitations
//! - The secondary is its outer surface (a cylinder of radius = winding radius + wire radius,
//!   open at both ends) with a prescribed potential profile; the field close to individual
//!   wires is not modelled.
//! - A disc has no thickness: its sigma is the sum over both faces, and its surface field is
//!   reported as sigma / (2 eps0), exact for an isolated disc by symmetry, an average otherwise.
//!   The secondary's open tube likewise carries the sum of both faces; its panels report
//!   sigma / eps0, which is the outer field where the inner face holds little charge (a tube
//!   longer than its diameter).

use crate::constants::{C0, EPS0};
use crate::elliptic::cel_positive_p;
use crate::par::{Par, map_indexed};
use crate::quadrature::gauss_legendre;
use coilfield_geometry::discretise::filament_model;
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
#[derive(Debug, Clone, Copy, Default)]
pub enum Profile {
    /// V(t) = t (uniform current, no resonance).
    #[default]
    Linear,
    /// A profile from elsewhere (e.g. a resonance model); must map [0, 1] to values with
    /// f(0) = 0 and f(1) = 1.
    Custom(fn(f64) -> f64),
}

impl Profile {
    fn at(&self, t: f64) -> f64 {
        match self {
            Profile::Linear => t,
            Profile::Custom(f) => f(t),
        }
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

/// Options of the electrostatic solve; every value is valid.
#[derive(Debug, Clone, Copy)]
pub struct Params {
    /// Panels in total (the coarse error estimate uses half as many).
    pub panels: usize,
    /// The secondary's potential profile.
    pub profile: Profile,
    /// Curved (exact generatrix, default) or straight chord panels on arcs.
    pub panel_form: PanelForm,
}

impl Default for Params {
    fn default() -> Self {
        Params {
            panels: 1000,
            profile: Profile::Linear,
            panel_form: PanelForm::Curved,
        }
    }
}

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
}

/// AGM triple: K(m), E(m) and K(m) - E(m) from kc (m = 1 - kc^2 given too, for E's sum).
///
/// K = pi / (2 AGM(1, kc)), E = K (1 - sum_n 2^(n-1) c_n^2), c_0^2 = m (the AGM method,
/// M. Abramowitz, I. A. Stegun, *Handbook of Mathematical Functions*, 1964, 17.6); K - E =
/// K sum comes without cancellation for small m.
#[inline]
fn ellip_ke(kc: f64, m: f64) -> (f64, f64, f64) {
    let mut a = 1.0;
    let mut b = kc;
    let mut sum = 0.5 * m;
    let mut pow = 0.5;
    for _ in 0..40 {
        let c = 0.5 * (a - b);
        pow *= 2.0;
        sum += pow * c * c;
        let an = 0.5 * (a + b);
        b = (a * b).sqrt();
        a = an;
        if c.abs() <= 1e-15 * a {
            break;
        }
    }
    let k = FRAC_PI_2 / a;
    (k, k * (1.0 - sum), k * sum)
}

/// K(m) only, by the AGM on kc (kc from the geometry).
#[inline]
fn ellip_k_kc(kc: f64) -> f64 {
    let mut a = 1.0;
    let mut b = kc;
    for _ in 0..40 {
        if (a - b).abs() <= 1e-15 * a {
            break;
        }
        let an = 0.5 * (a + b);
        b = (a * b).sqrt();
        a = an;
    }
    FRAC_PI_2 / a
}

/// Potential (V) at (rho, z) of a ring charge of 1 C, radius `a`, at height `z0`, times
/// 4 pi eps0: (2 / pi) K(m) / sqrt(D).
#[inline]
fn ring_potential_unit(a: f64, z0: f64, rho: f64, z: f64) -> f64 {
    let dz = z - z0;
    let big_d = (a + rho) * (a + rho) + dz * dz;
    let small_d = (a - rho) * (a - rho) + dz * dz;
    let kc = (small_d / big_d).sqrt();
    (2.0 / PI) * ellip_k_kc(kc) / big_d.sqrt()
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
    let (_, e, _) = ellip_ke(kc, m);
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
        let (a, z0) = panel.mid;
        return e_ring_charge_fast(sigma * 2.0 * PI * panel.length_m * a, a, z0, rho, z);
    }
    let n = order_for(dist, panel.length_m);
    panel_nodes(panel, n, 0.0, 1.0).fold((0.0, 0.0), |(er, ez), (a, z0, w)| {
        let (e1, e2) = e_ring_charge_fast(sigma * 2.0 * PI * w, a, z0, rho, z);
        (er + e1, ez + e2)
    })
}

/// Beyond this many half-lengths a panel counts as one ring charge at its midpoint in E: the
/// midpoint rule's relative error is then below (2 / 40)^2 / 24 = 1e-4 for that panel.
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
    let (_, e, k_minus_e) = ellip_ke(kc, m);
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
                Grading::AtBothEnds,
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
        for (s, curve, grading) in &pieces {
            let n = ((budget as f64 * curve.length() / total_len).round() as usize)
                .max(MIN_PANELS_PER_PIECE);
            let map = |k: usize| -> f64 {
                let x = k as f64 / n as f64;
                match grading {
                    Grading::Uniform => x,
                    Grading::AtEnd => (FRAC_PI_2 * x).sin(),
                    Grading::AtBothEnds => 0.5 * (1.0 - (PI * x).cos()),
                }
            };
            for k in 0..n {
                let (u0, u1) = (map(k), map(k + 1));
                let a = curve.at(u0);
                let b = curve.at(u1);
                panels.push(match (params.panel_form, curve) {
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
                    },
                });
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
            profile: params.profile,
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
                ..*params
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
            .map(|(p, s)| {
                s * 2.0 * PI * panel_nodes(p, 8, 0.0, 1.0).map(|(_, _, w)| w).sum::<f64>()
            })
            .collect()
    }

    /// Maxwell matrix, self-capacitances, drive sigma.
    fn solve_core(&self, a: DMatrix<f64>, par: Par) -> CoreResult {
        let lu = BlockedLu::new(a, par);
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
        let sigma = lu.solve(&self.rhs(&self.drive_electrode_v, self.drive_secondary_v));
        (matrix, self_bare, self_total, sigma)
    }

    /// Solve: Maxwell matrix, self-capacitance, drive charges, and the coarse estimate.
    pub fn solve(&self, par: Par) -> Solution {
        // Bare self-capacitance: from the bare problem (a submatrix) when electrodes are
        // connected, else from the problem itself.
        let run = |p: &Problem| -> (CoreResult, Option<f64>) {
            let a = p.matrix(par);
            let bare = p
                .bare
                .as_ref()
                .map(|b| b.solve_core(submatrix(&a, &b.keep), par).1);
            let core = p.solve_core(a, par);
            let bare = bare.unwrap_or(core.1);
            (core, bare)
        };
        let ((matrix_f, _, total, sigma_drive), bare) = run(self);
        let self_c = match (bare, total) {
            (Some(bare_f), Some(total_f)) => Some(SelfCapacitance { bare_f, total_f }),
            _ => None,
        };
        let error = match &self.coarse {
            Some(c) => {
                let ((cm, _, ct, _), coarse_bare) = run(c);
                let diff = matrix_f
                    .iter()
                    .zip(&cm)
                    .map(|(r, s)| r.iter().zip(s).map(|(a, b)| (a - b).abs()).collect())
                    .collect();
                let sc = match (self_c, coarse_bare, ct) {
                    (Some(f), Some(b), Some(t)) => Some(SelfCapacitance {
                        bare_f: (f.bare_f - b).abs(),
                        total_f: (f.total_f - t).abs(),
                    }),
                    _ => None,
                };
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
        Solution {
            problem: self.clone(),
            matrix_f,
            self_c,
            sigma_drive,
            error,
        }
    }
}

/// Maxwell matrix, bare and total self-capacitance, drive sigma.
type CoreResult = (Vec<Vec<f64>>, Option<f64>, Option<f64>, Vec<f64>);

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
            let k = ellip_k_kc(kc);
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

impl BlockedLu {
    fn new(mut a: DMatrix<f64>, par: Par) -> BlockedLu {
        let n = a.nrows();
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
                if d != 0.0 {
                    for i in j + 1..n {
                        a[(i, j)] /= d;
                    }
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
        BlockedLu { lu: a, perm }
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

    /// The largest surface field on each electrode (file order) at the drive potentials.
    pub fn peak_surface_fields(&self) -> Vec<PeakField> {
        let panels = self.panels();
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
                    .map(|k| {
                        let p = &pr.panels[k];
                        self.sigma_drive[k] * 2.0 * PI * p.length_m * p.mid.0
                    })
                    .collect();
                let q: f64 = qs.iter().sum();
                let same_sign = qs.iter().all(|x| *x > 0.0) || qs.iter().all(|x| *x < 0.0);
                let (mut rc, mut zc) = (0.0, 0.0);
                if same_sign {
                    for (k, qk) in (first..last).zip(&qs) {
                        rc += qk * pr.panels[k].mid.0;
                        zc += qk * pr.panels[k].mid.1;
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

    /// E (V/m, peak of the drive potentials) at each point; a point inside an electrode or
    /// below the ground plane is reported as such.
    pub fn e_field(&self, points_m: &[Point3<f64>], par: Par) -> Vec<FieldSample> {
        let pr = &self.problem;
        let n_hat = pr.axis.direction;
        let clusters = self.clusters();
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
            let (mut er, mut ez) = self.e_clusters(&clusters, rho, z);
            if let Some(zg) = pr.ground_z {
                // The image charge -q at 2 zg - z0, seen from (rho, z), is the real charge seen
                // from the mirrored point with E_rho negated (sign of the charge) and E_z kept
                // (sign of the charge times the mirror).
                let (r2, z2) = self.e_clusters(&clusters, rho, 2.0 * zg - z);
                er -= r2;
                ez += z2;
            }
            let rho_hat = if rho > 0.0 {
                perp / rho
            } else {
                Vector3::zeros()
            };
            FieldSample::Field(rho_hat * er + n_hat.as_ref() * ez)
        })
    }
}

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
        let len = filament_model(w).length_m();
        if len > 0.1 * lambda {
            out.push(format!(
                "winding '{}': its wire ({len:.1} m) is longer than lambda/10 = {:.1} m at \
                 {f:.4e} Hz: the current is not uniform along it (a distributed resonator)",
                w.name,
                0.1 * lambda
            ));
        }
    }
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
        let s = p.solve(Par::Rayon);
        (
            s.capacitances_f()[0],
            s.error_estimate().capacitance_matrix_f[0][0],
        )
    }

    #[test]
    fn ring_charge_potential_matches_check_values_section_9() {
        // check-values.md s.9: Q = 1 nC, a = 1 m.
        for &(rho, z, want) in &[
            (0.0, 0.0, 8.98755179226),
            (0.5, 0.5, 8.16812906094),
            (2.0, 0.0, 4.82263943589),
        ] {
            let got = potential_ring_charge_point(1e-9, 1.0, 0.0, rho, z);
            // The table used CODATA's eps0, 5.5e-10 relative from the classical one here.
            assert!(((got - want) / want).abs() < 1e-9, "{rho},{z}: {got}");
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
            let s = p.solve(Par::Rayon);
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
        // Image series, check-values.md s.9 (regenerated by validation/fields_refs.py),
        // down to a gap of a tenth of the radius (h/a = 1.1).
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
        // Toroidal harmonics, check-values.md s.9 (regenerated by validation/fields_refs.py).
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
        let ours = BlockedLu::new(a.clone(), Par::Rayon).solve(&b);
        let want = a.lu().solve(&nalgebra::DVector::from_vec(b)).unwrap();
        for i in 0..n {
            assert!((ours[i] - want[i]).abs() < 1e-9 * want.amax(), "{i}");
        }
    }

    #[test]
    fn secondary_self_capacitance_is_plausible_against_medhurst() {
        // R. G. Medhurst, Wireless Engineer 24, 1947 (check-values.md s.10): C[pF] = H D[cm].
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
            .solve(Par::Rayon);
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
        assert!(w[1].contains("longer than lambda/10"), "{}", w[1]);
        assert!(validity_warnings(&d, &[1.0]).len() == 1);
    }
}
