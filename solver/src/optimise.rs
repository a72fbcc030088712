//! Goal seeking: a root of a scalar function on an interval (Brent's method) and a bounded
//! minimum over a few parameters (Nelder-Mead). Both take the function as a closure and report
//! evaluations and why they stopped.

/// Why a search stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Stop {
    /// The bracket (root) or the simplex (minimum) shrank below the tolerance.
    Converged,
    /// The function is exactly zero there.
    ExactRoot,
    /// The evaluation budget ran out first.
    MaxEvaluations,
}

impl Stop {
    /// A phrase for reports.
    pub fn describe(self) -> &'static str {
        match self {
            Stop::Converged => "converged: the search interval shrank below the tolerance",
            Stop::ExactRoot => "converged: the target is met exactly",
            Stop::MaxEvaluations => "stopped: evaluation budget exhausted",
        }
    }
}

/// Result of a search.
#[derive(Debug, Clone, PartialEq)]
pub struct Found {
    /// The best point.
    pub x: Vec<f64>,
    /// The function there.
    pub value: f64,
    /// Function evaluations used.
    pub evaluations: usize,
    /// Why it stopped.
    pub stop: Stop,
}

/// A root of f in [a, b], where f(a) and f(b) differ in sign, to `x_tol` (same units as x).
///
/// R. P. Brent, *Algorithms for Minimization without Derivatives*, Prentice-Hall 1973, ch. 4
/// (procedure zero): inverse quadratic interpolation or the secant step when they stay inside
/// the bracket and shrink it fast enough, bisection otherwise. Err with f(a), f(b) when they do
/// not bracket a root.
pub fn brent_root<F: FnMut(f64) -> f64>(
    mut f: F,
    a: f64,
    b: f64,
    x_tol: f64,
    max_evaluations: usize,
) -> Result<Found, (f64, f64)> {
    let (mut a, mut b) = (a, b);
    let (mut fa, mut fb) = (f(a), f(b));
    let mut evaluations = 2;
    if fa == 0.0 {
        return Ok(found(a, fa, evaluations, Stop::ExactRoot));
    }
    if fb == 0.0 {
        return Ok(found(b, fb, evaluations, Stop::ExactRoot));
    }
    if fa.is_nan() || fb.is_nan() || (fa > 0.0) == (fb > 0.0) {
        return Err((fa, fb));
    }
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    loop {
        if (fb > 0.0) == (fc > 0.0) {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol = 2.0 * f64::EPSILON * b.abs() + 0.5 * x_tol;
        let m = 0.5 * (c - b);
        if m.abs() <= tol {
            return Ok(found(b, fb, evaluations, Stop::Converged));
        }
        if fb == 0.0 {
            return Ok(found(b, fb, evaluations, Stop::ExactRoot));
        }
        if evaluations >= max_evaluations {
            return Ok(found(b, fb, evaluations, Stop::MaxEvaluations));
        }
        if e.abs() < tol || fa.abs() <= fb.abs() {
            d = m;
            e = m;
        } else {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * m * s;
                q = 1.0 - s;
            } else {
                let qa = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * m * qa * (qa - r) - (b - a) * (r - 1.0));
                q = (qa - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            } else {
                p = -p;
            }
            if 2.0 * p < 3.0 * m * q - (tol * q).abs() && p < (0.5 * e * q).abs() {
                e = d;
                d = p / q;
            } else {
                d = m;
                e = m;
            }
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol { d } else { tol.copysign(m) };
        fb = f(b);
        evaluations += 1;
    }
}

fn found(x: f64, value: f64, evaluations: usize, stop: Stop) -> Found {
    Found {
        x: vec![x],
        value,
        evaluations,
        stop,
    }
}

/// Minimum of f over the box [lo, hi] (each coordinate), from the box's centre.
///
/// Nelder-Mead simplex (J. A. Nelder, R. Mead, "A simplex method for function minimization",
/// Computer Journal 7(4), 1965) with the standard coefficients reflection 1, expansion 2,
/// contraction 1/2, shrink 1/2 (J. C. Lagarias et al., SIAM J. Optim. 9(1), 1998), on the box
/// scaled to the unit cube; trial points are clipped to the box. Points where f is not finite
/// (infeasible, failed) count as +infinity, so the simplex moves away from them (the extreme
/// barrier). Stops when the simplex is smaller than `x_tol` (a fraction of each bound's width)
/// and its values agree to `f_tol` relative, or after `max_evaluations`: f is never called
/// more often (a trial point past the limit counts as +infinity, unevaluated).
pub fn nelder_mead<F: FnMut(&[f64]) -> f64>(
    mut f: F,
    lo: &[f64],
    hi: &[f64],
    x_tol: f64,
    f_tol: f64,
    max_evaluations: usize,
) -> Found {
    let n = lo.len();
    let to_x = |u: &[f64]| -> Vec<f64> {
        (0..n)
            .map(|i| lo[i] + u[i].clamp(0.0, 1.0) * (hi[i] - lo[i]))
            .collect()
    };
    let mut evaluations = 0;
    let mut eval = |u: &[f64], evaluations: &mut usize| -> f64 {
        if *evaluations >= max_evaluations {
            return f64::INFINITY;
        }
        *evaluations += 1;
        let v = f(&to_x(u));
        if v.is_finite() { v } else { f64::INFINITY }
    };
    let mut simplex: Vec<(Vec<f64>, f64)> = Vec::with_capacity(n + 1);
    let centre = vec![0.5; n];
    simplex.push((centre.clone(), eval(&centre, &mut evaluations)));
    for i in 0..n {
        let mut u = centre.clone();
        u[i] += 0.25;
        let v = eval(&u, &mut evaluations);
        simplex.push((u, v));
    }
    let stop = loop {
        simplex.sort_by(|a, b| a.1.total_cmp(&b.1));
        let best = simplex[0].1;
        let worst = simplex[n].1;
        let size = simplex[1..]
            .iter()
            .flat_map(|(u, _)| u.iter().zip(&simplex[0].0).map(|(a, b)| (a - b).abs()))
            .fold(0.0, f64::max);
        if size <= x_tol && (worst - best).abs() <= f_tol * best.abs().max(f64::MIN_POSITIVE) {
            break Stop::Converged;
        }
        if evaluations >= max_evaluations {
            break Stop::MaxEvaluations;
        }
        let mut centroid = vec![0.0; n];
        for (u, _) in &simplex[..n] {
            for (c, x) in centroid.iter_mut().zip(u) {
                *c += x / n as f64;
            }
        }
        let along = |t: f64| -> Vec<f64> {
            (0..n)
                .map(|i| (centroid[i] + t * (simplex[n].0[i] - centroid[i])).clamp(0.0, 1.0))
                .collect()
        };
        let ur = along(-1.0);
        let fr = eval(&ur, &mut evaluations);
        if fr < simplex[0].1 {
            let ue = along(-2.0);
            let fe = eval(&ue, &mut evaluations);
            simplex[n] = if fe < fr { (ue, fe) } else { (ur, fr) };
        } else if fr < simplex[n - 1].1 {
            simplex[n] = (ur, fr);
        } else {
            let (uc, fc) = if fr < simplex[n].1 {
                let u = along(-0.5);
                let v = eval(&u, &mut evaluations);
                (u, v)
            } else {
                let u = along(0.5);
                let v = eval(&u, &mut evaluations);
                (u, v)
            };
            if fc < simplex[n].1.min(fr) {
                simplex[n] = (uc, fc);
            } else {
                let best_u = simplex[0].0.clone();
                for vertex in simplex.iter_mut().skip(1) {
                    let u: Vec<f64> = (0..n)
                        .map(|i| best_u[i] + 0.5 * (vertex.0[i] - best_u[i]))
                        .collect();
                    let v = eval(&u, &mut evaluations);
                    *vertex = (u, v);
                }
            }
        }
    };
    simplex.sort_by(|a, b| a.1.total_cmp(&b.1));
    Found {
        x: to_x(&simplex[0].0),
        value: simplex[0].1,
        evaluations,
        stop,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nelder_mead_never_exceeds_its_evaluation_limit() {
        // Rosenbrock's valley takes far more than 20 evaluations; the limit holds exactly,
        // counted by the function itself.
        for limit in [3, 7, 20, 41] {
            let mut calls = 0;
            let r = nelder_mead(
                |x| {
                    calls += 1;
                    (1.0 - x[0]).powi(2) + 100.0 * (x[1] - x[0] * x[0]).powi(2)
                },
                &[-2.0, -2.0],
                &[2.0, 2.0],
                1e-12,
                1e-15,
                limit,
            );
            assert!(calls <= limit, "{calls} calls for a limit of {limit}");
            assert_eq!(r.evaluations, calls);
            assert_eq!(r.stop, Stop::MaxEvaluations);
            assert!(r.value.is_finite());
        }
    }

    #[test]
    fn brent_finds_the_root_of_brents_test_function() {
        // Root of x^3 - 2x - 5 (Wallis' equation, used by Brent 1973 ch. 4):
        // 2.0945514815423265 (Newton to full precision, a classical value).
        let r = brent_root(|x| x * x * x - 2.0 * x - 5.0, 2.0, 3.0, 1e-14, 100).unwrap();
        assert!((r.x[0] - 2.094_551_481_542_326_5).abs() < 1e-13, "{r:?}");
        assert!(r.evaluations < 15, "{r:?}");
        assert!(brent_root(|x| x * x + 1.0, -1.0, 1.0, 1e-12, 100).is_err());
    }

    #[test]
    fn nelder_mead_finds_the_rosenbrock_minimum() {
        // H. H. Rosenbrock, Computer Journal 3(3), 1960: minimum 0 at (1, 1).
        let r = nelder_mead(
            |x| 100.0 * (x[1] - x[0] * x[0]).powi(2) + (1.0 - x[0]).powi(2),
            &[-2.0, -1.0],
            &[2.0, 3.0],
            1e-9,
            1e-12,
            2000,
        );
        assert!(
            (r.x[0] - 1.0).abs() < 1e-4 && (r.x[1] - 1.0).abs() < 1e-4,
            "{r:?}"
        );
        assert_eq!(r.stop, Stop::Converged);
    }
}
