//! Quasi-static magnetic flux density B of a design's windings, batch over points.
//!
//! # Public API
//! ```text
//! pub enum Source { Ring(RingSource), Segment(SegmentSource), Sheet(SheetSource), RingStack(RingStack), ImagePair(Box<ImagePair>) }
//! pub fn sources_from_design(design: &Design, source: &str) -> Result<Vec<Source>, DesignError>
//!     // drive currents from [drive] currents (peak A); image windings added when
//!     // [ground] conducting = true; Err when no winding carries current
//! pub fn b_field(sources: &[Source], points_m: &[Point3<f64>], par: Par) -> Vec<Option<Vector3<f64>>>
//!     // T, peak; None = the point lies inside a wire ("no answer")
//! pub fn b_field_point(sources: &[Source], point_m: &Point3<f64>) -> Option<Vector3<f64>>
//! pub fn image_warning(design: &Design) -> Option<String>
//! pub fn inductance_matrix_with_images(design: &Design, par: Par) -> Result<Option<Vec<Vec<f64>>>, SolverError>
//! ```
//! Image windings themselves: `coilfield_geometry::image_windings(&windings, &ground)`; give
//! them to `assembly` with the design's windings to include the plane in L and M.
//!
//! # Kernels
//! - Ring ([`b_ring_point`]): the closed form in K and E (J. D. Jackson, *Classical
//!   Electrodynamics*, 3rd ed. 1999, eqs. 5.37-5.41 give A_phi; the B components are in
//!   W. R. Smythe, *Static and Dynamic Electricity*, ch. 7, equation number from memory),
//!   rewritten as Bulirsch cel integrals that stay finite on the axis (derivation in the
//!   function's doc).
//! - Straight segment ([`b_segment_point`]): Biot-Savart in closed form.
//! - Ideal solenoid current sheet ([`b_sheet_point`]): N. Derby, S. Olbert, "Cylindrical
//!   magnets and ideal solenoids", Am. J. Phys. 78(3), 229-235, 2010, eqs. 11-12 (equation
//!   numbers from memory), with Bulirsch's cel.
//!
//! # When a helix is a sheet
//! A ring-model helix of uniform pitch p with at least [`SHEET_MIN_TURNS`] turns is kept both
//! as its rings and as the equivalent sheet (n I = turns I / length). Points farther than
//! [`SHEET_NEAR_PITCHES`] pitches from the sheet take the sheet: the ring sum is then the
//! midpoint rule of the sheet's integral, whose error is O(p^2 / d^2) (Euler-Maclaurin), below
//! 1e-5 relative at that distance (tested). Closer points sum the rings.
//!
//! # Limitations
//! Quasi-static (the current is the same all along a winding, fields in phase with it); a
//! point within a wire's radius of its centreline gets no answer (None).

use crate::constants::MU0;
use crate::elliptic::cel_positive_p;
use crate::image_pair_far::{ImagePairFar, PairParts, PairRing};
use crate::par::{Par, map_indexed};
use coilfield_geometry::discretise::{filament_model, ring_model};
use coilfield_geometry::{
    Design, DesignError, DriveNeeds, Model, Role, Winding, image_ring_model, image_windings,
    validate_drive,
};
use nalgebra::{Point3, Unit, Vector3};
use std::f64::consts::PI;

/// Least turns of a ring stack for which the sheet equivalent is kept.
pub const SHEET_MIN_TURNS: usize = 50;

/// Distance from the sheet, in pitches, beyond which a ring stack answers with its sheet.
pub const SHEET_NEAR_PITCHES: f64 = 20.0;

/// A circular filament carrying a current.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RingSource {
    /// Centre (m).
    pub centre_m: Point3<f64>,
    /// Axis; positive current circulates right-handed about it.
    pub axis: Unit<Vector3<f64>>,
    /// Radius (m).
    pub radius_m: f64,
    /// Current (A, peak).
    pub current_a: f64,
    /// Wire radius (m): closer points to the centreline get no answer.
    pub wire_radius_m: f64,
}

/// A straight filament carrying a current from `start_m` to `end_m`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SegmentSource {
    /// Start (m).
    pub start_m: Point3<f64>,
    /// End (m).
    pub end_m: Point3<f64>,
    /// Current (A, peak), flowing from start to end.
    pub current_a: f64,
    /// Wire radius (m).
    pub wire_radius_m: f64,
}

/// An ideal finite solenoid: a cylindrical current sheet.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SheetSource {
    /// Centre of the base circle (m).
    pub base_centre_m: Point3<f64>,
    /// Axis; the current circulates right-handed about it; the sheet extends along it.
    pub axis: Unit<Vector3<f64>>,
    /// Radius (m).
    pub radius_m: f64,
    /// Length (m).
    pub length_m: f64,
    /// Surface current density n I (A/m).
    pub current_per_length_a_per_m: f64,
}

/// A uniform stack of coaxial rings with its equivalent sheet (see the module doc).
#[derive(Debug, Clone, PartialEq)]
pub struct RingStack {
    /// The rings.
    pub rings: Vec<RingSource>,
    /// The equivalent sheet.
    pub sheet: SheetSource,
    /// Points farther than this from the sheet (m) take the sheet.
    pub near_m: f64,
}

/// A winding and its image in a conducting ground plane, with the pair's own far expansion
/// (see [`crate::image_pair_far`]): beyond [`crate::image_pair_far::PAIR_FAR_RATIO`] sizes the
/// pair answers with it, nearer with the sum of both sides' fields.
#[derive(Debug, Clone, PartialEq)]
pub struct ImagePair {
    /// The winding's sources.
    pub winding: Vec<Source>,
    /// Its image's sources.
    pub image: Vec<Source>,
    /// The pair's far expansion (None for a pair without rings or straight pieces).
    pub far: Option<ImagePairFar>,
}

impl ImagePair {
    /// The pair of `winding`'s sources and `image`'s, mirrored in the plane z = `plane_z_m`.
    pub fn new(winding: Vec<Source>, image: Vec<Source>, plane_z_m: f64) -> ImagePair {
        let mut parts = PairParts::default();
        for s in &winding {
            match s {
                Source::Ring(r) => parts.rings.push(pair_ring(r)),
                Source::RingStack(stack) => parts.rings.extend(stack.rings.iter().map(pair_ring)),
                Source::Segment(seg) => {
                    parts.segments.push((seg.start_m, seg.end_m, seg.current_a))
                }
                // Windings give no bare sheets or nested pairs: no expansion then.
                Source::Sheet(_) | Source::ImagePair(_) => {
                    return ImagePair {
                        winding,
                        image,
                        far: None,
                    };
                }
            }
        }
        let far = ImagePairFar::new(&parts, plane_z_m);
        ImagePair {
            winding,
            image,
            far,
        }
    }
}

/// A ring source as the pair expansion takes it.
fn pair_ring(r: &RingSource) -> PairRing {
    PairRing {
        centre_m: r.centre_m,
        axis: r.axis,
        radius_m: r.radius_m,
        current_a: r.current_a,
    }
}

/// A source of B.
#[derive(Debug, Clone, PartialEq)]
pub enum Source {
    /// One ring.
    Ring(RingSource),
    /// One straight piece.
    Segment(SegmentSource),
    /// An ideal solenoid.
    Sheet(SheetSource),
    /// A helix as rings near it and as a sheet farther out.
    RingStack(RingStack),
    /// A winding and its image in a conducting ground plane.
    ImagePair(Box<ImagePair>),
}

/// Cylindrical coordinates (rho, z) of `p` about an axis through `o`, and the radial unit
/// vector (zero on the axis).
#[inline]
fn cylindrical(
    o: &Point3<f64>,
    n: &Unit<Vector3<f64>>,
    p: &Point3<f64>,
) -> (f64, f64, Vector3<f64>) {
    let r = p - o;
    let z = r.dot(n.as_ref());
    let perp = r - n.as_ref() * z;
    let rho = perp.norm();
    let rho_hat = if rho > 0.0 {
        perp / rho
    } else {
        Vector3::zeros()
    };
    (rho, z, rho_hat)
}

/// (B_rho, B_z) (T) of a ring of radius `a_m` carrying `current_a`, at distance `rho_m` from
/// its axis and `z_m` from its plane.
///
/// With D = (a + rho)^2 + z^2, d = (a - rho)^2 + z^2 and kc = sqrt(d / D) (from the geometry),
/// the classical forms B_z = mu0 I / (2 pi sqrt D) [K + (a^2 - rho^2 - z^2)/d E] and
/// B_rho = mu0 I z / (2 pi rho sqrt D) [-K + (a^2 + rho^2 + z^2)/d E] (Smythe, ch. 7; Jackson
/// sec. 5.5) become, with K = cel(kc, 1, 1, 1) and E = cel(kc, 1, 1, kc^2) and cel linear in
/// its last two arguments,
/// B_z = mu0 I / (2 pi sqrt D) cel(kc, 1, 2a(a - rho)/d, 2a(a + rho)/D) and
/// B_rho = mu0 I z / (2 pi sqrt D) cel(kc, 1, 2a/d, -2a/D): the 1/rho has cancelled, so the
/// axis needs no special case and gives exactly B_z = mu0 I a^2 / (2 (a^2 + z^2)^{3/2}),
/// B_rho = 0 (cel(1, 1, x, y) = pi (x + y)/4). Infinite on the wire (d = 0).
///
/// Far from the ring (distance r above [`RING_MULTIPOLE_RATIO`] radii) the closed form loses
/// its digits, since the cel arguments nearly cancel (half the value at r = 1e15 a, zero
/// beyond); there the multipole series of the ring is used instead (`b_ring_far`).
#[inline]
pub fn b_ring_point(a_m: f64, current_a: f64, rho_m: f64, z_m: f64) -> (f64, f64) {
    let r_m = rho_m.hypot(z_m);
    if r_m > RING_MULTIPOLE_RATIO * a_m {
        return b_ring_far(a_m, current_a, rho_m, z_m, r_m);
    }
    let big_d = (a_m + rho_m) * (a_m + rho_m) + z_m * z_m;
    let small_d = (a_m - rho_m) * (a_m - rho_m) + z_m * z_m;
    let kc = (small_d / big_d).sqrt();
    let pre = MU0 * current_a / (2.0 * PI * big_d.sqrt());
    let bz = pre
        * cel_positive_p(
            kc,
            1.0,
            2.0 * a_m * (a_m - rho_m) / small_d,
            2.0 * a_m * (a_m + rho_m) / big_d,
        );
    let brho = pre * z_m * cel_positive_p(kc, 1.0, 2.0 * a_m / small_d, -2.0 * a_m / big_d);
    (brho, bz)
}

/// Distance from a ring's centre, in radii, beyond which its field is the multipole series
/// (`b_ring_far`): there the series' truncation, about 2 (a/r)^6, is below 1e-17, while the
/// closed form's cancellation grows as (r/a)^2 times the rounding unit.
pub const RING_MULTIPOLE_RATIO: f64 = 1e3;

/// Distance from a sheet's centre, in units of s = sqrt(a^2 + b^2), beyond which its field is
/// the multipole series (`b_sheet_far`): the Derby-Olbert form's differences cancel much
/// sooner than the ring's (7e-7 relative at r = 1000 s against mpmath), while the series'
/// truncation, about 2 (s/r)^6, is 3e-9 at 30 s.
pub const SHEET_MULTIPOLE_RATIO: f64 = 30.0;

/// (B_rho, B_z) (T) of a ring far away (r >> a): the first three terms (l = 1, 3, 5) of the
/// ring's magnetic scalar potential, Phi = -(I/2) sum_n binom(-1/2, n) (a/r)^(2n)
/// P_(2n-1)(cos theta) (the on-axis potential (I/2)(1 - z/sqrt(z^2 + a^2)) expanded in a/z and
/// continued off the axis by Legendre polynomials; W. R. Smythe, "Static and Dynamic
/// Electricity", 3rd ed., 1968, sec. 7.10): C_1 = I a^2 / 4, C_3 = -3 I a^4 / 16,
/// C_5 = 5 I a^6 / 32 ([`b_multipole_far`]). Relative truncation error about 2 (a/r)^6.
fn b_ring_far(a_m: f64, current_a: f64, rho_m: f64, z_m: f64, r_m: f64) -> (f64, f64) {
    let k = [
        0.25 * current_a,
        -3.0 / 16.0 * current_a,
        5.0 / 32.0 * current_a,
    ];
    b_multipole_far(k, a_m, rho_m, z_m, r_m)
}

/// (B_rho, B_z) (T) at (rho, z), distance r from the centre, of an axisymmetric current whose
/// scalar potential is sum_l C_l r^-(l+1) P_l(cos theta), l = 1, 3, 5, given as
/// `k` = C_l / s^(l+1) for a size `s_m` of the source (so that powers of s/r are taken first and
/// nothing overflows). B = -mu0 grad Phi: a term gives B_r = mu0 (l + 1) C_l r^-(l+2) P_l and
/// B_theta = mu0 C_l r^-(l+2) sin(theta) P_l'.
fn b_multipole_far(k: [f64; 3], s_m: f64, rho_m: f64, z_m: f64, r_m: f64) -> (f64, f64) {
    let (c, s) = (z_m / r_m, rho_m / r_m);
    let q = s_m / r_m;
    let (k1, k3, k5) = (
        scaled_power(MU0 * k[0], q, 2, r_m),
        scaled_power(MU0 * k[1], q, 4, r_m),
        scaled_power(MU0 * k[2], q, 6, r_m),
    );
    let c2 = c * c;
    let p3 = 0.5 * c * (5.0 * c2 - 3.0);
    let dp3 = 0.5 * (15.0 * c2 - 3.0);
    let p5 = 0.125 * c * ((63.0 * c2 - 70.0) * c2 + 15.0);
    let dp5 = 0.125 * ((315.0 * c2 - 210.0) * c2 + 15.0);
    let b_r = 2.0 * k1 * c + 4.0 * k3 * p3 + 6.0 * k5 * p5;
    let b_t = s * (k1 + k3 * dp3 + k5 * dp5);
    (b_r * s + b_t * c, b_r * c - b_t * s)
}

/// `c q^n / r`, formed factor by factor so that no intermediate falls below the result's
/// magnitude (q < 1; 1/r first when it is above 1): the result underflows only when the true
/// value is itself below the smallest normal f64 (forming q^2 first made it subnormal at
/// r = 1e155 m for a 5 cm ring, and the field lost its digits).
fn scaled_power(c: f64, q: f64, n: u32, r: f64) -> f64 {
    let mut x = if r < 1.0 { c / r } else { c };
    for _ in 0..n {
        x *= q;
    }
    if r < 1.0 { x } else { x / r }
}

/// (B_rho, B_z) (T) of an ideal solenoid (radius a, half-length b, surface current K) far away:
/// the on-axis potential (K/2)(sqrt((z + b)^2 + a^2) - sqrt((z - b)^2 + a^2)) expanded in 1/z
/// gives C_1 = K a^2 b / 2, C_3 = (K/2)(a^2 b^3 - 3/4 a^4 b) and
/// C_5 = (K/2)(a^2 b^5 - 5/2 a^4 b^3 + 5/8 a^6 b), continued off the axis as for the ring ([`b_ring_far`], its limit for b -> 0
/// with 2 b K = I). Relative truncation error about 2 (s/r)^6, s = sqrt(a^2 + b^2).
fn b_sheet_far(a_m: f64, b_m: f64, ni_a_per_m: f64, rho_m: f64, z_m: f64, r_m: f64) -> (f64, f64) {
    let s_m = a_m.hypot(b_m);
    let (al, be) = (a_m / s_m, b_m / s_m);
    let (al2, be2) = (al * al, be * be);
    let h = 0.5 * ni_a_per_m * s_m;
    let k = [
        h * al2 * be,
        h * (al2 * be2 * be - 0.75 * al2 * al2 * be),
        h * (al2 * be2 * be2 * be - 2.5 * al2 * al2 * be2 * be + 0.625 * al2 * al2 * al2 * be),
    ];
    b_multipole_far(k, s_m, rho_m, z_m, r_m)
}

/// B (T) at `p` of a straight filament from `a` to `b` carrying `current_a`.
///
/// B = (mu0 I / 4 pi) (r1 x r2) (|r1| + |r2|) / (|r1| |r2| (|r1| |r2| + r1 . r2)),
/// r1 = a - p, r2 = b - p: the integral of Biot-Savart's law along the segment in a form
/// without angles (equivalent to J. D. Hanson, S. P. Hirshman, "Compact expressions for the
/// Biot-Savart fields of a filamentary segment", Phys. Plasmas 9(10), 4410-4412, 2002, eq. 6;
/// equation number from memory). Zero on the segment's line outside it; infinite on it.
#[inline]
pub fn b_segment_point(
    a: &Point3<f64>,
    b: &Point3<f64>,
    current_a: f64,
    p: &Point3<f64>,
) -> Vector3<f64> {
    let r1 = a - p;
    let r2 = b - p;
    let l1 = r1.norm();
    let l2 = r2.norm();
    let denom = l1 * l2 * (l1 * l2 + r1.dot(&r2));
    if denom == 0.0 {
        return Vector3::zeros();
    }
    // r1 x r2 = r1 x (b - a): the latter keeps its digits far away, where r1 and r2 are
    // nearly parallel and their cross product would cancel (a relative error of about
    // 1e-16 |r1| / |b - a| per segment, which a closed loop's sum multiplies by |r1| / size).
    r1.cross(&(b - a)) * (1e-7 * current_a * (l1 + l2) / denom)
}

/// (B_rho, B_z) (T) of an ideal solenoid of radius `a_m`, half-length `b_m`, surface current
/// `ni_a_per_m`, at distance `rho_m` from the axis and `z_m` from its mid-plane.
///
/// Derby & Olbert 2010: with z_pm = z +- b, alpha_pm = a / sqrt(z_pm^2 + (rho + a)^2),
/// beta_pm = z_pm / sqrt(z_pm^2 + (rho + a)^2), gamma = (a - rho)/(a + rho),
/// k_pm = sqrt((z_pm^2 + (a - rho)^2) / (z_pm^2 + (a + rho)^2)) (a complementary modulus) and
/// B0 = mu0 n I / pi:
/// B_rho = B0 [alpha_+ P1(k_+) - alpha_- P1(k_-)], B_z = B0 a/(a + rho) [beta_+ P2(k_+) -
/// beta_- P2(k_-)], P1(k) = cel(k, 1, 1, -1), P2(k) = cel(k, gamma^2, 1, gamma).
/// Undefined on the sheet's cylinder (rho = a, gamma = 0); callers avoid it.
#[inline]
pub fn b_sheet_point(a_m: f64, b_m: f64, ni_a_per_m: f64, rho_m: f64, z_m: f64) -> (f64, f64) {
    // Far away the differences below cancel; the multipole series keeps the digits there.
    let r_m = rho_m.hypot(z_m);
    if r_m > SHEET_MULTIPOLE_RATIO * a_m.hypot(b_m) {
        return b_sheet_far(a_m, b_m, ni_a_per_m, rho_m, z_m, r_m);
    }
    let b0 = MU0 * ni_a_per_m / PI;
    let gamma = (a_m - rho_m) / (a_m + rho_m);
    let term = |zz: f64| -> (f64, f64) {
        let sum2 = zz * zz + (a_m + rho_m) * (a_m + rho_m);
        let dif2 = zz * zz + (a_m - rho_m) * (a_m - rho_m);
        let alpha = a_m / sum2.sqrt();
        let k = (dif2 / sum2).sqrt();
        (
            alpha * cel_positive_p(k, 1.0, 1.0, -1.0),
            zz / sum2.sqrt() * cel_positive_p(k, gamma * gamma, 1.0, gamma),
        )
    };
    let (r_p, z_p) = term(z_m + b_m);
    let (r_m, z_m2) = term(z_m - b_m);
    (b0 * (r_p - r_m), b0 * a_m / (a_m + rho_m) * (z_p - z_m2))
}

fn ring_contribution(r: &RingSource, p: &Point3<f64>) -> Option<Vector3<f64>> {
    let (rho, z, rho_hat) = cylindrical(&r.centre_m, &r.axis, p);
    let d = (r.radius_m - rho).hypot(z);
    if d <= r.wire_radius_m || d == 0.0 {
        return None;
    }
    let (brho, bz) = b_ring_point(r.radius_m, r.current_a, rho, z);
    Some(rho_hat * brho + r.axis.as_ref() * bz)
}

fn segment_contribution(s: &SegmentSource, p: &Point3<f64>) -> Option<Vector3<f64>> {
    let ab = s.end_m - s.start_m;
    let t = ((p - s.start_m).dot(&ab) / ab.norm_squared()).clamp(0.0, 1.0);
    let dist = (s.start_m + ab * t - p).norm();
    if dist <= s.wire_radius_m || dist == 0.0 {
        return None;
    }
    Some(b_segment_point(&s.start_m, &s.end_m, s.current_a, p))
}

fn sheet_contribution(s: &SheetSource, p: &Point3<f64>) -> Option<Vector3<f64>> {
    let (rho, z, rho_hat) = cylindrical(&s.base_centre_m, &s.axis, p);
    if (rho - s.radius_m).abs() <= 1e-12 * s.radius_m && z >= 0.0 && z <= s.length_m {
        return None;
    }
    // On the sheet's cylinder beyond its ends gamma = 0: step off by a relative 1e-9, whose
    // effect on B is of that order.
    let rho = if (rho - s.radius_m).abs() <= 1e-9 * s.radius_m {
        s.radius_m * (1.0 + 1e-9)
    } else {
        rho
    };
    let half = 0.5 * s.length_m;
    let (brho, bz) = b_sheet_point(
        s.radius_m,
        half,
        s.current_per_length_a_per_m,
        rho,
        z - half,
    );
    Some(rho_hat * brho + s.axis.as_ref() * bz)
}

/// Distance (m) from `p` to a sheet's cylinder segment.
fn distance_to_sheet(s: &SheetSource, p: &Point3<f64>) -> f64 {
    let (rho, z, _) = cylindrical(&s.base_centre_m, &s.axis, p);
    let dz = if z < 0.0 {
        -z
    } else if z > s.length_m {
        z - s.length_m
    } else {
        0.0
    };
    (rho - s.radius_m).hypot(dz)
}

/// B (T) at one point from all sources; None when the point lies inside a wire.
pub fn b_field_point(sources: &[Source], point_m: &Point3<f64>) -> Option<Vector3<f64>> {
    let mut b = Vector3::zeros();
    for s in sources {
        b += match s {
            Source::Ring(r) => ring_contribution(r, point_m)?,
            Source::Segment(seg) => segment_contribution(seg, point_m)?,
            Source::Sheet(sh) => sheet_contribution(sh, point_m)?,
            Source::RingStack(stack) => {
                if distance_to_sheet(&stack.sheet, point_m) > stack.near_m {
                    sheet_contribution(&stack.sheet, point_m)?
                } else {
                    let mut sum = Vector3::zeros();
                    for r in &stack.rings {
                        sum += ring_contribution(r, point_m)?;
                    }
                    sum
                }
            }
            Source::ImagePair(pair) => match &pair.far {
                Some(far) if far.applies_at(point_m) => far.b_at(point_m),
                _ => b_field_point(&pair.winding, point_m)? + b_field_point(&pair.image, point_m)?,
            },
        };
    }
    Some(b)
}

/// B (T, peak of the drive) at each point; None where a point lies inside a wire.
///
/// The straight filaments (polylines, filament-model helices) answer with their multipole
/// expansion ([`FilamentFar`]) at points farther than [`FILAMENT_FAR_RATIO`] times their size:
/// there the sum of the segments' closed forms cancels (a closed loop's 1/r^2 terms leave its
/// 1/r^3 dipole, losing about (r / size) rounding units, and the closed form overflows beyond
/// about 1e77 m). Rings and sheets keep their own far forms ([`b_ring_point`]).
pub fn b_field(
    sources: &[Source],
    points_m: &[Point3<f64>],
    par: Par,
) -> Vec<Option<Vector3<f64>>> {
    let far = FilamentFar::of(sources);
    map_indexed(points_m.len(), par, |i| {
        b_field_point_planned(sources, far.as_ref(), &points_m[i])
    })
}

/// [`b_field_point`], with the straight filaments' multipole expansion `far` used beyond
/// [`FILAMENT_FAR_RATIO`] of their size.
fn b_field_point_planned(
    sources: &[Source],
    far: Option<&FilamentFar>,
    point_m: &Point3<f64>,
) -> Option<Vector3<f64>> {
    match far {
        Some(f) if f.applies_at(point_m) => {
            let mut b = f.b_at(point_m);
            for s in sources {
                if !matches!(s, Source::Segment(_)) {
                    b += b_field_point(std::slice::from_ref(s), point_m)?;
                }
            }
            Some(b)
        }
        _ => b_field_point(sources, point_m),
    }
}

/// Distance from the centre of a set of straight filaments, in units of its size (the largest
/// distance of an end from the centre), beyond which their field is their multipole expansion
/// ([`FilamentFar`]). The expansion's truncation is about size / r of the field (a closed
/// loop; (size / r)^2 for an open path) and the closed forms' cancellation about (r / size)
/// rounding units: both are near 1e-8 here.
pub const FILAMENT_FAR_RATIO: f64 = 1e8;

/// The first two terms of the multipole expansion of the field of straight filaments about a
/// centre c: with R = p - c and x' = x - c on the filaments, Biot-Savart's
/// dl x (R - x') / |R - x'|^3 expanded to first order in x' / R gives
/// B = (mu0 / 4 pi) [D x R / R^3 + 3 (T R) x R / R^5 - w / R^3], D = sum I d (the net current
/// element, zero for a closed loop), T = sum I d (x) m' (d a segment's vector, m' its midpoint
/// from c; exact for straight pieces), w_k = eps_kij T_ij. For a closed loop T is antisymmetric
/// and this is the magnetic dipole field (mu0 / 4 pi) [3 (m . R^) R^ - m] / R^3 with
/// m = -w / 2 = (I / 2) sum m' x d (J. D. Jackson, "Classical Electrodynamics", 3rd ed., 1999,
/// eqs. 5.54 and 5.56).
#[derive(Debug, Clone, PartialEq)]
pub struct FilamentFar {
    /// Centre c (m): the middle of the filaments' bounding box.
    pub centre_m: Point3<f64>,
    /// Largest distance (m) of a filament end from the centre.
    pub size_m: f64,
    /// D (A m).
    pub net_element_a_m: Vector3<f64>,
    /// T (A m^2).
    pub moment_a_m2: nalgebra::Matrix3<f64>,
}

impl FilamentFar {
    /// The expansion of the straight filaments among `sources`; None without any.
    ///
    /// Along a chain (each piece starting where the previous ended, with the same current) D and
    /// the symmetric part of T telescope: they are taken from the chain's ends, so that a closed
    /// loop has exactly none (summing the pieces would leave rounding of n x 1e-16 of the
    /// loop's size, whose 1/r^2 term outgrows the dipole far away).
    pub fn of(sources: &[Source]) -> Option<FilamentFar> {
        let segs: Vec<&SegmentSource> = sources
            .iter()
            .filter_map(|s| match s {
                Source::Segment(seg) => Some(seg),
                _ => None,
            })
            .collect();
        if segs.is_empty() {
            return None;
        }
        let mut lo = segs[0].start_m;
        let mut hi = segs[0].start_m;
        for s in &segs {
            for p in [s.start_m, s.end_m] {
                lo = lo.inf(&p);
                hi = hi.sup(&p);
            }
        }
        let c = nalgebra::center(&lo, &hi);
        let size_m = segs
            .iter()
            .flat_map(|s| [s.start_m, s.end_m])
            .map(|p| (p - c).norm())
            .fold(0.0, f64::max);
        let mut d = Vector3::zeros();
        let mut t = nalgebra::Matrix3::zeros();
        let mut sym = nalgebra::Matrix3::zeros();
        let mut k = 0;
        while k < segs.len() {
            // One chain: segs[k..j].
            let mut j = k + 1;
            while j < segs.len()
                && segs[j].start_m == segs[j - 1].end_m
                && segs[j].current_a == segs[k].current_a
            {
                j += 1;
            }
            let i = segs[k].current_a;
            let (s0, e1) = (segs[k].start_m - c, segs[j - 1].end_m - c);
            d += (e1 - s0) * i;
            sym += (e1 * e1.transpose() - s0 * s0.transpose()) * i;
            for s in &segs[k..j] {
                let m = nalgebra::center(&s.start_m, &s.end_m) - c;
                t += (s.end_m - s.start_m) * m.transpose() * i;
            }
            k = j;
        }
        // T's symmetric part from the chains' ends, its antisymmetric part from the sum.
        let moment = (sym + t - t.transpose()) * 0.5;
        Some(FilamentFar {
            centre_m: c,
            size_m,
            net_element_a_m: d,
            moment_a_m2: moment,
        })
    }

    /// Whether `p` lies beyond [`FILAMENT_FAR_RATIO`] sizes from the centre.
    pub fn applies_at(&self, p: &Point3<f64>) -> bool {
        let (_, r) = unit_and_length(&(p - self.centre_m));
        r > FILAMENT_FAR_RATIO * self.size_m
    }

    /// B (T) of the expansion at `p` (see the type's doc); each term divided by R one factor
    /// at a time, so that it underflows only when its true value does.
    pub fn b_at(&self, p: &Point3<f64>) -> Vector3<f64> {
        let (u, r) = unit_and_length(&(p - self.centre_m));
        let t = &self.moment_a_m2;
        let w = Vector3::new(
            t[(1, 2)] - t[(2, 1)],
            t[(2, 0)] - t[(0, 2)],
            t[(0, 1)] - t[(1, 0)],
        );
        let mu0_4pi = MU0 / (4.0 * PI);
        let first = self.net_element_a_m.cross(&u) * mu0_4pi;
        let second = ((t * u).cross(&u) * 3.0 - w) * mu0_4pi;
        // Dividing by r one factor at a time moves monotonically towards the result.
        first.map(|x| x / r / r) + second.map(|x| x / r / r / r)
    }
}

/// The unit vector and length of `v`, without overflow or underflow of its squares.
fn unit_and_length(v: &Vector3<f64>) -> (Vector3<f64>, f64) {
    let scale = v.amax();
    if scale == 0.0 {
        return (Vector3::zeros(), 0.0);
    }
    let u = v / scale;
    let n = u.norm();
    (u / n, scale * n)
}

/// Whether `p` lies within a wire's radius of a source's centreline (where B has no value).
pub fn on_wire(sources: &[Source], p: &Point3<f64>) -> bool {
    sources.iter().any(|s| match s {
        Source::Ring(r) => ring_contribution_wire(r, p),
        Source::Segment(seg) => {
            let ab = seg.end_m - seg.start_m;
            let t = ((p - seg.start_m).dot(&ab) / ab.norm_squared()).clamp(0.0, 1.0);
            let dist = (seg.start_m + ab * t - p).norm();
            dist <= seg.wire_radius_m || dist == 0.0
        }
        Source::Sheet(_) => false,
        Source::RingStack(stack) => {
            distance_to_sheet(&stack.sheet, p) <= stack.near_m
                && stack.rings.iter().any(|r| ring_contribution_wire(r, p))
        }
        Source::ImagePair(pair) => on_wire(&pair.winding, p) || on_wire(&pair.image, p),
    })
}

/// Whether `p` lies within a ring's wire radius of its centreline.
fn ring_contribution_wire(r: &RingSource, p: &Point3<f64>) -> bool {
    let (rho, z, _) = cylindrical(&r.centre_m, &r.axis, p);
    let d = (r.radius_m - rho).hypot(z);
    d <= r.wire_radius_m || d == 0.0
}

/// Sources of one winding carrying `current_a`.
///
/// Of a tapped winding only the part in use carries current: its ring or filament model holds
/// that part alone, and the Derby-Olbert sheet stands in for the rings only while they are a
/// uniform stack of whole turns from the helix's base (a helix tapped from its base at a whole
/// number of turns: the sheet then spans the tapped turns).
pub fn sources_of_winding(winding: &Winding, current_a: f64) -> Vec<Source> {
    let wire = winding.wire_radius_m();
    let rings = match winding.model {
        Model::Ring => ring_model(winding),
        Model::Filament => None,
    };
    if let Some(model) = rings {
        let ring_sources: Vec<RingSource> = model
            .rings
            .iter()
            .map(|r| RingSource {
                centre_m: r.centre_m,
                axis: model.axis,
                radius_m: r.radius_m,
                current_a: current_a * r.weight,
                wire_radius_m: wire,
            })
            .collect();
        let whole = model.rings.iter().all(|r| r.weight == 1.0);
        if let (Some(pitch), true, true) = (
            model.uniform_pitch_m,
            whole,
            ring_sources.len() >= SHEET_MIN_TURNS,
        ) {
            let n = ring_sources.len() as f64;
            let length = n * pitch;
            let sheet = SheetSource {
                base_centre_m: model.origin_m,
                axis: model.axis,
                radius_m: ring_sources[0].radius_m,
                length_m: length,
                current_per_length_a_per_m: n * current_a / length,
            };
            return vec![Source::RingStack(RingStack {
                rings: ring_sources,
                sheet,
                near_m: SHEET_NEAR_PITCHES * pitch,
            })];
        }
        return ring_sources.into_iter().map(Source::Ring).collect();
    }
    let f = filament_model(winding);
    (0..f.n_segments())
        .map(|k| {
            let (a, b) = f.segment(k);
            Source::Segment(SegmentSource {
                start_m: a,
                end_m: b,
                current_a: current_a * f.weight,
                wire_radius_m: wire,
            })
        })
        .collect()
}

/// All sources of a design with its drive currents (`[drive] currents`, peak A), and the
/// image windings when the ground plane is conducting. `source` labels messages.
///
/// Errors when no winding carries current ([`validate_drive`]).
// The error is geometry's own type, returned once per design: its size costs nothing here.
#[allow(clippy::result_large_err)]
pub fn sources_from_design(design: &Design, source: &str) -> Result<Vec<Source>, DesignError> {
    validate_drive(
        design,
        DriveNeeds {
            currents: true,
            ..Default::default()
        },
        "the magnetic field",
        source,
    )?;
    let ground = design.ground.filter(|g| g.conducting);
    let mut out = Vec::new();
    for w in &design.windings {
        let i = design.drive.current_a(&w.name);
        if i == 0.0 {
            continue;
        }
        match (&design.drive.secondary_current_profile, w.role) {
            (Some(profile), Role::Secondary) => {
                for (model, current) in profiled_sections(w, profile, i) {
                    let own = ring_sources(&model, current);
                    match ground {
                        Some(g) => {
                            let img = ring_sources(&image_ring_model(&model, &g), current);
                            out.push(Source::ImagePair(Box::new(ImagePair::new(own, img, g.z_m))));
                        }
                        None => out.extend(own),
                    }
                }
            }
            _ => {
                let own = sources_of_winding(w, i);
                match ground {
                    Some(g) => {
                        let img = image_windings(std::slice::from_ref(w), &g);
                        let img = sources_of_winding(&img[0], i);
                        out.push(Source::ImagePair(Box::new(ImagePair::new(own, img, g.z_m))));
                    }
                    None => out.extend(own),
                }
            }
        }
    }
    Ok(out)
}

/// The sections of equal turns of a winding carrying a current profile (one value per
/// section, times `base_current_a`): each section's ring model and its current (A).
fn profiled_sections(
    winding: &Winding,
    profile: &[f64],
    base_current_a: f64,
) -> Vec<(coilfield_geometry::RingModel, f64)> {
    let Some(turns) = winding.shape.turns() else {
        return Vec::new();
    };
    let n = profile.len();
    (0..n)
        .filter_map(|k| {
            let u0 = turns * k as f64 / n as f64;
            let u1 = if k + 1 == n {
                turns
            } else {
                turns * (k + 1) as f64 / n as f64
            };
            coilfield_geometry::discretise::ring_model_of_turns(winding, u0, u1)
                .map(|m| (m, base_current_a * profile[k]))
        })
        .collect()
}

/// Ring sources (no sheet) of a ring model carrying `current_a` (times each ring's weight).
fn ring_sources(model: &coilfield_geometry::RingModel, current_a: f64) -> Vec<Source> {
    model
        .rings
        .iter()
        .map(|r| {
            Source::Ring(RingSource {
                centre_m: r.centre_m,
                axis: model.axis,
                radius_m: r.radius_m,
                current_a: current_a * r.weight,
                wire_radius_m: model.wire_radius_m,
            })
        })
        .collect()
}

/// The warning to print when B (and L, M) include image windings of a conducting plane.
pub fn image_warning(design: &Design) -> Option<String> {
    design.ground.filter(|g| g.conducting).map(|g| {
        format!(
            "the ground plane z = {} m is conducting: B includes image windings mirrored in it \
             (a perfect conductor, normal B = 0 on the plane)",
            g.z_m
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::mutual::{Circle, vector_potential_ring_point};

    fn rel(a: f64, b: f64) -> f64 {
        (a - b).abs() / b.abs().max(1e-300)
    }

    #[test]
    fn ring_on_axis_is_exact() {
        for &z in &[0.0, 0.3, 1.0, 5.0, -2.0] {
            let (br, bz) = b_ring_point(1.0, 1.0, 0.0, z);
            let want = MU0 / (2.0 * (1.0_f64 + z * z).powf(1.5));
            assert!(rel(bz, want) < 1e-15, "z={z}: {bz} vs {want}");
            assert_eq!(br, 0.0);
        }
        // Near the axis: no NaN, continuous.
        let (br, bz) = b_ring_point(1.0, 1.0, 1e-12, 0.5);
        assert!(br.is_finite() && bz.is_finite());
        assert!(rel(bz, b_ring_point(1.0, 1.0, 0.0, 0.5).1) < 1e-12);
    }

    #[test]
    fn ring_matches_the_closed_form_in_mpmath() {
        // The K, E closed form (J. D. Jackson, "Classical Electrodynamics", 3rd ed. 1999, 5.5),
        // mpmath 30 digits: validation/inline_refs.py, re-run by .ci/test with --check.
        for &(rho, z, br, bz) in &[
            (0.0, 0.0, 0.0, 6.28318530718e-7),
            (0.0, 1.0, 0.0, 2.22144146908e-7),
            (0.5, 0.5, 1.61689084076e-7, 4.34584893594e-7),
            (2.0, 0.0, 0.0, -5.41731848613e-8),
        ] {
            let (gr, gz) = b_ring_point(1.0, 1.0, rho, z);
            assert!(
                (gr - br).abs() < 1e-11 * 1e-7 + 1e-11 * br.abs(),
                "{rho},{z}: {gr}"
            );
            assert!(rel(gz, bz) < 1e-10, "{rho},{z}: {gz} vs {bz}");
        }
    }

    #[test]
    fn ring_is_the_curl_of_its_vector_potential() {
        // Independent route: finite differences of the A_phi kernel of `mutual`.
        let ring = Circle {
            centre_m: Point3::origin(),
            axis: Vector3::z_axis(),
            radius_m: 0.7,
        };
        let h = 1e-5;
        for &(x, z) in &[(0.3, 0.2), (1.1, -0.4), (0.69, 0.05)] {
            let a = |x: f64, z: f64| vector_potential_ring_point(&ring, &Point3::new(x, 0.0, z)).y;
            // B = curl A in cylindrical coordinates: B_rho = -dA/dz, B_z = (1/rho) d(rho A)/drho.
            let brho = -(a(x, z + h) - a(x, z - h)) / (2.0 * h);
            let bz = ((x + h) * a(x + h, z) - (x - h) * a(x - h, z)) / (2.0 * h * x);
            let (gr, gz) = b_ring_point(0.7, 1.0, x, z);
            assert!(rel(gr, brho) < 1e-6, "{gr} vs {brho}");
            assert!(rel(gz, bz) < 1e-6, "{gz} vs {bz}");
        }
    }

    #[test]
    fn loop_and_sheet_match_the_mpmath_table() {
        // validation/fields_b.csv (validation/fields_refs.py): Biot-Savart quadrature for the
        // loop, the integral of loops over the length for the sheet.
        let text = include_str!("../../validation/fields_b.csv");
        let mut rows: Vec<(String, [f64; 5], String, f64, f64)> = Vec::new();
        for line in text.lines().skip(1) {
            let f: Vec<&str> = line.splitn(11, ',').collect();
            let num = |i: usize| f[i].parse::<f64>().unwrap();
            assert_eq!(f[9], "rel_to_magnitude");
            rows.push((
                f[0].to_string(),
                [num(1), num(2), num(3), num(4), num(5)],
                f[6].to_string(),
                num(7),
                num(8),
            ));
        }
        assert!(rows.len() >= 20);
        for (kind, x, quantity, reference, tol) in &rows {
            let (br, bz) = if kind == "loop" {
                b_ring_point(x[0], 1.0, x[3], x[4])
            } else {
                b_sheet_point(x[0], x[1], x[2], x[3], x[4])
            };
            let got = if quantity == "b_rho" { br } else { bz };
            let magnitude = br.hypot(bz);
            assert!(
                (got - reference).abs() <= tol * magnitude,
                "{kind} {x:?} {quantity}: {got} vs {reference}"
            );
        }
    }

    #[test]
    fn ring_field_keeps_its_digits_far_away() {
        // On the axis the exact field mu0 I a^2 / (2 (a^2 + z^2)^(3/2)) (Jackson, "Classical
        // Electrodynamics", 3rd ed., 1999, sec. 5.5), written as mu0 I a^2 / (2 z^3 (1 +
        // (a/z)^2)^(3/2)) so that it neither overflows nor cancels: a different formula from
        // both branches. Before: half the value at 1e15 m, zero from 1e16 m.
        let (a, i) = (0.05, 2.0);
        for z in [0.3, 10.0, 49.0, 51.0, 1e3, 1e6, 1e15, 1e16, 1e100] {
            let q = a / z;
            let exact = MU0 * i * a * a / (2.0 * z * z * z * (1.0 + q * q).powf(1.5));
            let (br, bz) = b_ring_point(a, i, 0.0, z);
            assert!(rel(bz, exact) < 1e-12, "z = {z}: {bz} vs {exact}");
            assert!(br.abs() <= 1e-12 * exact, "z = {z}: B_rho {br}");
        }
        // In the plane of the ring, far away: the field of a magnetic dipole m = I pi a^2,
        // B_z = -mu0 m / (4 pi rho^3) (Jackson 1999, eq. 5.56), which the ring's field
        // approaches with a relative difference of 9/8 (a/rho)^2 (its octupole term).
        for rho in [1e3, 1e6, 1e15, 1e16, 1e100] {
            let q = a / rho;
            let dipole = -MU0 * i * a * a / (4.0 * rho * rho * rho);
            let (br, bz) = b_ring_point(a, i, rho, 0.0);
            assert!(
                rel(bz, dipole) < 1.2 * q * q + 1e-13,
                "rho = {rho}: {bz} vs {dipole}"
            );
            assert!(br.abs() <= 1e-12 * dipole.abs(), "rho = {rho}: B_rho {br}");
        }
        // Both branches agree where they meet, in every direction (the closed form holds its
        // digits there: its cancellation costs about (r/a)^2 rounding units).
        let r = RING_MULTIPOLE_RATIO * a;
        for k in 0..=12 {
            let t = std::f64::consts::PI * k as f64 / 12.0;
            let (rho, z) = (r * t.sin(), r * t.cos());
            let near = b_ring_point(a, i, rho * (1.0 - 1e-13), z * (1.0 - 1e-13));
            let far = b_ring_point(a, i, rho * (1.0 + 1e-13), z * (1.0 + 1e-13));
            let scale = far.0.hypot(far.1);
            assert!(
                (near.0 - far.0).abs() < 1e-9 * scale,
                "theta {t}: {near:?} {far:?}"
            );
            assert!(
                (near.1 - far.1).abs() < 1e-9 * scale,
                "theta {t}: {near:?} {far:?}"
            );
        }
    }

    #[test]
    fn sheet_field_keeps_its_digits_far_away() {
        // On the axis far away: the field of the dipole m = K 2b pi a^2, B_z = mu0 m /
        // (2 pi z^3) (Jackson, "Classical Electrodynamics", 3rd ed., 1999, eq. 5.56), which the
        // solenoid's field approaches within about (s/z)^2. Before: the difference of the two
        // ends' terms cancelled (B less than half the dipole value at 1e15 m, zero at 1e100 m).
        let (a, b, k): (f64, f64, f64) = (0.05, 0.2, 1e3);
        let s = a.hypot(b);
        for z in [1e3 * s, 1e6, 1e15, 1e16, 1e100] {
            let m = k * 2.0 * b * std::f64::consts::PI * a * a;
            let dipole = MU0 * m / (2.0 * std::f64::consts::PI * z * z * z);
            let (br, bz) = b_sheet_point(a, b, k, 0.0, z);
            let q = s / z;
            assert!(
                rel(bz, dipole) < 3.0 * q * q + 1e-13,
                "z = {z}: {bz} vs {dipole}"
            );
            assert!(br.abs() <= 1e-12 * dipole, "z = {z}: B_rho {br}");
        }
        // The exact axial value at z = 1000 s (validation/far_field_refs.py, mpmath at 40
        // digits of the solenoid's axial field, Jackson 1999, sec. 5.5):
        // 7.171289457640151e-14 T (the closed form gave 7.1712947e-14 there).
        let (_, bz) = b_sheet_point(a, b, k, 0.0, 1e3 * s);
        assert!(rel(bz, 7.171_289_457_640_15e-14) < 1e-11, "{bz}");
        // Both branches agree where they meet, in every direction, to the accuracy both reach
        // there (about 1e-9).
        let r = SHEET_MULTIPOLE_RATIO * s;
        for j in 0..=12 {
            let t = std::f64::consts::PI * j as f64 / 12.0;
            let (rho, z) = (r * t.sin(), r * t.cos());
            let near = b_sheet_point(a, b, k, rho * (1.0 - 1e-13), z * (1.0 - 1e-13));
            let far = b_sheet_point(a, b, k, rho * (1.0 + 1e-13), z * (1.0 + 1e-13));
            let scale = far.0.hypot(far.1);
            assert!(
                (near.0 - far.0).abs() < 1e-8 * scale,
                "theta {t}: {near:?} {far:?}"
            );
            assert!(
                (near.1 - far.1).abs() < 1e-8 * scale,
                "theta {t}: {near:?} {far:?}"
            );
        }
    }

    /// The field of a magnetic dipole m along z at distance r, polar angle theta:
    /// B_r = mu0 m 2 cos(theta) / (4 pi r^3), B_theta = mu0 m sin(theta) / (4 pi r^3)
    /// (J. D. Jackson, "Classical Electrodynamics", 3rd ed., 1999, eq. 5.56), as (x, z)
    /// components in the xz-plane; the factor 1/r^3 through logarithms, so that it neither
    /// overflows nor underflows before the end (an independent route from the code's).
    fn dipole_xz(m: f64, r: f64, theta: f64) -> (f64, f64) {
        let k = ((MU0 * m / (4.0 * PI)).ln() - 3.0 * r.ln()).exp();
        let (br, bt) = (2.0 * k * theta.cos(), k * theta.sin());
        (
            br * theta.sin() + bt * theta.cos(),
            br * theta.cos() - bt * theta.sin(),
        )
    }

    #[test]
    fn far_fields_are_the_dipole_field_from_1e3_to_1e150_sizes() {
        // m = N I pi a^2 for rings and ring-model helices (any electromagnetics text; Jackson
        // 1999, eq. 5.57), m = I L^2 for a square loop of straight segments. The true fields
        // differ from the dipole's by about (size / r)^2 (their higher multipoles: 1e-6 at
        // 1e3 sizes); the square loop's straight segments keep about 1e-16 r / size from their
        // closed forms' cancellation up to 1e8 sizes (1e-8 there), and the dipole expansion
        // beyond. Where the dipole value is below the smallest normal f64 the answer must not
        // be a normal number (0 or subnormal; the field model gives 0).
        let ring = |a: f64, i: f64| {
            vec![Source::Ring(RingSource {
                centre_m: Point3::origin(),
                axis: Vector3::z_axis(),
                radius_m: a,
                current_a: i,
                wire_radius_m: 1e-3 * a,
            })]
        };
        let helix_text = "[[winding]]\nname = \"s\"\nshape = \"helix\"\nrole = \"secondary\"\norigin = [0.0, 0.0, -0.1]\naxis = [0.0, 0.0, 1.0]\nradius = 0.05\nlength = 0.2\nturns = 400\nwire_diameter = 0.0004\n";
        let d = coilfield_geometry::parse_design(helix_text, "t").unwrap();
        let helix = sources_of_winding(&d.windings[0], 1e4);
        assert!(matches!(helix[..], [Source::RingStack(_)]));
        let side = 0.1;
        let corners = [
            (-1.0, -1.0),
            (1.0, -1.0),
            (1.0, 1.0),
            (-1.0, 1.0),
            (-1.0, -1.0),
        ];
        let square: Vec<Source> = corners
            .windows(2)
            .map(|w| {
                Source::Segment(SegmentSource {
                    start_m: Point3::new(0.5 * side * w[0].0, 0.5 * side * w[0].1, 0.0),
                    end_m: Point3::new(0.5 * side * w[1].0, 0.5 * side * w[1].1, 0.0),
                    current_a: 1e7,
                    wire_radius_m: 1e-4,
                })
            })
            .collect();
        let cases: [(&str, Vec<Source>, f64, f64, f64); 4] = [
            ("ring", ring(0.05, 2.0), 2.0 * PI * 0.0025, 0.05, 0.0),
            ("big ring", ring(50.0, 1e7), 1e7 * PI * 2500.0, 50.0, 0.0),
            (
                "helix",
                helix,
                400.0 * 1e4 * PI * 0.0025,
                0.1_f64.hypot(0.05),
                0.0,
            ),
            (
                "square",
                square,
                1e7 * side * side,
                side / 2.0_f64.sqrt(),
                1e-16,
            ),
        ];
        let mut worst: f64 = 0.0;
        for (name, sources, m, size, cancel) in &cases {
            for ratio in [
                1e3, 1e5, 1e7, 1e9, 1e12, 1e30, 1e60, 1e90, 1e100, 1e120, 1e150,
            ] {
                for theta in [0.0, 0.4, 1.2, PI / 2.0, 2.5, PI] {
                    let r = ratio * size;
                    let p = Point3::new(r * f64::sin(theta), 0.0, r * f64::cos(theta));
                    let b = b_field(sources, &[p], Par::Seq)[0].unwrap();
                    let (bx, bz) = dipole_xz(*m, r, theta);
                    let scale = bx.hypot(bz);
                    if scale < f64::MIN_POSITIVE {
                        assert!(b.amax() < f64::MIN_POSITIVE, "{name} {ratio} {theta}: {b}");
                        continue;
                    }
                    let err = (b.x - bx).hypot(b.z - bz).hypot(b.y) / scale;
                    let q = 1.0 / ratio;
                    let tol = 3.0 * q * q + 2.0 * cancel * ratio.min(1e8) + 1e-12;
                    assert!(
                        err < tol,
                        "{name} at {ratio} sizes, theta {theta}: {err:e} > {tol:e}: {b} vs ({bx}, {bz})"
                    );
                    if ratio >= 1e8 {
                        worst = worst.max(err);
                    }
                }
            }
        }
        // Beyond 1e8 sizes every source is within 1e-8 of the dipole.
        assert!(worst < 1e-8, "{worst:e}");
    }

    #[test]
    fn helmholtz_pair_centre() {
        // (8 / (5 sqrt 5)) mu0 N I / R (Helmholtz pair, textbook; e.g. Jackson problem 5.5).
        let r = 0.2;
        let mk = |z: f64| {
            Source::Ring(RingSource {
                centre_m: Point3::new(0.0, 0.0, z),
                axis: Vector3::z_axis(),
                radius_m: r,
                current_a: 10.0 * 2.5,
                wire_radius_m: 1e-3,
            })
        };
        let b = b_field_point(&[mk(-r / 2.0), mk(r / 2.0)], &Point3::origin()).unwrap();
        let want = 8.0 / (5.0 * 5.0_f64.sqrt()) * MU0 * 10.0 * 2.5 / r;
        assert!(rel(b.z, want) < 1e-14, "{} vs {want}", b.z);
    }

    #[test]
    fn sheet_matches_the_integral_of_loops_in_mpmath() {
        // a = 1, length 2 (b = 1), n I = 1000 A/m: the loop field integrated over the length
        // (mpmath 30 digits; validation/inline_refs.py, re-run by .ci/test with --check).
        let (br, bz) = b_sheet_point(1.0, 1.0, 1000.0, 0.0, 0.0);
        assert_eq!(br, 0.0);
        assert!(rel(bz, 8.88576587632e-4) < 1e-11, "{bz}");
        let (br, bz) = b_sheet_point(1.0, 1.0, 1000.0, 0.5, 0.5);
        assert!(rel(br, 8.62470791446e-5) < 1e-10, "{br}");
        assert!(rel(bz, 8.49759136948e-4) < 1e-10, "{bz}");
        let (_, bz) = b_sheet_point(1.0, 1.0, 1000.0, 2.0, 0.0);
        assert!(rel(bz, -6.51600496907e-5) < 1e-10, "{bz}");
    }

    #[test]
    fn sheet_on_axis_is_the_textbook_solenoid() {
        // B_z = (mu0 n I / 2) [(z + b)/sqrt((z + b)^2 + a^2) - (z - b)/sqrt((z - b)^2 + a^2)].
        for &z in &[0.0, 0.7, 1.0, 3.0] {
            let (_, bz) = b_sheet_point(0.4, 1.0, 500.0, 0.0, z);
            let f = |u: f64| u / (u * u + 0.16).sqrt();
            let want = 0.5 * MU0 * 500.0 * (f(z + 1.0) - f(z - 1.0));
            assert!(rel(bz, want) < 1e-14, "{bz} vs {want}");
        }
    }

    #[test]
    fn polygon_of_1024_segments_matches_the_ring() {
        let n = 1024;
        let r = 0.5;
        let sources: Vec<Source> = (0..n)
            .map(|k| {
                let t0 = std::f64::consts::TAU * k as f64 / n as f64;
                let t1 = std::f64::consts::TAU * (k + 1) as f64 / n as f64;
                Source::Segment(SegmentSource {
                    start_m: Point3::new(r * t0.cos(), r * t0.sin(), 0.0),
                    end_m: Point3::new(r * t1.cos(), r * t1.sin(), 0.0),
                    current_a: 1.0,
                    wire_radius_m: 1e-3,
                })
            })
            .collect();
        let ring = [Source::Ring(RingSource {
            centre_m: Point3::origin(),
            axis: Vector3::z_axis(),
            radius_m: r,
            current_a: 1.0,
            wire_radius_m: 1e-3,
        })];
        for p in [
            Point3::new(0.0, 0.0, 0.0),
            Point3::new(0.2, 0.1, 0.3),
            Point3::new(1.0, -0.5, 0.2),
            Point3::new(0.0, 0.9, 0.3),
        ] {
            // Away from the wire: the inscribed polygon differs from the circle by
            // O((pi / n)^2) = 1e-5 at the wire's scale, less farther out.
            let a = b_field_point(&sources, &p).unwrap();
            let b = b_field_point(&ring, &p).unwrap();
            assert!(
                (a - b).norm() / b.norm() < 1e-5,
                "{p}: {a} vs {b}: {}",
                (a - b).norm() / b.norm()
            );
        }
    }

    #[test]
    fn point_on_a_wire_has_no_answer() {
        let ring = [Source::Ring(RingSource {
            centre_m: Point3::origin(),
            axis: Vector3::z_axis(),
            radius_m: 0.5,
            current_a: 1.0,
            wire_radius_m: 1e-3,
        })];
        assert_eq!(b_field_point(&ring, &Point3::new(0.5, 0.0, 0.0)), None);
        assert_eq!(b_field_point(&ring, &Point3::new(0.0, 0.5005, 0.0)), None);
        assert!(b_field_point(&ring, &Point3::new(0.0, 0.502, 0.0)).is_some());
    }

    #[test]
    fn stack_switches_to_the_sheet_smoothly() {
        let text = "[[winding]]\nname = \"s\"\nshape = \"helix\"\nrole = \"secondary\"\norigin = [0.0, 0.0, 0.0]\naxis = [0.0, 0.0, 1.0]\nradius = 0.05\nlength = 0.2\nturns = 400\nwire_diameter = 0.0004\n";
        let d = coilfield_geometry::parse_design(text, "t").unwrap();
        let src = sources_of_winding(&d.windings[0], 1.0);
        let Source::RingStack(stack) = &src[0] else {
            panic!("expected a stack")
        };
        let rings: Vec<Source> = stack.rings.iter().copied().map(Source::Ring).collect();
        for p in [
            Point3::new(0.05 + stack.near_m * 1.01, 0.0, 0.1),
            Point3::new(0.0, 0.0, 0.2 + stack.near_m * 1.01),
            Point3::new(0.3, 0.2, 0.5),
            Point3::new(0.0, 0.0, 0.1),
        ] {
            let a = b_field_point(&src, &p).unwrap();
            let b = b_field_point(&rings, &p).unwrap();
            assert!(
                (a - b).norm() / b.norm() < 1e-5,
                "{p}: {a} vs {b}: {}",
                (a - b).norm() / b.norm()
            );
        }
    }

    #[test]
    fn conducting_ground_cancels_the_normal_field_on_the_plane() {
        let text = "[[winding]]\nname = \"loop\"\nshape = \"ring\"\norigin = [0.1, 0.0, 0.2]\naxis = [0.3, 0.0, 1.0]\nradius = 0.1\nwire_diameter = 0.001\n[[winding]]\nname = \"wire\"\nshape = \"polyline\"\npoints = [[0.0, 0.0, 0.1], [0.2, 0.1, 0.3]]\nwire_diameter = 0.001\n[ground]\nz = 0.0\nconducting = true\n[drive]\ncurrents = { loop = 2.0, wire = 1.0 }\n";
        let d = coilfield_geometry::parse_design(text, "t").unwrap();
        let sources = sources_from_design(&d, "t").unwrap();
        assert!(image_warning(&d).unwrap().contains("image windings"));
        for p in [
            Point3::new(0.0, 0.0, 0.0),
            Point3::new(0.3, -0.2, 0.0),
            Point3::new(0.1, 0.05, 0.0),
        ] {
            let b = b_field_point(&sources, &p).unwrap();
            assert!(b.z.abs() < 1e-12 * b.norm(), "{p}: {b}");
            assert!(b.norm() > 0.0);
        }
    }

    #[test]
    fn a_stack_over_a_conducting_plane_answers_far_with_its_pair_expansion() {
        // A tilted 60-turn ring-model helix (a uniform stack) over a conducting plane: beyond
        // PAIR_FAR_RATIO sizes the pair answers with its multipole expansion
        // (`image_pair_far`), which must agree with the sum of every ring's and image ring's
        // own field (the closed form in K and E, or its multipole series beyond 1e3 radii:
        // an independent route), accurate there to about 1e-16 (r / a) (r / h) at most (1.7e-12
        // at 40 sizes; 7.5e-14 seen there, 5e-15 beyond): 5e-13. The stack's rings enter the expansion grouped by radius and axis,
        // which this checks (the validation table has single rings and straight pieces).
        let text = "[[winding]]\nname = \"s\"\nshape = \"helix\"\norigin = [0.2, 0.1, 0.3]\naxis = [0.2, 0.0, 1.0]\nradius = 0.05\nlength = 0.12\nturns = 60\nwire_diameter = 0.001\n[ground]\nz = 0.0\nconducting = true\n[drive]\ncurrents = { s = 2.0 }\n";
        let d = coilfield_geometry::parse_design(text, "t").unwrap();
        let sources = sources_from_design(&d, "t").unwrap();
        let [Source::ImagePair(pair)] = &sources[..] else {
            panic!("expected one pair: {sources:?}")
        };
        let rings_of = |side: &[Source]| -> Vec<Source> {
            match side {
                [Source::RingStack(stack)] => {
                    stack.rings.iter().copied().map(Source::Ring).collect()
                }
                other => panic!("expected a stack: {other:?}"),
            }
        };
        let mut rings = rings_of(&pair.winding);
        rings.extend(rings_of(&pair.image));
        let far = pair.far.as_ref().unwrap();
        for ratio in [40.0, 200.0, 1e3] {
            let r = ratio * far.size_m;
            for u in [
                Vector3::new(0.0, 0.0, 1.0),
                Vector3::new(0.36, -0.48, 0.8),
                Vector3::new(0.6, 0.8, 0.0),
                Vector3::new(-0.8, 0.0, 0.6),
            ] {
                let p = far.origin_m + u * r;
                assert!(far.applies_at(&p));
                let got = b_field_point(&sources, &p).unwrap();
                let want = b_field_point(&rings, &p).unwrap();
                let err = (got - want).norm() / want.norm();
                assert!(err < 5e-13, "{ratio} sizes, {u}: {err:e}: {got} vs {want}");
            }
        }
    }

    #[test]
    fn image_of_a_ring_lowers_its_inductance_by_the_coaxial_mutual() {
        // A ring at height h over a perfect conductor: L' = L - M(a, a, 2h) (Maxwell), the
        // image circulating the other way.
        let text = "[[winding]]\nname = \"loop\"\nshape = \"ring\"\norigin = [0.0, 0.0, 0.05]\naxis = [0.0, 0.0, 1.0]\nradius = 0.1\nwire_diameter = 0.001\n[ground]\nz = 0.0\nconducting = true\n";
        let d = coilfield_geometry::parse_design(text, "t").unwrap();
        let l = crate::assembly::inductance_report(&d, Par::Seq)
            .unwrap()
            .mutual_h;
        let free_design = Design {
            ground: None,
            ..d.clone()
        };
        let free = crate::assembly::inductance_report(&free_design, Par::Seq)
            .unwrap()
            .mutual_h[0][0];
        let m = crate::mutual::mutual_ring_ring_coaxial(0.1, 0.1, 0.1);
        assert!(
            ((l[0][0] - (free - m)) / free).abs() < 1e-9,
            "{} vs {}",
            l[0][0],
            free - m
        );
    }

    #[test]
    fn missing_currents_are_an_error() {
        let text = "[[winding]]\nname = \"loop\"\nshape = \"ring\"\norigin = [0.0, 0.0, 0.2]\naxis = [0.0, 0.0, 1.0]\nradius = 0.1\nwire_diameter = 0.001\n";
        let d = coilfield_geometry::parse_design(text, "d.toml").unwrap();
        let e = sources_from_design(&d, "d.toml").unwrap_err().to_string();
        assert!(e.contains("d.toml: drive: key 'currents'"), "{e}");
    }

    #[test]
    fn parallel_equals_sequential() {
        let sources = [Source::Ring(RingSource {
            centre_m: Point3::origin(),
            axis: Vector3::z_axis(),
            radius_m: 0.5,
            current_a: 3.0,
            wire_radius_m: 1e-3,
        })];
        let pts: Vec<Point3<f64>> = (0..500)
            .map(|i| Point3::new(0.01 * i as f64, 0.1, 0.002 * i as f64))
            .collect();
        assert_eq!(
            b_field(&sources, &pts, Par::Seq),
            b_field(&sources, &pts, Par::Rayon)
        );
    }
}
