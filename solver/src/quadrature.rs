//! Quadrature rules: Gauss-Legendre, adaptive Gauss-Kronrod (7-15) and the periodic trapezoidal
//! rule with doubling.

use std::sync::OnceLock;

/// Highest Gauss-Legendre order kept in the table.
pub const MAX_GL_ORDER: usize = 64;

/// Nodes and weights of the n-point Gauss-Legendre rule on [-1, 1] (2 <= n <= 64).
///
/// Computed once by Newton's iteration on the Legendre recurrence (Golub & Welsch would also
/// do; Newton from Tricomi's initial guesses converges in a few steps to full precision).
pub fn gauss_legendre(n: usize) -> &'static [(f64, f64)] {
    static TABLE: OnceLock<Vec<Vec<(f64, f64)>>> = OnceLock::new();
    let table = TABLE.get_or_init(|| (0..=MAX_GL_ORDER).map(gauss_legendre_rule).collect());
    &table[n.clamp(2, MAX_GL_ORDER)]
}

fn gauss_legendre_rule(n: usize) -> Vec<(f64, f64)> {
    if n < 2 {
        return Vec::new();
    }
    let nf = n as f64;
    let mut rule = Vec::with_capacity(n);
    for i in 0..n {
        // Tricomi's approximation of the i-th root.
        let mut x = (std::f64::consts::PI * (i as f64 + 0.75) / (nf + 0.5)).cos();
        let mut dp = 0.0;
        for _ in 0..100 {
            let (p, d) = legendre_and_derivative(n, x);
            dp = d;
            let dx = p / d;
            x -= dx;
            if dx.abs() < 1e-16 {
                break;
            }
        }
        let (_, d) = legendre_and_derivative(n, x);
        dp = if d != 0.0 { d } else { dp };
        rule.push((x, 2.0 / ((1.0 - x * x) * dp * dp)));
    }
    rule
}

fn legendre_and_derivative(n: usize, x: f64) -> (f64, f64) {
    let (mut p0, mut p1) = (1.0, x);
    for k in 2..=n {
        let kf = k as f64;
        let p2 = ((2.0 * kf - 1.0) * x * p1 - (kf - 1.0) * p0) / kf;
        p0 = p1;
        p1 = p2;
    }
    let d = n as f64 * (x * p1 - p0) / (x * x - 1.0);
    (p1, d)
}

/// Integral of f over [a, b] by the n-point Gauss-Legendre rule.
pub fn integrate_gl<F: FnMut(f64) -> f64>(mut f: F, a: f64, b: f64, n: usize) -> f64 {
    let half = 0.5 * (b - a);
    let mid = 0.5 * (a + b);
    gauss_legendre(n)
        .iter()
        .map(|&(x, w)| w * f(mid + half * x))
        .sum::<f64>()
        * half
}

// Kronrod 15-point nodes (positive half, decreasing) and weights; Gauss 7-point weights for the
// odd-indexed nodes. Values from R. Piessens et al., QUADPACK, Springer 1983 (routine QK15).
const XGK: [f64; 8] = [
    0.991_455_371_120_812_6,
    0.949_107_912_342_758_5,
    0.864_864_423_359_769_1,
    0.741_531_185_599_394_4,
    0.586_087_235_467_691_1,
    0.405_845_151_377_397_2,
    0.207_784_955_007_898_5,
    0.0,
];
const WGK: [f64; 8] = [
    0.022_935_322_010_529_22,
    0.063_092_092_629_978_55,
    0.104_790_010_322_250_2,
    0.140_653_259_715_525_9,
    0.169_004_726_639_267_9,
    0.190_350_578_064_785_4,
    0.204_432_940_075_298_9,
    0.209_482_141_084_727_8,
];
const WG: [f64; 4] = [
    0.129_484_966_168_869_7,
    0.279_705_391_489_276_7,
    0.381_830_050_505_118_9,
    0.417_959_183_673_469_4,
];

/// Report of an adaptive integration.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct QuadReport {
    /// The integral.
    pub value: f64,
    /// Estimated absolute error (sum of |K15 - G7| over the accepted intervals).
    pub error_estimate: f64,
    /// Integrand evaluations used.
    pub evaluations: usize,
    /// Whether every interval met its tolerance (false: the depth limit stopped refinement).
    pub converged: bool,
}

fn kronrod15<F: FnMut(f64) -> f64>(f: &mut F, a: f64, b: f64) -> (f64, f64) {
    let half = 0.5 * (b - a);
    let mid = 0.5 * (a + b);
    let fc = f(mid);
    let mut k = WGK[7] * fc;
    let mut g = WG[3] * fc;
    for j in 0..7 {
        let dx = half * XGK[j];
        let s = f(mid - dx) + f(mid + dx);
        k += WGK[j] * s;
        if j % 2 == 1 {
            g += WG[j / 2] * s;
        }
    }
    (k * half, ((k - g) * half).abs())
}

/// Largest number of intervals [`integrate_adaptive`] keeps before it stops refining.
const MAX_INTERVALS: usize = 2000;

/// Globally adaptive Gauss-Kronrod (7-15) integral of f over [a, b] to `abs_tol + rel_tol * |I|`.
///
/// The interval with the largest Kronrod-Gauss difference is bisected until the summed
/// difference meets the tolerance (QUADPACK's QAG strategy: R. Piessens et al., *QUADPACK*,
/// Springer 1983), which also copes with integrable endpoint singularities; after
/// `MAX_INTERVALS` intervals `converged` is false.
pub fn integrate_adaptive<F: FnMut(f64) -> f64>(
    mut f: F,
    a: f64,
    b: f64,
    abs_tol: f64,
    rel_tol: f64,
) -> QuadReport {
    // (error, a, b, value) per interval; the largest error is refined first.
    let mut intervals: Vec<(f64, f64, f64, f64)> = Vec::with_capacity(64);
    let (v, e) = kronrod15(&mut f, a, b);
    intervals.push((e, a, b, v));
    let mut evaluations = 15;
    loop {
        let value: f64 = intervals.iter().map(|iv| iv.3).sum();
        let error: f64 = intervals.iter().map(|iv| iv.0).sum();
        let tol = abs_tol.max(rel_tol * value.abs());
        if error <= tol || intervals.len() >= MAX_INTERVALS {
            return QuadReport {
                value,
                error_estimate: error,
                evaluations,
                converged: error <= tol,
            };
        }
        let worst = intervals
            .iter()
            .enumerate()
            .max_by(|x, y| x.1.0.total_cmp(&y.1.0))
            .map(|(i, _)| i)
            .unwrap_or(0);
        let (_, lo, hi, _) = intervals.swap_remove(worst);
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            // The interval cannot be split further in floating point.
            return QuadReport {
                value,
                error_estimate: error,
                evaluations,
                converged: false,
            };
        }
        let (vl, el) = kronrod15(&mut f, lo, mid);
        let (vr, er) = kronrod15(&mut f, mid, hi);
        evaluations += 30;
        intervals.push((el, lo, mid, vl));
        intervals.push((er, mid, hi, vr));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gauss_legendre_is_exact_for_polynomials_of_degree_2n_minus_1() {
        for n in [2, 3, 5, 8, 16, 32, 64] {
            for k in 0..(2 * n) {
                let exact = if k % 2 == 0 {
                    2.0 / (k as f64 + 1.0)
                } else {
                    0.0
                };
                let got = integrate_gl(|x| x.powi(k as i32), -1.0, 1.0, n);
                assert!(
                    (got - exact).abs() < 1e-13,
                    "n={n} k={k} got {got} want {exact}"
                );
            }
        }
    }

    #[test]
    fn kronrod_rule_is_exact_to_degree_22() {
        let mut f = |x: f64| x.powi(22) + x.powi(3);
        let (v, _) = kronrod15(&mut f, -1.0, 1.0);
        assert!((v - 2.0 / 23.0).abs() < 1e-15);
    }

    #[test]
    fn adaptive_rule_handles_a_log_endpoint_singularity() {
        // Integral of ln(x) over [0, 1] is -1 (exact).
        let r = integrate_adaptive(|x: f64| x.ln(), 0.0, 1.0, 1e-11, 1e-11);
        assert!((r.value + 1.0).abs() < 1e-11, "{r:?}");
        assert!(r.converged);
    }
}
