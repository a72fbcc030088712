//! Discretisation of windings into the values the solver works on.
//!
//! - [`ring_model`]: the axisymmetric model, coaxial circular rings (one per turn).
//! - [`filament_model`]: the 3-D model, the exact curve as a chain of straight filaments.
//!
//! Both are plain values that can be inspected, compared and reused for many evaluations.

use crate::model::winding::{Shape, TURN_TOLERANCE, Winding, local_frame};
use nalgebra::{Point3, Unit, Vector3};
use std::f64::consts::TAU;

/// Straight filaments per turn of the filament model when a winding does not say.
pub const DEFAULT_SEGMENTS_PER_TURN: usize = 128;

/// One circular filament of a ring model.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ring {
    /// Centre (m).
    pub centre_m: Point3<f64>,
    /// Radius (m).
    pub radius_m: f64,
    /// Current carried, as a multiple of the winding current (1 for a whole turn, the fraction
    /// for a partial last turn, N for N coincident turns).
    pub weight: f64,
}

/// Axisymmetric model of a winding: rings sharing one axis.
#[derive(Debug, Clone, PartialEq)]
pub struct RingModel {
    /// A point of the common axis (m): the winding's origin, or the start of the turn its part in
    /// use begins at when that is a whole turn of a helix (see `uniform_pitch_m`).
    pub origin_m: Point3<f64>,
    /// Common axis of all rings; positive current circulates right-handed about it.
    pub axis: Unit<Vector3<f64>>,
    /// The rings, from the start of the winding to its end.
    pub rings: Vec<Ring>,
    /// Wire radius (m), for the self term of each ring.
    pub wire_radius_m: f64,
    /// Set when all rings but possibly the last share one radius, carry one turn (weight 1)
    /// and ring i sits at `origin + (i + 1/2) * pitch * axis`: the turn-to-turn matrix is then
    /// Toeplitz.
    pub uniform_pitch_m: Option<f64>,
}

/// A screw symmetry of a filament chain: segment k+1 is segment k rotated by `angle_rad` about
/// the axis through `origin_m` and moved `rise_m` along it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Screw {
    /// A point of the screw axis (m).
    pub origin_m: Point3<f64>,
    /// The screw axis.
    pub axis: Unit<Vector3<f64>>,
    /// Rotation per segment (rad).
    pub angle_rad: f64,
    /// Advance along the axis per segment (m).
    pub rise_m: f64,
}

/// 3-D model of a winding: a chain of straight filaments through `points_m`.
#[derive(Debug, Clone, PartialEq)]
pub struct FilamentModel {
    /// Vertices in current order (m). A closed chain does not repeat its first point.
    pub points_m: Vec<Point3<f64>>,
    /// Whether the last vertex joins back to the first.
    pub closed: bool,
    /// Wire radius (m), for the self term of each filament.
    pub wire_radius_m: f64,
    /// Current carried, as a multiple of the winding current (N for N coincident ring turns).
    pub weight: f64,
    /// Set when every segment is the screw image of the previous one (uniform helix, regular
    /// polygon): the segment-to-segment matrix is then Toeplitz (circulant when closed).
    pub screw: Option<Screw>,
}

impl FilamentModel {
    /// Number of straight filaments.
    pub fn n_segments(&self) -> usize {
        if self.closed {
            self.points_m.len()
        } else {
            self.points_m.len().saturating_sub(1)
        }
    }

    /// Start and end (m) of filament `idx`.
    pub fn segment(&self, idx: usize) -> (Point3<f64>, Point3<f64>) {
        let n = self.points_m.len();
        (self.points_m[idx], self.points_m[(idx + 1) % n])
    }

    /// Total length of the chain (m).
    pub fn length_m(&self) -> f64 {
        (0..self.n_segments())
            .map(|i| {
                let (a, b) = self.segment(i);
                (b - a).norm()
            })
            .sum()
    }
}

/// Axisymmetric ring model of a winding; `None` for a polyline, which has no axis.
///
/// A helix of pitch p = length/turns places whole turn i at `origin + (i + 1/2) p axis`; a
/// spiral or cone places each turn at its mean radius and mean height (the curve at the middle of
/// the turn's parameter interval). A partial last turn of fraction f becomes a ring carrying f
/// times the current at the middle of its interval. A ring of N coincident turns is one ring
/// with weight N.
///
/// A tap ([`Winding::active_turn_range`]) keeps these turn boundaries (turn k is t in
/// [k/N, (k+1)/N]): the turns inside the active part are exactly the rings above, the turns
/// outside it are left out, and a turn the tap cuts becomes one ring carrying its active
/// fraction of a turn, at the radius and height of the curve at the middle of its active part.
/// `uniform_pitch_m` is kept only when the active part of a helix starts at a whole turn (its
/// rings then sit at `origin + (i + 1/2) p axis` with the origin moved to that turn).
pub fn ring_model(winding: &Winding) -> Option<RingModel> {
    let turns = match winding.shape {
        Shape::Ring { .. } | Shape::Polyline { .. } => 0.0,
        ref shape => shape.turns()?,
    };
    let (u0, u1) = winding.active_turn_range().unwrap_or((0.0, turns));
    ring_model_of_turns(winding, u0, u1)
}

/// The ring model of the part of `winding` from `u0` to `u1` turns from its start (0 <= u0 <
/// u1 <= turns), with the turn boundaries of the whole winding: the rings of
/// [`ring_model`] for a winding whose current flows there only (a tap, or one section of a
/// secondary cut into sections for the resonance model). A ring's model is itself whatever the
/// range; `None` for a polyline.
pub fn ring_model_of_turns(winding: &Winding, u0: f64, u1: f64) -> Option<RingModel> {
    let (origin_m, axis) = winding.shape.origin_axis()?;
    let wire_radius_m = winding.wire_radius_m();
    if let Shape::Ring {
        radius_m, count, ..
    } = winding.shape
    {
        return Some(RingModel {
            origin_m,
            axis,
            rings: vec![Ring {
                centre_m: origin_m,
                radius_m,
                weight: f64::from(count),
            }],
            wire_radius_m,
            uniform_pitch_m: None,
        });
    }
    let turns = winding.shape.turns()?;
    let n_full = turns.floor() as usize;
    let tail = turns - n_full as f64;
    // A tail far below rounding of the turn count is noise from unit conversion, not a turn.
    let has_tail = tail > TURN_TOLERANCE;
    let mut rings = Vec::with_capacity(n_full + usize::from(has_tail));
    let mut push_turn = |t_start: f64, t_end: f64, weight: f64| {
        let t_mid = 0.5 * (t_start + t_end);
        let (r, h) = winding
            .shape
            .radius_height_at(t_mid)
            .expect("axisymmetric shape");
        rings.push(Ring {
            centre_m: origin_m + axis.as_ref() * h,
            radius_m: r,
            weight,
        });
    };
    // Turn k spans [k, k + 1] turns (the tail [n_full, turns]); `whole` is the turn's own ring,
    // computed as for an untapped winding so that a tap leaves whole turns bit for bit alone.
    let mut turn = |lo: f64, hi: f64, whole: (f64, f64, f64)| {
        if lo >= u0 && hi <= u1 {
            push_turn(whole.0, whole.1, whole.2);
        } else {
            let (a, b) = (lo.max(u0), hi.min(u1));
            if b > a {
                push_turn(a / turns, b / turns, b - a);
            }
        }
    };
    for i in 0..n_full {
        let (lo, hi) = (i as f64, (i + 1) as f64);
        turn(lo, hi, (lo / turns, hi / turns, 1.0));
    }
    if has_tail {
        turn(n_full as f64, turns, (n_full as f64 / turns, 1.0, tail));
    }
    // A helix's part that starts at a whole turn is again a uniform stack, from that turn.
    let (origin_m, uniform_pitch_m) = match winding.shape {
        Shape::Helix {
            length_m, turns, ..
        } if u0.fract() == 0.0 => {
            let pitch_m = length_m / turns;
            (origin_m + axis.as_ref() * (u0 * pitch_m), Some(pitch_m))
        }
        _ => (origin_m, None),
    };
    Some(RingModel {
        origin_m,
        axis,
        rings,
        wire_radius_m,
        uniform_pitch_m,
    })
}

/// 3-D filament model of a winding: the exact curve sampled at equal steps of angle
/// (`segments_per_turn` per turn, default [`DEFAULT_SEGMENTS_PER_TURN`]) and joined by straight
/// filaments. A polyline is taken as it is. Of a tapped winding only the active part
/// ([`Winding::active_range`]) is sampled, from its first point to its last, at the same density
/// (round(active turns x segments per turn) filaments).
pub fn filament_model(winding: &Winding) -> FilamentModel {
    filament_model_impl(winding)
}

/// Length (m) of a winding's wire centreline, all of it (a tap's idle part included): the one
/// figure every output prints. A helix's is exact, N sqrt((2 pi a)^2 + p^2) with pitch p; a
/// ring's N coincident circumferences; any other shape's is its filament chain's.
pub fn wire_length_m(winding: &Winding) -> f64 {
    let w = winding.without_tap();
    match w.shape {
        Shape::Helix {
            radius_m,
            length_m,
            turns,
            ..
        } => turns * (TAU * radius_m).hypot(length_m / turns),
        Shape::Ring {
            radius_m, count, ..
        } => TAU * radius_m * f64::from(count),
        _ => filament_model(&w).length_m(),
    }
}

fn filament_model_impl(winding: &Winding) -> FilamentModel {
    let wire_radius_m = winding.wire_radius_m();
    let per_turn = winding
        .segments_per_turn
        .unwrap_or(DEFAULT_SEGMENTS_PER_TURN)
        .max(3);
    match &winding.shape {
        Shape::Polyline { points_m, closed } => FilamentModel {
            points_m: points_m.clone(),
            closed: *closed,
            wire_radius_m,
            weight: 1.0,
            screw: None,
        },
        Shape::Ring {
            origin_m,
            axis,
            radius_m,
            count,
        } => {
            let (x_hat, y_hat) = local_frame(axis);
            let step = TAU / per_turn as f64;
            let points_m = (0..per_turn)
                .map(|k| {
                    let angle = step * k as f64;
                    origin_m + (x_hat * angle.cos() + y_hat * angle.sin()) * *radius_m
                })
                .collect();
            FilamentModel {
                points_m,
                closed: true,
                wire_radius_m,
                weight: f64::from(*count),
                screw: Some(Screw {
                    origin_m: *origin_m,
                    axis: *axis,
                    angle_rad: step,
                    rise_m: 0.0,
                }),
            }
        }
        shape => {
            let turns = shape.turns().expect("turns");
            let active_turns = winding.active_turns().unwrap_or(turns);
            let (t0, t1) = winding.active_range();
            let n_seg = ((active_turns * per_turn as f64).round() as usize).max(1);
            // Without a tap t0 + (t1 - t0) s = 0 + 1 s = s exactly: the untapped samples.
            let points_m = (0..=n_seg)
                .map(|k| shape.point_at(t0 + (t1 - t0) * (k as f64 / n_seg as f64)))
                .collect();
            let screw = match *shape {
                Shape::Helix {
                    origin_m,
                    axis,
                    length_m,
                    ..
                } => Some(Screw {
                    origin_m,
                    axis,
                    angle_rad: TAU * active_turns / n_seg as f64,
                    rise_m: length_m * (t1 - t0) / n_seg as f64,
                }),
                _ => None,
            };
            FilamentModel {
                points_m,
                closed: false,
                wire_radius_m,
                weight: 1.0,
                screw,
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::winding::{Model, Role, Tap, TapEnd};

    /// A 12-turn flat spiral from 60 mm to 150 mm (7.5 mm radial pitch), 3 mm wire.
    fn spiral() -> Winding {
        Winding {
            name: "p".into(),
            role: Role::Primary,
            model: Model::Ring,
            wire_diameter_m: 0.003,
            segments_per_turn: None,
            shape: Shape::Spiral {
                origin_m: Point3::origin(),
                axis: Vector3::z_axis(),
                inner_radius_m: 0.06,
                outer_radius_m: 0.15,
                turns: 12.0,
            },
            tap: None,
            conductor: Default::default(),
        }
    }

    /// A 7.5-turn helix of radius 0.1 m and length 0.06 m (8 mm pitch), 2 mm wire.
    fn helix() -> Winding {
        Winding {
            shape: Shape::Helix {
                origin_m: Point3::new(0.0, 0.0, 0.02),
                axis: Vector3::z_axis(),
                radius_m: 0.1,
                length_m: 0.06,
                turns: 7.5,
            },
            wire_diameter_m: 0.002,
            ..spiral()
        }
    }

    fn tapped(w: &Winding, turns: f64, from: TapEnd) -> Winding {
        w.with_tap(Tap { turns, from }).unwrap()
    }

    /// Radius (m) of the spiral's centreline `u` turns from its start: r = ri + (ro - ri) u / N
    /// (an Archimedean spiral's radius grows linearly with angle).
    fn spiral_radius_m(u: f64) -> f64 {
        0.06 + (0.15 - 0.06) * u / 12.0
    }

    #[test]
    fn a_helix_of_whole_turns_ends_straight_above_its_start() {
        // A helix of N whole turns ends at origin + length axis + radius x_hat, exactly (common
        // practice, no source: the angle 2 pi N is a whole number of turns). Before, the last
        // filament vertex of a 4-turn helix lay 1e-16 radii off that line, so the open wire's
        // end-to-end current element crossed the axis and its 1/r^2 field outgrew the turns'
        // dipole on the axis far away.
        for turns in [1.0, 4.0, 7.0, 12.0, 400.0] {
            let w = Winding {
                shape: Shape::Helix {
                    origin_m: Point3::new(0.1, -0.2, 0.02),
                    axis: Vector3::z_axis(),
                    radius_m: 0.1,
                    length_m: 0.06,
                    turns,
                },
                ..helix()
            };
            let f = filament_model(&w);
            let (first, last) = (f.points_m[0], *f.points_m.last().unwrap());
            assert_eq!(first, Point3::new(0.2, -0.2, 0.02), "{turns}");
            assert_eq!(
                last - first,
                Vector3::new(0.0, 0.0, 0.06 + 0.02 - 0.02),
                "{turns}"
            );
        }
    }

    #[test]
    fn spiral_tapped_from_outer_keeps_whole_turns_and_cuts_one() {
        // 6.25 turns from the outer end: turns 6..11 whole, a quarter of turn 5 (u in
        // [5.75, 6]) as one ring of weight 0.25 at u = 5.875.
        let whole = ring_model(&spiral()).unwrap();
        let m = ring_model(&tapped(&spiral(), 6.25, TapEnd::End)).unwrap();
        assert_eq!(m.rings.len(), 7);
        assert_eq!(&m.rings[1..], &whole.rings[6..]);
        assert_eq!(m.rings[0].weight, 0.25);
        let r = m.rings[0].radius_m;
        assert!((r - spiral_radius_m(5.875)).abs() < 1e-16, "{r}");
        assert_eq!(m.uniform_pitch_m, None);
    }

    #[test]
    fn spiral_tapped_from_inner_cuts_its_last_turn() {
        // 2.5 turns from the inner end: turns 0 and 1 whole, half of turn 2 at u = 2.25.
        let whole = ring_model(&spiral()).unwrap();
        let m = ring_model(&tapped(&spiral(), 2.5, TapEnd::Start)).unwrap();
        assert_eq!(&m.rings[..2], &whole.rings[..2]);
        assert_eq!(m.rings.len(), 3);
        assert_eq!(m.rings[2].weight, 0.5);
        assert!((m.rings[2].radius_m - spiral_radius_m(2.25)).abs() < 1e-16);
    }

    #[test]
    fn weights_add_up_to_the_tap_at_any_tap() {
        // The ring weights are the turns in use, whatever the tap (0.05-turn steps, both
        // ends, on a whole and on a fractional turn count).
        for w in [spiral(), helix()] {
            let n = w.shape.turns().unwrap();
            for from in [TapEnd::Start, TapEnd::End] {
                for k in 1..=(n / 0.05).round() as usize {
                    let tap = k as f64 * 0.05;
                    let m = ring_model(&tapped(&w, tap, from)).unwrap();
                    let total: f64 = m.rings.iter().map(|r| r.weight).sum();
                    assert!((total - tap).abs() < 1e-12, "{tap} {from:?}: {total}");
                    assert!(m.rings.iter().all(|r| r.weight > 0.0 && r.weight <= 1.0));
                }
            }
        }
    }

    #[test]
    fn helix_tap_inside_its_partial_last_turn() {
        // 0.4 turns from the top of a 7.5-turn helix: inside the half turn [7, 7.5], one ring
        // of weight 0.4 at u = 7.3, height 0.06 * 7.3 / 7.5 above the base.
        let m = ring_model(&tapped(&helix(), 0.4, TapEnd::End)).unwrap();
        assert_eq!(m.rings.len(), 1);
        assert!((m.rings[0].weight - 0.4).abs() < 1e-15);
        let z = m.rings[0].centre_m.z;
        assert!((z - (0.02 + 0.06 * 7.3 / 7.5)).abs() < 1e-16, "{z}");
        // From the top at 3.25 (u in [4.25, 7.5]): three quarters of turn 4, turns 5 and 6, the
        // original half turn.
        let whole = ring_model(&helix()).unwrap();
        let m = ring_model(&tapped(&helix(), 3.25, TapEnd::End)).unwrap();
        assert_eq!(m.rings.len(), 4);
        assert_eq!(&m.rings[1..], &whole.rings[5..]);
        assert_eq!(m.rings[0].weight, 0.75);
    }

    #[test]
    fn uniform_pitch_only_from_the_base() {
        let pitch = 0.06 / 7.5;
        let bottom = ring_model(&tapped(&helix(), 3.25, TapEnd::Start)).unwrap();
        assert_eq!(bottom.uniform_pitch_m, Some(pitch));
        // The documented invariant: ring i at origin + (i + 1/2) pitch axis, all but the last.
        for (i, r) in bottom.rings[..3].iter().enumerate() {
            assert!((r.centre_m.z - (0.02 + (i as f64 + 0.5) * pitch)).abs() < 1e-16);
        }
        let top = ring_model(&tapped(&helix(), 3.0, TapEnd::End)).unwrap();
        assert_eq!(top.uniform_pitch_m, None);
    }

    #[test]
    fn a_tap_of_all_turns_is_the_untapped_winding() {
        for w in [spiral(), helix()] {
            let n = w.shape.turns().unwrap();
            for from in [TapEnd::Start, TapEnd::End] {
                let t = tapped(&w, n, from);
                assert!(!t.is_tapped());
                assert_eq!(ring_model(&t), ring_model(&w));
                assert_eq!(filament_model(&t), filament_model(&w));
            }
        }
    }

    #[test]
    fn taps_near_a_whole_turn_are_whole() {
        // 0.05 added 120 times is 5.999999999999987: six whole turns, no sliver ring.
        let tap: f64 = std::iter::repeat_n(0.05, 120).sum();
        assert_ne!(tap, 6.0);
        let m = ring_model(&tapped(&spiral(), tap, TapEnd::End)).unwrap();
        assert_eq!(m.rings.len(), 6);
        assert_eq!(m, ring_model(&tapped(&spiral(), 6.0, TapEnd::End)).unwrap());
    }

    #[test]
    fn taps_outside_the_winding_are_refused() {
        let w = spiral();
        for turns in [0.0, -1.0, 12.5, f64::NAN, f64::INFINITY, 1e-7] {
            assert!(
                w.with_tap(Tap {
                    turns,
                    from: TapEnd::End
                })
                .is_none(),
                "{turns}"
            );
        }
        let ring = Winding {
            shape: Shape::Ring {
                origin_m: Point3::origin(),
                axis: Vector3::z_axis(),
                radius_m: 0.1,
                count: 2,
            },
            ..spiral()
        };
        assert!(ring.with_tap_turns(1.0).is_none());
        // A hand-built tap beyond the winding counts as all of it; no panic on NaN.
        let mut wild = spiral();
        wild.tap = Some(Tap {
            turns: 40.0,
            from: TapEnd::End,
        });
        assert_eq!(ring_model(&wild), ring_model(&spiral()));
        wild.tap = Some(Tap {
            turns: f64::NAN,
            from: TapEnd::Start,
        });
        assert_eq!(ring_model(&wild), ring_model(&spiral()));
    }

    #[test]
    fn filament_model_samples_the_active_part() {
        // 6.25 turns from the outer end at 128 pieces per turn: 800 pieces from u = 5.75 to
        // u = 12, every point on the spiral r = ri + (ro - ri) u / N at angle 2 pi u (to the
        // rounding of angles up to 2 pi 12 = 75 rad: about 1e-14 rad, times r).
        let f = filament_model(&tapped(&spiral(), 6.25, TapEnd::End));
        assert_eq!(f.n_segments(), 800);
        for (k, p) in f.points_m.iter().enumerate() {
            let u = 5.75 + k as f64 / 128.0;
            let r = spiral_radius_m(u);
            let angle = std::f64::consts::TAU * u;
            let want = Point3::new(r * angle.cos(), r * angle.sin(), 0.0);
            assert!((p - want).norm() < 1e-14, "{k}: {p} vs {want}");
        }
        // A helix tapped from its top keeps its screw symmetry (8 mm pitch, 128 per turn).
        let f = filament_model(&tapped(&helix(), 3.0, TapEnd::End));
        let screw = f.screw.unwrap();
        assert_eq!(f.n_segments(), 384);
        assert!((screw.angle_rad - std::f64::consts::TAU / 128.0).abs() < 1e-15);
        assert!((screw.rise_m - 0.008 / 128.0).abs() < 1e-18);
        assert!((f.points_m[0].z - (0.02 + 0.06 * 4.5 / 7.5)).abs() < 1e-16);
    }
}
