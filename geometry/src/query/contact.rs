//! Contact checks of electrodes against wires, each other and the ground plane, by closed-form
//! distances with a stated tolerance (no surface sampling).
//!
//! # Method
//! Every electrode surface has an exact signed distance ([`ElectrodeShape::signed_distance_m`]:
//! sphere, torus and closed cylinder in closed form, negative inside; a disc's unsigned
//! distance). An exact distance function is 1-Lipschitz: it changes by at most |p - q| between
//! two points. That turns contact checks along a curve into a branch and bound
//! ([`first_within`]): on a parameter interval whose points all lie within `bound` of its
//! midpoint (the curve's speed bound times half the interval), a midpoint distance above
//! `reach + bound` clears the whole interval, one at or below `reach` is a contact, and
//! anything between is halved, down to a tolerance. The answer is certified both ways:
//! - accepted means the true clearance is positive;
//! - refused means the true clearance is at most the tolerance (a real contact, or a gap
//!   thinner than the tolerance, which the message says).
//!
//! A wire is the tube of its radius around the centreline ([`Shape::point_at`]). When the
//! winding is axisymmetric and coaxial with the electrode, the distance of a centreline point
//! depends only on its (rho, z) in the common meridian plane, which run along a straight
//! segment as t goes from 0 to 1 (radius and height are linear in t for a helix, spiral, cone
//! or ring): the search runs over that short segment instead of the whole wire. Otherwise it
//! runs along the 3-D curve, with the speed bound of each shape (a polyline piece by piece).
//!
//! Two coaxial electrodes are compared on their generatrices: both surfaces are surfaces of
//! revolution about one axis, so their distance is the distance between their meridian
//! profiles (arcs and segments in the (rho, z) half-plane), computed in closed form from the
//! candidate closest pairs (end points, intersections, and the points where an arc's tangent is
//! parallel to the other piece); one inside the other is found by the signed distance of a
//! profile point. Electrodes that are not coaxial (allowed by the design file, refused by the
//! electric solver) are checked by the same branch and bound over parameter patches of one
//! surface against the other's distance, both ways.
//!
//! The lowest point of an electrode (the ground-plane check) is in closed form; a wire's comes
//! from the same branch and bound with the distance z - z_ground.

use crate::model::electrode::ElectrodeShape;
use crate::model::winding::{Shape, Winding, local_frame};
use nalgebra::{Point3, Unit, Vector2, Vector3};
use std::f64::consts::{FRAC_PI_2, PI, TAU};

/// Resolution of a wire's contact check (m): min(wire radius / 1000, 1 um). A clearance
/// below it is treated as a contact.
pub fn wire_tolerance_m(wire_radius_m: f64) -> f64 {
    (1e-3 * wire_radius_m).min(1e-6)
}

/// Resolution of the check of coaxial electrodes relative to the larger electrode's size:
/// gaps below it count as contact (exactly touching shapes compute as rounding-sized gaps).
pub const ELECTRODE_TOLERANCE_REL: f64 = 1e-9;

/// Resolution of the patch search for electrodes that are not coaxial, relative to the larger
/// one's size. Coarser than [`ELECTRODE_TOLERANCE_REL`] because near a tangent contact the
/// number of undecided patches grows as 1 / tolerance (the distance falls quadratically, the
/// patch bound only linearly).
pub const NONCOAXIAL_TOLERANCE_REL: f64 = 1e-6;

/// Most distance evaluations one check may spend before it stops undecided (and the design is
/// refused with a message saying so): bounds the time of near-tangent non-coaxial pairs.
pub const MAX_EVALUATIONS: usize = 20_000_000;

/// The outcome of a contact check.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Reach {
    /// Certainly apart.
    Clear,
    /// Touching or crossing at this point (m).
    Contact(Point3<f64>),
    /// Closer than the tolerance (m) near this point, without a proven contact.
    WithinTolerance(Point3<f64>, f64),
    /// The search ran out of evaluations near this point ([`MAX_EVALUATIONS`]).
    Undecided(Point3<f64>),
}

/// Branch and bound on t in [t0, t1] for the first point where `dist(point(t)) <= reach`.
///
/// `point` must move by at most `speed` per unit t, and `dist` be 1-Lipschitz. `tol` is the
/// resolution: a point found within `reach + tol` is refused ([`Reach::WithinTolerance`]), so
/// [`Reach::Clear`] means a clearance above 0 and a refusal one of at most `tol`. `budget`
/// counts evaluations across calls.
pub fn first_within(
    point: &dyn Fn(f64) -> Point3<f64>,
    speed: f64,
    (t0, t1): (f64, f64),
    dist: &dyn Fn(&Point3<f64>) -> f64,
    reach: f64,
    tol: f64,
    budget: &mut usize,
) -> Reach {
    let mut stack = vec![(t0, t1)];
    while let Some((a, b)) = stack.pop() {
        let tm = 0.5 * (a + b);
        let p = point(tm);
        let margin = dist(&p) - reach;
        let bound = speed * 0.5 * (b - a);
        if margin <= 0.0 {
            return Reach::Contact(p);
        }
        // A point closer than the resolution is refused: exact touching computes as a
        // rounding-sized margin of either sign.
        if margin <= tol {
            return Reach::WithinTolerance(p, tol);
        }
        if margin > bound {
            continue;
        }
        if bound <= tol {
            return Reach::WithinTolerance(p, tol);
        }
        if *budget == 0 {
            return Reach::Undecided(p);
        }
        *budget -= 1;
        // Right half first on the stack, so the curve is searched from its start.
        stack.push((tm, b));
        stack.push((a, tm));
    }
    Reach::Clear
}

/// Whether `w` (axisymmetric) is coaxial with `e`; then the frame of its meridian plane.
fn coaxial_trace(w: &Winding, e: &ElectrodeShape) -> Option<(Point3<f64>, Vector3<f64>)> {
    let (o, n) = w.shape.origin_axis()?;
    let (c, m) = e.origin_axis();
    let scale = (c - o).norm().max(1.0);
    let r = c - o;
    let off_axis = (r - n.as_ref() * r.dot(n.as_ref())).norm();
    let parallel = matches!(e, ElectrodeShape::Sphere { .. }) || m.cross(n.as_ref()).norm() < 1e-12;
    (parallel && off_axis <= 1e-12 * scale).then(|| (o, local_frame(&n).0))
}

/// Speed bound |dP/dt| (m per unit t) of an axisymmetric curve ([`Shape::point_at`]).
fn speed_bound(shape: &Shape) -> f64 {
    match *shape {
        Shape::Helix {
            radius_m,
            length_m,
            turns,
            ..
        } => (TAU * turns * radius_m).hypot(length_m),
        Shape::Spiral {
            inner_radius_m,
            outer_radius_m,
            turns,
            ..
        } => (TAU * turns * inner_radius_m.max(outer_radius_m))
            .hypot(outer_radius_m - inner_radius_m),
        Shape::Cone {
            inner_radius_m,
            outer_radius_m,
            height_m,
            turns,
            ..
        } => (TAU * turns * inner_radius_m.max(outer_radius_m))
            .hypot(outer_radius_m - inner_radius_m)
            .hypot(height_m),
        Shape::Ring { radius_m, .. } => TAU * radius_m,
        Shape::Polyline { .. } => 0.0,
    }
}

/// Branch and bound along the whole centreline of `w` (a polyline piece by piece).
fn along_wire(w: &Winding, dist: &dyn Fn(&Point3<f64>) -> f64, reach: f64, tol: f64) -> Reach {
    let mut budget = MAX_EVALUATIONS;
    match &w.shape {
        Shape::Polyline { points_m, closed } => {
            let n = points_m.len();
            let n_seg = if *closed { n } else { n.saturating_sub(1) };
            for k in 0..n_seg {
                let (a, b) = (points_m[k], points_m[(k + 1) % n]);
                let point = move |t: f64| a + (b - a) * t;
                let r = first_within(
                    &point,
                    (b - a).norm(),
                    (0.0, 1.0),
                    dist,
                    reach,
                    tol,
                    &mut budget,
                );
                if r != Reach::Clear {
                    return r;
                }
            }
            Reach::Clear
        }
        shape => first_within(
            &|t| shape.point_at(t),
            speed_bound(shape),
            (0.0, 1.0),
            dist,
            reach,
            tol,
            &mut budget,
        ),
    }
}

/// Whether the wire of `w` clears the surface of `e` (see the module docs).
pub fn wire_electrode(w: &Winding, e: &ElectrodeShape) -> Reach {
    let reach = w.wire_radius_m();
    let tol = wire_tolerance_m(reach);
    let dist = |p: &Point3<f64>| e.signed_distance_m(p);
    let Some((o, x_hat)) = coaxial_trace(w, e) else {
        return along_wire(w, &dist, reach, tol);
    };
    // Coaxial: the meridian trace (rho(t), h(t)) is a straight segment; the contact point
    // found there lies at azimuth 0 of the winding's frame.
    let (_, n) = w.shape.origin_axis().expect("axisymmetric");
    let (r0, h0) = w.shape.radius_height_at(0.0).expect("axisymmetric");
    let (r1, h1) = w.shape.radius_height_at(1.0).expect("axisymmetric");
    let point = |t: f64| {
        let (r, h) = (r0 + (r1 - r0) * t, h0 + (h1 - h0) * t);
        o + n.as_ref() * h + x_hat * r
    };
    let speed = (r1 - r0).hypot(h1 - h0);
    let mut budget = MAX_EVALUATIONS;
    first_within(&point, speed, (0.0, 1.0), &dist, reach, tol, &mut budget)
}

/// The lowest point of the wire of `w` if it reaches `z_ground_m` (within the tolerance).
pub fn wire_ground(w: &Winding, z_ground_m: f64) -> Reach {
    let reach = w.wire_radius_m();
    along_wire(
        w,
        &|p: &Point3<f64>| p.z - z_ground_m,
        reach,
        wire_tolerance_m(reach),
    )
}

/// A piece of a meridian profile in (rho, z) (m): a segment, or an arc of centre `c` and
/// radius `r` from angle `t0` to `t1` (t1 > t0, counter-clockwise, at most a full turn).
#[derive(Debug, Clone, Copy, PartialEq)]
enum Piece {
    Seg(Vector2<f64>, Vector2<f64>),
    Arc {
        c: Vector2<f64>,
        r: f64,
        t0: f64,
        t1: f64,
    },
}

/// The profile of `e` in the meridian plane of the axis through `o` along `n` (coaxial).
fn profile(e: &ElectrodeShape, o: &Point3<f64>, n: &Vector3<f64>) -> Vec<Piece> {
    let (c, m) = e.origin_axis();
    let zc = (c - o).dot(n);
    let v = |rho: f64, z: f64| Vector2::new(rho, z);
    match *e {
        ElectrodeShape::Sphere { radius_m, .. } => vec![Piece::Arc {
            c: v(0.0, zc),
            r: radius_m,
            t0: -FRAC_PI_2,
            t1: FRAC_PI_2,
        }],
        ElectrodeShape::Torus {
            major_radius_m,
            minor_radius_m,
            ..
        } => vec![Piece::Arc {
            c: v(major_radius_m, zc),
            r: minor_radius_m,
            t0: 0.0,
            t1: TAU,
        }],
        ElectrodeShape::Disc { radius_m, .. } => vec![Piece::Seg(v(0.0, zc), v(radius_m, zc))],
        ElectrodeShape::Cylinder {
            radius_m, length_m, ..
        } => {
            // The cylinder extends along its own axis, which may point against n.
            let z1 = zc + length_m * m.dot(n).signum();
            vec![
                Piece::Seg(v(0.0, zc), v(radius_m, zc)),
                Piece::Seg(v(radius_m, zc), v(radius_m, z1)),
                Piece::Seg(v(radius_m, z1), v(0.0, z1)),
            ]
        }
    }
}

/// Whether angle `t` lies on the arc [t0, t1].
fn on_arc(t: f64, t0: f64, t1: f64) -> bool {
    t1 - t0 >= TAU || (t - t0).rem_euclid(TAU) <= t1 - t0
}

fn arc_point(c: Vector2<f64>, r: f64, t: f64) -> Vector2<f64> {
    c + Vector2::new(t.cos(), t.sin()) * r
}

/// The point of `piece` closest to `p`.
fn closest(piece: &Piece, p: Vector2<f64>) -> Vector2<f64> {
    match *piece {
        Piece::Seg(a, b) => {
            let d = b - a;
            let u = if d.norm_squared() > 0.0 {
                ((p - a).dot(&d) / d.norm_squared()).clamp(0.0, 1.0)
            } else {
                0.0
            };
            a + d * u
        }
        Piece::Arc { c, r, t0, t1 } => {
            let q = p - c;
            let t = q.y.atan2(q.x);
            if q.norm() > 0.0 && on_arc(t, t0, t1) {
                return arc_point(c, r, t);
            }
            let (a, b) = (arc_point(c, r, t0), arc_point(c, r, t1));
            if (a - p).norm() <= (b - p).norm() {
                a
            } else {
                b
            }
        }
    }
}

/// End points of a piece (for a full circle, one point of it).
fn ends(piece: &Piece) -> [Vector2<f64>; 2] {
    match *piece {
        Piece::Seg(a, b) => [a, b],
        Piece::Arc { c, r, t0, t1 } => [arc_point(c, r, t0), arc_point(c, r, t1)],
    }
}

/// Points where two pieces cross (segment-segment, segment-circle, circle-circle in closed
/// form), kept when they lie on both pieces.
fn crossings(a: &Piece, b: &Piece) -> Vec<Vector2<f64>> {
    match (*a, *b) {
        (Piece::Seg(p, q), Piece::Seg(r, s)) => {
            let (d, e) = (q - p, s - r);
            let den = d.perp(&e);
            if den == 0.0 {
                return Vec::new();
            }
            let u = (r - p).perp(&e) / den;
            let v = (r - p).perp(&d) / den;
            if (0.0..=1.0).contains(&u) && (0.0..=1.0).contains(&v) {
                vec![p + d * u]
            } else {
                Vec::new()
            }
        }
        (Piece::Seg(p, q), Piece::Arc { c, r, t0, t1 })
        | (Piece::Arc { c, r, t0, t1 }, Piece::Seg(p, q)) => {
            // |p + u d - c|^2 = r^2, a quadratic in u.
            let d = q - p;
            let f = p - c;
            let (qa, qb, qc) = (d.norm_squared(), 2.0 * f.dot(&d), f.norm_squared() - r * r);
            let disc = qb * qb - 4.0 * qa * qc;
            if qa == 0.0 || disc < 0.0 {
                return Vec::new();
            }
            let sq = disc.sqrt();
            [(-qb - sq) / (2.0 * qa), (-qb + sq) / (2.0 * qa)]
                .into_iter()
                .filter(|u| (0.0..=1.0).contains(u))
                .map(|u| p + d * u)
                .filter(|x| {
                    let g = x - c;
                    on_arc(g.y.atan2(g.x), t0, t1)
                })
                .collect()
        }
        (
            Piece::Arc {
                c: c1,
                r: r1,
                t0: a0,
                t1: a1,
            },
            Piece::Arc {
                c: c2,
                r: r2,
                t0: b0,
                t1: b1,
            },
        ) => {
            let dv = c2 - c1;
            let dist = dv.norm();
            if dist == 0.0 || dist > r1 + r2 || dist < (r1 - r2).abs() {
                return Vec::new();
            }
            let along = (dist * dist + r1 * r1 - r2 * r2) / (2.0 * dist);
            let h = (r1 * r1 - along * along).max(0.0).sqrt();
            let u = dv / dist;
            let base = c1 + u * along;
            let perp = Vector2::new(-u.y, u.x) * h;
            [base + perp, base - perp]
                .into_iter()
                .filter(|x| {
                    let g1 = x - c1;
                    let g2 = x - c2;
                    on_arc(g1.y.atan2(g1.x), a0, a1) && on_arc(g2.y.atan2(g2.x), b0, b1)
                })
                .collect()
        }
    }
}

/// Points of an arc where the distance to the other piece can have an interior minimum: its
/// tangent parallel to a segment (radial direction along the segment's normal), or on the line
/// of centres of another arc.
fn arc_critical(arc: &Piece, other: &Piece) -> Vec<Vector2<f64>> {
    let Piece::Arc { c, r, t0, t1 } = *arc else {
        return Vec::new();
    };
    let dir = match *other {
        Piece::Seg(a, b) => {
            let d = b - a;
            Vector2::new(-d.y, d.x)
        }
        Piece::Arc { c: c2, .. } => c2 - c,
    };
    if dir.norm() == 0.0 {
        return Vec::new();
    }
    let t = dir.y.atan2(dir.x);
    [t, t + PI]
        .into_iter()
        .filter(|&t| on_arc(t, t0, t1))
        .map(|t| arc_point(c, r, t))
        .collect()
}

/// The closest pair of points of two pieces (exact: the minimum over the candidates of
/// [`crossings`], end points and [`arc_critical`] points).
fn closest_pair(a: &Piece, b: &Piece) -> (Vector2<f64>, Vector2<f64>) {
    if let Some(x) = crossings(a, b).first() {
        return (*x, *x);
    }
    let mut cands: Vec<(Vector2<f64>, Vector2<f64>)> = Vec::new();
    for p in ends(a).into_iter().chain(arc_critical(a, b)) {
        cands.push((p, closest(b, p)));
    }
    for q in ends(b).into_iter().chain(arc_critical(b, a)) {
        cands.push((closest(a, q), q));
    }
    cands
        .into_iter()
        .min_by(|x, y| (x.0 - x.1).norm().total_cmp(&(y.0 - y.1).norm()))
        .expect("candidates")
}

/// Whether two electrodes are coaxial; then a common axis (a point and a direction).
fn common_axis(a: &ElectrodeShape, b: &ElectrodeShape) -> Option<(Point3<f64>, Vector3<f64>)> {
    let is_sphere = |e: &ElectrodeShape| matches!(e, ElectrodeShape::Sphere { .. });
    let (ca, na) = a.origin_axis();
    let (cb, nb) = b.origin_axis();
    let scale = (cb - ca).norm().max(a.size_m()).max(b.size_m());
    let on_axis = |c: &Point3<f64>, o: &Point3<f64>, n: &Vector3<f64>| {
        let r = c - o;
        (r - n * r.dot(n)).norm() <= 1e-12 * scale
    };
    match (is_sphere(a), is_sphere(b)) {
        // Two spheres share the line through their centres (any line when concentric).
        (true, true) => {
            let d = cb - ca;
            let n = if d.norm() > 0.0 {
                d.normalize()
            } else {
                Vector3::z()
            };
            Some((ca, n))
        }
        (true, false) => on_axis(&ca, &cb, &nb).then_some((cb, nb.into_inner())),
        (false, true) => on_axis(&cb, &ca, &na).then_some((ca, na.into_inner())),
        (false, false) => (na.cross(&nb).norm() < 1e-12 && on_axis(&cb, &ca, &na))
            .then_some((ca, na.into_inner())),
    }
}

/// Whether electrodes `a` and `b` are apart (see the module docs); a contact point otherwise.
pub fn electrode_electrode(a: &ElectrodeShape, b: &ElectrodeShape) -> Reach {
    let size = a.size_m().max(b.size_m());
    match common_axis(a, b) {
        Some((o, n)) => coaxial_electrodes(a, b, &o, &n, ELECTRODE_TOLERANCE_REL * size),
        None => {
            let tol = NONCOAXIAL_TOLERANCE_REL * size;
            let r = patches_within(a, b, tol);
            if r == Reach::Clear {
                patches_within(b, a, tol)
            } else {
                r
            }
        }
    }
}

/// Coaxial electrodes: the distance of their meridian profiles, then containment.
fn coaxial_electrodes(
    a: &ElectrodeShape,
    b: &ElectrodeShape,
    o: &Point3<f64>,
    n: &Vector3<f64>,
    tol: f64,
) -> Reach {
    let n_unit = Unit::new_normalize(*n);
    let (x_hat, _) = local_frame(&n_unit);
    let to_3d = |p: Vector2<f64>| o + n * p.y + x_hat * p.x;
    let (pa, pb) = (profile(a, o, n), profile(b, o, n));
    let mut best: Option<(f64, Vector2<f64>, Vector2<f64>)> = None;
    for x in &pa {
        for y in &pb {
            let (p, q) = closest_pair(x, y);
            let d = (p - q).norm();
            if best.is_none_or(|b| d < b.0) {
                best = Some((d, p, q));
            }
        }
    }
    let (gap, p, q) = best.expect("profiles have pieces");
    let mid = to_3d((p + q) * 0.5);
    if gap == 0.0 {
        return Reach::Contact(mid);
    }
    if gap <= tol {
        return Reach::WithinTolerance(mid, tol);
    }
    // Apart surfaces: one solid may still hold the other whole.
    let pa0 = to_3d(ends(&pa[0])[0]);
    let pb0 = to_3d(ends(&pb[0])[0]);
    if b.signed_distance_m(&pa0) < 0.0 {
        return Reach::Contact(pa0);
    }
    if a.signed_distance_m(&pb0) < 0.0 {
        return Reach::Contact(pb0);
    }
    Reach::Clear
}

/// Branch and bound over (s, phi) patches of surface `a` for a point within `tol` of (or
/// inside) `b`. A patch's points lie within L ds / 2 + (rho_c + L ds / 2) dphi / 2 of its
/// centre (L the generatrix length; chord below arc).
fn patches_within(a: &ElectrodeShape, b: &ElectrodeShape, tol: f64) -> Reach {
    let (o, n) = a.origin_axis();
    let (x_hat, y_hat) = local_frame(&n);
    let len = a.generatrix_length_m();
    let point = |s: f64, phi: f64| {
        let (rho, zeta) = a.generatrix_at(s);
        o + n.as_ref() * zeta + (x_hat * phi.cos() + y_hat * phi.sin()) * rho
    };
    let mut budget = MAX_EVALUATIONS;
    let mut stack: Vec<[f64; 4]> = Vec::new();
    for i in 0..8 {
        for j in 0..8 {
            let (s0, p0) = (i as f64 / 8.0, TAU * j as f64 / 8.0);
            stack.push([s0, s0 + 0.125, p0, p0 + TAU / 8.0]);
        }
    }
    while let Some([s0, s1, p0, p1]) = stack.pop() {
        let (sc, pc) = (0.5 * (s0 + s1), 0.5 * (p0 + p1));
        let centre = point(sc, pc);
        let d = b.signed_distance_m(&centre);
        let half_s = 0.5 * len * (s1 - s0);
        let bound = half_s + (a.generatrix_at(sc).0 + half_s) * 0.5 * (p1 - p0);
        if d <= 0.0 {
            return Reach::Contact(centre);
        }
        if d <= tol {
            return Reach::WithinTolerance(centre, tol);
        }
        if d > bound {
            continue;
        }
        if bound <= tol {
            return Reach::WithinTolerance(centre, tol);
        }
        if budget < 4 {
            return Reach::Undecided(centre);
        }
        budget -= 4;
        for (t0, t1) in [(s0, sc), (sc, s1)] {
            for (q0, q1) in [(p0, pc), (pc, p1)] {
                stack.push([t0, t1, q0, q1]);
            }
        }
    }
    Reach::Clear
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::winding::{Model, Role};

    const WIRE_D: f64 = 0.4e-3;
    const R_W: f64 = 0.2e-3;

    fn z_axis() -> Unit<Vector3<f64>> {
        Vector3::z_axis()
    }

    fn winding(shape: Shape) -> Winding {
        Winding {
            name: "w".into(),
            role: Role::Other,
            model: Model::Ring,
            wire_diameter_m: WIRE_D,
            segments_per_turn: None,
            tap: None,
            conductor: Default::default(),
            shape,
        }
    }

    fn ring(centre: [f64; 3], axis: Unit<Vector3<f64>>, radius_m: f64) -> Winding {
        winding(Shape::Ring {
            origin_m: Point3::from(centre),
            axis,
            radius_m,
            count: 1,
        })
    }

    fn line(a: [f64; 3], b: [f64; 3]) -> Winding {
        winding(Shape::Polyline {
            points_m: vec![Point3::from(a), Point3::from(b)],
            closed: false,
        })
    }

    fn sphere(centre: [f64; 3], radius_m: f64) -> ElectrodeShape {
        ElectrodeShape::Sphere {
            centre_m: Point3::from(centre),
            axis: z_axis(),
            radius_m,
        }
    }

    fn torus(centre: [f64; 3], axis: Unit<Vector3<f64>>, big: f64, small: f64) -> ElectrodeShape {
        ElectrodeShape::Torus {
            centre_m: Point3::from(centre),
            axis,
            major_radius_m: big,
            minor_radius_m: small,
        }
    }

    fn disc(centre: [f64; 3], axis: Unit<Vector3<f64>>, radius_m: f64) -> ElectrodeShape {
        ElectrodeShape::Disc {
            centre_m: Point3::from(centre),
            axis,
            radius_m,
        }
    }

    fn refused(r: Reach) -> bool {
        matches!(r, Reach::Contact(_) | Reach::WithinTolerance(..))
    }

    const GAP: f64 = 1e-4;

    #[test]
    fn wire_a_tenth_of_a_millimetre_clear_of_a_sphere() {
        let s = sphere([0.0, 0.0, 0.5], 0.1);
        // Coaxial ring round the equator (the meridian-trace path).
        let at = |r: f64| wire_electrode(&ring([0.0, 0.0, 0.5], z_axis(), r), &s);
        assert_eq!(at(0.1 + R_W + GAP), Reach::Clear);
        assert!(refused(at(0.1 + R_W)), "touching");
        assert!(refused(at(0.1 + R_W - GAP)), "crossing");
        // Half the check's resolution clear: refused, and the message can say why.
        let tol = wire_tolerance_m(R_W);
        assert!(matches!(
            at(0.1 + R_W + 0.5 * tol),
            Reach::WithinTolerance(..)
        ));
        // A straight wire tangent to the sphere off the axis (the 3-D path), and a tilted ring.
        let x = 0.1 + R_W;
        let straight = |dx: f64| wire_electrode(&line([x + dx, -1.0, 0.5], [x + dx, 1.0, 0.5]), &s);
        assert_eq!(straight(GAP), Reach::Clear);
        assert!(refused(straight(0.0)));
        assert!(refused(straight(-GAP)));
        let tilted = Unit::new_normalize(Vector3::new(0.3, 0.0, 1.0));
        let t = |r: f64| wire_electrode(&ring([0.0, 0.0, 0.5], tilted, r), &s);
        assert_eq!(t(0.1 + R_W + GAP), Reach::Clear);
        assert!(refused(t(0.1 + R_W - GAP)));
    }

    #[test]
    fn helix_through_the_hole_of_a_torus_and_a_ring_linking_its_tube() {
        // Torus R = 0.15, r = 0.05: its hole reaches 0.10 m from the axis.
        let tor = torus([0.0, 0.0, 0.6], z_axis(), 0.15, 0.05);
        let helix = |r: f64| {
            winding(Shape::Helix {
                origin_m: Point3::new(0.0, 0.0, 0.1),
                axis: z_axis(),
                radius_m: r,
                length_m: 1.0,
                turns: 1000.0,
            })
        };
        assert_eq!(wire_electrode(&helix(0.1 - R_W - GAP), &tor), Reach::Clear);
        assert!(refused(wire_electrode(&helix(0.1 - R_W), &tor)));
        // The same helix, shifted off the axis so that it grazes the inner equator: 3-D path.
        let shifted = |dx: f64| {
            winding(Shape::Helix {
                origin_m: Point3::new(dx, 0.0, 0.1),
                axis: z_axis(),
                radius_m: 0.05,
                length_m: 1.0,
                turns: 100.0,
            })
        };
        assert_eq!(
            wire_electrode(&shifted(0.05 - R_W - GAP), &tor),
            Reach::Clear
        );
        assert!(refused(wire_electrode(&shifted(0.05 - R_W + GAP), &tor)));
        // A ring around the tube (linking it like a chain): axis y, centred on the tube
        // circle, radius r + wire + gap clears it; a smaller ring cuts into the tube.
        let y = Vector3::y_axis();
        let link = |r: f64| wire_electrode(&ring([0.15, 0.0, 0.6], y, r), &tor);
        assert_eq!(link(0.05 + R_W + GAP), Reach::Clear);
        assert!(refused(link(0.05 + R_W)));
        assert!(refused(link(0.05 - R_W)));
    }

    #[test]
    fn wire_near_a_disc_edge() {
        let d = disc([0.0, 0.0, 0.5], z_axis(), 0.1);
        let at = |r: f64| wire_electrode(&ring([0.0, 0.0, 0.5], z_axis(), r), &d);
        assert_eq!(at(0.1 + R_W + GAP), Reach::Clear);
        assert!(refused(at(0.1 + R_W)));
        // A coaxial ring just above the disc face: clear by the gap, or touching.
        let above = |dz: f64| wire_electrode(&ring([0.0, 0.0, 0.5 + dz], z_axis(), 0.05), &d);
        assert_eq!(above(R_W + GAP), Reach::Clear);
        assert!(refused(above(R_W)));
        // A vertical straight wire past the rim, and one through the disc.
        let x = 0.1 + R_W;
        let vertical = |x: f64| wire_electrode(&line([x, 0.0, 0.0], [x, 0.0, 1.0]), &d);
        assert_eq!(vertical(x + GAP), Reach::Clear);
        assert!(refused(vertical(x - GAP)));
        assert!(refused(vertical(0.05)));
        // A wire skimming the rim at 45 degrees in the plane y = 0: the line through
        // rim + c (1, 0, 1) / sqrt 2 along (1, 0, -1) is nearest the rim point, at distance c.
        let slant = |c: f64| {
            let p = Point3::new(0.1, 0.0, 0.5) + Vector3::new(1.0, 0.0, 1.0) * (c / 2f64.sqrt());
            let a = p + Vector3::new(-0.5, 0.0, 0.5);
            let b = p + Vector3::new(0.5, 0.0, -0.5);
            wire_electrode(&line(a.coords.into(), b.coords.into()), &d)
        };
        assert_eq!(slant(R_W + GAP), Reach::Clear);
        assert!(refused(slant(R_W - GAP)));
    }

    #[test]
    fn polyline_ground_and_lowest_points() {
        let w = line([0.0, 0.0, 0.1], [1.0, 0.0, 0.02]);
        assert_eq!(wire_ground(&w, 0.02 - R_W - GAP), Reach::Clear);
        assert!(refused(wire_ground(&w, 0.02 - R_W)));
        // Closed-form lowest points against a dense sampling of tilted surfaces.
        let n = Unit::new_normalize(Vector3::new(0.4, -0.2, 1.0));
        for e in [
            torus([0.1, 0.2, 1.0], n, 0.3, 0.05),
            disc([0.1, 0.2, 1.0], n, 0.3),
            sphere([0.1, 0.2, 1.0], 0.3),
            ElectrodeShape::Cylinder {
                base_centre_m: Point3::new(0.1, 0.2, 1.0),
                axis: -n,
                radius_m: 0.2,
                length_m: 0.5,
            },
        ] {
            let (o, a) = e.origin_axis();
            let (x, y) = local_frame(&a);
            let mut lowest = f64::INFINITY;
            // 450 steps put samples on the cylinder's corners (at 0.2 and 0.7 of its 0.9 m).
            for i in 0..=450 {
                let (rho, zeta) = e.generatrix_at(i as f64 / 450.0);
                for j in 0..400 {
                    let phi = TAU * j as f64 / 400.0;
                    let p = o + a.as_ref() * zeta + (x * phi.cos() + y * phi.sin()) * rho;
                    lowest = lowest.min(p.z);
                }
            }
            let exact = e.lowest_z_m();
            assert!(
                exact <= lowest + 1e-15 && lowest - exact < 1e-4,
                "{e:?}: {exact} vs {lowest}"
            );
        }
    }

    fn cylinder(base: [f64; 3], axis: Unit<Vector3<f64>>, r: f64, len: f64) -> ElectrodeShape {
        ElectrodeShape::Cylinder {
            base_centre_m: Point3::from(base),
            axis,
            radius_m: r,
            length_m: len,
        }
    }

    #[test]
    fn coaxial_electrodes_by_their_profiles() {
        // A sphere sitting in the hole of a torus (hole radius 0.10 m).
        let tor = torus([0.0, 0.0, 0.0], z_axis(), 0.15, 0.05);
        let ball = |r: f64| electrode_electrode(&sphere([0.0, 0.0, 0.0], r), &tor);
        assert_eq!(ball(0.1 - GAP), Reach::Clear);
        assert!(refused(ball(0.1)), "touching");
        assert!(refused(ball(0.1 + GAP)), "crossing");
        // A disc just above a cylinder's top (the cylinder's axis pointing down from z = 1).
        let down = -z_axis();
        let can = cylinder([0.0, 0.0, 1.0], down, 0.1, 0.5);
        let lid = |z: f64| electrode_electrode(&disc([0.0, 0.0, z], z_axis(), 0.2), &can);
        assert_eq!(lid(1.0 + GAP), Reach::Clear);
        assert!(refused(lid(1.0)));
        assert_eq!(lid(0.5 - GAP), Reach::Clear, "below the bottom");
        assert!(refused(lid(0.7)), "through the side");
        // One inside the other without touching: refused both ways round.
        let inner = sphere([0.0, 0.0, 0.75], 0.05);
        assert!(matches!(
            electrode_electrode(&inner, &can),
            Reach::Contact(_)
        ));
        assert!(matches!(
            electrode_electrode(&can, &inner),
            Reach::Contact(_)
        ));
        // Two spheres are always coaxial: apart by the gap, or touching.
        let pair =
            |d: f64| electrode_electrode(&sphere([0.0, 0.0, 0.0], 0.1), &sphere([d, d, d], 0.1));
        let apart = (0.2 + GAP) / 3f64.sqrt();
        assert_eq!(pair(apart), Reach::Clear);
        assert!(refused(pair(0.2 / 3f64.sqrt())));
        // Two tori on one axis, one nested in the other's hole.
        let small =
            |big: f64| electrode_electrode(&torus([0.0, 0.0, 0.0], z_axis(), big, 0.02), &tor);
        assert_eq!(small(0.08 - GAP), Reach::Clear);
        assert!(refused(small(0.08)));
    }

    #[test]
    fn electrodes_off_each_others_axis_by_patches() {
        let tor = torus([0.0, 0.0, 0.0], z_axis(), 0.15, 0.05);
        // A small sphere resting on top of the tube, off the torus's axis.
        let ball = |gap: f64| electrode_electrode(&sphere([0.15, 0.0, 0.07 + gap], 0.02), &tor);
        assert_eq!(ball(GAP), Reach::Clear);
        assert!(refused(ball(0.0)));
        assert!(refused(ball(-GAP)));
        // Two crossing tilted discs (no inside to either), and the same pair moved apart.
        let a = disc(
            [0.0, 0.0, 0.0],
            Unit::new_normalize(Vector3::new(1.0, 0.0, 1.0)),
            0.1,
        );
        let b = |x: f64| {
            disc(
                [x, 0.0, 0.0],
                Unit::new_normalize(Vector3::new(-1.0, 0.0, 1.0)),
                0.1,
            )
        };
        assert!(refused(electrode_electrode(&a, &b(0.05))));
        assert_eq!(electrode_electrode(&a, &b(0.3)), Reach::Clear);
        // Rims 0.1 mm apart: two discs in the plane z = 0 side by side are coaxial-parallel
        // but not on one axis; their rims are 2 r apart when the centres are.
        let flat = |x: f64| {
            electrode_electrode(
                &disc([0.0, 0.0, 0.0], z_axis(), 0.1),
                &disc([x, 0.0, 0.0], z_axis(), 0.1),
            )
        };
        assert_eq!(flat(0.2 + GAP), Reach::Clear);
        assert!(refused(flat(0.2 - GAP)));
    }

    #[test]
    fn closest_pairs_of_pieces_match_dense_sampling() {
        // Seeded pseudo-random segments and arcs (xorshift), against 2,000 x 2,000 samples.
        let mut state = 0x9e37_79b9_7f4a_7c15_u64;
        let mut next = move || {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            (state >> 11) as f64 / (1u64 << 53) as f64
        };
        let piece = |next: &mut dyn FnMut() -> f64| {
            if next() < 0.5 {
                Piece::Seg(Vector2::new(next(), next()), Vector2::new(next(), next()))
            } else {
                let t0 = TAU * next();
                Piece::Arc {
                    c: Vector2::new(next(), next()),
                    r: 0.05 + 0.4 * next(),
                    t0,
                    t1: t0 + TAU * next(),
                }
            }
        };
        let at = |p: &Piece, u: f64| match *p {
            Piece::Seg(a, b) => a + (b - a) * u,
            Piece::Arc { c, r, t0, t1 } => arc_point(c, r, t0 + (t1 - t0) * u),
        };
        for _ in 0..40 {
            let a = piece(&mut next);
            let b = piece(&mut next);
            let (p, q) = closest_pair(&a, &b);
            let exact = (p - q).norm();
            let n = 2000;
            let pts_b: Vec<Vector2<f64>> = (0..=n).map(|j| at(&b, j as f64 / n as f64)).collect();
            let mut sampled = f64::INFINITY;
            for i in 0..=n {
                let x = at(&a, i as f64 / n as f64);
                for y in &pts_b {
                    sampled = sampled.min((x - y).norm());
                }
            }
            // Sampling can only overestimate, by at most the sample spacing (< 1e-3 here).
            assert!(
                exact <= sampled + 1e-12,
                "{a:?} {b:?}: {exact} vs {sampled}"
            );
            assert!(sampled - exact < 2e-3, "{a:?} {b:?}: {exact} vs {sampled}");
        }
    }
}
