//! Complete elliptic integrals.
//!
//! # Convention
//! Legendre's integrals take the **parameter** m = k^2 (as `mpmath.ellipk`, `scipy.special.ellipk`):
//! K(m) = int_0^{pi/2} dt / sqrt(1 - m sin^2 t), E(m) = int_0^{pi/2} sqrt(1 - m sin^2 t) dt.
//! Bulirsch's generalised integral takes the **complementary modulus** kc = sqrt(1 - m):
//! cel(kc, p, a, b) = int_0^{pi/2} (a cos^2 t + b sin^2 t) / ((cos^2 t + p sin^2 t)
//! sqrt(cos^2 t + kc^2 sin^2 t)) dt
//! (R. Bulirsch, "Numerical calculation of elliptic integrals and elliptic functions III",
//! Numer. Math. 13, 305-315, 1969). Callers that know the geometry pass kc computed from it,
//! never `sqrt(1 - m)`, which loses all digits as m -> 1.
//!
//! This is the workspace's one elliptic module:
//! - plain K(m) and E(m) ([`ellip_k`], [`ellip_e`]) come from `special`'s `Elliptic` trait, on
//!   validated arguments only (it panics outside 0 <= m <= 1; these functions return NaN
//!   there instead);
//! - the general cel ([`cel`]) comes from `ellip`, the backend of `special`, called with kc
//!   directly: `special`'s cel methods take m and form kc = sqrt(1 - m), which loses every digit
//!   as m -> 1 (rings nearly touching), so callers that know the geometry pass kc themselves;
//! - the hot kernels have fused iterations here: [`maxwell_g`] / [`maxwell_cel`] for every ring
//!   kernel, [`cel_positive_p`] for the field kernels, and [`k_e_from_kc`] / [`k_from_kc`]
//!   (K, E and K - E by the arithmetic-geometric mean from kc) for the ring charges of the
//!   electrostatic solver.

/// Complete elliptic integral of the first kind K(m), 0 <= m < 1 (NaN outside).
///
/// Accuracy: within 1e-13 relative of mpmath on `validation/elliptic.csv` (ellip's K was seen
/// up to ~23 ulp off near m = 0.85-0.90).
pub fn ellip_k(m: f64) -> f64 {
    use special::Elliptic;
    // special unwraps (panics) outside its domain; m = 1 is infinite.
    if (0.0..1.0).contains(&m) {
        m.elliptic_k()
    } else {
        f64::NAN
    }
}

/// Complete elliptic integral of the second kind E(m), 0 <= m <= 1 (NaN outside).
pub fn ellip_e(m: f64) -> f64 {
    use special::Elliptic;
    // special unwraps (panics) outside its domain.
    if (0.0..=1.0).contains(&m) {
        m.elliptic_e()
    } else {
        f64::NAN
    }
}

/// Bulirsch's cel(kc, p, a, b) (NaN where it is undefined, e.g. kc = 0 or p = 0).
pub fn cel(kc: f64, p: f64, a: f64, b: f64) -> f64 {
    ellip::cel(kc, p, a, b).unwrap_or(f64::NAN)
}

/// Below this parameter m, [`maxwell_g`] sums its power series.
const SERIES_BELOW_M: f64 = 0.02;

/// Power-series coefficients of g(m) / (pi/2): c_n = 4n a_n/(2n-1) - a_{n-1}, n = 2, 3, ...,
/// a_n = (binomial(2n, n)/4^n)^2, from the series of K and E in m (NIST DLMF 19.5.1, 19.5.2).
pub(crate) const G_SERIES: [f64; 12] = [
    0.125,
    0.09375,
    0.073_242_187_5,
    0.059_814_453_125,
    0.050_468_444_824_218_75,
    0.043_619_155_883_789_06,
    0.038_393_944_501_876_83,
    0.034_280_307_590_961_456,
    0.030_959_402_793_087_065,
    0.028_223_091_940_162_703,
    0.025_929_965_720_024_484,
    0.023_980_685_080_232_433,
];

/// g(m) = ((2 - m) K(m) - 2 E(m)) / m^2 = cel(kc, 1, -1, 1) / m, the combination in Maxwell's
/// formula and in the vector potential of a ring.
///
/// Both m and kc (= sqrt(1 - m)) must be given, each computed from the geometry: for m < 0.02
/// the power series in m is summed (the difference (2 - m)K - 2E would lose up to all digits
/// there, and kc near 1 no longer carries m); otherwise the arithmetic-geometric mean runs on
/// kc and m (Gauss-Legendre arithmetic-geometric mean, see the private `cel_maxwell_agm`), which keeps full precision as kc -> 0 (rings nearly
/// touching), where g ~ ln(4/kc) - 2.
///
/// g(0) = pi/16. Relative accuracy: a few 1e-16 for m < 0.02, ~1e-14 elsewhere (tested against
/// mpmath in `validation/cel.csv` and `validation/maxwell_coaxial.csv`).
#[inline]
pub fn maxwell_g(m: f64, kc: f64) -> f64 {
    if m < SERIES_BELOW_M {
        g_series(m)
    } else {
        cel_maxwell_agm(m, kc) / (m * m)
    }
}

/// cel(kc, 1, -1, 1) = (2 - m)K(m) - 2E(m) over m = m g(m), from m and kc both taken from the
/// geometry (see [`maxwell_g`]); the form Maxwell's formula uses, without a division by m.
#[inline]
pub fn maxwell_cel(m: f64, kc: f64) -> f64 {
    if m < SERIES_BELOW_M {
        m * g_series(m)
    } else {
        cel_maxwell_agm(m, kc) / m
    }
}

/// Power series of g(m) for small m (Horner from the highest term; terms fall by ~m each).
#[inline]
fn g_series(m: f64) -> f64 {
    let mut acc = 0.0;
    for &c in G_SERIES.iter().rev() {
        acc = acc * m + c;
    }
    std::f64::consts::FRAC_PI_2 * acc
}

/// (2 - m)K(m) - 2E(m) by the arithmetic-geometric mean, without cancellation.
///
/// With a_0 = 1, b_0 = kc, a_{n+1} = (a_n + b_n)/2, b_{n+1} = sqrt(a_n b_n), c_{n+1} =
/// (a_n - b_n)/2: K = pi/(2 a_inf) and E = K (1 - sum_{n>=0} 2^{n-1} c_n^2) with c_0^2 = m
/// (Gauss-Legendre method; NIST DLMF 19.8.1 and 19.8.6), hence
/// (2 - m)K - 2E = K sum_{n>=1} 2^n c_n^2: a sum of positive terms. c_1 = m/(2(1 + kc)) comes
/// from m, and c_{n+1} = c_n^2/(4 a_{n+1}) (DLMF 19.8.2) avoids the difference of the converging
/// means. Only a square root sits on the critical path of each step, no division: this is the
/// fast path of every ring kernel.
#[inline]
fn cel_maxwell_agm(m: f64, kc: f64) -> f64 {
    // State (a_n, b_n, c_n) from n = 1.
    let mut a = 0.5 * (1.0 + kc);
    let mut b = kc.sqrt();
    let mut c = m / (2.0 * (1.0 + kc));
    let mut weight = 2.0;
    let mut sum = 0.0;
    for _ in 0..10 {
        let term = weight * c * c;
        sum += term;
        if term <= 1e-17 * sum {
            break;
        }
        let a_next = 0.5 * (a + b);
        b = (a * b).sqrt();
        a = a_next;
        c = c * c / (4.0 * a);
        weight *= 2.0;
    }
    // a has converged to within rounding of the mean once the terms have.
    std::f64::consts::FRAC_PI_2 * sum / a
}

/// cel(kc, 1, -1, 1) by Bulirsch's cel2 iteration (Bulirsch 1969, algorithm cel2), inlined
/// without error handling for the hot ring kernels. kc in (0, 1].
#[cfg(test)]
fn cel_maxwell(kc: f64) -> f64 {
    // Convergence test 1e-8 relative: the iteration is quadratic, so the next step is at
    // rounding level (Bulirsch's CA for 16 digits).
    const CA: f64 = 1e-8;
    let mut kc = kc.abs();
    let mut m = 1.0;
    let mut c = -1.0;
    let mut aa = 0.0; // a + b
    let mut bb = 1.0;
    for _ in 0..12 {
        bb = 2.0 * (c * kc + bb);
        c = aa;
        let m0 = m;
        m += kc;
        aa += bb / m;
        if (m0 - kc).abs() <= CA * m0 {
            break;
        }
        kc = 2.0 * (kc * m0).sqrt();
    }
    std::f64::consts::FRAC_PI_4 * aa / m
}

/// Bulirsch's cel(kc, p, a, b) for p > 0, inlined without error handling for the hot field
/// kernels (Bulirsch 1969, algorithm cel; the same iteration as the `ellip` backend).
///
/// kc != 0 and p > 0 are the caller's duty (NaN or a wrong value otherwise). Accuracy: a few
/// ulp against [`cel`] (tested below).
#[inline]
pub fn cel_positive_p(kc: f64, p: f64, a: f64, b: f64) -> f64 {
    // Convergence test on the AGM pair; quadratic convergence puts the next step at rounding.
    const CA: f64 = 1e-8;
    let mut kc = kc.abs();
    let mut e = kc;
    let mut m = 1.0;
    let mut pp = p.sqrt();
    let mut aa = a;
    let mut bb = b / pp;
    for _ in 0..16 {
        let f = aa;
        aa += bb / pp;
        let g = e / pp;
        bb += f * g;
        bb += bb;
        pp += g;
        let g = m;
        m += kc;
        if (g - kc).abs() <= g * CA {
            break;
        }
        kc = 2.0 * e.sqrt();
        e = kc * m;
    }
    std::f64::consts::FRAC_PI_2 * (bb + aa * m) / (m * (m + pp))
}

/// K(m), E(m) and K(m) - E(m) from the complementary modulus kc (with m = 1 - kc^2 given too,
/// both from the geometry), by the arithmetic-geometric mean.
///
/// K = pi / (2 AGM(1, kc)), E = K (1 - sum_n 2^(n-1) c_n^2), c_0^2 = m (M. Abramowitz,
/// I. A. Stegun, *Handbook of Mathematical Functions*, 1964, 17.6; NIST DLMF 19.8.1, 19.8.6);
/// K - E = K sum comes without cancellation for small m. kc in (0, 1].
#[inline]
pub fn k_e_from_kc(kc: f64, m: f64) -> (f64, f64, f64) {
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
    let k = std::f64::consts::FRAC_PI_2 / a;
    (k, k * (1.0 - sum), k * sum)
}

/// K(m) from the complementary modulus kc = sqrt(1 - m) (from the geometry), by the
/// arithmetic-geometric mean K = pi / (2 AGM(1, kc)) (NIST DLMF 19.8.1). kc in (0, 1].
#[inline]
pub fn k_from_kc(kc: f64) -> f64 {
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
    std::f64::consts::FRAC_PI_2 / a
}

#[cfg(test)]
mod tests {

    #[test]
    fn inline_cel_matches_the_library_cel() {
        for &(kc, p, a, b) in &[
            (0.1, 4.1, 1.2, 1.1),
            (1e-6, 1.0, 1.0, 1.0),
            (0.3, 1.0, -2.0, 0.5),
            (0.99, 0.01, 1.0, 0.1),
            (0.5, 1.0, 1.0, 0.25),
        ] {
            let lib = cel(kc, p, a, b);
            let ours = cel_positive_p(kc, p, a, b);
            assert!(
                ((ours - lib) / lib).abs() < 1e-14,
                "{kc} {p} {a} {b}: {ours} vs {lib}"
            );
        }
        // Bulirsch 1969, sec. 4.2.
        assert!((cel_positive_p(0.1, 4.1, 1.2, 1.1) - 1.546_444_269_401_795_6).abs() < 1e-15);
    }
    use super::*;

    #[test]
    fn fused_cel_matches_the_library_cel() {
        for &kc in &[1e-9, 1e-6, 1e-3, 0.1, 0.3, 0.5, 0.7, 0.9, 0.98] {
            let lib = cel(kc, 1.0, -1.0, 1.0);
            let ours = cel_maxwell(kc);
            assert!(
                ((ours - lib) / lib).abs() < 1e-14,
                "kc={kc}: {ours} vs {lib}"
            );
        }
    }

    #[test]
    fn agm_and_bulirsch_iterations_agree() {
        for &kc in &[1e-7_f64, 1e-4, 0.01, 0.2, 0.5, 0.8, 0.95, 0.99] {
            let m = 1.0 - kc * kc;
            let agm = cel_maxwell_agm(m, kc) / m;
            let bulirsch = cel_maxwell(kc);
            assert!(
                ((agm - bulirsch) / bulirsch).abs() < 2e-15,
                "kc={kc}: {agm} vs {bulirsch}"
            );
        }
    }

    #[test]
    fn series_and_iteration_agree_where_they_meet() {
        let m = SERIES_BELOW_M;
        let kc = (1.0 - m).sqrt();
        let series = g_series(m);
        let iter = cel_maxwell_agm(m, kc) / (m * m);
        assert!(((series - iter) / iter).abs() < 1e-13, "{series} vs {iter}");
    }

    #[test]
    fn g_matches_mpmath() {
        // mpmath 30 digits, ((2 - m) K(m) - 2 E(m)) / m^2 (validation/inline_refs.py).
        for &(m, want) in &[
            (0.1_f64, 0.212_328_877_289_045_17),
            (0.5, 0.319_297_015_426_827_5),
            (0.9, 0.773_273_900_339_313_4),
        ] {
            let got = maxwell_g(m, (1.0 - m).sqrt());
            assert!(
                ((got - want) / want).abs() < 1e-14,
                "m={m}: {got} vs {want}"
            );
        }
        assert!((maxwell_g(0.0, 1.0) - std::f64::consts::PI / 16.0).abs() < 1e-17);
    }

    #[test]
    fn agm_k_and_e_from_kc_match_mpmath() {
        // mpmath 30 digits: ellipk(0.5) = 1.8540746773013719184, ellipe(0.5) =
        // 1.3506438810476755025 (validation/inline_refs.py; also validation/elliptic.csv).
        let kc = 0.5_f64.sqrt();
        let (k, e, k_minus_e) = k_e_from_kc(kc, 0.5);
        assert!((k - 1.854_074_677_301_371_9).abs() < 1e-15);
        assert!((e - 1.350_643_881_047_675_5).abs() < 1e-15);
        assert!((k_minus_e - (k - e)).abs() < 1e-15);
        assert!((k_from_kc(kc) - k).abs() < 1e-15);
        assert!((ellip_k(0.5) - k).abs() < 1e-15);
        assert!((ellip_e(0.5) - e).abs() < 1e-15);
        // Outside the domain: NaN, no panic.
        assert!(ellip_k(1.0).is_nan() && ellip_k(-0.1).is_nan() && ellip_e(2.0).is_nan());
    }

    #[test]
    fn bulirsch_1969_test_values() {
        // R. Bulirsch, Numer. Math. 13, 305-315, 1969, section 4.2.
        assert!((cel(0.1, 4.1, 1.2, 1.1) - 1.546_444_269_401_795_6).abs() < 1e-15);
        assert!((cel(0.1, -4.1, 1.2, 1.1) + 0.676_873_781_983_605_6).abs() < 1e-15);
    }
}
