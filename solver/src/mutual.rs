//! Mutual inductance of circular filaments: coaxial (Maxwell) and in general position (line
//! integral of one ring's vector potential along the other).
//!
//! All functions are per unit current in each filament; currents circulate right-handed about
//! each ring's axis.

use crate::constants::MU0;
use crate::elliptic::{maxwell_cel, maxwell_g};
use crate::quadrature::integrate_adaptive;
use coilfield_geometry::{Ring, local_frame};
use nalgebra::{Point3, Unit, Vector3};
use std::f64::consts::{PI, TAU};

/// Mutual inductance (H) of two coaxial circular filaments of radii `a_m`, `b_m` at axial
/// distance `d_m`, currents in the same sense.
///
/// Maxwell's formula M = mu0 sqrt(ab) [(2/k - k) K - (2/k) E] (J. C. Maxwell, *A Treatise on
/// Electricity and Magnetism*, 1873, art. 701), written as M = mu0 sqrt(ab) m^{3/2} g(m) with
/// g = ((2 - m)K - 2E)/m^2 ([`maxwell_g`]) and m = 4ab/((a+b)^2 + d^2). The complementary
/// modulus comes from the geometry, kc^2 = ((a-b)^2 + d^2)/((a+b)^2 + d^2), so rings that
/// nearly touch keep full precision; the series branch of g keeps it for rings far apart, where
/// M tends to mu0 pi a^2 b^2 / (2 d^3).
///
/// Coincident filaments (a = b, d = 0) give +inf: a filament has no finite self-inductance.
#[inline]
pub fn mutual_ring_ring_coaxial(a_m: f64, b_m: f64, d_m: f64) -> f64 {
    let d2 = d_m * d_m;
    let sum2 = (a_m + b_m) * (a_m + b_m) + d2;
    let diff2 = (a_m - b_m) * (a_m - b_m) + d2;
    let inv_sum = 1.0 / sum2.sqrt();
    let m = 4.0 * a_m * b_m * inv_sum * inv_sum;
    let kc = diff2.sqrt() * inv_sum;
    if kc == 0.0 {
        return f64::INFINITY;
    }
    // sqrt(ab) m^{3/2} g = sqrt(ab m) cel = 2ab / sqrt(sum2) * cel.
    2.0 * MU0 * a_m * b_m * inv_sum * maxwell_cel(m, kc)
}

/// Mutual inductance (H, unit current in `ring`) of one ring with a set of weighted rings on the
/// same axis: sum_o w_o M(a, a_o, d_o) by Maxwell's formula ([`mutual_ring_ring_coaxial`]),
/// d_o the axial distance along `axis`. The weight of `ring` itself is not applied.
pub fn mutual_ring_rings_coaxial(ring: &Ring, others: &[Ring], axis: &Vector3<f64>) -> f64 {
    others
        .iter()
        .map(|o| {
            o.weight
                * mutual_ring_ring_coaxial(
                    ring.radius_m,
                    o.radius_m,
                    (o.centre_m - ring.centre_m).dot(axis),
                )
        })
        .sum()
}

/// A circular filament placed anywhere: centre (m), axis (current right-handed about it),
/// radius (m).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Circle {
    /// Centre (m).
    pub centre_m: Point3<f64>,
    /// Axis; positive current circulates right-handed about it.
    pub axis: Unit<Vector3<f64>>,
    /// Radius (m).
    pub radius_m: f64,
}

/// Vector potential (T m) at `point_m` of a circular filament carrying 1 A.
///
/// A_phi = (mu0 a / pi) cel(kc, 1, -1, 1) / sqrt((a + rho)^2 + z^2) (the closed form in K and E
/// of J. D. Jackson, *Classical Electrodynamics*, 3rd ed. 1999, eq. 5.37, rewritten with
/// Bulirsch's cel). Returned as (A_phi / rho) (n x r), with A_phi / rho = 4 mu0 a^2 g(m) /
/// (pi D^{3/2}), D = (a + rho)^2 + z^2: finite and exact on the axis, no division by rho.
/// On the wire itself (rho = a, z = 0) the potential is infinite.
#[inline]
pub fn vector_potential_ring_point(ring: &Circle, point_m: &Point3<f64>) -> Vector3<f64> {
    let a = ring.radius_m;
    let r = point_m - ring.centre_m;
    let n = ring.axis.as_ref();
    let z = r.dot(n);
    let perp = r - n * z;
    let rho = perp.norm();
    let big_d = (a + rho) * (a + rho) + z * z;
    let small_d = (a - rho) * (a - rho) + z * z;
    let m = 4.0 * a * rho / big_d;
    let kc = (small_d / big_d).sqrt();
    let scale = 4.0 * MU0 * a * a * maxwell_g(m, kc) / (PI * big_d * big_d.sqrt());
    n.cross(&perp) * scale
}

/// Tolerance of the general-position ring kernel: the trapezoidal estimates with n and 2n nodes
/// must agree to this fraction of the result (their error is then far smaller still, since the
/// rule converges exponentially).
pub const RING_LINE_INTEGRAL_REL_TOL: f64 = 1e-11;

/// Report of a line integral: value and how it was reached.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LineIntegral {
    /// The integral (H for a mutual inductance).
    pub value: f64,
    /// Integrand evaluations.
    pub evaluations: usize,
    /// Whether the stated tolerance was met.
    pub converged: bool,
}

/// Mutual inductance (H, unit currents) of a set of weighted source rings with a path ring:
/// M = sum_i w_i * oint_path A_i . dl.
///
/// The integrand is smooth and 2 pi-periodic, so the trapezoidal rule converges exponentially
/// (L. N. Trefethen, J. A. C. Weideman, "The exponentially convergent trapezoidal rule", SIAM
/// Review 56(3), 2014): nodes are doubled from 16 until two estimates agree to
/// [`RING_LINE_INTEGRAL_REL_TOL`] (or an absolute floor of 1e-13 mu0 radius, for the zero of two
/// perpendicular concentric rings). Where the path passes close to a source wire the integrand
/// peaks sharply; after 2^15 nodes the adaptive Gauss-Kronrod rule takes over.
pub fn mutual_rings_ring(sources: &[(Circle, f64)], path: &Circle) -> LineIntegral {
    let potential = |p: &Point3<f64>| -> Vector3<f64> {
        sources
            .iter()
            .map(|(ring, w)| vector_potential_ring_point(ring, p) * *w)
            .sum()
    };
    let scale: f64 = sources
        .iter()
        .map(|(ring, w)| w.abs() * (ring.radius_m * path.radius_m).sqrt())
        .sum();
    line_integral_ring(path, potential, scale)
}

/// oint A . dl along the circle `path` of a vector potential `potential` (T m at a point, for
/// unit source current), by the periodic trapezoidal rule with doubling and the adaptive
/// fallback of [`mutual_rings_ring`]; `scale` (m) sets the absolute floor 1e-13 mu0 scale of
/// the tolerance (a typical sqrt(a b) of the sources and the path).
pub fn line_integral_ring<F>(path: &Circle, potential: F, scale: f64) -> LineIntegral
where
    F: Fn(&Point3<f64>) -> Vector3<f64>,
{
    let (x_hat, y_hat) = local_frame(&path.axis);
    let b = path.radius_m;
    let integrand = |theta: f64| -> f64 {
        let (s, c) = theta.sin_cos();
        let p = path.centre_m + (x_hat * c + y_hat * s) * b;
        let tangent = (y_hat * c - x_hat * s) * b;
        potential(&p).dot(&tangent)
    };
    let abs_floor = 1e-13 * MU0 * scale;

    let mut n = 16usize;
    let mut sum: f64 = (0..n).map(|k| integrand(TAU * k as f64 / n as f64)).sum();
    let mut estimate = sum * TAU / n as f64;
    let mut evaluations = n;
    while n < (1 << 15) {
        // The new nodes sit halfway between the old ones.
        let added: f64 = (0..n)
            .map(|k| integrand(TAU * (k as f64 + 0.5) / n as f64))
            .sum();
        evaluations += n;
        sum += added;
        n *= 2;
        let refined = sum * TAU / n as f64;
        let change = (refined - estimate).abs();
        estimate = refined;
        if change <= RING_LINE_INTEGRAL_REL_TOL * refined.abs() + abs_floor {
            return LineIntegral {
                value: estimate,
                evaluations,
                converged: true,
            };
        }
    }
    // A path hugging a source wire: split the circle and let the adaptive rule find the peak.
    let mut value = 0.0;
    let mut converged = true;
    for piece in 0..8 {
        let lo = TAU * piece as f64 / 8.0;
        let r = integrate_adaptive(
            integrand,
            lo,
            lo + TAU / 8.0,
            abs_floor / 8.0,
            RING_LINE_INTEGRAL_REL_TOL,
        );
        value += r.value;
        evaluations += r.evaluations;
        converged &= r.converged;
    }
    LineIntegral {
        value,
        evaluations,
        converged,
    }
}

/// Mutual inductance (H) of two circular filaments in any relative position (unit currents).
///
/// The line integral of the first ring's vector potential along the second
/// ([`mutual_rings_ring`]); agrees with Neumann's double integral and with Grover's single
/// integral (F. W. Grover, "The calculation of the mutual inductance of circular filaments in
/// any desired positions", Proc. IRE 32, 1944) to 1e-9 or better on `validation/rings_general.csv`,
/// including the 0/0 point of Grover's integrand (a ring crossing the other's axis) and
/// perpendicular axes.
pub fn mutual_ring_ring(first: &Circle, second: &Circle) -> f64 {
    mutual_rings_ring(&[(*first, 1.0)], second).value
}

#[cfg(test)]
mod tests {
    use super::*;

    fn circle(c: [f64; 3], n: [f64; 3], r: f64) -> Circle {
        Circle {
            centre_m: Point3::from(c),
            axis: Unit::new_normalize(Vector3::from(n)),
            radius_m: r,
        }
    }

    #[test]
    fn general_kernel_reproduces_maxwell_when_coaxial() {
        for &(a, b, d) in &[
            (1.0, 1.0, 1.0),
            (0.2, 0.1, 0.1),
            (1.0, 0.5, 0.0),
            (0.05, 0.05, 0.002),
        ] {
            let exact = mutual_ring_ring_coaxial(a, b, d);
            let got = mutual_ring_ring(
                &circle([0.0; 3], [0.0, 0.0, 1.0], a),
                &circle([0.0, 0.0, d], [0.0, 0.0, 1.0], b),
            );
            assert!(
                ((got - exact) / exact).abs() < 1e-12,
                "{a} {b} {d}: {got} vs {exact}"
            );
        }
    }

    #[test]
    fn maxwell_tends_to_the_dipole_form_far_apart() {
        let (a, b, d) = (1.0, 0.5, 1.0e3);
        let dipole = MU0 * PI * a * a * b * b / (2.0 * d * d * d);
        let m = mutual_ring_ring_coaxial(a, b, d);
        // Next term is O((a^2 + b^2)/d^2) ~ 1e-6.
        assert!(((m - dipole) / dipole).abs() < 5e-6);
    }

    #[test]
    fn perpendicular_concentric_rings_have_zero_mutual() {
        let m = mutual_ring_ring(
            &circle([0.0; 3], [0.0, 0.0, 1.0], 1.0),
            &circle([0.0; 3], [1.0, 0.0, 0.0], 0.5),
        );
        assert!(m.abs() < 1e-18, "{m}");
    }

    #[test]
    fn reversing_an_axis_flips_the_sign() {
        let p = circle([0.0; 3], [0.0, 0.0, 1.0], 0.2);
        let s = circle([0.1, 0.0, 0.1], [0.5, 0.0, 0.8], 0.1);
        let s_rev = Circle { axis: -s.axis, ..s };
        let m = mutual_ring_ring(&p, &s);
        let m_rev = mutual_ring_ring(&p, &s_rev);
        assert!(((m + m_rev) / m).abs() < 1e-12);
    }
}
