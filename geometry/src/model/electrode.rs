//! Electrodes (conductors other than windings) and the ground plane: shapes and the closed-form
//! geometry the solvers and the checks use.

use nalgebra::{Point3, Unit, Vector3};
use std::f64::consts::{PI, TAU};

/// Shape of an electrode, with its sizes in metres.
#[derive(Debug, Clone, PartialEq)]
pub enum ElectrodeShape {
    /// Torus: a circle of radius `minor_radius_m` swept around the axis at `major_radius_m`.
    Torus {
        /// Centre (m).
        centre_m: Point3<f64>,
        /// Symmetry axis.
        axis: Unit<Vector3<f64>>,
        /// Distance from the axis to the tube's centre circle (m).
        major_radius_m: f64,
        /// Tube radius (m).
        minor_radius_m: f64,
    },
    /// Sphere.
    Sphere {
        /// Centre (m).
        centre_m: Point3<f64>,
        /// Axis (only orients the generatrix; default z).
        axis: Unit<Vector3<f64>>,
        /// Radius (m).
        radius_m: f64,
    },
    /// Flat disc of no thickness.
    Disc {
        /// Centre (m).
        centre_m: Point3<f64>,
        /// Normal.
        axis: Unit<Vector3<f64>>,
        /// Radius (m).
        radius_m: f64,
    },
    /// Cylinder closed at both ends by flat discs.
    Cylinder {
        /// Centre of the base disc (m).
        base_centre_m: Point3<f64>,
        /// Axis: the cylinder extends from its base along it.
        axis: Unit<Vector3<f64>>,
        /// Radius (m).
        radius_m: f64,
        /// Length along the axis (m).
        length_m: f64,
    },
}

/// Which end of a winding.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum End {
    /// The winding's start (t = 0).
    Base,
    /// The winding's end (t = 1).
    Top,
}

/// A winding terminal an electrode is tied to.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Terminal {
    /// Winding name.
    pub winding: String,
    /// Which end.
    pub end: End,
}

/// One validated electrode.
#[derive(Debug, Clone, PartialEq)]
pub struct Electrode {
    /// Unique name (across windings and electrodes).
    pub name: String,
    /// The surface.
    pub shape: ElectrodeShape,
    /// The winding terminal it is tied to, if any.
    pub connect: Option<Terminal>,
}

/// A grounded plane z = `z_m`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ground {
    /// Height of the plane (m).
    pub z_m: f64,
    /// Whether it also mirrors currents (image windings) for B, L and M.
    pub conducting: bool,
}

/// A common symmetry axis of the electric model.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Axis {
    /// A point of the axis (m): the secondary's origin, or the first electrode's centre.
    pub origin_m: Point3<f64>,
    /// Direction (the secondary's axis, or the first electrode's).
    pub direction: Unit<Vector3<f64>>,
}

impl ElectrodeShape {
    /// Centre (base centre for a cylinder) and axis.
    pub fn origin_axis(&self) -> (Point3<f64>, Unit<Vector3<f64>>) {
        match self {
            ElectrodeShape::Torus { centre_m, axis, .. }
            | ElectrodeShape::Sphere { centre_m, axis, .. }
            | ElectrodeShape::Disc { centre_m, axis, .. } => (*centre_m, *axis),
            ElectrodeShape::Cylinder {
                base_centre_m,
                axis,
                ..
            } => (*base_centre_m, *axis),
        }
    }

    /// Signed distance (m) from `p` to the surface: negative inside a closed surface; a disc
    /// has no inside, its distance is never negative.
    pub fn signed_distance_m(&self, p: &Point3<f64>) -> f64 {
        let (o, n) = self.origin_axis();
        let r = p - o;
        let zeta = r.dot(n.as_ref());
        let rho = (r - n.as_ref() * zeta).norm();
        match *self {
            ElectrodeShape::Torus {
                major_radius_m,
                minor_radius_m,
                ..
            } => (rho - major_radius_m).hypot(zeta) - minor_radius_m,
            ElectrodeShape::Sphere { radius_m, .. } => r.norm() - radius_m,
            ElectrodeShape::Disc { radius_m, .. } => {
                if rho <= radius_m {
                    zeta.abs()
                } else {
                    (rho - radius_m).hypot(zeta)
                }
            }
            ElectrodeShape::Cylinder {
                radius_m, length_m, ..
            } => {
                let h = 0.5 * length_m;
                let dx = rho - radius_m;
                let dy = (zeta - h).abs() - h;
                dx.max(dy).min(0.0) + dx.max(0.0).hypot(dy.max(0.0))
            }
        }
    }

    /// Largest distance (m) of the surface from its own axis: a torus's R + r, a sphere's,
    /// disc's or cylinder's radius.
    pub fn outer_radius_m(&self) -> f64 {
        match *self {
            ElectrodeShape::Torus {
                major_radius_m,
                minor_radius_m,
                ..
            } => major_radius_m + minor_radius_m,
            ElectrodeShape::Sphere { radius_m, .. }
            | ElectrodeShape::Disc { radius_m, .. }
            | ElectrodeShape::Cylinder { radius_m, .. } => radius_m,
        }
    }

    /// The generatrix at s in [0, 1] as (rho, zeta) in the electrode's own frame (m): distance
    /// from the axis and height along it from the origin. Runs from the axis (or, for a
    /// torus, the tube's inner equator) around the meridian section.
    pub fn generatrix_at(&self, s: f64) -> (f64, f64) {
        match *self {
            ElectrodeShape::Torus {
                major_radius_m,
                minor_radius_m,
                ..
            } => {
                let t = TAU * s;
                (
                    major_radius_m - minor_radius_m * t.cos(),
                    -minor_radius_m * t.sin(),
                )
            }
            ElectrodeShape::Sphere { radius_m, .. } => {
                let t = PI * s;
                (radius_m * t.sin(), -radius_m * t.cos())
            }
            ElectrodeShape::Disc { radius_m, .. } => (radius_m * s, 0.0),
            ElectrodeShape::Cylinder {
                radius_m, length_m, ..
            } => {
                // Base disc, side, top disc, in proportion to their lengths.
                let total = 2.0 * radius_m + length_m;
                let u = s * total;
                if u <= radius_m {
                    (u, 0.0)
                } else if u <= radius_m + length_m {
                    (radius_m, u - radius_m)
                } else {
                    (total - u, length_m)
                }
            }
        }
    }
}

impl ElectrodeShape {
    /// Lowest z (m) of the surface, in closed form: a circle of radius rho about the axis n
    /// reaches down by rho sqrt(1 - n_z^2) from its centre; a torus is the union of spheres
    /// of its tube radius on such a circle, a cylinder the union of discs along its axis.
    pub fn lowest_z_m(&self) -> f64 {
        let (o, n) = self.origin_axis();
        let spread = (1.0 - n.z * n.z).max(0.0).sqrt();
        match *self {
            ElectrodeShape::Sphere { radius_m, .. } => o.z - radius_m,
            ElectrodeShape::Torus {
                major_radius_m,
                minor_radius_m,
                ..
            } => o.z - major_radius_m * spread - minor_radius_m,
            ElectrodeShape::Disc { radius_m, .. } => o.z - radius_m * spread,
            ElectrodeShape::Cylinder {
                radius_m, length_m, ..
            } => o.z.min(o.z + length_m * n.z) - radius_m * spread,
        }
    }

    /// A size (m) for tolerances: the largest radius or length.
    pub(crate) fn size_m(&self) -> f64 {
        match *self {
            ElectrodeShape::Sphere { radius_m, .. } | ElectrodeShape::Disc { radius_m, .. } => {
                radius_m
            }
            ElectrodeShape::Torus {
                major_radius_m,
                minor_radius_m,
                ..
            } => major_radius_m + minor_radius_m,
            ElectrodeShape::Cylinder {
                radius_m, length_m, ..
            } => radius_m.max(length_m),
        }
    }

    /// Length (m) of the generatrix: [`ElectrodeShape::generatrix_at`] runs at this constant
    /// speed in s.
    pub(crate) fn generatrix_length_m(&self) -> f64 {
        match *self {
            ElectrodeShape::Torus { minor_radius_m, .. } => TAU * minor_radius_m,
            ElectrodeShape::Sphere { radius_m, .. } => PI * radius_m,
            ElectrodeShape::Disc { radius_m, .. } => radius_m,
            ElectrodeShape::Cylinder {
                radius_m, length_m, ..
            } => 2.0 * radius_m + length_m,
        }
    }
}
