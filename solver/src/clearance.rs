//! Clearance search: how far out along a ray a field magnitude stays above a limit.
//!
//! A field magnitude `f(t)` along a ray `origin + t * direction` is sampled on a geometric
//! ladder of distances from `t_min_m` to `t_max_m`; the outermost sample above the limit and
//! the first sample beyond it bracket the crossing, which bisection then narrows to
//! `tolerance_m`. The answer is the *outer* crossing: the field may rise and fall several times
//! near the conductors, and a clearance must lie beyond all of them (the monotone envelope
//! from outside). A lobe narrower than one ladder step that lies entirely beyond the last
//! sample above the limit can be missed; the ladder is fine enough (ratio `step_ratio`) for the
//! smooth near fields of coils and electrodes, and the report says how many points were used.
//!
//! The search is pure: the caller passes a closure that evaluates the field magnitude, so the
//! same code serves E, B, rms or peak values and analytic fields in tests.
//!
//! # Units
//! Distances in metres; the field magnitude and the limit in any one unit (the caller's).
//!
//! # A design's clearance
//! [`search`] runs these ray searches for a whole design and a list of
//! [`thresholds`](crate::thresholds); [`metrics`] gives its distances to sweeps and seeks as
//! `clearance.<threshold>` and `clearance_top.<threshold>`.

pub mod metrics;
pub mod search;

use crate::error::SolverError;
use nalgebra::{Point3, Vector3};

/// Options of a ray search. Every field has a meaning for any positive value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RayParams {
    /// First distance sampled along the ray (m); must be positive.
    pub t_min_m: f64,
    /// Last distance sampled along the ray (m); the search reports "beyond" past it.
    pub t_max_m: f64,
    /// Ratio between consecutive ladder distances (> 1); 1.05 samples about 47 points per
    /// decade of distance.
    pub step_ratio: f64,
    /// Width (m) to which the crossing is narrowed by bisection.
    pub tolerance_m: f64,
}

impl Default for RayParams {
    fn default() -> Self {
        Self {
            t_min_m: 1e-3,
            t_max_m: 100.0,
            step_ratio: 1.05,
            tolerance_m: 1e-4,
        }
    }
}

/// Why a ray search stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RayOutcome {
    /// The field drops below the limit for good at `distance_m`, within `tolerance_m`.
    Crossing,
    /// The field never exceeded the limit between `t_min_m` and `t_max_m`: `distance_m` is
    /// `t_min_m`, an upper bound of the true clearance along this ray.
    BelowEverywhere,
    /// The field is still above the limit at `t_max_m`: the clearance is beyond `t_max_m`,
    /// reported as `distance_m = t_max_m` (a lower bound).
    AboveAtEnd,
}

/// Result of a ray search.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RayClearance {
    /// Distance along the ray (m) beyond which the field stays below the limit (see `outcome`
    /// for bounds).
    pub distance_m: f64,
    /// Point (m) at `distance_m` along the ray.
    pub point_m: Point3<f64>,
    /// How the search ended.
    pub outcome: RayOutcome,
    /// Field evaluations used.
    pub evaluations: usize,
    /// Samples where the closure gave no answer (a point on a wire or inside a conductor);
    /// they are neither above nor below the limit: the ladder passes over them, and a
    /// bisection point without an answer moves the crossing outwards (past the conductor).
    pub unanswered: usize,
}

/// The distances (m) of the sampling ladder of a ray search, innermost first.
pub fn ladder_m(params: &RayParams) -> Vec<f64> {
    let n_steps = ((params.t_max_m / params.t_min_m).ln() / params.step_ratio.ln()).ceil() as usize;
    (0..=n_steps)
        .map(|i| (params.t_min_m * params.step_ratio.powi(i as i32)).min(params.t_max_m))
        .collect()
}

/// The point at distance `t_m` along a ray, computed exactly as the search computes it, so a
/// caller can evaluate the ladder's points in one batch beforehand and look them up
/// bit for bit. `direction` is normalised here.
pub fn ray_point(origin_m: Point3<f64>, direction: Vector3<f64>, t_m: f64) -> Point3<f64> {
    origin_m + direction.normalize() * t_m
}

/// Outer crossing of `limit` by the field magnitude `field(point)` along the ray
/// `origin_m + t * direction` (direction normalised here), `t` in metres.
///
/// `field` returns `None` where it has no answer (on a wire, inside a conductor); such points
/// are neither above nor below the limit (a conductor's inside must not set a clearance), so
/// the crossing is between answered samples. NaN counts as no answer.
pub fn clearance_along_ray<F>(
    field: F,
    origin_m: Point3<f64>,
    direction: Vector3<f64>,
    limit: f64,
    params: RayParams,
) -> Result<RayClearance, SolverError>
where
    F: Fn(Point3<f64>) -> Option<f64>,
{
    let RayParams {
        t_min_m,
        t_max_m,
        step_ratio,
        tolerance_m,
    } = params;
    let ok = t_min_m.is_finite()
        && t_max_m.is_finite()
        && t_min_m > 0.0
        && t_max_m > t_min_m
        && step_ratio.is_finite()
        && step_ratio > 1.0
        && tolerance_m.is_finite()
        && tolerance_m > 0.0;
    if !ok {
        return Err(SolverError::BadRayParams {
            t_min_m,
            t_max_m,
            step_ratio,
            tolerance_m,
        });
    }
    if !(limit.is_finite() && limit > 0.0) {
        return Err(SolverError::BadRayLimit(limit));
    }
    let norm = direction.norm();
    if !(norm.is_finite() && norm > 0.0) {
        return Err(SolverError::BadRayDirection);
    }
    let at = |t: f64| ray_point(origin_m, direction, t);
    let mut evaluations = 0usize;
    let mut unanswered = 0usize;
    // Some(true) above, Some(false) below, None without an answer.
    let mut above = |t: f64| -> Option<bool> {
        evaluations += 1;
        match field(at(t)) {
            Some(v) if !v.is_nan() => Some(v >= limit),
            _ => {
                unanswered += 1;
                None
            }
        }
    };

    // The ladder, outermost first: the first answered sample above the limit found from
    // outside is the inner bracket, the answered sample outside it the outer one, so the search
    // can stop there. Samples without an answer are passed over.
    let ladder = ladder_m(&params);
    let mut outer_below = None;
    let mut inner_above = None;
    for &t in ladder.iter().rev() {
        match above(t) {
            Some(true) => {
                inner_above = Some(t);
                break;
            }
            Some(false) => outer_below = Some(t),
            None => {}
        }
    }
    let (outcome, distance_m) = match (inner_above, outer_below) {
        (None, _) => (RayOutcome::BelowEverywhere, t_min_m),
        (Some(_), None) => (RayOutcome::AboveAtEnd, t_max_m),
        (Some(mut lo), Some(mut hi)) => {
            while hi - lo > tolerance_m {
                let mid = 0.5 * (lo + hi);
                // No answer: a conductor between the brackets; the crossing lies outside it.
                if above(mid) != Some(false) {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            (RayOutcome::Crossing, hi)
        }
    };
    Ok(RayClearance {
        distance_m,
        point_m: at(distance_m),
        outcome,
        evaluations,
        unanswered,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// |B| of a magnetic point dipole m along z (T), in units where mu0 m / (4 pi) = 1:
    /// |B| = sqrt(1 + 3 cos^2 theta) / r^3 (Jackson, Classical Electrodynamics, 3rd ed., eq. 5.56).
    fn dipole(p: Point3<f64>) -> Option<f64> {
        let r = p.coords.norm();
        if r == 0.0 {
            return None;
        }
        let c = p.z / r;
        Some((1.0 + 3.0 * c * c).sqrt() / r.powi(3))
    }

    #[test]
    fn dipole_equator_and_axis_match_the_closed_form() {
        let params = RayParams {
            t_min_m: 1e-3,
            t_max_m: 1e3,
            step_ratio: 1.1,
            tolerance_m: 1e-9,
        };
        let limit = 1e-3;
        // Equator: 1 / r^3 = limit  => r = limit^(-1/3) = 10.
        let eq =
            clearance_along_ray(dipole, Point3::origin(), Vector3::x(), limit, params).unwrap();
        assert_eq!(eq.outcome, RayOutcome::Crossing);
        assert!((eq.distance_m - 10.0).abs() < 2e-9, "{}", eq.distance_m);
        // Axis: 2 / r^3 = limit => r = (2 / limit)^(1/3).
        let ax = clearance_along_ray(
            dipole,
            Point3::origin(),
            Vector3::new(0.0, 0.0, 3.0),
            limit,
            params,
        )
        .unwrap();
        let exact = (2.0f64 / limit).cbrt();
        assert!((ax.distance_m - exact).abs() < 2e-9, "{}", ax.distance_m);
        assert!((ax.point_m.z - exact).abs() < 2e-9);
    }

    #[test]
    fn the_outer_crossing_wins_over_a_near_dip() {
        // A field that is above the limit near the origin, dips below, and rises again to a
        // lobe that ends at exactly 5 m.
        let lobe = |p: Point3<f64>| {
            let t = p.coords.norm();
            Some(if t < 1.0 || (3.0..5.0).contains(&t) {
                2.0
            } else {
                0.5
            })
        };
        let r = clearance_along_ray(
            lobe,
            Point3::origin(),
            Vector3::y(),
            1.0,
            RayParams::default(),
        )
        .unwrap();
        assert_eq!(r.outcome, RayOutcome::Crossing);
        assert!((r.distance_m - 5.0).abs() <= 1e-4, "{}", r.distance_m);
    }

    #[test]
    fn bounds_are_reported_at_both_ends() {
        let params = RayParams {
            t_min_m: 0.1,
            t_max_m: 10.0,
            ..RayParams::default()
        };
        let low = clearance_along_ray(|_| Some(0.0), Point3::origin(), Vector3::x(), 1.0, params)
            .unwrap();
        assert_eq!(low.outcome, RayOutcome::BelowEverywhere);
        assert_eq!(low.distance_m, 0.1);
        let high = clearance_along_ray(|_| Some(5.0), Point3::origin(), Vector3::x(), 1.0, params)
            .unwrap();
        assert_eq!(high.outcome, RayOutcome::AboveAtEnd);
        assert_eq!(high.distance_m, 10.0);
        // The outermost sample is the only one evaluated when the field is above there.
        assert_eq!(high.evaluations, 1);
    }

    #[test]
    fn no_answer_is_neither_above_nor_below() {
        // Inside a conductor out to 2 m, then a field below the limit: the limit is never
        // exceeded where the field exists (not "2 m", the conductor's edge).
        let f = |p: Point3<f64>| (p.x >= 2.0).then_some(0.0);
        let r = clearance_along_ray(f, Point3::origin(), Vector3::x(), 1.0, RayParams::default())
            .unwrap();
        assert_eq!(r.outcome, RayOutcome::BelowEverywhere);
        assert!(r.unanswered > 0);
        // Above the limit inside 1 m, a conductor from 1 to 2 m, below outside: the crossing
        // is the conductor's outer surface (the field at its surface is above).
        let g = |p: Point3<f64>| match p.x {
            x if x < 1.0 => Some(5.0),
            x if x < 2.0 => None,
            _ => Some(0.0),
        };
        let r = clearance_along_ray(g, Point3::origin(), Vector3::x(), 1.0, RayParams::default())
            .unwrap();
        assert_eq!(r.outcome, RayOutcome::Crossing);
        assert!((r.distance_m - 2.0).abs() <= 1e-4, "{}", r.distance_m);
    }

    #[test]
    fn bad_options_are_errors() {
        let f = |_: Point3<f64>| Some(1.0);
        let o = Point3::origin();
        let bad = RayParams {
            t_min_m: 1.0,
            t_max_m: 0.5,
            ..RayParams::default()
        };
        assert!(matches!(
            clearance_along_ray(f, o, Vector3::x(), 1.0, bad),
            Err(SolverError::BadRayParams { .. })
        ));
        assert_eq!(
            clearance_along_ray(f, o, Vector3::zeros(), 1.0, RayParams::default()),
            Err(SolverError::BadRayDirection)
        );
        assert_eq!(
            clearance_along_ray(f, o, Vector3::x(), 0.0, RayParams::default()),
            Err(SolverError::BadRayLimit(0.0))
        );
    }
}
