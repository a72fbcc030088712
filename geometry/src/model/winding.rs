//! Windings: the typed, validated model of one conductor path and its exact curve.

use nalgebra::{Point3, Unit, Vector3};
use std::f64::consts::TAU;

/// What a winding is for. Later features (fields, clearance) look for the secondary.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Role {
    /// The resonant, many-turn winding.
    Secondary,
    /// The driving winding.
    Primary,
    /// Anything else (pickup loops, tertiary windings, ...).
    Other,
}

/// Which discretisation answers for a winding.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Model {
    /// Axisymmetric model: coaxial circular rings, one per turn (the default).
    Ring,
    /// 3-D model: the exact curve as a chain of straight filaments.
    Filament,
}

/// Shape of a winding, with its sizes in metres.
///
/// All radii are radii of the wire centreline.
#[derive(Debug, Clone, PartialEq)]
pub enum Shape {
    /// Single-layer cylindrical helix.
    Helix {
        /// Centre of the base circle (m).
        origin_m: Point3<f64>,
        /// Winding axis; current circulates right-handed about it.
        axis: Unit<Vector3<f64>>,
        /// Centreline radius (m).
        radius_m: f64,
        /// Winding length = turns x pitch along the axis (m).
        length_m: f64,
        /// Number of turns (may be fractional).
        turns: f64,
    },
    /// Flat Archimedean spiral.
    Spiral {
        /// Centre (m).
        origin_m: Point3<f64>,
        /// Normal of the spiral's plane; current circulates right-handed about it.
        axis: Unit<Vector3<f64>>,
        /// Centreline radius at the start (m).
        inner_radius_m: f64,
        /// Centreline radius at the end (m).
        outer_radius_m: f64,
        /// Number of turns (may be fractional).
        turns: f64,
    },
    /// Conical spiral: radius and height both grow linearly with angle.
    Cone {
        /// Centre of the start circle (m).
        origin_m: Point3<f64>,
        /// Cone axis; current circulates right-handed about it.
        axis: Unit<Vector3<f64>>,
        /// Centreline radius at the start (m).
        inner_radius_m: f64,
        /// Centreline radius at the end (m).
        outer_radius_m: f64,
        /// Axial rise from start to end (m).
        height_m: f64,
        /// Number of turns (may be fractional).
        turns: f64,
    },
    /// `count` coincident circular turns, modelled as one filament carrying `count` times the current.
    Ring {
        /// Centre (m).
        origin_m: Point3<f64>,
        /// Ring axis; current circulates right-handed about it.
        axis: Unit<Vector3<f64>>,
        /// Centreline radius (m).
        radius_m: f64,
        /// Number of coincident turns (>= 1).
        count: u32,
    },
    /// Arbitrary chain of straight pieces through `points_m`, current flowing in point order.
    Polyline {
        /// Vertices in absolute coordinates (m).
        points_m: Vec<Point3<f64>>,
        /// Whether the last point joins back to the first.
        closed: bool,
    },
}

/// One validated winding.
#[derive(Debug, Clone, PartialEq)]
pub struct Winding {
    /// Unique name, matching `[A-Za-z0-9_-]+`.
    pub name: String,
    /// What the winding is for.
    pub role: Role,
    /// Which discretisation answers for it.
    pub model: Model,
    /// Bare conductor diameter (m).
    pub wire_diameter_m: f64,
    /// Straight filaments per turn in the filament model (None: the default).
    pub segments_per_turn: Option<usize>,
    /// The curve.
    pub shape: Shape,
}

/// Right-handed orthonormal frame (x_hat, y_hat, axis) of a winding.
///
/// x_hat = normalise(z_hat x axis), or (1, 0, 0) when the axis is parallel to z;
/// y_hat = axis x x_hat.
pub fn local_frame(axis: &Unit<Vector3<f64>>) -> (Vector3<f64>, Vector3<f64>) {
    let z = Vector3::z();
    let cross = z.cross(axis.as_ref());
    // Parallel to z within rounding: the frame is fixed by convention, not by the cross product.
    let x_hat = if cross.norm() < 1e-12 {
        Vector3::x()
    } else {
        cross.normalize()
    };
    let y_hat = axis.cross(&x_hat);
    (x_hat, y_hat)
}

impl Shape {
    /// Number of turns of the curve (the ring's count for a ring; None for a polyline).
    pub fn turns(&self) -> Option<f64> {
        match *self {
            Shape::Helix { turns, .. }
            | Shape::Spiral { turns, .. }
            | Shape::Cone { turns, .. } => Some(turns),
            Shape::Ring { count, .. } => Some(f64::from(count)),
            Shape::Polyline { .. } => None,
        }
    }

    /// Origin and axis for the axisymmetric shapes (None for a polyline).
    pub fn origin_axis(&self) -> Option<(Point3<f64>, Unit<Vector3<f64>>)> {
        match self {
            Shape::Helix { origin_m, axis, .. }
            | Shape::Spiral { origin_m, axis, .. }
            | Shape::Cone { origin_m, axis, .. }
            | Shape::Ring { origin_m, axis, .. } => Some((*origin_m, *axis)),
            Shape::Polyline { .. } => None,
        }
    }

    /// Radius and axial height (m) of the curve at parameter t in [0, 1] (axisymmetric shapes).
    ///
    /// helix r = radius, h = length*t; spiral r = inner + (outer-inner)*t, h = 0; cone both.
    pub fn radius_height_at(&self, t: f64) -> Option<(f64, f64)> {
        match *self {
            Shape::Helix {
                radius_m, length_m, ..
            } => Some((radius_m, length_m * t)),
            Shape::Spiral {
                inner_radius_m,
                outer_radius_m,
                ..
            } => Some((inner_radius_m + (outer_radius_m - inner_radius_m) * t, 0.0)),
            Shape::Cone {
                inner_radius_m,
                outer_radius_m,
                height_m,
                ..
            } => Some((
                inner_radius_m + (outer_radius_m - inner_radius_m) * t,
                height_m * t,
            )),
            Shape::Ring { radius_m, .. } => Some((radius_m, 0.0)),
            Shape::Polyline { .. } => None,
        }
    }

    /// Point (m) of the exact curve at t in [0, 1]; t = angle / (2 pi turns).
    ///
    /// For a ring, t runs once around the circle. For a polyline, t is the fraction of vertices.
    pub fn point_at(&self, t: f64) -> Point3<f64> {
        match self {
            Shape::Polyline { points_m, closed } => {
                let n_seg = if *closed {
                    points_m.len()
                } else {
                    points_m.len() - 1
                };
                let s = (t * n_seg as f64).clamp(0.0, n_seg as f64);
                let i = (s.floor() as usize).min(n_seg - 1);
                let f = s - i as f64;
                let a = points_m[i];
                let b = points_m[(i + 1) % points_m.len()];
                a + (b - a) * f
            }
            _ => {
                let (origin, axis) = self.origin_axis().expect("axisymmetric shape");
                let (x_hat, y_hat) = local_frame(&axis);
                let turns = match *self {
                    Shape::Ring { .. } => 1.0,
                    _ => self.turns().expect("turns"),
                };
                let angle = TAU * turns * t;
                let (r, h) = self.radius_height_at(t).expect("axisymmetric shape");
                origin + axis.as_ref() * h + (x_hat * angle.cos() + y_hat * angle.sin()) * r
            }
        }
    }
}

impl Winding {
    /// Wire radius (m).
    pub fn wire_radius_m(&self) -> f64 {
        0.5 * self.wire_diameter_m
    }
}
