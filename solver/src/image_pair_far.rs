//! The far magnetic field of a winding and its image in a perfectly conducting plane, as one
//! multipole expansion about the plane point below the winding.
//!
//! A winding over a conducting plane z = z0 and its image (the mirror of each current element
//! with its direction reversed, J' = (-J_x, -J_y, J_z) at (x, y, 2 z0 - z); J. D. Jackson,
//! "Classical Electrodynamics", 3rd ed., 1999, method of images) seen from r >> h (h the
//! winding's height) nearly cancel where the winding's moment is vertical: the pair's field is
//! about h / r of either's, and the sum of the two separate far fields loses about
//! 1e-16 r / h of the result (at 1e150 m, all of it). Here the pair is expanded as one source
//! about the point O of the plane below the winding's centre, so no large terms cancel.
//!
//! # Method
//! The vector potential of currents I dl' at x' (taken from O) is the Taylor series of
//! 1 / |R - x'| in x' (multi-index form):
//! A_m(R) = (mu0 / 4 pi) sum_alpha ((-1)^|alpha| / alpha!) M_(m, alpha) d^alpha (1 / R),
//! with the moments M_(m, alpha) = int I dl'_m x'^alpha, and B = curl A:
//! B_k = (mu0 / 4 pi) sum_alpha ((-1)^|alpha| / alpha!) eps_klm M_(m, alpha) d^(alpha + e_l) (1 / R)
//! (the Cartesian multipole expansion; Jackson 1999, sec. 5.6, carried to every order). In a
//! frame whose z is the plane's normal and origin O, the image has the moments
//! -(-1)^(#z) M_(m, alpha), #z = [m = z] + alpha_z (x' -> mirror x', dl' -> -mirror dl'), so the
//! pair's moments are exactly 2 M_(m, alpha) where #z is odd and exactly 0 where it is even: the
//! pair's leading term (a quadrupole when the winding's moment is vertical) comes out whole.
//!
//! The winding's moments are formed without cancellation: about each ring's centre (the loop's
//! own moment of order 0 is exactly 0) and about the centre of each chain of straight pieces
//! (order 0 and the ends' part taken from the chain's ends), then moved to O by the binomial
//! rule M_(m, alpha)(O) = sum_(beta <= alpha) C(alpha, beta) c^(alpha - beta) M_(m, beta)(C).
//! The derivatives d^alpha (1 / R) come from the recurrence obtained by differentiating
//! R^2 d_i (1 / R) + x_i / R = 0 (Leibniz's rule), at |R| = 1 and scaled by R^-(|alpha| + 1)
//! (homogeneity).
//!
//! # Accuracy
//! Terms up to order [`PAIR_ORDER`] in s / r (s the largest distance of the winding from O):
//! the truncation is about (s / r)^(PAIR_ORDER - 1) of the field (the leading term being at
//! worst of order 2), below 1e-13 beyond [`PAIR_FAR_RATIO`] sizes. Nearer, the separate fields
//! of winding and image are summed as before.

use crate::constants::MU0;
use nalgebra::{Point3, Unit, Vector3};
use std::f64::consts::PI;

/// Highest order |alpha| of the moments kept: the truncation at [`PAIR_FAR_RATIO`] sizes is
/// about (1 / 30)^9 = 5e-14 of the field (the leading term of order 2 at worst).
pub const PAIR_ORDER: usize = 10;

/// Distance from O, in units of the pair's size s, beyond which the pair's field is its
/// expansion (truncation about (1 / 30)^9 = 5e-14 of the field, less seen). Nearer, the
/// separate sums lose about r / a rounding units (each side's closed forms, seen) times the
/// pair's cancellation r / h: about 1e-13 (s / a) (s / h) here.
pub const PAIR_FAR_RATIO: f64 = 30.0;

/// Number of multi-indices per order dimension of the tables (orders 0 ..= PAIR_ORDER + 1).
const DIM: usize = PAIR_ORDER + 2;

/// Index of the multi-index (a, b, c) in a table of DIM^3 entries.
#[inline]
fn idx(a: usize, b: usize, c: usize) -> usize {
    (a * DIM + b) * DIM + c
}

/// Every multi-index (a, b, c) with a + b + c <= n, by increasing order.
fn multi_indices(n: usize) -> Vec<[usize; 3]> {
    let mut out = Vec::new();
    for order in 0..=n {
        for a in (0..=order).rev() {
            for b in (0..=order - a).rev() {
                out.push([a, b, order - a - b]);
            }
        }
    }
    out
}

/// The moments M_(m, alpha) (A m^(|alpha| + 1), in units of s^(|alpha| + 1)) of one winding
/// about a point, for |alpha| <= [`PAIR_ORDER`]: `m[k][idx(alpha)]`.
#[derive(Debug, Clone, PartialEq)]
struct Moments {
    m: [Vec<f64>; 3],
}

impl Moments {
    fn zero() -> Moments {
        let n = DIM * DIM * DIM;
        Moments {
            m: [vec![0.0; n], vec![0.0; n], vec![0.0; n]],
        }
    }

    /// These moments (of one source about its own point C) moved to O and summed over copies
    /// of the source with weights w_r at C_r - O = c_r (in units of s), added to `into`:
    /// M(O)_alpha = sum_(beta <= alpha) C(alpha, beta) M(C)_beta S_(alpha - beta), with the
    /// power sums S_gamma = sum_r w_r c_r^gamma ([`add_powers`]).
    fn add_moved(&self, sums: &[f64], into: &mut Moments) {
        let mut binom = [[0.0; DIM]; DIM];
        for (n, row) in binom.iter_mut().enumerate() {
            for (k, b) in row.iter_mut().enumerate().take(n + 1) {
                *b = binomial(n, k);
            }
        }
        for al in multi_indices(PAIR_ORDER) {
            let mut acc = [0.0; 3];
            for b0 in 0..=al[0] {
                for b1 in 0..=al[1] {
                    let w01 = binom[al[0]][b0] * binom[al[1]][b1];
                    for b2 in 0..=al[2] {
                        let w =
                            w01 * binom[al[2]][b2] * sums[idx(al[0] - b0, al[1] - b1, al[2] - b2)];
                        if w != 0.0 {
                            for (k, a) in acc.iter_mut().enumerate() {
                                *a += w * self.m[k][idx(b0, b1, b2)];
                            }
                        }
                    }
                }
            }
            for (k, a) in acc.iter().enumerate() {
                into.m[k][idx(al[0], al[1], al[2])] += a;
            }
        }
    }
}

/// Adds w c^gamma to `sums[idx(gamma)]` for every |gamma| <= [`PAIR_ORDER`].
fn add_powers(c: &Vector3<f64>, w: f64, sums: &mut [f64]) {
    let pow = |x: f64| -> [f64; DIM] {
        let mut p = [1.0; DIM];
        for k in 1..DIM {
            p[k] = p[k - 1] * x;
        }
        p
    };
    let (px, py, pz) = (pow(c.x), pow(c.y), pow(c.z));
    for a in 0..=PAIR_ORDER {
        for b in 0..=PAIR_ORDER - a {
            let wab = w * px[a] * py[b];
            for (g, p) in pz.iter().enumerate().take(PAIR_ORDER - a - b + 1) {
                sums[idx(a, b, g)] += wab * p;
            }
        }
    }
}

/// The binomial coefficient C(n, k) (small n).
fn binomial(n: usize, k: usize) -> f64 {
    (0..k).fold(1.0, |acc, j| acc * (n - j) as f64 / (j + 1) as f64)
}

/// x^alpha for a multi-index alpha.
fn monomial(x: &Vector3<f64>, al: [usize; 3]) -> f64 {
    x.x.powi(al[0] as i32) * x.y.powi(al[1] as i32) * x.z.powi(al[2] as i32)
}

/// Points of the trapezoid rule on a ring: exact for a trigonometric polynomial of degree
/// below this, here at most PAIR_ORDER + 1.
const RING_NODES: usize = PAIR_ORDER + 4;

/// Gauss-Legendre nodes on [0, 1] and weights, exact for polynomials of degree 2 * 6 - 1 = 11
/// (>= PAIR_ORDER, the degree of a straight piece's moments in its parameter): the 6-point
/// rule (M. Abramowitz, I. A. Stegun, "Handbook of Mathematical Functions", 1964, table 25.4).
const GAUSS6: [(f64, f64); 6] = [
    (0.033_765_242_898_423_98, 0.085_662_246_189_585_17),
    (0.169_395_306_766_867_74, 0.180_380_786_524_069_3),
    (0.380_690_406_958_401_5, 0.233_956_967_286_345_5),
    (0.619_309_593_041_598_5, 0.233_956_967_286_345_5),
    (0.830_604_693_233_132_3, 0.180_380_786_524_069_3),
    (0.966_234_757_101_576, 0.085_662_246_189_585_17),
];

/// A ring of a winding (m, A); the current circulates right-handed about the axis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PairRing {
    /// Centre (m).
    pub centre_m: Point3<f64>,
    /// Axis.
    pub axis: Unit<Vector3<f64>>,
    /// Radius (m).
    pub radius_m: f64,
    /// Current (A).
    pub current_a: f64,
}

/// Rings of one radius (m) and axis, and the power sums of their centres ([`add_powers`]).
type RingGroup = ((f64, Vector3<f64>), Vec<f64>);

/// A winding as the pair expansion sees it: rings and chains of straight pieces (m, A).
#[derive(Debug, Clone, Default)]
pub struct PairParts {
    /// The rings.
    pub rings: Vec<PairRing>,
    /// (start, end, current) of each straight piece, in chain order.
    pub segments: Vec<(Point3<f64>, Point3<f64>, f64)>,
}

/// The far field of a winding and its image in the plane z = z0, expanded about O (see the
/// module doc).
#[derive(Debug, Clone, PartialEq)]
pub struct ImagePairFar {
    /// O (m): the plane point below the winding's centre.
    pub origin_m: Point3<f64>,
    /// s (m): the largest distance of the winding from O.
    pub size_m: f64,
    /// The pair's moments (A, in units of s^(|alpha| + 1)), 0 where the image cancels them.
    moments: Moments,
}

impl ImagePairFar {
    /// The expansion of the winding `parts` and its image in the plane z = `plane_z_m`; None
    /// without any part.
    pub fn new(parts: &PairParts, plane_z_m: f64) -> Option<ImagePairFar> {
        let mut lo = Vector3::repeat(f64::INFINITY);
        let mut hi = Vector3::repeat(f64::NEG_INFINITY);
        for r in &parts.rings {
            lo = lo.inf(&(r.centre_m.coords - Vector3::repeat(r.radius_m)));
            hi = hi.sup(&(r.centre_m.coords + Vector3::repeat(r.radius_m)));
        }
        for (s, e, _) in &parts.segments {
            lo = lo.inf(&s.coords).inf(&e.coords);
            hi = hi.sup(&s.coords).sup(&e.coords);
        }
        if parts.rings.is_empty() && parts.segments.is_empty() {
            return None;
        }
        let centre = (lo + hi) * 0.5;
        let origin = Point3::new(centre.x, centre.y, plane_z_m);
        let mut size: f64 = 0.0;
        for r in &parts.rings {
            size = size.max((r.centre_m - origin).norm() + r.radius_m);
        }
        for (s, e, _) in &parts.segments {
            size = size.max((s - origin).norm()).max((e - origin).norm());
        }
        if size <= 0.0 || !size.is_finite() {
            return None;
        }
        let mut moments = Moments::zero();
        // Rings of one radius and axis (the turns of a stack) share their own moments: only
        // the power sums of their centres differ.
        let mut groups: Vec<RingGroup> = Vec::new();
        for r in &parts.rings {
            let key = (r.radius_m, r.axis.into_inner());
            let k = match groups.iter().position(|(g, _)| *g == key) {
                Some(k) => k,
                None => {
                    groups.push((key, vec![0.0; DIM * DIM * DIM]));
                    groups.len() - 1
                }
            };
            add_powers(
                &((r.centre_m - origin) / size),
                r.current_a,
                &mut groups[k].1,
            );
        }
        for ((a, axis), sums) in &groups {
            ring_moments(a / size, &Unit::new_unchecked(*axis)).add_moved(sums, &mut moments);
        }
        if !parts.segments.is_empty() {
            let chain_centre = Point3::from(centre);
            let mut sums = vec![0.0; DIM * DIM * DIM];
            add_powers(&((chain_centre - origin) / size), 1.0, &mut sums);
            chain_moments(&parts.segments, &chain_centre, size).add_moved(&sums, &mut moments);
        }
        // The pair: twice the winding's moments with an odd number of z indices, none else.
        for al in multi_indices(PAIR_ORDER) {
            for k in 0..3 {
                let zs = al[2] + usize::from(k == 2);
                let v = &mut moments.m[k][idx(al[0], al[1], al[2])];
                *v = if zs % 2 == 1 { 2.0 * *v } else { 0.0 };
            }
        }
        Some(ImagePairFar {
            origin_m: origin,
            size_m: size,
            moments,
        })
    }

    /// Whether `p` lies beyond [`PAIR_FAR_RATIO`] sizes from O.
    pub fn applies_at(&self, p: &Point3<f64>) -> bool {
        let (_, r) = unit_and_length(&(p - self.origin_m));
        r > PAIR_FAR_RATIO * self.size_m
    }

    /// B (T) of the pair at `p` (beyond a few sizes from O): the orders summed from the
    /// highest, each scaled by (s / r)^(|alpha| + 1) / r one factor at a time, so that a term
    /// underflows only when its true value does.
    pub fn b_at(&self, p: &Point3<f64>) -> Vector3<f64> {
        let (u, r) = unit_and_length(&(p - self.origin_m));
        let t = derivatives_of_inverse_distance(&u);
        let q = self.size_m / r;
        let mut by_order = vec![Vector3::zeros(); PAIR_ORDER + 1];
        let mut fact = [1.0; DIM];
        for k in 1..DIM {
            fact[k] = fact[k - 1] * k as f64;
        }
        for al in multi_indices(PAIR_ORDER) {
            let n = al[0] + al[1] + al[2];
            let sign = if n % 2 == 0 { 1.0 } else { -1.0 };
            let coef = sign / (fact[al[0]] * fact[al[1]] * fact[al[2]]);
            let m = Vector3::new(
                self.moments.m[0][idx(al[0], al[1], al[2])],
                self.moments.m[1][idx(al[0], al[1], al[2])],
                self.moments.m[2][idx(al[0], al[1], al[2])],
            );
            if m == Vector3::zeros() {
                continue;
            }
            // grad of d^alpha (1 / R): its l-th component is d^(alpha + e_l) (1 / R).
            let g = Vector3::new(
                t[idx(al[0] + 1, al[1], al[2])],
                t[idx(al[0], al[1] + 1, al[2])],
                t[idx(al[0], al[1], al[2] + 1)],
            );
            // eps_klm g_l m_m = (g x m)_k.
            by_order[n] += g.cross(&m) * coef;
        }
        let mut b = Vector3::zeros();
        for (n, v) in by_order.iter().enumerate().rev() {
            b += v.map(|x| scaled_power(MU0 / (4.0 * PI) * x, q, n as u32 + 1, r));
        }
        b
    }
}

/// `c q^n / r`, formed factor by factor so that no intermediate falls below the result's
/// magnitude (q < 1; 1/r first when it is above 1).
fn scaled_power(c: f64, q: f64, n: u32, r: f64) -> f64 {
    let mut x = if r < 1.0 { c / r } else { c };
    for _ in 0..n {
        x *= q;
    }
    if r < 1.0 { x } else { x / r }
}

/// The unit vector and length of `v`, without overflow or underflow of its squares.
fn unit_and_length(v: &Vector3<f64>) -> (Vector3<f64>, f64) {
    let scale = v.amax();
    if scale == 0.0 {
        return (Vector3::zeros(), 0.0);
    }
    let w = v / scale;
    let n = w.norm();
    (w / n, scale * n)
}

/// d^alpha (1 / R) at the unit vector `u` (R = 1), for |alpha| <= PAIR_ORDER + 1: from
/// R^2 d_i (1/R) + x_i (1/R) = 0, differentiated by d^beta (Leibniz's rule) with
/// alpha = beta + e_i:
/// T_alpha = -(1 / R^2) [2 sum_j beta_j x_j T_(alpha - e_j) + sum_j beta_j (beta_j - 1)
/// T_(alpha - 2 e_j) + x_i T_beta + beta_i T_(beta - e_i)].
fn derivatives_of_inverse_distance(u: &Vector3<f64>) -> Vec<f64> {
    let mut t = vec![0.0; DIM * DIM * DIM];
    t[idx(0, 0, 0)] = 1.0;
    for al in multi_indices(PAIR_ORDER + 1).into_iter().skip(1) {
        // Differentiate along the first direction alpha has.
        let i = (0..3).find(|&k| al[k] > 0).unwrap_or(0);
        let mut be = al;
        be[i] -= 1;
        let at = |m: [isize; 3]| -> f64 {
            if m.iter().any(|&v| v < 0) {
                0.0
            } else {
                t[idx(m[0] as usize, m[1] as usize, m[2] as usize)]
            }
        };
        let a = [al[0] as isize, al[1] as isize, al[2] as isize];
        let b = [be[0] as isize, be[1] as isize, be[2] as isize];
        let mut sum = 0.0;
        for j in 0..3 {
            let bj = be[j] as f64;
            if be[j] >= 1 {
                let mut m = a;
                m[j] -= 1;
                sum += 2.0 * bj * u[j] * at(m);
            }
            if be[j] >= 2 {
                let mut m = a;
                m[j] -= 2;
                sum += bj * (bj - 1.0) * at(m);
            }
        }
        sum += u[i] * at(b);
        if be[i] >= 1 {
            let mut m = b;
            m[i] -= 1;
            sum += be[i] as f64 * at(m);
        }
        t[idx(al[0], al[1], al[2])] = -sum;
    }
    t
}

/// The moments of a ring of radius `a` (in units of s) carrying 1 A about its centre:
/// M_(m, beta) = a int_0^(2 pi) rho'_m (a rho)^beta dphi, rho = e1 cos phi + e2 sin phi,
/// rho' = axis x rho, by the trapezoid rule (exact: a trigonometric polynomial of degree
/// |beta| + 1 < RING_NODES); order 0 exactly 0 (a closed loop).
fn ring_moments(a: f64, axis: &Unit<Vector3<f64>>) -> Moments {
    let n = axis.as_ref();
    let helper = if n.z.abs() < 0.9 {
        Vector3::z()
    } else {
        Vector3::x()
    };
    let e1 = helper.cross(n).normalize();
    let e2 = n.cross(&e1);
    let mut out = Moments::zero();
    let orders = multi_indices(PAIR_ORDER);
    let w = 2.0 * PI / RING_NODES as f64;
    for k in 0..RING_NODES {
        let (s, c) = (w * k as f64).sin_cos();
        let rho = e1 * c + e2 * s;
        let drho = n.cross(&rho);
        let x = rho * a;
        for &be in &orders[1..] {
            let xb = monomial(&x, be);
            for m in 0..3 {
                out.m[m][idx(be[0], be[1], be[2])] += a * w * drho[m] * xb;
            }
        }
    }
    out
}

/// The moments of chains of straight pieces about `centre` (coordinates in units of `size`):
/// each piece's int_0^1 I d_m (x0 + t d)^beta dt by the 6-point Gauss rule (exact); order 0
/// from each chain's ends (exactly 0 for a closed one: summing the pieces would leave rounding
/// whose 1/r^2 field outgrows the rest far away).
fn chain_moments(
    segments: &[(Point3<f64>, Point3<f64>, f64)],
    centre: &Point3<f64>,
    size: f64,
) -> Moments {
    let mut out = Moments::zero();
    let orders = multi_indices(PAIR_ORDER);
    let rel = |p: &Point3<f64>| (p - centre) / size;
    let mut k = 0;
    while k < segments.len() {
        let mut j = k + 1;
        while j < segments.len()
            && segments[j].0 == segments[j - 1].1
            && segments[j].2 == segments[k].2
        {
            j += 1;
        }
        let i = segments[k].2;
        let d0 = (rel(&segments[j - 1].1) - rel(&segments[k].0)) * i;
        for m in 0..3 {
            out.m[m][idx(0, 0, 0)] += d0[m];
        }
        for &(s, e, cur) in &segments[k..j] {
            let (x0, x1) = (rel(&s), rel(&e));
            let d = x1 - x0;
            for &(t, w) in &GAUSS6 {
                let x = x0 + d * t;
                for &be in &orders[1..] {
                    let xb = monomial(&x, be);
                    for m in 0..3 {
                        out.m[m][idx(be[0], be[1], be[2])] += cur * w * d[m] * xb;
                    }
                }
            }
        }
        k = j;
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn derivatives_of_the_inverse_distance_are_the_textbook_tensors() {
        // d_i d_j (1/R) = (3 u_i u_j - delta_ij) / R^3 and d_i d_j d_k (1/R) =
        // -(15 u_i u_j u_k - 3 (u_i delta_jk + u_j delta_ik + u_k delta_ij)) / R^4 (the Cartesian
        // multipole tensors, e.g. Jackson 1999, sec. 4.1, common practice), at R = 1; and
        // every order is harmonic (the trace over two indices vanishes: Laplace's equation).
        let u = Vector3::new(0.36, -0.48, 0.8);
        let t = derivatives_of_inverse_distance(&u);
        let e = |k: usize| {
            let mut a = [0usize; 3];
            a[k] += 1;
            a
        };
        for i in 0..3 {
            for j in 0..3 {
                let mut a = e(i);
                a[j] += 1;
                let want = 3.0 * u[i] * u[j] - if i == j { 1.0 } else { 0.0 };
                assert!((t[idx(a[0], a[1], a[2])] - want).abs() < 1e-14);
                for k in 0..3 {
                    let mut b = a;
                    b[k] += 1;
                    let d = |x: usize, y: usize| if x == y { 1.0 } else { 0.0 };
                    let want = -(15.0 * u[i] * u[j] * u[k]
                        - 3.0 * (u[i] * d(j, k) + u[j] * d(i, k) + u[k] * d(i, j)));
                    assert!((t[idx(b[0], b[1], b[2])] - want).abs() < 1e-13);
                }
            }
        }
        for al in multi_indices(PAIR_ORDER - 1) {
            let lap = t[idx(al[0] + 2, al[1], al[2])]
                + t[idx(al[0], al[1] + 2, al[2])]
                + t[idx(al[0], al[1], al[2] + 2)];
            let scale = t[idx(al[0] + 2, al[1], al[2])]
                .abs()
                .max(t[idx(al[0], al[1] + 2, al[2])].abs())
                .max(t[idx(al[0], al[1], al[2] + 2)].abs());
            assert!(lap.abs() < 1e-13 * scale, "{al:?}: {lap} of {scale}");
        }
    }
}
