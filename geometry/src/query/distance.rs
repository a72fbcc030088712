//! Distances between straight pieces: the one segment-distance routine of the workspace (the
//! overlap check and the solver's quadrature orders both use it).

use nalgebra::Point3;

/// Squared distance and closest points of segments p1-q1 and p2-q2.
///
/// The clamped closest-point method of Ericson, "Real-Time Collision Detection", 2005,
/// section 5.1.9: minimise over s, t in [0, 1] by solving the unclamped 2x2 system, then clamping
/// one parameter and re-solving the other.
pub fn segment_distance2(
    p1: &Point3<f64>,
    q1: &Point3<f64>,
    p2: &Point3<f64>,
    q2: &Point3<f64>,
) -> (f64, Point3<f64>, Point3<f64>) {
    let d1 = q1 - p1;
    let d2 = q2 - p2;
    let r = p1 - p2;
    let a = d1.norm_squared();
    let e = d2.norm_squared();
    let f = d2.dot(&r);
    let tiny = f64::MIN_POSITIVE;
    let (s, t) = if a <= tiny && e <= tiny {
        (0.0, 0.0)
    } else if a <= tiny {
        (0.0, (f / e).clamp(0.0, 1.0))
    } else {
        let c = d1.dot(&r);
        if e <= tiny {
            ((-c / a).clamp(0.0, 1.0), 0.0)
        } else {
            let b = d1.dot(&d2);
            let denom = a * e - b * b;
            // Parallel pieces (denom 0): any s works; 0 is as good as another before clamping t.
            let s = if denom > 0.0 {
                ((b * f - c * e) / denom).clamp(0.0, 1.0)
            } else {
                0.0
            };
            let t = (b * s + f) / e;
            if t < 0.0 {
                ((-c / a).clamp(0.0, 1.0), 0.0)
            } else if t > 1.0 {
                (((b - c) / a).clamp(0.0, 1.0), 1.0)
            } else {
                (s, t)
            }
        }
    };
    let ca = p1 + d1 * s;
    let cb = p2 + d2 * t;
    ((ca - cb).norm_squared(), ca, cb)
}

/// Smallest distance (m) between two straight pieces [p0, p1] and [q0, q1] (see
/// [`segment_distance2`]).
pub fn distance_segment_segment(
    p0: &Point3<f64>,
    p1: &Point3<f64>,
    q0: &Point3<f64>,
    q1: &Point3<f64>,
) -> f64 {
    segment_distance2(p0, p1, q0, q1).0.sqrt()
}
