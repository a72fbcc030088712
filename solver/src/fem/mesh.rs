//! Triangle meshes of the (r, z) half-plane: constrained Delaunay triangulation with Ruppert's
//! refinement (the `spade` crate), the conductor outlines, dielectric interfaces, the axis and
//! the outer boundary as constraint edges.
//!
//! Sizes: edges of h = (conductor size) / (20 density) on conductor and interface outlines, at
//! least 48 edges on a whole circle (small radii get their share), graded linearly down to a
//! smallest edge at conductor edges (disc rims, cylinder corners, the winding's ends), where
//! the field is singular ([`super::domain::edge_grading`]: finer with the density, so that the
//! singular edges do not hold the convergence down to first order). Ruppert's
//! refinement (J. Ruppert, "A Delaunay refinement algorithm for quality 2-dimensional mesh
//! generation", J. Algorithms 18 (1995) 548-585) then adds vertices until no angle is below
//! 25 degrees, which resolves thin gaps (a winding over its form) by the local feature size.
//! The interior is seeded beforehand with vertices spaced by [`graded_size_m`]: h on the
//! outlines, growing in proportion to the distance from the nearest conductor or interface
//! ([`GROWTH`] / density per metre of distance), up to the far edge's size (outer size /
//! (8 density)), and near conductor edges no coarser than the outline's grading there; each
//! seed a little off its cell's centre, so that no four lie on a common circle. Without the
//! seeds the edges grow from the outlines as fast as the angle limit allows, and the near
//! field, where the capacitance is decided, stays coarse whatever the density: every length of the mesh now scales as 1 / density, so the element count grows
//! as density^2 and the capacitance converges at the rate of the method.
//!
//! # Open far boundary: the Kelvin transformation
//! In open space the disc |x - c| < R (a half-disc of the half-plane, a quarter-disc above a
//! ground plane) is meshed directly and its exterior is mapped by the inversion
//! x' = c + R^2 (x - c) / |x - c|^2 onto a second disc of the same radius. Inversion is
//! conformal in 3-D with the scale factor s = R^2 / |x - c|^2, so the energy
//! integral of eps |grad phi|^2 dV over the exterior equals that of eps R^2 / |x' - c|^2
//! |grad' phi|^2 dV' over the second disc: the exterior is solved as a medium of permittivity
//! eps R^2 / |x' - c|^2, the two discs share the vertices of the circle |x - c| = R, and the
//! point at infinity is the centre x' = c at 0 V. No truncation error remains; the mapping is
//! exact at any R beyond the sources. This is the treatment of E. M. Freeman and D. A. Lowther,
//! "An open boundary technique for axisymmetric and three dimensional magnetic and electric
//! field problems", IEEE Trans. Magn. 25 (5) (1989) 4135-4137 (the title matches a public
//! reading list of open-boundary techniques found by search, which names no authors, journal
//! or year; authors, journal and year as commonly cited, issue and pages from memory: none
//! checked against the paper, no copy at hand). The exactness of the map itself follows from the conformal scale factor above
//! and is checked independently by the tests (the isolated sphere in open space).

use super::domain::{Domain, Outer, Piece, edge_grading, sample_piece};
use super::parts::distance_to_piece;
use crate::error::SolverError;
use spade::handles::FixedVertexHandle;
use spade::{
    AngleLimit, ConstrainedDelaunayTriangulation, Point2, RefinementParameters, Triangulation,
};
use std::collections::HashMap;

type Cdt = ConstrainedDelaunayTriangulation<Point2<f64>>;

/// Least angle of the refined triangles (degrees).
pub const MIN_ANGLE_DEG: f64 = 25.0;

/// The Kelvin map of the open boundary: its centre (0, `centre_z`) and radius (m).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Kelvin {
    /// Centre on the axis (m).
    pub centre_z: f64,
    /// Radius (m).
    pub radius: f64,
}

impl Kelvin {
    /// The image x' = c + R^2 (x - c) / |x - c|^2 of a point (r, z) (m), and back.
    pub fn map(&self, p: [f64; 2]) -> [f64; 2] {
        let d = [p[0], p[1] - self.centre_z];
        let s = self.radius * self.radius / (d[0] * d[0] + d[1] * d[1]);
        [s * d[0], self.centre_z + s * d[1]]
    }
}

/// A triangle mesh of the half-plane problem.
#[derive(Debug, Clone)]
pub struct Mesh {
    /// Vertices (r, z) (m): those of the inner disc or box first, then the Kelvin disc's own
    /// (in its transformed coordinates).
    pub nodes: Vec<[f64; 2]>,
    /// Vertices of the inner part.
    pub n_inner_nodes: usize,
    /// Triangles (counter-clockwise vertex indices): the inner part's first.
    pub triangles: Vec<[usize; 3]>,
    /// Triangles of the inner part.
    pub n_inner_triangles: usize,
    /// Dielectric region of each triangle (None: vacuum).
    pub region: Vec<Option<usize>>,
    /// Conductor of each vertex (None: free or grounded).
    pub conductor: Vec<Option<usize>>,
    /// Whether a vertex is on a grounded boundary (0 V).
    pub grounded: Vec<bool>,
    /// The Kelvin map of the open boundary, if the problem is open.
    pub kelvin: Option<Kelvin>,
}

impl Mesh {
    /// Number of triangles.
    pub fn elements(&self) -> usize {
        self.triangles.len()
    }

    /// Whether triangle `t` belongs to the Kelvin disc.
    pub fn is_exterior(&self, t: usize) -> bool {
        t >= self.n_inner_triangles
    }
}

fn refused(reason: String) -> SolverError {
    SolverError::MeshRefused { reason }
}

/// Vertices of a triangulation, deduplicated to a snapping grid.
struct Builder {
    cdt: Cdt,
    seen: HashMap<(i64, i64), spade::handles::FixedVertexHandle>,
    snap: f64,
}

impl Builder {
    fn new(snap: f64) -> Builder {
        Builder {
            cdt: Cdt::new(),
            seen: HashMap::new(),
            snap,
        }
    }

    fn insert(
        &mut self,
        mut p: [f64; 2],
    ) -> Result<spade::handles::FixedVertexHandle, SolverError> {
        // Points on the axis exactly on it: a pole at r = 1e-17 would make a sliver angle with
        // the axis that no refinement can cure.
        if p[0].abs() <= 10.0 * self.snap {
            p[0] = 0.0;
        }
        let key = (
            (p[0] / self.snap).round() as i64,
            (p[1] / self.snap).round() as i64,
        );
        if let Some(&h) = self.seen.get(&key) {
            return Ok(h);
        }
        let h = self
            .cdt
            .insert(Point2::new(p[0], p[1]))
            .map_err(|e| refused(format!("a vertex at ({}, {}) m: {e:?}", p[0], p[1])))?;
        self.seen.insert(key, h);
        Ok(h)
    }

    /// A chain of constraint edges through the points.
    fn chain(&mut self, points: &[[f64; 2]]) -> Result<(), SolverError> {
        let handles = points
            .iter()
            .map(|&p| self.insert(p))
            .collect::<Result<Vec<_>, _>>()?;
        for w in handles.windows(2) {
            if w[0] != w[1] {
                self.constrain(w[0], w[1]);
            }
        }
        Ok(())
    }

    /// Constraint edges between consecutive vertices lying on the segment a-b.
    fn close_line(&mut self, a: [f64; 2], b: [f64; 2], tol: f64) {
        let len = (b[0] - a[0]).hypot(b[1] - a[1]);
        let mut on: Vec<(f64, spade::handles::FixedVertexHandle)> = self
            .cdt
            .fixed_vertices()
            .filter_map(|h| {
                let p = self.cdt.vertex(h).position();
                let u = ((p.x - a[0]) * (b[0] - a[0]) + (p.y - a[1]) * (b[1] - a[1])) / len;
                let cross = ((p.x - a[0]) * (b[1] - a[1]) - (p.y - a[1]) * (b[0] - a[0])) / len;
                (cross.abs() <= tol && u >= -tol && u <= len + tol).then_some((u, h))
            })
            .collect();
        on.sort_by(|x, y| x.0.total_cmp(&y.0));
        for w in on.windows(2) {
            if w[0].1 != w[1].1 {
                self.constrain(w[0].1, w[1].1);
            }
        }
    }

    /// The constraint edge `a`-`b`, split where it crosses an edge already constrained (a
    /// dielectric's face cutting through a conductor's outline, or two outlines touching at
    /// an angle whose polygons cross): the new vertex at the crossing lies on both outlines,
    /// so neither loses a piece. Dropping the edge instead would leave triangles across an
    /// interface, put wholly in one medium by their centroid.
    fn constrain(&mut self, a: FixedVertexHandle, b: FixedVertexHandle) {
        if self.cdt.can_add_constraint(a, b) {
            self.cdt.add_constraint(a, b);
        } else {
            self.cdt.add_constraint_and_split(a, b, |p| p);
        }
    }
}

/// Growth of the interior's target edge length with the distance d (m) from the nearest
/// conductor or interface, at density 1: h(d) = h + GROWTH d / density, capped at the far
/// edge's size. Common practice, no source: a field that decays away from its sources varies
/// on the scale of the distance from them, so edges proportional to that distance keep the
/// energy error per element about even (the grading of the a-priori adapted meshes of
/// finite-element texts), while Ruppert's refinement alone lets the edges grow as fast as its
/// angle limit allows and leaves the near field, where the capacitance is decided, coarse.
pub const GROWTH: f64 = 0.1;

/// Target interior edge length (m) at distance `d` (m) from the nearest conductor or
/// interface: `h` (m) on the outlines, growing by [`GROWTH`] / density, at most `h_far` (m).
pub fn graded_size_m(h: f64, d: f64, density: f64, h_far: f64) -> f64 {
    (h + GROWTH * d.max(0.0) / density).min(h_far).max(h)
}

/// The inner part of the half-plane problem (meshed directly, not through the Kelvin map): a
/// disc about the axis, or a box.
enum Inner {
    Disc(InnerDisc),
    Box(InnerBox),
}

/// A disc about (0, `centre_z`) of `radius` (m), cut at that height when a ground plane is its
/// `floor`.
struct InnerDisc {
    centre_z: f64,
    radius: f64,
    floor: bool,
}

/// The box 0 <= r <= `r_max`, `z_min` <= z <= `z_max` (m).
struct InnerBox {
    r_max: f64,
    z_min: f64,
    z_max: f64,
}

impl Inner {
    fn of(outer: &Outer) -> Inner {
        match *outer {
            Outer::Open {
                centre_z,
                radius,
                ground,
            } => Inner::Disc(InnerDisc {
                centre_z,
                radius,
                floor: ground,
            }),
            Outer::Sphere { centre_z, radius } => Inner::Disc(InnerDisc {
                centre_z,
                radius,
                floor: false,
            }),
            Outer::Cylinder {
                r_max,
                z_min,
                z_max,
                ..
            } => Inner::Box(InnerBox {
                r_max,
                z_min,
                z_max,
            }),
        }
    }

    /// Distance (m) from `p` to its boundary (the axis, a ground line, the outer circle or the
    /// box's walls), negative outside it.
    fn distance_m(&self, p: [f64; 2]) -> f64 {
        match self {
            Inner::Disc(c) => {
                let d = p[0].min(c.radius - p[0].hypot(p[1] - c.centre_z));
                if c.floor { d.min(p[1] - c.centre_z) } else { d }
            }
            Inner::Box(b) => p[0]
                .min(b.r_max - p[0])
                .min(p[1] - b.z_min)
                .min(b.z_max - p[1]),
        }
    }

    /// Its bounding box [r0, z0, r1, z1] (m).
    fn bounding_box_m(&self) -> [f64; 4] {
        match self {
            Inner::Disc(c) => {
                let z0 = if c.floor {
                    c.centre_z
                } else {
                    c.centre_z - c.radius
                };
                [0.0, z0, c.radius, c.centre_z + c.radius]
            }
            Inner::Box(b) => [0.0, b.z_min, b.r_max, b.z_max],
        }
    }
}

/// Largest offset of an interior seed from its cell's centre, in parts of the cell size, in r
/// and in z: far below the 0.6 cell sizes a seed keeps from the outlines, so the spacing and
/// the grading stay those of the quadtree.
pub const SEED_JITTER: f64 = 0.05;

/// The SplitMix64 output function of `z` plus the generator's increment (G. L. Steele, D. Lea
/// and C. H. Flood, "Fast splittable pseudorandom number generators", OOPSLA 2014): consecutive
/// integers give 64-bit values spread as a random stream's.
pub(crate) fn splitmix64(z: u64) -> u64 {
    let mut z = z.wrapping_add(0x9e37_79b9_7f4a_7c15);
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

/// A number in [0, 1) from the top 53 bits of `z`.
pub(crate) fn unit_interval(z: u64) -> f64 {
    (z >> 11) as f64 / (1u64 << 53) as f64
}

/// The offset (in parts of the cell size, each within +-[`SEED_JITTER`]) of the `k`-th seed: a
/// fixed function of the seed's place in the quadtree's order, so the same domain gives the
/// same mesh on every run.
fn seed_offset(k: usize) -> [f64; 2] {
    let u = |i: u64| 2.0 * unit_interval(splitmix64(2 * k as u64 + i)) - 1.0;
    [SEED_JITTER * u(0), SEED_JITTER * u(1)]
}

/// Seed the interior with vertices spaced by [`graded_size_m`]: the centres of the leaves of a
/// quadtree split until each cell is no larger than the target size at its nearest point to
/// the conductors and interfaces. Seeds keep 0.6 cell sizes from every outline and boundary
/// (the outlines carry their own vertices) and stay out of solid conductors; Ruppert's
/// refinement then restores the angle limit where the cell sizes step by two. Each seed is
/// moved off its cell's centre by [`seed_offset`] (at most [`SEED_JITTER`] of the cell size
/// in r and in z): the centres of equal cells lie four by four on common circles, and every
/// such quadruple sends the triangulation's exact in-circle test to its slow adaptive stage
/// (J. R. Shewchuk, "Adaptive precision floating-point arithmetic and fast robust geometric
/// predicates", Discrete Comput. Geom. 18 (1997) 305-363, from memory: the exact stages run
/// only when the fast determinant is within its error bound of zero).
fn seed_graded_interior(
    b: &mut Builder,
    domain: &Domain,
    h: f64,
    h_far: f64,
) -> Result<(), SolverError> {
    let mut sources: Vec<Piece> = domain
        .conductors
        .iter()
        .flat_map(|c| c.pieces.iter().copied())
        .collect();
    sources.extend(domain.regions.iter().flat_map(|r| r.area.outline()));
    if sources.is_empty() {
        return Ok(());
    }
    let edges: Vec<[f64; 2]> = domain
        .conductors
        .iter()
        .flat_map(|c| c.pieces.iter())
        .flat_map(|pc| match *pc {
            Piece::Line {
                p0,
                p1,
                edge0,
                edge1,
            } => [edge0.then_some(p0), edge1.then_some(p1)],
            Piece::Arc { .. } => [None, None],
        })
        .flatten()
        .collect();
    let (h_end, slope) = edge_grading(h, domain.density);
    // Target size at the nearest point of a cell whose centre is `d` from the outlines and
    // whose half diagonal is `half_diag`.
    let target = |p: [f64; 2], d: f64, half_diag: f64| {
        let d_edge = edges
            .iter()
            .map(|e| (p[0] - e[0]).hypot(p[1] - e[1]))
            .fold(f64::INFINITY, f64::min);
        graded_size_m(h, d - half_diag, domain.density, h_far)
            .min(h_end + slope * (d_edge - half_diag).max(0.0))
    };
    let near = |p: [f64; 2]| {
        sources
            .iter()
            .map(|pc| distance_to_piece(p, pc))
            .fold(f64::INFINITY, f64::min)
    };
    let inner = Inner::of(&domain.outer);
    let [r0, z0, r1, z1] = inner.bounding_box_m();
    let side = (r1 - r0).max(z1 - z0);
    let mut stack = vec![(r0 + 0.5 * side, z0 + 0.5 * side, side)];
    let mut seeds = Vec::new();
    while let Some((rc, zc, s)) = stack.pop() {
        let p = [rc, zc];
        let half_diag = std::f64::consts::FRAC_1_SQRT_2 * s;
        let d_out = inner.distance_m(p);
        if d_out < -half_diag {
            continue; // wholly outside the inner part
        }
        let d = near(p);
        let inside_conductor = domain
            .conductors
            .iter()
            .any(|c| c.area.is_some_and(|a| a.contains(p, 0.0)));
        if inside_conductor && d > half_diag {
            continue; // wholly inside a solid conductor
        }
        if s > target(p, d, half_diag) {
            let q = 0.25 * s;
            for (dr, dz) in [(-q, -q), (q, -q), (-q, q), (q, q)] {
                stack.push((rc + dr, zc + dz, 0.5 * s));
            }
            if stack.len() + seeds.len() > domain.max_elements {
                return Err(refused(format!(
                    "the mesh needs more than {} elements (the limit of [mesh] \
                     max_elements); lower [mesh] density or raise the limit",
                    domain.max_elements
                )));
            }
            continue;
        }
        if !inside_conductor && d >= 0.6 * s && d_out >= 0.6 * s {
            seeds.push((p, s));
        }
    }
    for (k, (p, s)) in seeds.into_iter().enumerate() {
        let [dr, dz] = seed_offset(k);
        b.insert([p[0] + dr * s, p[1] + dz * s])?;
    }
    Ok(())
}

/// Edges of the outer circle's polygon on a half circle: 48 at density 1.
fn half_circle_edges(density: f64) -> usize {
    (48.0 * density).ceil() as usize
}

/// Edges of the outer circle's polygon on the mesh (open space's circle, a grounded sphere),
/// on its part in r >= 0: a half circle, or a quarter above a ground plane; 0 for a cylinder.
fn outer_arc_edges(outer: &Outer, density: f64) -> usize {
    match *outer {
        Outer::Open { ground: true, .. } => half_circle_edges(density) / 2,
        Outer::Open { .. } | Outer::Sphere { .. } => half_circle_edges(density),
        Outer::Cylinder { .. } => 0,
    }
}

/// How far inside the outer circle its polygon on the mesh reaches (m): the sagitta
/// R (1 - cos(a / 2)) of edges spanning the angle a; 0 for a cylinder, whose walls are
/// meshed exactly. A part must stand clear of the circle by more, or its outline would cross
/// the polygon.
pub(crate) fn outer_chord_depth_m(outer: &Outer, density: f64) -> f64 {
    let n = outer_arc_edges(outer, density) as f64;
    let (radius, span) = match *outer {
        Outer::Open {
            radius,
            ground: true,
            ..
        } => (radius, std::f64::consts::FRAC_PI_2),
        Outer::Open { radius, .. } | Outer::Sphere { radius, .. } => (radius, std::f64::consts::PI),
        Outer::Cylinder { .. } => return 0.0,
    };
    radius * (1.0 - (0.5 * span / n).cos())
}

/// Mesh a half-plane problem (see the module doc).
///
/// Errors: [`SolverError::PartsOverlap`] for parts that overlap each other or the outer
/// boundary ([`Domain::check_parts`], the one check of every domain, from a design or built
/// directly); [`SolverError::MeshRefused`]
/// for more elements than the domain's limit, a refinement that does not finish, or a vertex
/// the triangulation refuses.
pub fn mesh_domain(domain: &Domain) -> Result<Mesh, SolverError> {
    domain.check_parts()?;
    let size = domain.conductor_size_m();
    let h = size / (20.0 * domain.density);
    let (outer_size, tol) = match domain.outer {
        Outer::Open { radius, .. } | Outer::Sphere { radius, .. } => (radius, radius * 1e-10),
        Outer::Cylinder {
            r_max,
            z_min,
            z_max,
            ..
        } => (r_max.max(z_max - z_min), r_max.max(z_max - z_min) * 1e-10),
    };
    let mut b = Builder::new(tol * 0.1);
    // Outer boundary.
    let arc_edges = half_circle_edges(domain.density);
    let mut arc: Option<(f64, f64, f64)> = None; // (centre_z, radius, start angle)
    match domain.outer {
        Outer::Open {
            centre_z,
            radius,
            ground,
        } => {
            if ground {
                // The corner of the axis and the ground line.
                b.insert([0.0, centre_z])?;
            }
            let t0 = if ground {
                0.0
            } else {
                -std::f64::consts::FRAC_PI_2
            };
            arc = Some((centre_z, radius, t0));
        }
        Outer::Sphere { centre_z, radius } => {
            arc = Some((centre_z, radius, -std::f64::consts::FRAC_PI_2));
        }
        Outer::Cylinder {
            r_max,
            z_min,
            z_max,
            ..
        } => {
            for p in [[0.0, z_min], [r_max, z_min], [r_max, z_max], [0.0, z_max]] {
                b.insert(p)?;
            }
        }
    }
    if let Some((cz, radius, t0)) = arc {
        let n = outer_arc_edges(&domain.outer, domain.density);
        let pts: Vec<[f64; 2]> = (0..=n)
            .map(|k| {
                let t = t0 + (std::f64::consts::FRAC_PI_2 - t0) * k as f64 / n as f64;
                let mut p = [radius * t.cos(), cz + radius * t.sin()];
                if p[0].abs() < tol {
                    p[0] = 0.0;
                }
                if (p[1] - cz).abs() < tol {
                    p[1] = cz;
                }
                p
            })
            .collect();
        b.chain(&pts)?;
    }
    // Conductors and interfaces.
    for c in &domain.conductors {
        for piece in &c.pieces {
            b.chain(&sample_piece(piece, h, domain.density))?;
        }
    }
    for r in &domain.regions {
        for piece in r.area.outline() {
            b.chain(&sample_piece(&piece, h, domain.density))?;
        }
    }
    // The axis, the ground line and the box walls through every vertex on them.
    match domain.outer {
        Outer::Open {
            centre_z,
            radius,
            ground,
        } => {
            let lo = if ground { centre_z } else { centre_z - radius };
            b.close_line([0.0, lo], [0.0, centre_z + radius], tol);
            if ground {
                b.close_line([0.0, centre_z], [radius, centre_z], tol);
            }
        }
        Outer::Sphere { centre_z, radius } => {
            b.close_line([0.0, centre_z - radius], [0.0, centre_z + radius], tol);
        }
        Outer::Cylinder {
            r_max,
            z_min,
            z_max,
            ..
        } => {
            b.close_line([0.0, z_min], [0.0, z_max], tol);
            b.close_line([0.0, z_min], [r_max, z_min], tol);
            b.close_line([r_max, z_min], [r_max, z_max], tol);
            b.close_line([0.0, z_max], [r_max, z_max], tol);
        }
    }
    let h_far = outer_size / (8.0 * domain.density);
    seed_graded_interior(&mut b, domain, h, h_far)?;
    let params = RefinementParameters::<f64>::new()
        .with_angle_limit(AngleLimit::from_deg(MIN_ANGLE_DEG))
        .with_max_allowed_area(0.5 * h_far * h_far)
        .with_max_additional_vertices(domain.max_elements);
    let result = b.cdt.refine(params);
    if !result.refinement_complete || b.cdt.num_inner_faces() > domain.max_elements {
        return Err(refused(format!(
            "the mesh needs more than {} elements (the limit of [mesh] max_elements); lower \
             [mesh] density or raise the limit",
            domain.max_elements
        )));
    }
    let mut nodes: Vec<[f64; 2]> = b
        .cdt
        .vertices()
        .map(|v| [v.position().x, v.position().y])
        .collect();
    let mut triangles: Vec<[usize; 3]> = b
        .cdt
        .inner_faces()
        .map(|f| f.vertices().map(|v| v.fix().index()))
        .collect();
    let n_inner_nodes = nodes.len();
    let n_inner_triangles = triangles.len();
    // Vertices on the outer circle: the convex hull's, off the axis and the ground line, put
    // back on the circle (refinement splits its edges at chord midpoints).
    let mut on_arc = vec![false; n_inner_nodes];
    if let Some((cz, radius, _)) = arc {
        for e in b.cdt.convex_hull() {
            for v in [e.from(), e.to()] {
                let i = v.fix().index();
                let p = nodes[i];
                // Chord midpoints of the circle lie within R (1 - theta^2 / 8) of its centre,
                // theta = pi / 48 at the coarsest; the axis and ground lines lie well inside
                // except at their ends on the circle.
                let d = p[0].hypot(p[1] - cz);
                if d >= radius * (1.0 - 2e-3) {
                    nodes[i] = [p[0] * radius / d, cz + (p[1] - cz) * radius / d];
                    if p[0] <= tol {
                        nodes[i][0] = 0.0;
                    }
                    on_arc[i] = true;
                }
            }
        }
    }
    if on_arc.iter().any(|&a| a) && nodes.iter().any(|p| p[0] < 0.0) {
        return Err(refused("a vertex left the half-plane".to_string()));
    }
    // Conductors and grounded boundaries of the inner part.
    let ctol = size * 1e-9;
    let mut conductor: Vec<Option<usize>> = nodes
        .iter()
        .map(|&p| {
            domain.conductors.iter().position(|c| {
                c.pieces.iter().any(|pc| distance_to_piece(p, pc) <= ctol)
                    || c.area.is_some_and(|a| a.contains(p, ctol))
            })
        })
        .collect();
    let mut grounded: Vec<bool> = nodes
        .iter()
        .enumerate()
        .map(|(i, &p)| match domain.outer {
            Outer::Open {
                centre_z, ground, ..
            } => ground && (p[1] - centre_z).abs() <= tol,
            Outer::Sphere { .. } => on_arc[i],
            Outer::Cylinder {
                r_max,
                z_min,
                z_max,
                insulated_ends,
            } => {
                (p[0] - r_max).abs() <= tol
                    || !insulated_ends
                        && ((p[1] - z_min).abs() <= tol || (p[1] - z_max).abs() <= tol)
            }
        })
        .collect();
    let mut region: Vec<Option<usize>> = triangles
        .iter()
        .map(|t| {
            let c = centroid(&nodes, t);
            domain.regions.iter().position(|r| r.area.contains(c, 0.0))
        })
        .collect();
    // The Kelvin disc of the open boundary.
    let mut kelvin = None;
    if let Outer::Open {
        centre_z,
        radius,
        ground,
    } = domain.outer
    {
        kelvin = Some(Kelvin { centre_z, radius });
        let mut shared: Vec<(f64, usize)> = (0..n_inner_nodes)
            .filter(|&i| on_arc[i])
            .map(|i| ((nodes[i][1] - centre_z).atan2(nodes[i][0]), i))
            .collect();
        shared.sort_by(|a, b| a.0.total_cmp(&b.0));
        let mut e = Builder::new(tol * 0.1);
        let mut index_of: HashMap<usize, usize> = HashMap::new(); // exterior vertex -> node
        let arc_pts: Vec<[f64; 2]> = shared.iter().map(|&(_, i)| nodes[i]).collect();
        for (&(_, i), p) in shared.iter().zip(&arc_pts) {
            let hv = e.insert(*p)?;
            index_of.insert(hv.index(), i);
        }
        e.chain(&arc_pts)?;
        // Axis (and ground line) of the Kelvin disc, at the spacing of the arc.
        let step = radius * std::f64::consts::PI / arc_edges as f64;
        // Graded towards the centre (the point at infinity), where the potential of a net
        // charge is a cone |x' - c| (phi ~ Q / (4 pi eps |x|) = Q |x' - c| / (4 pi eps R^2))
        // and the weight R^2 / |x' - c|^2 amplifies its interpolation error: edges of a
        // quarter of the distance to the centre, down to R / 10^5.
        let mut ds = vec![radius];
        let mut d = radius;
        while d > radius * 1e-5 {
            d -= step.min(0.25 * d);
            ds.push(d);
        }
        ds.push(0.0);
        ds.reverse();
        let line = |a: [f64; 2], b: [f64; 2]| -> Vec<[f64; 2]> {
            ds.iter()
                .map(|&d| {
                    let u = d / radius;
                    [a[0] + u * (b[0] - a[0]), a[1] + u * (b[1] - a[1])]
                })
                .collect()
        };
        let centre = [0.0, centre_z];
        let top = [0.0, centre_z + radius];
        let mut lines = vec![line(centre, top)];
        if ground {
            lines.push(line(centre, [radius, centre_z]));
        } else {
            lines.push(line(centre, [0.0, centre_z - radius]));
        }
        for l in &lines {
            // The line's far end is the arc's shared vertex: reuse its exact coordinates.
            let mut l = l.clone();
            let last = l.len() - 1;
            let end = l[last];
            if let Some(p) = arc_pts
                .iter()
                .min_by(|a, b| dist(**a, end).total_cmp(&dist(**b, end)))
            {
                l[last] = *p;
            }
            e.chain(&l)?;
        }
        let params = RefinementParameters::<f64>::new()
            .with_angle_limit(AngleLimit::from_deg(MIN_ANGLE_DEG))
            .with_max_allowed_area(0.5 * (radius / (8.0 * domain.density)).powi(2))
            .keep_constraint_edges()
            .with_max_additional_vertices(domain.max_elements);
        let result = e.cdt.refine(params);
        if !result.refinement_complete
            || n_inner_triangles + e.cdt.num_inner_faces() > domain.max_elements
        {
            return Err(refused(format!(
                "the mesh of the open boundary needs more than {} elements; raise [mesh] \
                 max_elements",
                domain.max_elements
            )));
        }
        let mut map = vec![0usize; e.cdt.num_vertices()];
        for v in e.cdt.vertices() {
            let k = v.fix().index();
            map[k] = match index_of.get(&k) {
                Some(&i) => i,
                None => {
                    let p = [v.position().x, v.position().y];
                    nodes.push(p);
                    conductor.push(None);
                    grounded
                        .push(dist(p, centre) <= tol || ground && (p[1] - centre_z).abs() <= tol);
                    nodes.len() - 1
                }
            };
        }
        for f in e.cdt.inner_faces() {
            let t = f.vertices().map(|v| map[v.fix().index()]);
            triangles.push(t);
            region.push(None);
        }
    }
    Ok(Mesh {
        nodes,
        n_inner_nodes,
        triangles,
        n_inner_triangles,
        region,
        conductor,
        grounded,
        kelvin,
    })
}

fn dist(a: [f64; 2], b: [f64; 2]) -> f64 {
    (a[0] - b[0]).hypot(a[1] - b[1])
}

/// Centroid of a triangle (m).
pub(crate) fn centroid(nodes: &[[f64; 2]], t: &[usize; 3]) -> [f64; 2] {
    let [a, b, c] = t.map(|i| nodes[i]);
    [(a[0] + b[0] + c[0]) / 3.0, (a[1] + b[1] + c[1]) / 3.0]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fem::cases::reference_domain;

    fn sphere_in_enclosure() -> Domain {
        reference_domain("sphere_in_enclosure", "a_m=0.1;b_m=0.5;density=2").expect("case")
    }

    /// Pairs of triangles across an edge whose four vertices lie on one circle to within
    /// rounding: the in-circle determinant (J. R. Shewchuk, "Adaptive precision floating-point
    /// arithmetic and fast robust geometric predicates", Discrete Comput. Geom. 18 (1997)
    /// 305-363, from memory), computed here directly, below 1e-12 of its permanent, where
    /// the exact predicate's fast stage cannot decide (its bound is about 1e-15 of it).
    fn cocircular_pairs(m: &Mesh) -> (usize, usize) {
        let mut opposite: HashMap<(usize, usize), usize> = HashMap::new();
        let (mut pairs, mut cocircular) = (0, 0);
        for t in &m.triangles[..m.n_inner_triangles] {
            for k in 0..3 {
                let (a, b, c) = (t[k], t[(k + 1) % 3], t[(k + 2) % 3]);
                let key = (a.min(b), a.max(b));
                let Some(&d) = opposite.get(&key) else {
                    opposite.insert(key, c);
                    continue;
                };
                pairs += 1;
                let p = |i: usize| m.nodes[i];
                let rel = |q: [f64; 2]| [q[0] - p(d)[0], q[1] - p(d)[1]];
                let (x, y, z) = (rel(p(a)), rel(p(b)), rel(p(c)));
                let lift = |q: [f64; 2]| q[0] * q[0] + q[1] * q[1];
                let det = lift(x) * (y[0] * z[1] - y[1] * z[0])
                    - lift(y) * (x[0] * z[1] - x[1] * z[0])
                    + lift(z) * (x[0] * y[1] - x[1] * y[0]);
                let permanent = lift(x) * (y[0] * z[1]).abs().max((y[1] * z[0]).abs())
                    + lift(y) * (x[0] * z[1]).abs().max((x[1] * z[0]).abs())
                    + lift(z) * (x[0] * y[1]).abs().max((x[1] * y[0]).abs());
                if det.abs() <= 1e-12 * permanent {
                    cocircular += 1;
                }
            }
        }
        (cocircular, pairs)
    }

    /// The interior seeds sit off their cells' centres: almost no pair of triangles is
    /// cocircular (quadtree centres put four on a circle in every square of equal cells).
    #[test]
    fn interior_seeds_are_not_cocircular() {
        let m = mesh_domain(&sphere_in_enclosure()).expect("mesh");
        let (cocircular, pairs) = cocircular_pairs(&m);
        assert!(pairs > 1000, "{pairs}");
        assert!(
            (cocircular as f64) < 0.002 * pairs as f64,
            "{cocircular} of {pairs} pairs of triangles are cocircular"
        );
    }

    /// The offsets are a fixed function of the seed's place: the same domain gives the same
    /// mesh, vertex for vertex, and every offset stays within the stated bound.
    #[test]
    fn the_same_domain_gives_the_same_mesh() {
        let a = mesh_domain(&sphere_in_enclosure()).expect("mesh");
        let b = mesh_domain(&sphere_in_enclosure()).expect("mesh");
        assert_eq!(a.nodes, b.nodes);
        assert_eq!(a.triangles, b.triangles);
        for k in 0..10_000 {
            let o = seed_offset(k);
            assert!(o.iter().all(|v| v.abs() <= SEED_JITTER), "{k}: {o:?}");
        }
    }
}
