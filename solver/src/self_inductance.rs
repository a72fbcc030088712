//! Self-inductance: one turn of round wire, windings as ring sums and filament chains, and the
//! classical current-sheet formulas used as cross-checks.

use crate::constants::MU0;
use crate::elliptic::cel;
use crate::mutual::{mutual_ring_ring_coaxial, mutual_ring_rings_coaxial};
use crate::par::{Par, sum_indexed};
use crate::segment::{
    mutual_segment_segment, mutual_segment_segment_adjacent, self_segment_round_wire,
};
use coilfield_geometry::{FilamentModel, RingModel};
use std::f64::consts::PI;

/// Self-inductance (H) of one circular turn of round wire at low frequency (uniform current):
/// mu0 a (ln(8a/r) - 7/4), a = centreline radius, r = wire radius, a >> r (E. B. Rosa,
/// F. W. Grover, "Formulas and tables for the calculation of mutual and self-inductance",
/// Bull. Bureau of Standards 8(1), 1912).
#[inline]
pub fn self_ring_round_wire(radius_m: f64, wire_radius_m: f64) -> f64 {
    MU0 * radius_m * ((8.0 * radius_m / wire_radius_m).ln() - 1.75)
}

/// Self term (H) of a ring of the ring model carrying `weight` times the winding current: the
/// whole turn's [`self_ring_round_wire`] times weight^2 for a whole turn or a bundle of coincident
/// turns (weight >= 1), and the partial inductance of the arc the weight stands for when it is a
/// partial turn (weight < 1, a fractional last turn or a turn cut by a tap), see
/// [`self_arc_round_wire`]: weight^2 L_turn would understate a short arc (its inductance falls
/// like its length, not its length squared).
pub fn self_term_of_ring(radius_m: f64, weight: f64, wire_radius_m: f64) -> f64 {
    if weight >= 1.0 {
        return weight * weight * self_ring_round_wire(radius_m, wire_radius_m);
    }
    // The arc formula and Rosa's closed form differ by O((r/a)^2 ln(a/r)) for a whole turn;
    // that difference, scaled by weight^2, joins the two at weight 1.
    let whole = self_ring_round_wire(radius_m, wire_radius_m)
        - self_arc_round_wire(radius_m, std::f64::consts::TAU, wire_radius_m);
    self_arc_round_wire(radius_m, std::f64::consts::TAU * weight, wire_radius_m)
        + weight * weight * whole
}

/// Partial self-inductance (H) of a circular arc of round wire, radius `radius_m` (centreline),
/// angle `angle_rad` (0 < angle <= 2 pi), wire radius `wire_radius_m`, at low frequency.
///
/// Neumann's integral between the arc's centreline and a parallel line on the wire's surface,
/// plus the internal inductance mu0 l / (8 pi) of a uniform current (the approach of Rosa &
/// Grover 1912 for one turn, E. B. Rosa, "The self and mutual inductances of linear
/// conductors", Bull. Bureau of Standards 4, 1908, for straight wire): with u the angle between
/// two points,
///     L = (mu0 / 4 pi) 2 int_0^phi (phi - u) a^2 cos u / sqrt(4 a^2 sin^2(u/2) + r^2) du
///         + mu0 a phi / (8 pi),
/// the double integral over the arc reduced to one over the angle difference. At phi = 2 pi it
/// is one turn, mu0 a (ln(8a/r) - 7/4) + O((r/a)^2 ln(a/r)); for a short arc of length l it
/// tends to the straight wire's (mu0 l / 2 pi)(ln(2l/r) - 3/4) (Rosa 1908). The integrand peaks
/// at u = 0 over a width r/a: adaptive Gauss-Kronrod, with a break point there.
pub fn self_arc_round_wire(radius_m: f64, angle_rad: f64, wire_radius_m: f64) -> f64 {
    let a = radius_m;
    let r = wire_radius_m;
    let phi = angle_rad;
    let integrand = |u: f64| {
        let s = (0.5 * u).sin();
        (phi - u) * a * a * u.cos() / (4.0 * a * a * s * s + r * r).sqrt()
    };
    // Break at a few wire radii of angle, where the peak gives way to the smooth part.
    let knee = (8.0 * r / a).min(phi);
    let tol = 1e-13;
    let near = crate::quadrature::integrate_adaptive(integrand, 0.0, knee, 0.0, tol).value;
    let far = if knee < phi {
        crate::quadrature::integrate_adaptive(integrand, knee, phi, 0.0, tol).value
    } else {
        0.0
    };
    MU0 / (4.0 * PI) * 2.0 * (near + far) + MU0 * a * phi / (8.0 * PI)
}

/// Self-inductance (H) of a ring model: sum_i L_i + 2 sum_{i<j} w_i w_j M_ij with the self
/// term L_i of [`self_term_of_ring`] and Maxwell's formula for M_ij (exact for a partial ring
/// too: a coaxial ring's vector potential is the same all around the circle).
///
/// When the model is a uniform stack (a helix's ring model) the turn-to-turn matrix is Toeplitz
/// and the sum costs O(turns) kernel calls:
/// N L_turn + 2 sum_{s=1}^{N-1} (N - s) M(a, a, s p), plus the partial last turn's row.
pub fn self_ring_model(model: &RingModel, par: Par) -> f64 {
    let rings = &model.rings;
    let r_w = model.wire_radius_m;
    let self_terms: f64 = rings
        .iter()
        .map(|r| self_term_of_ring(r.radius_m, r.weight, r_w))
        .sum();
    if let Some(pitch) = model.uniform_pitch_m {
        let n_full = rings.iter().take_while(|r| r.weight == 1.0).count();
        let a = rings[0].radius_m;
        let nf = n_full as f64;
        let toeplitz = sum_indexed(n_full.saturating_sub(1), par, |k| {
            let s = (k + 1) as f64;
            (nf - s) * mutual_ring_ring_coaxial(a, a, s * pitch)
        });
        // Rows of the partial last turn (and anything after the full turns) in full.
        let axis = model.axis.as_ref();
        let tail: f64 = rings[n_full..]
            .iter()
            .enumerate()
            .map(|(t, ring)| {
                ring.weight * mutual_ring_rings_coaxial(ring, &rings[..n_full + t], axis)
            })
            .sum();
        return self_terms + 2.0 * (toeplitz + tail);
    }
    let axis = model.axis.as_ref();
    let off_diagonal = sum_indexed(rings.len(), par, |i| {
        rings[i].weight * mutual_ring_rings_coaxial(&rings[i], &rings[i + 1..], axis)
    });
    self_terms + 2.0 * off_diagonal
}

/// Self-inductance (H) of a chain of straight filaments of round wire: the sum of each piece's
/// self term ([`self_segment_round_wire`]) and all mutual terms (Neumann; Grover's closed form
/// for neighbours that share an end), times weight^2.
///
/// With a screw symmetry (uniform helix, regular polygon) the matrix is Toeplitz (circulant
/// when closed) and the sum costs O(pieces) kernel calls; otherwise O(pieces^2), in parallel.
/// An open chain gives the partial self-inductance of the chain.
pub fn self_filament_model(model: &FilamentModel, par: Par) -> f64 {
    let n = model.n_segments();
    let r_w = model.wire_radius_m;
    let w2 = model.weight * model.weight;
    let pair = |i: usize, j: usize| -> f64 {
        let (a0, a1) = model.segment(i);
        let (b0, b1) = model.segment(j);
        let adjacent_forward = j == i + 1 || (model.closed && i == n - 1 && j == 0);
        let adjacent_backward = i == j + 1 || (model.closed && j == n - 1 && i == 0);
        if adjacent_forward {
            mutual_segment_segment_adjacent(&a0, &a1, &b1)
        } else if adjacent_backward {
            mutual_segment_segment_adjacent(&b0, &b1, &a1)
        } else {
            mutual_segment_segment(&a0, &a1, &b0, &b1)
        }
    };
    let self_terms: f64 = (0..n)
        .map(|i| {
            let (a, b) = model.segment(i);
            self_segment_round_wire((b - a).norm(), r_w)
        })
        .sum();
    let mutual = if model.screw.is_some() {
        if model.closed {
            // Circulant: every row is a shift of row 0.
            n as f64 * sum_indexed(n - 1, par, |k| pair(0, k + 1))
        } else {
            2.0 * sum_indexed(n - 1, par, |k| (n - (k + 1)) as f64 * pair(0, k + 1))
        }
    } else {
        2.0 * sum_indexed(n, par, |i| ((i + 1)..n).map(|j| pair(i, j)).sum::<f64>())
    };
    w2 * (self_terms + mutual)
}

/// Nagaoka's coefficient K_N of a cylindrical current sheet of diameter-to-length ratio
/// `diameter_over_length`, exact in K and E (Lorenz's formula; F. W. Grover, *Inductance
/// Calculations: Working Formulas and Tables*, 1946, ch. on single-layer coils, reproducing
/// Table 36):
/// K_N = 4/(3 pi k') [ (k'^2/k^2)(K(m) - E(m)) + E(m) - k ], m = k^2 = d^2/(d^2 + l^2),
/// k' = l/sqrt(d^2 + l^2).
pub fn nagaoka(diameter_over_length: f64) -> f64 {
    let x = diameter_over_length;
    let root = (1.0 + x * x).sqrt();
    // k' = kc straight from the geometry; (K - E)/m = cel(kc, 1, 0, 1) has no cancellation for
    // long coils (m -> 0), and E = cel(kc, 1, 1, kc^2) keeps its digits for short ones.
    let kc = 1.0 / root;
    let k = x / root;
    let k_minus_e_over_m = cel(kc, 1.0, 0.0, 1.0);
    let big_e = cel(kc, 1.0, 1.0, kc * kc);
    4.0 / (3.0 * PI * kc) * (kc * kc * k_minus_e_over_m + big_e - k)
}

/// Inductance (H) of a uniform cylindrical current sheet (Lorenz): mu0 pi a^2 N^2 / l * K_N.
pub fn lorenz_sheet(radius_m: f64, turns: f64, length_m: f64) -> f64 {
    MU0 * PI * radius_m * radius_m * turns * turns / length_m * nagaoka(2.0 * radius_m / length_m)
}

/// Rosa's correction A = 5/4 - ln(2p/d) for round wire of bare diameter d at pitch p, against a
/// current sheet (E. B. Rosa, Bull. Bureau of Standards 2, 1906; Rosa & Grover 1912).
pub fn rosa_a(pitch_m: f64, wire_diameter_m: f64) -> f64 {
    1.25 - (2.0 * pitch_m / wire_diameter_m).ln()
}

/// Rosa's correction B(N) for the mutual terms of N turns against a sheet (Rosa 1908; Rosa &
/// Grover 1912), as the exact sum B = (2/N) sum_{s=1}^{N-1} (N - s)(ln s - F(s)), F(s) the mean
/// of ln|x - y| over two strips of unit width at centre distance s,
/// F(s) = G(s+1) + G(s-1) - 2 G(s), G(u) = u^2 ln(u)/2 - 3u^2/4; for s >= 4 the series
/// ln s - F(s) = sum_j s^{-2j} / (2j (2j+1) (j+1)) avoids cancellation. Tends to ln(2 pi) - 3/2.
pub fn rosa_b(turns: usize) -> f64 {
    let g = |u: f64| {
        if u == 0.0 {
            0.0
        } else {
            0.5 * u * u * u.ln() - 0.75 * u * u
        }
    };
    let deficit = |s: f64| -> f64 {
        if s < 4.0 {
            s.ln() - (g(s + 1.0) + g(s - 1.0) - 2.0 * g(s))
        } else {
            let x = 1.0 / (s * s);
            let mut term = 1.0;
            let mut acc = 0.0;
            for j in 1..=12 {
                term *= x;
                let jf = j as f64;
                acc += term / (2.0 * jf * (2.0 * jf + 1.0) * (jf + 1.0));
            }
            acc
        }
    };
    let n = turns as f64;
    let sum: f64 = (1..turns).map(|s| (n - s as f64) * deficit(s as f64)).sum();
    2.0 * sum / n
}

/// Rosa's round-wire inductance (H) of a single-layer solenoid: Lorenz's sheet minus
/// mu0 a N (A + B) (Rosa & Grover 1912). Agrees with the turn-by-turn ring sum to ~5e-5.
pub fn rosa_solenoid(radius_m: f64, turns: usize, pitch_m: f64, wire_diameter_m: f64) -> f64 {
    let n = turns as f64;
    lorenz_sheet(radius_m, n, n * pitch_m)
        - MU0 * radius_m * n * (rosa_a(pitch_m, wire_diameter_m) + rosa_b(turns))
}

/// Wheeler's approximation (H) for a flat spiral: L (uH) = a^2 n^2 / (8a + 11c), a mean radius and
/// c radial depth in inches (H. A. Wheeler, "Simple inductance formulas for radio coils",
/// Proc. IRE 16(10), 1928; "within 5 %"). A plausibility check only.
pub fn wheeler_spiral(inner_radius_m: f64, outer_radius_m: f64, turns: f64) -> f64 {
    let inch = 0.0254;
    let a = 0.5 * (inner_radius_m + outer_radius_m) / inch;
    let c = (outer_radius_m - inner_radius_m) / inch;
    1e-6 * a * a * turns * turns / (8.0 * a + 11.0 * c)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rosa_b_matches_its_limit() {
        let limit = (2.0 * PI).ln() - 1.5;
        assert!((rosa_b(2) - 0.113_705_6).abs() < 1e-7);
        assert!((rosa_b(1000) - 0.336_394_9).abs() < 1e-7);
        assert!(rosa_b(100_000) < limit && limit - rosa_b(100_000) < 1e-4);
    }

    #[test]
    fn nagaoka_tends_to_one_for_long_coils() {
        // K_N = 1 - 4 d/(3 pi l) + ... for d << l.
        let x: f64 = 1e-3;
        assert!((nagaoka(x) - (1.0 - 4.0 * x / (3.0 * PI))).abs() < 1e-6);
    }

    fn polygon(n: usize, radius_m: f64, wire_radius_m: f64) -> FilamentModel {
        use coilfield_geometry::discretise::Screw;
        use nalgebra::{Point3, Vector3};
        let step = std::f64::consts::TAU / n as f64;
        FilamentModel {
            points_m: (0..n)
                .map(|k| {
                    let t = step * k as f64;
                    Point3::new(radius_m * t.cos(), radius_m * t.sin(), 0.0)
                })
                .collect(),
            closed: true,
            wire_radius_m,
            weight: 1.0,
            screw: Some(Screw {
                origin_m: Point3::origin(),
                axis: Vector3::z_axis(),
                angle_rad: step,
                rise_m: 0.0,
            }),
        }
    }

    #[test]
    fn regular_polygon_converges_to_the_ring() {
        let (a, r) = (0.1, 1e-3);
        let ring = self_ring_round_wire(a, r);
        let mut last = f64::INFINITY;
        for n in [16, 32, 64, 128, 256, 512] {
            let poly = polygon(n, a, r);
            let l = self_filament_model(&poly, Par::Seq);
            let err = ((l - ring) / ring).abs();
            assert!(err < last, "n={n}: error {err} did not fall below {last}");
            if n >= 128 {
                assert!(err < 1e-3, "n={n}: error {err}");
            }
            last = err;
        }
    }

    #[test]
    fn toeplitz_and_full_filament_sums_agree() {
        let poly = polygon(40, 0.1, 1e-3);
        let toeplitz = self_filament_model(&poly, Par::Seq);
        let full = self_filament_model(
            &FilamentModel {
                screw: None,
                ..poly
            },
            Par::Seq,
        );
        assert!(((toeplitz - full) / full).abs() < 1e-12);
    }
}
