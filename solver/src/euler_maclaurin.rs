//! Sums of Maxwell's coaxial mutual inductance over a uniform stack of rings (a helix's ring
//! model) by the Euler-Maclaurin formula, with the direct sum where that formula is not safe.
//!
//! For a ring of radius b and a stack of n rings of radius a at axial positions
//! z_i = z0 + (i + 1/2) p (i = 0..n-1) relative to that ring,
//!
//! sum_i f(z_i) = (1/p) int_{z0}^{z1} f(z) dz + sum_{k=1}^{K} B_{2k}(1/2)/(2k)! p^{2k-1}
//!                [f^{(2k-1)}(z1) - f^{(2k-1)}(z0)] + R_K,   z1 = z0 + n p,
//!
//! with f(z) = M(a, b, z) and B_{2k}(1/2) = -(1 - 2^{1-2k}) B_{2k} the Bernoulli polynomials at
//! one half (the midpoint form of the Euler-Maclaurin formula: NIST DLMF 2.10.2 and 24.4.27;
//! G. Dahlquist, A. Bjorck, *Numerical Methods in Scientific Computing* I, SIAM 2008, sec. 3.4.5).
//! The odd derivatives at the two ends come exactly (to rounding) from Taylor-mode automatic
//! differentiation of the same cel iteration that gives M (truncated power series through
//! arithmetic and square roots: A. Griewank, A. Walther, *Evaluating Derivatives*, SIAM 2008,
//! ch. 13); the integral in closed form (the flux of a current sheet through the ring, two
//! complete elliptic integrals per end: `integral_closed_form`), or by graded Gauss-Legendre
//! quadrature where rounding would cost the closed form digits (radii far apart, ends whose
//! antiderivatives nearly cancel).
//!
//! # Error control
//! f(z) is analytic except at z = +-i|a - b| (where (a - b)^2 + z^2 = 0). Two errors remain:
//! - the truncated correction series, whose terms fall like (p / (2 pi rho))^{2k}, rho the
//!   distance of an end from the singularities: the last kept term (k = 4) is computed and must
//!   be below [`REL_TOL`] of the sum;
//! - the exponentially small part of the midpoint rule, of order exp(-2 pi delta / p), delta the
//!   distance of the singularities from the interval [z0, z1] (Trefethen & Weideman, "The
//!   exponentially convergent trapezoidal rule", SIAM Review 56(3), 2014, sec. 3): the formula is
//!   used only when delta >= [`MIN_DISTANCE_PITCHES`] p, so that term is below 1e-16.
//!
//! Otherwise (a ring within a few pitches of the stack's wire, or a short stack) the direct sum
//! answers. Both paths are deterministic and sequential: results do not depend on threads.

use crate::constants::MU0;
use crate::elliptic::{cel_positive_p, k_e_from_kc, maxwell_g};
use crate::mutual::mutual_ring_ring_coaxial;
use crate::quadrature::integrate_gl;

/// Stacks with fewer rings are summed directly (the direct sum is then as cheap).
pub const MIN_RINGS: usize = 64;

/// Smallest distance of the singularities of f from the summation interval, in pitches, for
/// which the Euler-Maclaurin formula is used: exp(-2 pi 6) = 4e-17.
pub const MIN_DISTANCE_PITCHES: f64 = 6.0;

/// Relative tolerance of the Euler-Maclaurin path (integral and truncated corrections).
pub const REL_TOL: f64 = 1e-14;

/// B_{2k}(1/2)/(2k)! for k = 1..4: -1/24, 7/5760, -31/967680, 127/154828800.
const EM_COEFFS: [f64; 4] = [
    -1.0 / 24.0,
    7.0 / 5760.0,
    -31.0 / 967_680.0,
    127.0 / 154_828_800.0,
];

/// How a stack sum was obtained.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StackMethod {
    /// Euler-Maclaurin: integral plus end corrections.
    EulerMaclaurin,
    /// Direct sum over the rings.
    Direct,
}

/// Mutual inductance (H) between a ring of radius `b_m` and a stack of `n` coaxial rings of
/// radius `a_m` at axial positions `z0_m + (i + 1/2) pitch_m` (i = 0..n-1) measured from that
/// ring, unit currents in the same sense; and the method used.
///
/// Equal to `sum_i mutual_ring_ring_coaxial(a_m, b_m, z0_m + (i + 0.5) * pitch_m)` to about
/// 1e-13 relative (see the module docs for when the direct sum is used instead).
pub fn mutual_ring_stack_coaxial(
    a_m: f64,
    b_m: f64,
    z0_m: f64,
    pitch_m: f64,
    n: usize,
) -> (f64, StackMethod) {
    let direct = || {
        (0..n)
            .map(|i| mutual_ring_ring_coaxial(a_m, b_m, z0_m + (i as f64 + 0.5) * pitch_m))
            .sum::<f64>()
    };
    if n < MIN_RINGS || pitch_m.is_nan() || pitch_m <= 0.0 {
        return (direct(), StackMethod::Direct);
    }
    let z1_m = z0_m + n as f64 * pitch_m;
    // Distance of z = +-i|a-b| from the real interval [z0, z1].
    let axial_m = if z0_m <= 0.0 && z1_m >= 0.0 {
        0.0
    } else {
        z0_m.abs().min(z1_m.abs())
    };
    let delta_m = (axial_m * axial_m + (a_m - b_m) * (a_m - b_m)).sqrt();
    if delta_m < MIN_DISTANCE_PITCHES * pitch_m {
        return (direct(), StackMethod::Direct);
    }
    let f = |z: f64| mutual_ring_ring_coaxial(a_m, b_m, z);
    let integral = integral_closed_form(a_m, b_m, z0_m, z1_m)
        .unwrap_or_else(|| integral_graded(f, z0_m, z1_m, (a_m - b_m).abs()));
    let sum0 = integral / pitch_m;
    // Corrections through f''' first; more terms only when the first omitted one could
    // matter. The omitted term is estimated as the last kept one times (p / (2 pi rho))^2,
    // rho the distance of the nearer end from the singularities (module docs).
    let near_m = (z0_m.abs().min(z1_m.abs()).powi(2) + (a_m - b_m).powi(2)).sqrt();
    let ratio2 = (pitch_m / (std::f64::consts::TAU * near_m)).powi(2);
    let tol = REL_TOL * sum0.abs();
    let (c4, last4) = corrections::<4>(a_m, b_m, z0_m, z1_m, pitch_m);
    let sum = if (last4 * ratio2).abs() <= tol {
        sum0 + c4
    } else {
        let (c6, last6) = corrections::<6>(a_m, b_m, z0_m, z1_m, pitch_m);
        if (last6 * ratio2).abs() <= tol {
            sum0 + c6
        } else {
            let (c8, last8) = corrections::<8>(a_m, b_m, z0_m, z1_m, pitch_m);
            if (last8 * ratio2).abs() > tol {
                return (direct(), StackMethod::Direct);
            }
            sum0 + c8
        }
    };
    if !sum.is_finite() {
        return (direct(), StackMethod::Direct);
    }
    (sum, StackMethod::EulerMaclaurin)
}

/// Euler-Maclaurin end corrections through f^(N-1) and the last term kept.
fn corrections<const N: usize>(a_m: f64, b_m: f64, z0_m: f64, z1_m: f64, p: f64) -> (f64, f64) {
    let j0 = mutual_jet::<N>(a_m, b_m, z0_m);
    let j1 = mutual_jet::<N>(a_m, b_m, z1_m);
    // f^(j)(z) = j! t_j.
    const FACT: [f64; 8] = [1.0, 1.0, 2.0, 6.0, 24.0, 120.0, 720.0, 5040.0];
    let mut total = 0.0;
    let mut last = 0.0;
    for (k, &c) in EM_COEFFS.iter().enumerate().take(N / 2) {
        let j = 2 * k + 1;
        last = c * p.powi(j as i32) * FACT[j] * (j1.0[j] - j0.0[j]);
        total += last;
    }
    (total, last)
}

/// Largest ratio of the two radii for which [`integral_closed_form`] answers: its bracket
/// loses a factor of about that ratio to cancellation far from the ring (module docs of the
/// function).
const CLOSED_FORM_MAX_RADIUS_RATIO: f64 = 4.0;

/// Largest (|G(z1)| + |G(z0)|) / |G(z1) - G(z0)| for which [`integral_closed_form`] answers:
/// the loss to the difference of the two ends' antiderivatives.
const CLOSED_FORM_MAX_END_CANCELLATION: f64 = 20.0;

/// int_{z0}^{z1} M(a, b, z) dz (H m) in closed form: the flux through a ring of radius b of a
/// coaxial current sheet of radius a from z0 to z1 (unit surface current density), so two
/// complete elliptic integrals per end instead of a quadrature of Maxwell's formula.
///
/// The sheet's vector potential at the ring is the ring potential integrated over z; the
/// z-integral gives asinh(z / R), R the distance between points of the two circles at equal
/// height, and one integration by parts in the azimuth leaves a complete integral of the third
/// kind. With t the half angle (phi = pi - 2t), s = sin^2 t, c = cos^2 t:
///
/// int M dz = (mu0 a b / 2) [I(z1) - I(z0)],
/// I(z) = (4 z / S) [(K - E)/m - p cel(kc, p, 0, 1)],
///
/// S^2 = (a + b)^2 + z^2, m = 4ab / S^2, kc^2 = ((a - b)^2 + z^2) / S^2 (from the geometry, as
/// in Maxwell's formula), p = ((a - b)/(a + b))^2; K, E of parameter m, and
/// cel(kc, p, 0, 1) = int_0^{pi/2} s dt / ((c + p s) sqrt(c + kc^2 s)) (Bulirsch 1969, see
/// [`crate::elliptic`]; (K - E)/m is the same integral with p = 1). The derivation is ours
/// (textbook steps: NIST DLMF 19.2.4-19.2.7 for the reduction to K, E and the third kind); the
/// tests check it against the graded Gauss-Legendre quadrature of Maxwell's formula and, through
/// the stack sum, against the direct sum.
///
/// None where rounding could cost more than ~1e-14 relative: radii in a ratio above
/// [`CLOSED_FORM_MAX_RADIUS_RATIO`] (far from the ring the bracket tends to
/// (pi/4)(1 - sqrt p)/(1 + sqrt p), a difference of terms near pi/4 that loses about
/// max(a, b)/min(a, b)), or ends whose antiderivatives nearly cancel (a ring far from a short
/// sheet; [`CLOSED_FORM_MAX_END_CANCELLATION`]); the caller then integrates numerically.
fn integral_closed_form(a_m: f64, b_m: f64, z0_m: f64, z1_m: f64) -> Option<f64> {
    let (lo, hi) = (a_m.min(b_m), a_m.max(b_m));
    if !(lo > 0.0 && hi <= CLOSED_FORM_MAX_RADIUS_RATIO * lo) {
        return None;
    }
    let p = ((a_m - b_m) / (a_m + b_m)).powi(2);
    let i0 = sheet_antiderivative(a_m, b_m, p, z0_m);
    let i1 = sheet_antiderivative(a_m, b_m, p, z1_m);
    let diff = i1 - i0;
    if !(diff.is_finite() && i1.abs() + i0.abs() <= CLOSED_FORM_MAX_END_CANCELLATION * diff.abs()) {
        return None;
    }
    Some(0.5 * MU0 * a_m * b_m * diff)
}

/// I(z) of [`integral_closed_form`] (dimensionless, odd in z).
fn sheet_antiderivative(a_m: f64, b_m: f64, p: f64, z_m: f64) -> f64 {
    if z_m == 0.0 {
        return 0.0;
    }
    let z2 = z_m * z_m;
    let inv_s = 1.0 / ((a_m + b_m) * (a_m + b_m) + z2).sqrt();
    let kc = ((a_m - b_m) * (a_m - b_m) + z2).sqrt() * inv_s;
    let m = 4.0 * a_m * b_m * inv_s * inv_s;
    let (_, _, k_minus_e) = k_e_from_kc(kc, m);
    // p cel(kc, p, 0, 1) tends to 0 like sqrt(p) as p -> 0 (equal radii), where cel needs p > 0.
    let third = if p > 0.0 {
        p * cel_positive_p(kc, p, 0.0, 1.0)
    } else {
        0.0
    };
    4.0 * z_m * inv_s * (k_minus_e / m - third)
}

/// Integral of f over [z0, z1] (m) whose only singularities lie at z = +-i w (w >= 0):
/// 16-point Gauss-Legendre on intervals that grow by a factor 4 away from the point of the
/// interval nearest z = 0 (split there when inside), the first as long as that point's distance
/// from the singularities. Each interval's Bernstein ellipse of parameter 3 is then free of
/// singularities, so each rule errs by about 3^-32 = 5e-16 relative or less (L. N. Trefethen, *Approximation Theory and Approximation Practice*, SIAM
/// 2013, theorem 19.3).
fn integral_graded<F: Fn(f64) -> f64>(f: F, z0_m: f64, z1_m: f64, w_m: f64) -> f64 {
    // (start nearest the singularities, end).
    let pieces: [(f64, f64); 2] = if z0_m < 0.0 && z1_m > 0.0 {
        [(0.0, z0_m), (0.0, z1_m)]
    } else if z0_m.abs() <= z1_m.abs() {
        [(z0_m, z1_m), (z1_m, z1_m)]
    } else {
        [(z1_m, z0_m), (z0_m, z0_m)]
    };
    let mut total = 0.0;
    for (start, end) in pieces {
        let length = (end - start).abs();
        let dir = if end >= start { 1.0 } else { -1.0 };
        let mut step = (start * start + w_m * w_m).sqrt();
        let mut done = 0.0;
        while done < length && step > 0.0 {
            let next = (done + step).min(length);
            let (lo, hi) = (start + dir * done, start + dir * next);
            // The pieces tile [z0, z1] once, so each interval counts with a positive sign.
            total += integrate_gl(&f, lo.min(hi), lo.max(hi), 16);
            done = next;
            step *= 4.0;
        }
    }
    total
}

/// Truncated Taylor series t_0 + t_1 h + ... + t_{N-1} h^{N-1} of a function at a point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Jet<const N: usize>(pub [f64; N]);

impl<const N: usize> Jet<N> {
    /// A constant.
    pub fn constant(c: f64) -> Jet<N> {
        let mut t = [0.0; N];
        t[0] = c;
        Jet(t)
    }

    /// The independent variable at the point x.
    pub fn variable(x: f64) -> Jet<N> {
        let mut t = [0.0; N];
        t[0] = x;
        t[1] = 1.0;
        Jet(t)
    }

    fn add(self, o: Jet<N>) -> Jet<N> {
        let mut t = self.0;
        for (a, b) in t.iter_mut().zip(o.0) {
            *a += b;
        }
        Jet(t)
    }

    fn scale(self, c: f64) -> Jet<N> {
        let mut t = self.0;
        for a in t.iter_mut() {
            *a *= c;
        }
        Jet(t)
    }

    fn add_const(self, c: f64) -> Jet<N> {
        let mut t = self.0;
        t[0] += c;
        Jet(t)
    }

    fn mul(self, o: Jet<N>) -> Jet<N> {
        let mut t = [0.0; N];
        for (k, tk) in t.iter_mut().enumerate() {
            *tk = (0..=k).map(|j| self.0[j] * o.0[k - j]).sum();
        }
        Jet(t)
    }

    /// Quotient by the recurrence q_k = (u_k - sum_{j<k} q_j v_{k-j}) / v_0 (Griewank &
    /// Walther 2008, table 13.1).
    fn div(self, o: Jet<N>) -> Jet<N> {
        let mut q = [0.0; N];
        for k in 0..N {
            let s: f64 = (0..k).map(|j| q[j] * o.0[k - j]).sum();
            q[k] = (self.0[k] - s) / o.0[0];
        }
        Jet(q)
    }

    /// Square root by s_k = (u_k - sum_{0<j<k} s_j s_{k-j}) / (2 s_0) (same table).
    fn sqrt(self) -> Jet<N> {
        let mut s = [0.0; N];
        s[0] = self.0[0].sqrt();
        for k in 1..N {
            let acc: f64 = (1..k).map(|j| s[j] * s[k - j]).sum();
            s[k] = (self.0[k] - acc) / (2.0 * s[0]);
        }
        Jet(s)
    }
}

/// Taylor jet in z of Maxwell's M(a, b, z) (H): the same formula and branches as
/// [`mutual_ring_ring_coaxial`], run on truncated power series.
pub fn mutual_jet<const N: usize>(a_m: f64, b_m: f64, z_m: f64) -> Jet<N> {
    let z = Jet::<N>::variable(z_m);
    let d2 = z.mul(z);
    let sum2 = d2.add_const((a_m + b_m) * (a_m + b_m));
    let diff2 = d2.add_const((a_m - b_m) * (a_m - b_m));
    let m = Jet::constant(4.0 * a_m * b_m).div(sum2);
    let kc = diff2.div(sum2).sqrt();
    // g(m) as in `maxwell_g`: the series below m = 0.02, the cel2 iteration above.
    let g = if m.0[0] < 0.02 {
        let coeffs = crate::elliptic::G_SERIES;
        let mut acc = Jet::constant(0.0);
        for &c in coeffs.iter().rev() {
            acc = acc.mul(m).add_const(c);
        }
        acc.scale(std::f64::consts::FRAC_PI_2)
    } else {
        cel_maxwell_jet(kc).div(m)
    };
    // Check against the scalar kernel's branch choice (same m, same kc): a cheap invariant.
    debug_assert!(
        (g.0[0] - maxwell_g(m.0[0], kc.0[0])).abs() <= 1e-13 * g.0[0].abs(),
        "jet and scalar kernels disagree"
    );
    m.mul(m.sqrt()).mul(g).scale(MU0 * (a_m * b_m).sqrt())
}

/// Bulirsch's cel2 iteration for cel(kc, 1, -1, 1) on jets (the same steps as the scalar one in
/// `elliptic`); two more steps after the values converge let the higher coefficients settle.
fn cel_maxwell_jet<const N: usize>(kc: Jet<N>) -> Jet<N> {
    const CA: f64 = 1e-8;
    let mut kc = kc;
    let mut m = Jet::constant(1.0);
    let mut c = Jet::constant(-1.0);
    let mut aa = Jet::constant(0.0);
    let mut bb = Jet::constant(1.0);
    let mut extra = 0;
    for _ in 0..16 {
        bb = c.mul(kc).add(bb).scale(2.0);
        c = aa;
        let m0 = m;
        m = m.add(kc);
        aa = aa.add(bb.div(m));
        if (m0.0[0] - kc.0[0]).abs() <= CA * m0.0[0] {
            extra += 1;
            if extra > 2 {
                break;
            }
        }
        kc = kc.mul(m0).sqrt().scale(2.0);
    }
    aa.div(m).scale(std::f64::consts::FRAC_PI_4)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// mpmath 1.3.0 (30 digits): `mp.diff(M, z, k)` for k = 0..7 with M from Maxwell's formula
    /// in K and E, mu0 = 4 pi 1e-7 (validation/inline_refs.py recomputes them; .ci/test runs it
    /// with --check).
    const MPMATH_DERIVATIVES: [((f64, f64, f64), [f64; 8]); 4] = [
        (
            (0.055, 0.1, 0.01),
            [
                6.642_000_616_727_305e-8,
                -3.336_868_015_530_482_8e-7,
                -2.956_278_541_266_719_8e-5,
                1.067_072_248_132_480_4e-3,
                7.149_807_748_756_13e-2,
                -9.146_547_163_771_159,
                -275.681_698_122_216_5,
                147_299.572_150_721_64,
            ],
        ),
        (
            (0.055, 0.1, 0.2),
            [
                4.991_813_335_178_804e-9,
                -5.806_111_680_687_790_6e-8,
                8.476_980_447_976_582e-7,
                -1.449_703_336_389_022_6e-5,
                2.760_938_806_846_678e-4,
                -5.582_105_492_663_209e-3,
                0.112_239_235_629_043_7,
                -1.929_293_680_089_476_5,
            ],
        ),
        (
            (0.055, 0.06, 0.003),
            [
                1.714_390_976_048_265e-7,
                -6.282_713_309_894_291e-6,
                -9.723_878_628_418_56e-4,
                0.725_513_970_467_911_1,
                -208.829_150_081_399_58,
                -109_100.877_179_543_74,
                219_122_449.043_320_54,
                -135_681_958_452.968_56,
            ],
        ),
        (
            // m < 0.02: the series branch.
            (0.055, 0.1, 1.5),
            [
                1.753_985_110_718_898_3e-11,
                -3.487_831_355_817_9e-11,
                9.234_207_725_725_594e-11,
                -3.051_609_014_088_410_3e-10,
                1.208_406_626_612_729e-9,
                -5.574_627_581_289_975e-9,
                2.934_808_551_058_468e-8,
                -1.735_650_402_993_805_6e-7,
            ],
        ),
    ];

    #[test]
    fn jet_derivatives_match_mpmath() {
        const FACT: [f64; 8] = [1.0, 1.0, 2.0, 6.0, 24.0, 120.0, 720.0, 5040.0];
        for ((a, b, z), want) in MPMATH_DERIVATIVES {
            let jet = mutual_jet::<8>(a, b, z);
            for k in 0..8 {
                let got = FACT[k] * jet.0[k];
                let err = ((got - want[k]) / want[k]).abs();
                // Higher coefficients lose a few digits to the recurrences.
                assert!(err < 1e-11, "a={a} b={b} z={z} k={k}: {got} vs {want:?}");
            }
        }
    }

    fn direct(a: f64, b: f64, z0: f64, p: f64, n: usize) -> f64 {
        // Pairwise-free plain sum; reference for the fast path.
        (0..n)
            .map(|i| mutual_ring_ring_coaxial(a, b, z0 + (i as f64 + 0.5) * p))
            .sum()
    }

    #[test]
    fn stack_sum_matches_the_direct_sum() {
        // Secondary of 900 turns at 0.5 mm pitch against rings below, beside and around it
        // (invented geometries of the demo's kind), and long stacks 100 000 turns deep.
        let cases: &[(f64, f64, f64, f64, usize)] = &[
            (0.055, 0.08, 0.01, 0.0005, 900),
            (0.055, 0.14, 0.01, 0.0005, 900),
            (0.055, 0.08, -0.2, 0.0005, 900),
            (0.055, 0.12, -0.45, 0.0005, 900),
            (0.055, 0.055, 0.004, 0.0005, 900),
            (0.055, 0.2, 0.5, 0.0005, 900),
            (0.1, 0.3, -1.0, 0.0002, 10_000),
            (0.05, 0.09, 0.003, 0.0001, 100_000),
        ];
        let mut em_used = 0;
        for &(a, b, z0, p, n) in cases {
            let (fast, method) = mutual_ring_stack_coaxial(a, b, z0, p, n);
            let slow = direct(a, b, z0, p, n);
            let err = ((fast - slow) / slow).abs();
            assert!(
                err < 1e-12,
                "{:?}: {fast} vs {slow} ({err:e}, {method:?})",
                (a, b, z0, p, n)
            );
            if method == StackMethod::EulerMaclaurin {
                em_used += 1;
            }
        }
        assert!(em_used >= 6, "the fast path answered only {em_used} cases");
    }

    #[test]
    fn the_sheet_integral_in_closed_form_matches_the_quadrature_of_maxwell() {
        // Radii equal, nearly equal, in ratios up to the limit; ends on both sides, near the
        // ring and far; adaptive Gauss-Kronrod quadrature of Maxwell's formula to 1e-15 is the
        // reference.
        let radii: &[(f64, f64)] = &[
            (0.055, 0.055),
            (0.055, 0.055 * (1.0 + 1e-9)),
            (0.055, 0.0604),
            (0.055, 0.08),
            (0.055, 0.14),
            (0.1, 0.0255),
            (0.05, 0.199),
        ];
        let ends: &[(f64, f64)] = &[
            (-0.02, 0.43),
            (0.003, 0.45),
            (-0.45, -0.004),
            (0.02, 0.47),
            (0.1, 0.55),
            (-3.0, 2.0),
            (1e-5, 0.01),
        ];
        let mut answered = 0;
        for &(a, b) in radii {
            for &(z0, z1) in ends {
                let f = |z: f64| mutual_ring_ring_coaxial(a, b, z);
                let gk = |lo: f64, hi: f64| {
                    let r = crate::quadrature::integrate_adaptive(f, lo, hi, 0.0, 1e-15);
                    assert!(r.converged, "reference quadrature on [{lo}, {hi}]");
                    r.value
                };
                // Split where the integrand peaks (a log singularity when a = b).
                let quad = if z0 < 0.0 && z1 > 0.0 {
                    gk(z0, 0.0) + gk(0.0, z1)
                } else {
                    gk(z0, z1)
                };
                let Some(closed) = integral_closed_form(a, b, z0, z1) else {
                    continue;
                };
                answered += 1;
                let err = ((closed - quad) / quad).abs();
                assert!(
                    err < 2e-14,
                    "a={a} b={b} [{z0}, {z1}]: {closed} vs {quad} ({err:e})"
                );
            }
        }
        assert!(
            answered >= 40,
            "the closed form answered only {answered} cases"
        );
        // Outside its limits it declines: radii 5:1, and a ring far below a short sheet.
        assert!(integral_closed_form(0.02, 0.1, 0.0, 0.5).is_none());
        assert!(integral_closed_form(0.05, 0.06, 2.0, 2.01).is_none());
    }

    #[test]
    fn a_ring_close_to_the_wire_falls_back_to_the_direct_sum() {
        // Ring 1 mm outside a 0.5 mm-pitch stack, level with it: two pitches from the wire.
        let (v, method) = mutual_ring_stack_coaxial(0.055, 0.056, -0.01, 0.0005, 900);
        assert_eq!(method, StackMethod::Direct);
        assert_eq!(v, direct(0.055, 0.056, -0.01, 0.0005, 900));
    }
}
