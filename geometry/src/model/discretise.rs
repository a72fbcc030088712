//! Discretisation of windings into the values the solver works on.
//!
//! - [`ring_model`]: the axisymmetric model, coaxial circular rings (one per turn).
//! - [`filament_model`]: the 3-D model, the exact curve as a chain of straight filaments.
//!
//! Both are plain values that can be inspected, compared and reused for many evaluations.

use crate::model::winding::{Shape, Winding, local_frame};
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
    /// A point of the common axis (m): the winding's origin.
    pub origin_m: Point3<f64>,
    /// Common axis of all rings; positive current circulates right-handed about it.
    pub axis: Unit<Vector3<f64>>,
    /// The rings, from the start of the winding to its end.
    pub rings: Vec<Ring>,
    /// Wire radius (m), for the self term of each ring.
    pub wire_radius_m: f64,
    /// Set when all rings but possibly the last share one radius and ring i sits at
    /// `origin + (i + 1/2) * pitch * axis`: the turn-to-turn matrix is then Toeplitz.
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
pub fn ring_model(winding: &Winding) -> Option<RingModel> {
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
    let has_tail = tail > 1e-9;
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
    for i in 0..n_full {
        push_turn(i as f64 / turns, (i + 1) as f64 / turns, 1.0);
    }
    if has_tail {
        push_turn(n_full as f64 / turns, 1.0, tail);
    }
    let uniform_pitch_m = match winding.shape {
        Shape::Helix {
            length_m, turns, ..
        } => Some(length_m / turns),
        _ => None,
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
/// filaments. A polyline is taken as it is.
pub fn filament_model(winding: &Winding) -> FilamentModel {
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
            let n_seg = ((turns * per_turn as f64).round() as usize).max(1);
            let points_m = (0..=n_seg)
                .map(|k| shape.point_at(k as f64 / n_seg as f64))
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
                    angle_rad: TAU * turns / n_seg as f64,
                    rise_m: length_m / n_seg as f64,
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
