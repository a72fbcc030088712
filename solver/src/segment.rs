//! Straight filaments: Neumann's integral between two straight pieces, the self term of a piece
//! of round wire, and the line integral of a ring's vector potential along a piece.

use crate::constants::MU0_OVER_4PI;
use crate::mutual::{Circle, vector_potential_ring_point};
use crate::quadrature::{integrate_adaptive, integrate_gl};
use coilfield_geometry::query::distance::distance_segment_segment;
use nalgebra::Point3;

/// Integral of 1/|p - r| (1/m * m = dimensionless) over the straight piece from `a` to `b`.
///
/// Closed form ln((R_a + R_b + L)/(R_a + R_b - L)) (e.g. F. W. Grover, *Inductance
/// Calculations*, 1946, ch. on straight filaments), with the denominator rewritten as
/// 2 (R_a R_b + (a - p).(b - p)) / (R_a + R_b + L), which has no cancellation anywhere off the
/// piece itself (on the piece's extension the two products add).
#[inline]
pub fn inverse_distance_integral_segment(p: &Point3<f64>, a: &Point3<f64>, b: &Point3<f64>) -> f64 {
    let ra_v = a - p;
    let rb_v = b - p;
    let ra = ra_v.norm();
    let rb = rb_v.norm();
    let len = (b - a).norm();
    let s = ra + rb + len;
    (s * s / (2.0 * (ra * rb + ra_v.dot(&rb_v)))).ln()
}

/// Self-inductance (H) of a straight piece of round wire, length `length_m`, radius
/// `wire_radius_m`, uniform current: (mu0 l / 2 pi)(ln(2l/r) - 3/4), valid for l >> r
/// (E. B. Rosa, "The self and mutual inductances of linear conductors", Bull. Bureau of Standards
/// 4, 1908). Summed with the Neumann mutual terms of the neighbouring pieces (the partial
/// inductance method: A. E. Ruehli, IBM J. Res. Dev. 16(5), 1972), a polygon converges to the
/// ring of round wire as it is refined.
#[inline]
pub fn self_segment_round_wire(length_m: f64, wire_radius_m: f64) -> f64 {
    2.0 * MU0_OVER_4PI * length_m * ((2.0 * length_m / wire_radius_m).ln() - 0.75)
}

/// Mutual inductance (H) of two straight filaments that meet end to start (`a1 == b0`): Grover's
/// closed form for filaments meeting at a point,
/// M = (mu0/4pi) 2 (u_a . u_b) [l_a atanh(l_b/(l_a + n)) + l_b atanh(l_a/(l_b + n))],
/// n = |b1 - a0| (F. W. Grover, *Inductance Calculations*, 1946, ch. on filaments meeting at a
/// point; collinear limit (mu0/4pi)[(l_a+l_b) ln(l_a+l_b) - l_a ln l_a - l_b ln l_b]).
pub fn mutual_segment_segment_adjacent(
    a0: &Point3<f64>,
    a1: &Point3<f64>,
    b1: &Point3<f64>,
) -> f64 {
    let ua = a1 - a0;
    let ub = b1 - a1;
    let la = ua.norm();
    let lb = ub.norm();
    let n = (b1 - a0).norm();
    let cos = ua.dot(&ub) / (la * lb);
    2.0 * MU0_OVER_4PI * cos * (la * (lb / (la + n)).atanh() + lb * (la / (lb + n)).atanh())
}

/// Gauss-Legendre order for a smooth integrand along a piece of length `len` whose nearest
/// singularity lies `dist` away: the error falls like rho^(-2n) with rho the Bernstein-ellipse
/// parameter 2d/l + sqrt((2d/l)^2 + 1); the orders below keep it under ~1e-13 of the piece's
/// contribution. `None`: too close, use the adaptive rule.
fn gl_order(dist: f64, len: f64) -> Option<usize> {
    let ratio = dist / len;
    if ratio >= 8.0 {
        Some(5)
    } else if ratio >= 3.0 {
        Some(8)
    } else if ratio >= 1.0 {
        Some(14)
    } else if ratio >= 0.4 {
        Some(24)
    } else {
        None
    }
}

/// Relative tolerance of the adaptive rule for close pieces.
const CLOSE_REL_TOL: f64 = 1e-12;

/// Mutual inductance (H) of two straight filaments in general position (unit currents, current
/// from start to end): Neumann's integral M = (mu0/4pi) (u_a . u_b) int_a int_b dl dl' / R with
/// the inner integral in closed form ([`inverse_distance_integral_segment`]) and Gauss-Legendre
/// along the shorter piece, its order set by distance/length (adaptive Gauss-Kronrod when the
/// pieces are closer than 0.4 of that length). Pieces must not touch; for pieces sharing an
/// end use [`mutual_segment_segment_adjacent`].
pub fn mutual_segment_segment(
    a0: &Point3<f64>,
    a1: &Point3<f64>,
    b0: &Point3<f64>,
    b1: &Point3<f64>,
) -> f64 {
    let da = a1 - a0;
    let db = b1 - b0;
    let la = da.norm();
    let lb = db.norm();
    let cos = da.dot(&db) / (la * lb);
    if cos.abs() < 1e-15 {
        return 0.0;
    }
    // Integrate along the shorter piece; the longer one is done in closed form.
    let (outer0, outer_d, inner0, inner1, l_outer) = if la <= lb {
        (a0, da, b0, b1, la)
    } else {
        (b0, db, a0, a1, lb)
    };
    let f = |s: f64| inverse_distance_integral_segment(&(outer0 + outer_d * s), inner0, inner1);
    let dist = distance_segment_segment(a0, a1, b0, b1);
    let integral = match gl_order(dist, l_outer) {
        Some(n) => integrate_gl(f, 0.0, 1.0, n),
        None => integrate_adaptive(f, 0.0, 1.0, 0.0, CLOSE_REL_TOL).value,
    };
    MU0_OVER_4PI * cos * l_outer * integral
}

/// Distance (m) from a point to a circle's wire (its centreline).
fn distance_point_circle(ring: &Circle, p: &Point3<f64>) -> f64 {
    let r = p - ring.centre_m;
    let z = r.dot(ring.axis.as_ref());
    let rho = (r - ring.axis.as_ref() * z).norm();
    ((rho - ring.radius_m).powi(2) + z * z).sqrt()
}

/// Mutual inductance (H, unit currents) of weighted source rings with a straight filament:
/// sum_i w_i int_piece A_i . dl, the ring's vector potential in closed form
/// ([`vector_potential_ring_point`]), Gauss-Legendre along the piece with the order set by the
/// piece's distance to the nearest source wire (adaptive Gauss-Kronrod when close).
pub fn mutual_rings_segment(sources: &[(Circle, f64)], p0: &Point3<f64>, p1: &Point3<f64>) -> f64 {
    let d = p1 - p0;
    let len = d.norm();
    let mid = p0 + d * 0.5;
    let dist = sources
        .iter()
        .map(|(ring, _)| {
            distance_point_circle(ring, p0)
                .min(distance_point_circle(ring, p1))
                .min(distance_point_circle(ring, &mid))
        })
        .fold(f64::INFINITY, f64::min);
    let f = |s: f64| {
        let p = p0 + d * s;
        sources
            .iter()
            .map(|(ring, w)| w * vector_potential_ring_point(ring, &p).dot(&d))
            .sum::<f64>()
    };
    match gl_order(dist, len) {
        Some(n) => integrate_gl(f, 0.0, 1.0, n),
        None => integrate_adaptive(f, 0.0, 1.0, 0.0, CLOSE_REL_TOL).value,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(x: f64, y: f64, z: f64) -> Point3<f64> {
        Point3::new(x, y, z)
    }

    #[test]
    fn adjacent_closed_form_matches_adaptive_quadrature_of_the_singular_integrand() {
        let (a0, a1, b1) = (p(0.0, 0.0, 0.0), p(1.0, 0.0, 0.0), p(1.5, 0.8, 0.1));
        let closed = mutual_segment_segment_adjacent(&a0, &a1, &b1);
        let db = b1 - a1;
        let da = a1 - a0;
        let cos = da.dot(&db) / (da.norm() * db.norm());
        let r = integrate_adaptive(
            |s| inverse_distance_integral_segment(&(a1 + db * s), &a0, &a1),
            0.0,
            1.0,
            0.0,
            1e-13,
        );
        let numeric = MU0_OVER_4PI * cos * db.norm() * r.value;
        assert!(
            ((closed - numeric) / closed).abs() < 1e-11,
            "{closed} vs {numeric}"
        );
    }

    #[test]
    fn collinear_adjacent_pieces_match_the_log_formula() {
        let (la, lb) = (0.3_f64, 0.7_f64);
        let closed = mutual_segment_segment_adjacent(
            &p(0.0, 0.0, 0.0),
            &p(la, 0.0, 0.0),
            &p(la + lb, 0.0, 0.0),
        );
        let exact = MU0_OVER_4PI * ((la + lb) * (la + lb).ln() - la * la.ln() - lb * lb.ln());
        assert!(((closed - exact) / exact).abs() < 1e-13);
    }

    #[test]
    fn parallel_pieces_match_grovers_parallel_filament_formula() {
        // Equal parallel filaments of length l at distance d, side by side:
        // M = (mu0/2pi) l [asinh(l/d) - sqrt(1 + d^2/l^2) + d/l] (Grover 1946, ch. on parallel
        // filaments).
        for &(l, d) in &[(1.0_f64, 0.1_f64), (1.0, 1.0), (0.2, 3.0), (1.0, 0.01)] {
            let m = mutual_segment_segment(
                &p(0.0, 0.0, 0.0),
                &p(l, 0.0, 0.0),
                &p(0.0, d, 0.0),
                &p(l, d, 0.0),
            );
            let exact =
                2.0 * MU0_OVER_4PI * l * ((l / d).asinh() - (1.0 + d * d / (l * l)).sqrt() + d / l);
            assert!(
                ((m - exact) / exact).abs() < 1e-11,
                "l={l} d={d}: {m} vs {exact}"
            );
        }
    }

    #[test]
    fn segment_distance_cases() {
        let d = distance_segment_segment(
            &p(0.0, 0.0, 0.0),
            &p(1.0, 0.0, 0.0),
            &p(0.5, 1.0, -1.0),
            &p(0.5, 1.0, 1.0),
        );
        assert!((d - 1.0).abs() < 1e-15);
        let d = distance_segment_segment(
            &p(0.0, 0.0, 0.0),
            &p(1.0, 0.0, 0.0),
            &p(2.0, 0.0, 0.0),
            &p(3.0, 0.0, 0.0),
        );
        assert!((d - 1.0).abs() < 1e-15);
    }
}
