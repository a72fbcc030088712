//! The checks between the parts of a half-plane problem, the one rule for every [`Domain`]
//! (built from a design or directly), run before it is meshed: conductors stand apart (a
//! touch or an overlap would give one vertex two potentials, and a conductor nested in
//! another's inside would vanish from the mesh), dielectric regions may touch but not overlap
//! (a triangle takes the permittivity of the first region holding its centroid, so the second
//! would be lost where they overlap). A dielectric may cross or hold a conductor (a coated
//! electrode, a winding on its form): the conductor's vertices keep their potential and the
//! field inside it is zero. These are the design file's rules (`geometry::query::contact`
//! for electrodes, `geometry::query::media` for dielectrics), with their tolerances. Every
//! part also lies inside the outer boundary: conductors clear of it (a long conductor may run
//! through a cylinder's insulated ends), dielectrics touching a grounded boundary at most.
//!
//! The distances are exact for the pieces of an outline (segments and circular arcs): the
//! least distance between two such curves is reached at an end of one of them, at a crossing,
//! or at a pair of points on the line through the circles' centres (on the normal through
//! the centre, for a segment and an arc): common practice, no source. Every candidate is a
//! real pair of points, one on each curve, so the least of them is the distance.

use super::domain::{Area, Conductor, Domain, Outer, Piece, Region};
use super::mesh::outer_chord_depth_m;
use crate::error::SolverError;
use crate::numtext::si;
use std::f64::consts::TAU;

/// Tolerance of the conductor check, in parts of the larger conductor's size (as the design
/// file's electrode contact check): closer than this is a touch.
pub const CONDUCTOR_TOLERANCE_REL: f64 = 1e-9;

/// Tolerance of the dielectric check (m per metre of the larger of 1 m and the regions'
/// reach from the origin), as the design file's: thinner overlaps count as touching.
pub const DIELECTRIC_TOLERANCE_REL: f64 = 1e-9;

type P = [f64; 2];

fn dist(a: P, b: P) -> f64 {
    (a[0] - b[0]).hypot(a[1] - b[1])
}

fn midpoint(a: P, b: P) -> P {
    [0.5 * (a[0] + b[0]), 0.5 * (a[1] + b[1])]
}

fn arc_point(centre: P, radius: f64, t: f64) -> P {
    [centre[0] + radius * t.cos(), centre[1] + radius * t.sin()]
}

/// Whether the angle `t` (rad, any turn) lies on the arc from `t0` to `t1` (rad).
fn arc_holds(t: f64, t0: f64, t1: f64) -> bool {
    (t1 - t0).abs() >= TAU - 1e-12
        || [t, t + TAU, t - TAU]
            .iter()
            .any(|&tt| tt >= t0.min(t1) && tt <= t0.max(t1))
}

/// A piece as a curve: a segment from one point to another, or an arc (centre, radius, start
/// and end angle) (m, rad).
#[derive(Debug, Clone, Copy)]
enum Curve {
    Segment(P, P),
    Arc(P, f64, f64, f64),
}

fn curve(piece: &Piece) -> Curve {
    match *piece {
        Piece::Line { p0, p1, .. } => Curve::Segment(p0, p1),
        Piece::Arc {
            centre,
            radius,
            t0,
            t1,
        } => Curve::Arc(centre, radius, t0, t1),
    }
}

/// The two ends of a curve (m).
fn ends(c: Curve) -> [P; 2] {
    match c {
        Curve::Segment(p0, p1) => [p0, p1],
        Curve::Arc(centre, radius, t0, t1) => {
            [arc_point(centre, radius, t0), arc_point(centre, radius, t1)]
        }
    }
}

/// The point of a piece farthest along the unit vector `dir`, and how far along `dir` it lies
/// (m). On a circle the farthest point is the one in the direction `dir` from the centre; an
/// arc without it has its farthest point at an end (the projection falls off monotonically on
/// both sides of that point).
fn farthest_along(piece: &Piece, dir: P) -> (f64, P) {
    let along = |p: P| p[0] * dir[0] + p[1] * dir[1];
    let best = |pts: [P; 2]| {
        let [a, b] = pts;
        if along(a) >= along(b) {
            (along(a), a)
        } else {
            (along(b), b)
        }
    };
    match curve(piece) {
        Curve::Arc(centre, radius, t0, t1) if arc_holds(dir[1].atan2(dir[0]), t0, t1) => {
            let p = arc_point(centre, radius, dir[1].atan2(dir[0]));
            (along(p), p)
        }
        c => best(ends(c)),
    }
}

/// The point of a piece farthest from `q`, and its distance from `q` (m): on a circle, the
/// point beyond the centre as seen from `q`; on an arc without it, an end (as above).
fn farthest_from(piece: &Piece, q: P) -> (f64, P) {
    let c = curve(piece);
    if let Curve::Arc(centre, _, _, _) = c {
        let d = [centre[0] - q[0], centre[1] - q[1]];
        let n = d[0].hypot(d[1]);
        if n > 0.0 {
            // Farthest along the direction from q to the centre is farthest from q.
            let (_, p) = farthest_along(piece, [d[0] / n, d[1] / n]);
            return (dist(p, q), p);
        }
    }
    let [a, b] = ends(c);
    let (da, db) = (dist(a, q), dist(b, q));
    if da >= db { (da, a) } else { (db, b) }
}

/// The point of a curve nearest to `p` (m).
fn nearest_on(p: P, c: Curve) -> P {
    match c {
        Curve::Segment(p0, p1) => {
            let d = [p1[0] - p0[0], p1[1] - p0[1]];
            let l2 = d[0] * d[0] + d[1] * d[1];
            let u = if l2 > 0.0 {
                (((p[0] - p0[0]) * d[0] + (p[1] - p0[1]) * d[1]) / l2).clamp(0.0, 1.0)
            } else {
                0.0
            };
            [p0[0] + u * d[0], p0[1] + u * d[1]]
        }
        Curve::Arc(centre, radius, t0, t1) => {
            let t = (p[1] - centre[1]).atan2(p[0] - centre[0]);
            if arc_holds(t, t0, t1) {
                arc_point(centre, radius, t)
            } else {
                let [e0, e1] = ends(c);
                if dist(p, e0) <= dist(p, e1) { e0 } else { e1 }
            }
        }
    }
}

/// Distance (m) from `p` to a piece.
pub(crate) fn distance_to_piece(p: P, piece: &Piece) -> f64 {
    dist(p, nearest_on(p, curve(piece)))
}

/// The crossings of the full line or circle carrying `a` with that carrying `b` (m): the
/// candidates where the two curves may meet.
fn carrier_crossings(a: Curve, b: Curve) -> Vec<P> {
    use Curve::{Arc, Segment};
    match (a, b) {
        (Segment(p0, p1), Segment(q0, q1)) => {
            let (d, e) = (
                [p1[0] - p0[0], p1[1] - p0[1]],
                [q1[0] - q0[0], q1[1] - q0[1]],
            );
            let den = d[0] * e[1] - d[1] * e[0];
            if den == 0.0 {
                return Vec::new(); // parallel: the ends decide
            }
            let u = ((q0[0] - p0[0]) * e[1] - (q0[1] - p0[1]) * e[0]) / den;
            vec![[p0[0] + u * d[0], p0[1] + u * d[1]]]
        }
        (Segment(p0, p1), Arc(c, r, ..)) | (Arc(c, r, ..), Segment(p0, p1)) => {
            line_circle(p0, p1, c, r)
        }
        (Arc(c1, r1, ..), Arc(c2, r2, ..)) => circle_circle(c1, r1, c2, r2),
    }
}

/// Points of the line through `p0` and `p1` on the circle (`centre`, `radius`) (m).
fn line_circle(p0: P, p1: P, centre: P, radius: f64) -> Vec<P> {
    let d = [p1[0] - p0[0], p1[1] - p0[1]];
    let f = [p0[0] - centre[0], p0[1] - centre[1]];
    let a = d[0] * d[0] + d[1] * d[1];
    if a == 0.0 {
        return Vec::new();
    }
    // |f + u d|^2 = radius^2, a quadratic in u.
    let b = f[0] * d[0] + f[1] * d[1];
    let c = f[0] * f[0] + f[1] * f[1] - radius * radius;
    let disc = b * b - a * c;
    if disc < 0.0 {
        return Vec::new();
    }
    let s = disc.sqrt();
    [(-b - s) / a, (-b + s) / a]
        .iter()
        .map(|u| [p0[0] + u * d[0], p0[1] + u * d[1]])
        .collect()
}

/// Points common to two circles (m); none for concentric ones.
fn circle_circle(c1: P, r1: f64, c2: P, r2: f64) -> Vec<P> {
    let d = dist(c1, c2);
    if d == 0.0 || d > r1 + r2 || d < (r1 - r2).abs() {
        return Vec::new();
    }
    // Distance from c1 to the chord through the crossings, and the half chord.
    let a = (d * d + r1 * r1 - r2 * r2) / (2.0 * d);
    let h = (r1 * r1 - a * a).max(0.0).sqrt();
    let u = [(c2[0] - c1[0]) / d, (c2[1] - c1[1]) / d];
    let m = [c1[0] + a * u[0], c1[1] + a * u[1]];
    vec![
        [m[0] - h * u[1], m[1] + h * u[0]],
        [m[0] + h * u[1], m[1] - h * u[0]],
    ]
}

/// The two points of a circle on the line through its centre along the unit vector `u` (m).
fn circle_along(centre: P, radius: f64, u: P) -> [P; 2] {
    [
        [centre[0] + radius * u[0], centre[1] + radius * u[1]],
        [centre[0] - radius * u[0], centre[1] - radius * u[1]],
    ]
}

/// Pairs of points (on `a`'s carrier, on `b`'s) where the distance between the carriers is
/// stationary: for a circle, its points on the line through its centre and the other circle's
/// centre, or on the normal through its centre to the other curve's line.
fn stationary_pairs(a: Curve, b: Curve) -> Vec<(P, P)> {
    use Curve::{Arc, Segment};
    match (a, b) {
        (Segment(..), Segment(..)) => Vec::new(),
        (Segment(p0, p1), Arc(c, r, ..)) | (Arc(c, r, ..), Segment(p0, p1)) => {
            let l = dist(p0, p1);
            if l == 0.0 {
                return Vec::new();
            }
            let n = [-(p1[1] - p0[1]) / l, (p1[0] - p0[0]) / l];
            let arc_first = matches!(a, Arc(..));
            circle_along(c, r, n)
                .into_iter()
                .map(|q| {
                    let p = nearest_on(q, Segment(p0, p1));
                    if arc_first { (q, p) } else { (p, q) }
                })
                .collect()
        }
        (Arc(c1, r1, ..), Arc(c2, r2, ..)) => {
            let d = dist(c1, c2);
            if d == 0.0 {
                // Concentric: every common angle is stationary; an end of either arc lies on
                // both when they share an angle.
                return ends(a)
                    .into_iter()
                    .chain(ends(b))
                    .map(|e| {
                        let t = (e[1] - c1[1]).atan2(e[0] - c1[0]);
                        (arc_point(c1, r1, t), arc_point(c2, r2, t))
                    })
                    .collect();
            }
            let u = [(c2[0] - c1[0]) / d, (c2[1] - c1[1]) / d];
            let mut pairs = Vec::new();
            for p in circle_along(c1, r1, u) {
                for q in circle_along(c2, r2, u) {
                    pairs.push((p, q));
                }
            }
            pairs
        }
    }
}

/// The least distance (m) between two pieces, and a point midway between the nearest points.
fn piece_gap(a: &Piece, b: &Piece) -> (f64, P) {
    let (a, b) = (curve(a), curve(b));
    let mut best = (f64::INFINITY, [0.0, 0.0]);
    let mut take = |p: P, q: P| {
        let d = dist(p, q);
        if d < best.0 {
            best = (d, midpoint(p, q));
        }
    };
    for e in ends(a) {
        take(e, nearest_on(e, b));
    }
    for e in ends(b) {
        take(nearest_on(e, a), e);
    }
    for x in carrier_crossings(a, b) {
        take(nearest_on(x, a), nearest_on(x, b));
    }
    for (p, q) in stationary_pairs(a, b) {
        take(nearest_on(p, a), nearest_on(q, b));
    }
    best
}

/// The whole boundary of an area, its pieces on the axis included (m).
fn boundary(area: &Area) -> Vec<Piece> {
    let line = |p0: P, p1: P| Piece::Line {
        p0,
        p1,
        edge0: false,
        edge1: false,
    };
    let circle = |centre: P, radius: f64| Piece::Arc {
        centre,
        radius,
        t0: 0.0,
        t1: TAU,
    };
    match *area {
        Area::Rect { r0, r1, z0, z1 } => vec![
            line([r0, z0], [r1, z0]),
            line([r1, z0], [r1, z1]),
            line([r1, z1], [r0, z1]),
            line([r0, z1], [r0, z0]),
        ],
        Area::Disk { centre, radius } => vec![circle(centre, radius)],
        Area::Shell { centre, r0, r1 } => vec![circle(centre, r0), circle(centre, r1)],
    }
}

/// The least distance (m) between a piece and an area (0 when they meet), with a point where
/// it is reached: a piece that meets an area has an end inside it or crosses its boundary.
fn piece_area_gap(piece: &Piece, area: &Area) -> (f64, P) {
    if let Some(e) = ends(curve(piece))
        .into_iter()
        .find(|&e| area.contains(e, 0.0))
    {
        return (0.0, e);
    }
    least(boundary(area).iter().map(|b| piece_gap(piece, b)))
}

/// The least distance (m) between two areas (0 when they meet): one's boundary meets the
/// other, or one holds the other whole (and so its boundary).
fn area_gap(a: &Area, b: &Area) -> (f64, P) {
    let ab = boundary(a).into_iter().map(|pa| piece_area_gap(&pa, b));
    let ba = boundary(b).into_iter().map(|pb| piece_area_gap(&pb, a));
    least(ab.chain(ba))
}

fn least(gaps: impl Iterator<Item = (f64, P)>) -> (f64, P) {
    gaps.fold((f64::INFINITY, [0.0, 0.0]), |best, g| {
        if g.0 < best.0 { g } else { best }
    })
}

/// The least distance (m) between two conductors (their outlines and insides), and a point
/// where it is reached.
fn conductor_gap(a: &Conductor, b: &Conductor) -> (f64, P) {
    let mut gaps: Vec<(f64, P)> = Vec::new();
    for pa in &a.pieces {
        gaps.extend(b.pieces.iter().map(|pb| piece_gap(pa, pb)));
        if let Some(area) = &b.area {
            gaps.push(piece_area_gap(pa, area));
        }
    }
    if let Some(area) = &a.area {
        gaps.extend(b.pieces.iter().map(|pb| piece_area_gap(pb, area)));
        if let Some(other) = &b.area {
            gaps.push(area_gap(area, other));
        }
    }
    least(gaps.into_iter())
}

/// Size (m) of a conductor for its tolerance: the larger of its largest distance from the
/// axis and half its extent along it (a sphere's radius, a torus's outer radius).
fn conductor_size_m(c: &Conductor) -> f64 {
    let (mut r1, mut z0, mut z1) = (0.0_f64, f64::INFINITY, f64::NEG_INFINITY);
    for p in &c.pieces {
        let pts: Vec<P> = match *p {
            Piece::Line { p0, p1, .. } => vec![p0, p1],
            Piece::Arc { centre, radius, .. } => vec![
                [centre[0] + radius, centre[1] - radius],
                [centre[0] + radius, centre[1] + radius],
            ],
        };
        for q in pts {
            r1 = r1.max(q[0]);
            z0 = z0.min(q[1]);
            z1 = z1.max(q[1]);
        }
    }
    r1.max(0.5 * (z1 - z0))
}

/// The area shrunk by `by` (m) on every side; None when nothing is left.
fn shrunk(area: &Area, by: f64) -> Option<Area> {
    let out = match *area {
        Area::Rect { r0, r1, z0, z1 } => Area::Rect {
            r0: r0 + by,
            r1: r1 - by,
            z0: z0 + by,
            z1: z1 - by,
        },
        Area::Disk { centre, radius } => Area::Disk {
            centre,
            radius: radius - by,
        },
        Area::Shell { centre, r0, r1 } => Area::Shell {
            centre,
            r0: r0 + by,
            r1: r1 - by,
        },
    };
    let holds = match out {
        Area::Rect { r0, r1, z0, z1 } => r0 < r1 && z0 < z1,
        Area::Disk { radius, .. } => radius > 0.0,
        Area::Shell { r0, r1, .. } => r0 < r1,
    };
    holds.then_some(out)
}

/// Largest distance (m) of a region's points from the origin of (r, z).
fn region_reach_m(r: &Region) -> f64 {
    boundary(&r.area)
        .iter()
        .map(|p| match *p {
            Piece::Line { p0, p1, .. } => p0[0].hypot(p0[1]).max(p1[0].hypot(p1[1])),
            Piece::Arc { centre, radius, .. } => centre[0].hypot(centre[1]) + radius,
        })
        .fold(0.0, f64::max)
}

/// The tolerance (m) of the check of two dielectric regions.
fn dielectric_tolerance_m(a: &Region, b: &Region) -> f64 {
    DIELECTRIC_TOLERANCE_REL * region_reach_m(a).max(region_reach_m(b)).max(1.0)
}

/// Whether two dielectric regions overlap by more than their tolerance, with a point of the
/// overlap: the regions shrunk by the tolerance still meet.
fn regions_overlap(a: &Region, b: &Region) -> Option<P> {
    let tol = dielectric_tolerance_m(a, b);
    let (sa, sb) = (shrunk(&a.area, tol)?, shrunk(&b.area, tol)?);
    let (gap, at) = area_gap(&sa, &sb);
    (gap <= 0.5 * tol).then_some(at)
}

/// The error naming both parts; coordinates within `tol` (m) of zero print as zero (the
/// rounding of a circle's point on the axis).
fn overlap_error(first: String, second: String, how: &str, at: P, tol: f64) -> SolverError {
    let clean = |x: f64| if x.abs() <= tol { 0.0 } else { x };
    SolverError::PartsOverlap {
        first,
        second,
        how: how.to_string(),
        near_rz_m: [clean(at[0]), clean(at[1])],
    }
}

impl Domain {
    /// The checks between its parts (see the module doc): conductors apart, dielectric
    /// regions not overlapping. Errors ([`SolverError::PartsOverlap`]) name both parts and a
    /// point (r, z) (m) of their contact or overlap.
    pub fn check_parts(&self) -> Result<(), SolverError> {
        for (i, a) in self.conductors.iter().enumerate() {
            for b in &self.conductors[..i] {
                let tol = CONDUCTOR_TOLERANCE_REL * conductor_size_m(a).max(conductor_size_m(b));
                let (gap, at) = conductor_gap(b, a);
                if gap <= tol {
                    // Below a thousandth of the tolerance the gap is the rounding of a
                    // crossing or a touch.
                    let how = if gap > 1e-3 * tol {
                        format!(
                            "come within {} of each other (closer than the check's tolerance \
                             of {})",
                            si(gap, "m", 3),
                            si(tol, "m", 3)
                        )
                    } else {
                        "touch or overlap".to_string()
                    };
                    return Err(overlap_error(
                        format!("conductor '{}'", b.name),
                        format!("conductor '{}'", a.name),
                        &format!("{how}; conductors must stand apart"),
                        at,
                        tol,
                    ));
                }
            }
        }
        self.check_inside_outer()?;
        for (i, a) in self.regions.iter().enumerate() {
            for b in &self.regions[..i] {
                if let Some(at) = regions_overlap(b, a) {
                    return Err(overlap_error(
                        format!("dielectric region '{}'", b.name),
                        format!("dielectric region '{}'", a.name),
                        "overlap; dielectric regions may touch but not overlap",
                        at,
                        dielectric_tolerance_m(a, b),
                    ));
                }
            }
        }
        Ok(())
    }
}

impl Domain {
    /// Every part inside the outer boundary: a conductor stands clear of it (the boundary is
    /// grounded, or it is the artificial circle of open space), except the floor and the
    /// ceiling of a cylinder with insulated ends, symmetry planes that a long conductor may
    /// run through; a dielectric region may touch a straight grounded boundary (a cylinder's
    /// wall, floor and ceiling, the ground plane) but not reach beyond it. Every part stands
    /// clear of a circular boundary (open space's circle, a grounded sphere) by more than the
    /// depth of the mesh's chords of it ([`outer_chord_depth_m`]), so its outline stays inside
    /// the polygon that stands for the circle.
    fn check_inside_outer(&self) -> Result<(), SolverError> {
        let chord_depth = outer_chord_depth_m(&self.outer, self.density);
        let parts = self
            .conductors
            .iter()
            .map(|c| {
                let tol = CONDUCTOR_TOLERANCE_REL * conductor_size_m(c);
                (
                    format!("conductor '{}'", c.name),
                    c.pieces.clone(),
                    true,
                    tol,
                )
            })
            .chain(self.regions.iter().map(|r| {
                let tol = DIELECTRIC_TOLERANCE_REL * region_reach_m(r).max(1.0);
                (
                    format!("dielectric region '{}'", r.name),
                    r.area.outline(),
                    false,
                    tol,
                )
            }));
        for (name, pieces, conductor, tol) in parts {
            // The part's farthest point by a piece's measure: (how far, the point).
            let farthest = |measure: &dyn Fn(&Piece) -> (f64, P)| {
                pieces
                    .iter()
                    .map(measure)
                    .fold(
                        (f64::NEG_INFINITY, [0.0; 2]),
                        |a, b| if b.0 > a.0 { b } else { a },
                    )
            };
            let along = |dir: P| farthest(&|p| farthest_along(p, dir));
            let from = |q: P| farthest(&|p| farthest_from(p, q));
            // (boundary, the part's clearance from it (m), the point, may the part touch it,
            // whether it is a circle meshed as a polygon)
            let mut gaps: Vec<(String, f64, P, bool, bool)> = Vec::new();
            match self.outer {
                Outer::Open {
                    centre_z,
                    radius,
                    ground,
                } => {
                    let (far, at) = from([0.0, centre_z]);
                    let circle =
                        format!("the circle of open space (radius {})", si(radius, "m", 4));
                    gaps.push((circle, radius - far, at, false, true));
                    if ground {
                        let (low, at) = along([0.0, -1.0]);
                        let plane = format!("the ground plane (z = {})", si(centre_z, "m", 4));
                        gaps.push((plane, -low - centre_z, at, !conductor, false));
                    }
                }
                Outer::Sphere { centre_z, radius } => {
                    let (far, at) = from([0.0, centre_z]);
                    let sphere = format!("the grounded sphere (radius {})", si(radius, "m", 4));
                    gaps.push((sphere, radius - far, at, false, true));
                }
                Outer::Cylinder {
                    r_max,
                    z_min,
                    z_max,
                    insulated_ends,
                } => {
                    let (r, at) = along([1.0, 0.0]);
                    let wall = format!("the grounded wall (r = {})", si(r_max, "m", 4));
                    gaps.push((wall, r_max - r, at, !conductor, false));
                    let ends_touch = !conductor || insulated_ends;
                    let (low, at) = along([0.0, -1.0]);
                    let floor = format!("the floor (z = {})", si(z_min, "m", 4));
                    gaps.push((floor, -low - z_min, at, ends_touch, false));
                    let (high, at) = along([0.0, 1.0]);
                    let ceiling = format!("the ceiling (z = {})", si(z_max, "m", 4));
                    gaps.push((ceiling, z_max - high, at, ends_touch, false));
                }
            }
            for (boundary, gap, at, may_touch, circle) in gaps {
                let how = if gap < -tol {
                    format!(
                        "overlap by {}: the part reaches beyond the outer boundary",
                        si(-gap, "m", 3)
                    )
                } else if gap <= tol && !may_touch {
                    format!("touch; {}", clear_rule(conductor))
                } else if circle && gap <= chord_depth + tol {
                    format!(
                        "come within {} of each other, not more than the mesh's chords of the \
                         circle reach inside it ({}); {}",
                        si(gap, "m", 3),
                        si(chord_depth, "m", 3),
                        clear_rule(conductor)
                    )
                } else {
                    continue;
                };
                return Err(overlap_error(name, boundary, &how, at, tol));
            }
        }
        Ok(())
    }
}

/// What a part too close to the outer boundary must do instead (a dielectric is refused
/// there only at a circular boundary: it may touch a straight one).
fn clear_rule(conductor: bool) -> &'static str {
    if conductor {
        "a conductor must stand clear of the outer boundary"
    } else {
        "a dielectric must stand clear of a circular outer boundary: enlarge it"
    }
}

#[cfg(test)]
mod tests {
    //! The exact distances and the verdicts against a brute-force reference: the parts
    //! sampled as points (their outlines every `STEP`, their insides on a grid of `STEP`),
    //! with the shapes' defining inequalities written out here, not through `Area::contains`.
    use super::*;
    use crate::fem::domain::Profile2d;
    use crate::fem::mesh::{splitmix64, unit_interval};
    use crate::fem::{Outer, mesh_domain};

    /// Spacing (m) of the brute-force samples.
    const STEP: f64 = 2e-3;

    /// A deterministic stream of numbers in [0, 1): SplitMix64 of a counter.
    struct Stream(u64);
    impl Stream {
        fn next(&mut self) -> f64 {
            self.0 += 1;
            unit_interval(splitmix64(self.0))
        }
        fn within(&mut self, lo: f64, hi: f64) -> f64 {
            lo + (hi - lo) * self.next()
        }
    }

    fn conductor(name: &str, pieces: Vec<Piece>, area: Option<Area>) -> Conductor {
        Conductor {
            name: name.to_string(),
            pieces,
            area,
            profile: Profile2d::Uniform,
        }
    }

    fn solid(name: &str, area: Area) -> Conductor {
        conductor(name, area.outline(), Some(area))
    }

    fn sheet(name: &str, p0: P, p1: P) -> Conductor {
        let line = Piece::Line {
            p0,
            p1,
            edge0: true,
            edge1: true,
        };
        conductor(name, vec![line], None)
    }

    fn region(name: &str, area: Area) -> Region {
        Region {
            name: name.to_string(),
            area,
            relative_permittivity: 3.0,
        }
    }

    fn domain(conductors: Vec<Conductor>, regions: Vec<Region>) -> Domain {
        Domain {
            conductors,
            regions,
            outer: Outer::Sphere {
                centre_z: 0.0,
                radius: 10.0,
            },
            density: 1.0,
            max_elements: 100_000,
            axis: None,
            drive: None,
        }
    }

    /// The brute-force membership of an area: its defining inequalities.
    fn inside(area: &Area, p: P) -> bool {
        match *area {
            Area::Rect { r0, r1, z0, z1 } => r0 <= p[0] && p[0] <= r1 && z0 <= p[1] && p[1] <= z1,
            Area::Disk { centre, radius } => {
                (p[0] - centre[0]).powi(2) + (p[1] - centre[1]).powi(2) <= radius * radius
            }
            Area::Shell { centre, r0, r1 } => {
                let d2 = (p[0] - centre[0]).powi(2) + (p[1] - centre[1]).powi(2);
                r0 * r0 <= d2 && d2 <= r1 * r1
            }
        }
    }

    /// Points along a piece, `STEP` apart at most.
    fn piece_samples(piece: &Piece) -> Vec<P> {
        let (len, at): (f64, Box<dyn Fn(f64) -> P>) = match *piece {
            Piece::Line { p0, p1, .. } => (
                dist(p0, p1),
                Box::new(move |u| [p0[0] + u * (p1[0] - p0[0]), p0[1] + u * (p1[1] - p0[1])]),
            ),
            Piece::Arc {
                centre,
                radius,
                t0,
                t1,
            } => (
                radius * (t1 - t0).abs(),
                Box::new(move |u| {
                    let t = t0 + u * (t1 - t0);
                    [centre[0] + radius * t.cos(), centre[1] + radius * t.sin()]
                }),
            ),
        };
        let n = (len / STEP).ceil().max(1.0) as usize;
        (0..=n).map(|k| at(k as f64 / n as f64)).collect()
    }

    /// Grid points of spacing `STEP` inside an area (its part in r >= 0).
    fn area_samples(area: &Area) -> Vec<P> {
        let (lo, hi) = match *area {
            Area::Rect { r0, r1, z0, z1 } => ([r0, z0], [r1, z1]),
            Area::Disk { centre, radius }
            | Area::Shell {
                centre, r1: radius, ..
            } => (
                [centre[0] - radius, centre[1] - radius],
                [centre[0] + radius, centre[1] + radius],
            ),
        };
        let mut out = Vec::new();
        let mut r = lo[0].max(0.0);
        while r <= hi[0] {
            let mut z = lo[1];
            while z <= hi[1] {
                if inside(area, [r, z]) {
                    out.push([r, z]);
                }
                z += STEP;
            }
            r += STEP;
        }
        out
    }

    /// The brute-force outline of a part: its pieces' samples, and its area's (whole outline).
    fn outline_samples(pieces: &[Piece], area: Option<&Area>) -> Vec<P> {
        let mut out: Vec<P> = pieces.iter().flat_map(piece_samples).collect();
        if let Some(a) = area {
            let circle = |centre: P, radius: f64| Piece::Arc {
                centre,
                radius,
                t0: 0.0,
                t1: TAU,
            };
            let whole = match *a {
                Area::Rect { r0, r1, z0, z1 } => [[r0, z0], [r1, z0], [r1, z1], [r0, z1], [r0, z0]]
                    .windows(2)
                    .map(|w| Piece::Line {
                        p0: w[0],
                        p1: w[1],
                        edge0: false,
                        edge1: false,
                    })
                    .collect(),
                Area::Disk { centre, radius } => vec![circle(centre, radius)],
                Area::Shell { centre, r0, r1 } => vec![circle(centre, r0), circle(centre, r1)],
            };
            out.extend(whole.iter().flat_map(piece_samples).filter(|p| p[0] >= 0.0));
        }
        out
    }

    fn min_pair_distance(a: &[P], b: &[P]) -> f64 {
        a.iter()
            .flat_map(|p| b.iter().map(move |q| dist(*p, *q)))
            .fold(f64::INFINITY, f64::min)
    }

    /// A random conductor of the kinds a domain holds: a sphere on the axis, a torus's
    /// section, a closed cylinder on the axis, a disc, a winding's sheet.
    fn random_conductor(s: &mut Stream, name: &str) -> Conductor {
        let z = s.within(-0.5, 0.5);
        let size = s.within(0.05, 0.3);
        match (s.next() * 5.0) as usize {
            0 => solid(
                name,
                Area::Disk {
                    centre: [0.0, z],
                    radius: size,
                },
            ),
            1 => {
                let minor = 0.3 * size;
                solid(
                    name,
                    Area::Disk {
                        centre: [s.within(minor + 0.01, 0.6), z],
                        radius: minor,
                    },
                )
            }
            2 => {
                let (r1, h) = (size, s.within(0.05, 0.4));
                let line = |p0, p1| Piece::Line {
                    p0,
                    p1,
                    edge0: true,
                    edge1: true,
                };
                conductor(
                    name,
                    vec![
                        line([0.0, z], [r1, z]),
                        line([r1, z], [r1, z + h]),
                        line([r1, z + h], [0.0, z + h]),
                    ],
                    Some(Area::Rect {
                        r0: 0.0,
                        r1,
                        z0: z,
                        z1: z + h,
                    }),
                )
            }
            3 => sheet(name, [0.0, z], [size, z]),
            _ => {
                let r = s.within(0.02, 0.6);
                sheet(name, [r, z], [r, z + s.within(0.05, 0.5)])
            }
        }
    }

    fn random_area(s: &mut Stream) -> Area {
        let z = s.within(-0.5, 0.5);
        let size = s.within(0.05, 0.3);
        match (s.next() * 4.0) as usize {
            0 => {
                let r0 = if s.next() < 0.5 {
                    0.0
                } else {
                    s.within(0.0, 0.4)
                };
                Area::Rect {
                    r0,
                    r1: r0 + size,
                    z0: z,
                    z1: z + s.within(0.05, 0.4),
                }
            }
            1 => Area::Disk {
                centre: [0.0, z],
                radius: size,
            },
            2 => Area::Disk {
                centre: [s.within(size + 0.01, 0.6), z],
                radius: size,
            },
            _ => Area::Shell {
                centre: [0.0, z],
                r0: 0.5 * size,
                r1: size,
            },
        }
    }

    /// Random pairs of conductors: where the samples show a part of one inside the other's
    /// area, the exact gap is 0 and the domain is refused; where the sampled outlines stand
    /// more than 2 STEP apart with nothing inside, the exact gap lies between the sampled one
    /// less STEP and the sampled one (samples are points of the parts, STEP / 2 from any
    /// other), and the domain is accepted.
    #[test]
    fn conductor_gaps_agree_with_point_sampling() {
        let mut s = Stream(7);
        let (mut overlapping, mut apart) = (0, 0);
        for _ in 0..300 {
            let (a, b) = (random_conductor(&mut s, "a"), random_conductor(&mut s, "b"));
            let (gap, _) = conductor_gap(&a, &b);
            let verdict = domain(vec![a.clone(), b.clone()], vec![]).check_parts();
            let (sa, sb) = (
                outline_samples(&a.pieces, a.area.as_ref()),
                outline_samples(&b.pieces, b.area.as_ref()),
            );
            let holds = |c: &Conductor, pts: &[P], interior: &[P]| {
                c.area
                    .is_some_and(|area| pts.iter().chain(interior).any(|&p| inside(&area, p)))
            };
            let (ia, ib) = (
                a.area.map(|x| area_samples(&x)).unwrap_or_default(),
                b.area.map(|x| area_samples(&x)).unwrap_or_default(),
            );
            if holds(&a, &sb, &ib) || holds(&b, &sa, &ia) {
                overlapping += 1;
                assert!(gap <= 1e-12, "{a:?} {b:?}: gap {gap}");
                assert!(
                    matches!(verdict, Err(SolverError::PartsOverlap { .. })),
                    "{a:?} {b:?}"
                );
                continue;
            }
            let sampled = min_pair_distance(&sa, &sb);
            if sampled > 2.0 * STEP {
                apart += 1;
                assert!(
                    gap <= sampled + 1e-12 && gap >= sampled - STEP,
                    "{a:?} {b:?}: exact {gap}, sampled {sampled}"
                );
                assert!(verdict.is_ok(), "{a:?} {b:?}: {verdict:?}");
            }
        }
        // Both verdicts well represented (the rest lie within the samples' resolution).
        assert!(overlapping >= 40 && apart >= 100, "{overlapping} {apart}");
    }

    /// Random pairs of dielectric regions: a grid point inside both by more than a step is an
    /// overlap the check refuses; no grid point inside both and the outlines more than 2 STEP
    /// apart is a pair it accepts.
    #[test]
    fn dielectric_overlaps_agree_with_point_sampling() {
        let mut s = Stream(11);
        let (mut overlapping, mut apart) = (0, 0);
        for _ in 0..300 {
            let (a, b) = (random_area(&mut s), random_area(&mut s));
            let verdict = domain(vec![], vec![region("a", a), region("b", b)]).check_parts();
            let deep = |area: &Area, p: P| {
                (0..8).all(|k| {
                    let t = TAU * k as f64 / 8.0;
                    inside(area, [p[0] + STEP * t.cos(), p[1] + STEP * t.sin()])
                })
            };
            if area_samples(&a).iter().any(|&p| deep(&a, p) && deep(&b, p)) {
                overlapping += 1;
                assert!(
                    matches!(verdict, Err(SolverError::PartsOverlap { .. })),
                    "{a:?} {b:?}"
                );
                continue;
            }
            let both = area_samples(&a).iter().any(|&p| inside(&b, p));
            let sampled = min_pair_distance(
                &outline_samples(&[], Some(&a)),
                &outline_samples(&[], Some(&b)),
            );
            if !both && sampled > 2.0 * STEP {
                apart += 1;
                assert!(verdict.is_ok(), "{a:?} {b:?}: {verdict:?}");
            }
        }
        assert!(overlapping >= 40 && apart >= 100, "{overlapping} {apart}");
    }

    fn refused(d: Domain) -> String {
        match d.check_parts() {
            Err(e @ SolverError::PartsOverlap { .. }) => e.to_string(),
            other => panic!("not refused: {other:?}"),
        }
    }

    fn sphere(name: &str, z: f64, radius: f64) -> Conductor {
        solid(
            name,
            Area::Disk {
                centre: [0.0, z],
                radius,
            },
        )
    }

    /// Touching conductors are refused, as the design file's contact check refuses them;
    /// conductors a hair apart (closer than 1e-9 of their size) too; a millimetre apart they
    /// pass.
    #[test]
    fn touching_and_nested_conductors_are_refused() {
        // Two spheres of 0.1 m touching at (0, 0.1) on the axis.
        let e = refused(domain(
            vec![sphere("lower", 0.0, 0.1), sphere("upper", 0.2, 0.1)],
            vec![],
        ));
        assert!(
            e.contains("conductor 'lower' and conductor 'upper' touch or overlap")
                && e.contains("(near r = 0 m, z = 100.0 mm)"),
            "{e}"
        );
        let e = refused(domain(
            vec![sphere("lower", 0.0, 0.1), sphere("upper", 0.2 + 1e-12, 0.1)],
            vec![],
        ));
        assert!(e.contains("come within"), "{e}");
        assert!(
            domain(
                vec![sphere("lower", 0.0, 0.1), sphere("upper", 0.201, 0.1)],
                vec![]
            )
            .check_parts()
            .is_ok()
        );
        // Two tori overlapping.
        let torus = |name: &str, r: f64| {
            solid(
                name,
                Area::Disk {
                    centre: [r, 0.0],
                    radius: 0.05,
                },
            )
        };
        let e = refused(domain(vec![torus("a", 0.3), torus("b", 0.38)], vec![]));
        assert!(e.contains("'a' and conductor 'b'"), "{e}");
        // A torus wholly inside a closed cylinder (no outline meets the other).
        let cylinder = solid(
            "can",
            Area::Rect {
                r0: 0.0,
                r1: 0.5,
                z0: -0.2,
                z1: 0.2,
            },
        );
        refused(domain(vec![cylinder.clone(), torus("inner", 0.3)], vec![]));
        // A disc sheet through a winding's sheet, and one ending on a torus.
        refused(domain(
            vec![
                sheet("winding", [0.2, -0.1], [0.2, 0.3]),
                sheet("disc", [0.0, 0.1], [0.3, 0.1]),
            ],
            vec![],
        ));
        refused(domain(
            vec![torus("t", 0.3), sheet("disc", [0.0, 0.0], [0.25, 0.0])],
            vec![],
        ));
        // The check runs where every domain is meshed.
        let e =
            mesh_domain(&domain(vec![cylinder, sphere("ball", 0.1, 0.05)], vec![])).unwrap_err();
        assert!(matches!(e, SolverError::PartsOverlap { .. }), "{e}");
    }

    /// Dielectric regions may touch (a face on a face, a disc on a face, a ball in a shell's
    /// hole) but not overlap or nest; a dielectric may cross or hold a conductor, and lie
    /// inside one.
    #[test]
    fn dielectrics_touch_but_do_not_overlap() {
        let rect = |r0, r1, z0, z1| Area::Rect { r0, r1, z0, z1 };
        let ok = |a: Area, b: Area| {
            domain(vec![], vec![region("a", a), region("b", b)])
                .check_parts()
                .is_ok()
        };
        assert!(ok(rect(0.0, 0.2, 0.0, 0.1), rect(0.0, 0.2, 0.1, 0.3)));
        assert!(ok(rect(0.0, 0.2, 0.0, 0.1), rect(0.2, 0.4, 0.0, 0.1)));
        assert!(ok(
            rect(0.0, 0.2, 0.0, 0.1),
            Area::Disk {
                centre: [0.0, 0.2],
                radius: 0.1
            }
        ));
        let shell = Area::Shell {
            centre: [0.0, 0.0],
            r0: 0.1,
            r1: 0.2,
        };
        let ball = |radius| Area::Disk {
            centre: [0.0, 0.0],
            radius,
        };
        assert!(ok(shell, ball(0.1)));
        let e = refused(domain(
            vec![],
            vec![region("shell", shell), region("ball", ball(0.11))],
        ));
        assert!(
            e.contains("dielectric region 'shell' and dielectric region 'ball' overlap"),
            "{e}"
        );
        // Overlapping and nested rectangles.
        assert!(!ok(rect(0.0, 0.2, 0.0, 0.1), rect(0.1, 0.4, 0.05, 0.3)));
        assert!(!ok(rect(0.0, 0.4, 0.0, 0.4), rect(0.1, 0.2, 0.1, 0.2)));
        // Dielectrics against conductors: crossing, holding, inside.
        let coated = domain(
            vec![sphere("ball", 0.0, 0.1)],
            vec![
                region("coat", rect(0.0, 0.15, 0.05, 0.3)),
                region(
                    "core",
                    Area::Disk {
                        centre: [0.0, -0.03],
                        radius: 0.04,
                    },
                ),
            ],
        );
        assert!(coated.check_parts().is_ok());
    }

    /// The design-file path meets the same rule: the invented demo room resonator with a
    /// second copy of its form moved by (dr, dz) is refused by the check of every domain
    /// exactly when the design file's own dielectric check (`check_media`) refuses it, touching
    /// end to end and side by side included (both accept those).
    #[test]
    fn the_design_path_meets_the_design_files_rule() {
        let path = concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../meshes-demo/room-resonator.toml"
        );
        let text = std::fs::read_to_string(path).expect("demo design");
        let base = coilfield_geometry::parse_design(&text, path).expect("demo");
        Domain::from_design(&base, path)
            .expect("domain")
            .check_parts()
            .expect("the demo's parts are apart");
        let (mut refused_both, mut accepted_both) = (0, 0);
        // The form: 51.8 mm to 54.8 mm in radius, 0.28 m to 0.77 m in z.
        for (dr, dz) in [
            (0.0, 0.49),
            (0.0, -0.25),
            (0.003, 0.0),
            (-0.003, 0.2),
            (0.0, 0.3),
            (0.001, 0.0),
            (0.002, -0.2),
            (0.0, 0.5),
            (0.004, 0.1),
        ] {
            let mut design = base.clone();
            let mut sleeve = design.media.dielectrics[0].clone();
            sleeve.name = "sleeve".to_string();
            sleeve.origin_m.z += dz;
            if let coilfield_geometry::DielectricShape::Tube {
                inner_radius_m,
                outer_radius_m,
                ..
            } = &mut sleeve.shape
            {
                *inner_radius_m += dr;
                *outer_radius_m += dr;
            }
            design.media.dielectrics.push(sleeve);
            let by_file = coilfield_geometry::check_media(&design, path);
            let by_domain = Domain::from_design(&design, path)
                .expect("domain")
                .check_parts();
            match (&by_file, &by_domain) {
                (Err(_), Err(SolverError::PartsOverlap { first, second, .. })) => {
                    assert_eq!(
                        (first.as_str(), second.as_str()),
                        ("dielectric region 'form'", "dielectric region 'sleeve'")
                    );
                    refused_both += 1;
                }
                (Ok(()), Ok(())) => accepted_both += 1,
                _ => panic!("({dr}, {dz}): file {by_file:?}, domain {by_domain:?}"),
            }
        }
        assert!(
            refused_both >= 3 && accepted_both >= 4,
            "{refused_both} {accepted_both}"
        );
    }

    /// The least signed clearance (m, positive inside) of sampled points from an outer
    /// boundary, each boundary written out as its inequality: (clearance, whether the least
    /// is at a boundary the part may touch).
    fn sampled_clearance(outer: &Outer, pts: &[P], conductor: bool) -> (f64, bool) {
        let mut least = (f64::INFINITY, false);
        let mut take = |gap: f64, may_touch: bool| {
            if gap < least.0 {
                least = (gap, may_touch);
            }
        };
        for &p in pts {
            match *outer {
                Outer::Open {
                    centre_z,
                    radius,
                    ground,
                } => {
                    take(
                        radius - (p[0] * p[0] + (p[1] - centre_z).powi(2)).sqrt(),
                        false,
                    );
                    if ground {
                        take(p[1] - centre_z, !conductor);
                    }
                }
                Outer::Sphere { centre_z, radius } => {
                    take(
                        radius - (p[0] * p[0] + (p[1] - centre_z).powi(2)).sqrt(),
                        false,
                    );
                }
                Outer::Cylinder {
                    r_max,
                    z_min,
                    z_max,
                    insulated_ends,
                } => {
                    take(r_max - p[0], !conductor);
                    take(p[1] - z_min, !conductor || insulated_ends);
                    take(z_max - p[1], !conductor || insulated_ends);
                }
            }
        }
        least
    }

    /// The outer-boundary check against point sampling: on seeded random parts (conductors
    /// and dielectric regions) and outer boundaries (open space with and without ground, a
    /// grounded sphere, cylinders with grounded and insulated ends), a part whose samples
    /// reach beyond the boundary by more than two sample spacings is refused, and one whose
    /// samples all stand clear by more than that passes.
    #[test]
    fn parts_beyond_the_outer_boundary_are_refused_as_sampling_says() {
        let mut s = Stream(41);
        let (mut beyond, mut clear) = (0, 0);
        for case in 0..400 {
            let outer = match case % 5 {
                0 => Outer::Open {
                    centre_z: s.within(-0.3, 0.3),
                    radius: s.within(0.4, 1.4),
                    ground: false,
                },
                1 => Outer::Open {
                    centre_z: s.within(-0.8, 0.2),
                    radius: s.within(0.6, 1.6),
                    ground: true,
                },
                2 => Outer::Sphere {
                    centre_z: s.within(-0.3, 0.3),
                    radius: s.within(0.4, 1.4),
                },
                k => Outer::Cylinder {
                    r_max: s.within(0.3, 1.0),
                    z_min: s.within(-1.0, -0.2),
                    z_max: s.within(0.2, 1.0),
                    insulated_ends: k == 4,
                },
            };
            let conductor = s.next() < 0.5;
            let (d, pts) = if conductor {
                let c = random_conductor(&mut s, "part");
                let pts = outline_samples(&c.pieces, c.area.as_ref());
                (domain(vec![c], vec![]), pts)
            } else {
                let area = random_area(&mut s);
                let pts = outline_samples(&[], Some(&area));
                (domain(vec![], vec![region("part", area)]), pts)
            };
            let d = Domain { outer, ..d };
            let (gap, _) = sampled_clearance(&outer, &pts, conductor);
            let verdict = d.check_parts();
            if gap < -2.0 * STEP {
                beyond += 1;
                assert!(
                    matches!(verdict, Err(SolverError::PartsOverlap { .. })),
                    "{outer:?} {d:?}"
                );
            } else if gap > 2.0 * STEP {
                clear += 1;
                assert!(verdict.is_ok(), "{outer:?} {d:?}: {verdict:?}");
            }
        }
        assert!(beyond >= 60 && clear >= 100, "{beyond} {clear}");
    }

    /// Touching the outer boundary: a conductor may not touch a grounded boundary (wall,
    /// sphere, ground plane) nor open space's circle, but may run through the insulated ends
    /// of a long cylinder; a dielectric may touch a straight grounded boundary (a slab on the
    /// floor, a filling up to the wall) but must stand clear of a circle (open space's, a
    /// grounded sphere) by more than the mesh's chords of it reach inside. What passes meshes,
    /// its dielectric present.
    #[test]
    fn what_may_touch_the_outer_boundary() {
        let meshes_with_its_region = |d: &Domain| {
            let m = crate::fem::mesh_domain(d).expect("meshes");
            assert!(
                m.region.iter().any(Option::is_some),
                "no dielectric triangle"
            );
        };
        let cylinder = |insulated_ends| Outer::Cylinder {
            r_max: 1.0,
            z_min: 0.0,
            z_max: 2.0,
            insulated_ends,
        };
        let with = |c: Vec<Conductor>, r: Vec<Region>, outer: Outer| Domain {
            outer,
            ..domain(c, r)
        };
        let rod = || {
            solid(
                "rod",
                Area::Rect {
                    r0: 0.0,
                    r1: 0.1,
                    z0: 0.0,
                    z1: 2.0,
                },
            )
        };
        let fill = |r1: f64| {
            region(
                "fill",
                Area::Rect {
                    r0: 0.1,
                    r1,
                    z0: 0.0,
                    z1: 2.0,
                },
            )
        };
        // A coaxial line: the inner rod through the insulated ends, the filling to the wall.
        let coax = with(vec![rod()], vec![fill(1.0)], cylinder(true));
        assert!(coax.check_parts().is_ok());
        meshes_with_its_region(&coax);
        let e = refused(with(vec![rod()], vec![], cylinder(false)));
        assert!(e.contains("conductor 'rod'") && e.contains("floor"), "{e}");
        let e = refused(with(vec![], vec![fill(1.01)], cylinder(true)));
        assert!(
            e.contains("dielectric region 'fill'") && e.contains("grounded wall"),
            "{e}"
        );
        assert!(e.contains("overlap by 10.0 mm"), "{e}");
        // A sphere on the ground plane; a slab on it.
        let ground = Outer::Open {
            centre_z: 0.0,
            radius: 5.0,
            ground: true,
        };
        let e = refused(with(vec![sphere("ball", 0.5, 0.5)], vec![], ground));
        assert!(e.contains("ground plane") && e.contains("touch"), "{e}");
        let slab = region(
            "slab",
            Area::Rect {
                r0: 0.0,
                r1: 1.0,
                z0: 0.0,
                z1: 0.1,
            },
        );
        let on_slab = with(vec![sphere("ball", 0.7, 0.5)], vec![slab.clone()], ground);
        assert!(on_slab.check_parts().is_ok());
        meshes_with_its_region(&on_slab);
        // The circle of open space touched by a dielectric, and by a conductor.
        let open = Outer::Open {
            centre_z: 0.0,
            radius: 1.0,
            ground: false,
        };
        let e = refused(with(
            vec![],
            vec![region(
                "shell",
                Area::Shell {
                    centre: [0.0, 0.0],
                    r0: 0.5,
                    r1: 1.0,
                },
            )],
            open,
        ));
        assert!(
            e.contains("circle of open space") && e.contains("enlarge"),
            "{e}"
        );
        let e = refused(with(vec![sphere("ball", 0.0, 1.0)], vec![], open));
        assert!(
            e.contains("conductor 'ball'") && e.contains("stand clear"),
            "{e}"
        );
        // A dielectric shell in a spherical capacitor: up to its outer sphere, and within the
        // depth of the mesh's chords of it (R (1 - cos(pi / 96)) = 0.535 mm at density 1) it
        // is refused; a millimetre inside it passes and meshes.
        let outer_sphere = Outer::Sphere {
            centre_z: 0.0,
            radius: 1.0,
        };
        let shell = |r1: f64| {
            region(
                "shell",
                Area::Shell {
                    centre: [0.0, 0.0],
                    r0: 0.5,
                    r1,
                },
            )
        };
        let capacitor = |r1| {
            with(
                vec![sphere("inner", 0.0, 0.4)],
                vec![shell(r1)],
                outer_sphere,
            )
        };
        let e = refused(capacitor(1.0));
        assert!(e.contains("grounded sphere") && e.contains("touch"), "{e}");
        let e = refused(capacitor(1.0 - 5e-4));
        assert!(e.contains("chords") && e.contains("535"), "{e}");
        assert!(capacitor(0.999).check_parts().is_ok());
        meshes_with_its_region(&capacitor(0.999));
    }
}
