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
    /// The tap, when only part of the curve carries current (a tuned primary); None: all of it.
    ///
    /// Only the current paths honour it (the discretisation, hence inductances and B fields);
    /// the wire itself is the whole curve for every geometric check.
    pub tap: Option<Tap>,
    /// The conductor's material and form (for losses).
    pub conductor: Conductor,
}

/// A winding's conductor, for its losses: the material by name (a table of resistivities in
/// the solver; None: copper) and, for tubing, the wall thickness (m; None: solid wire).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Conductor {
    /// Material name, lowercase (`copper`, `aluminium`, ...); None: copper.
    pub material: Option<String>,
    /// Wall thickness of tubing (m), less than the wire radius; None: solid round wire.
    pub tube_wall_m: Option<f64>,
}

/// The end of a winding's curve that a tap counts its turns from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum TapEnd {
    /// The start of the curve (t = 0): the inner radius of a spiral or cone
    /// (`tap_from = "inner"`), the base of a helix (`tap_from = "bottom"`).
    Start,
    /// The end of the curve (t = 1): the outer radius of a spiral or cone
    /// (`tap_from = "outer"`), the top of a helix (`tap_from = "top"`); the default.
    End,
}

/// A tap: the current flows through the part of the curve from one end up to `turns` turns
/// along it; the rest of the wire is idle.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Tap {
    /// Turns of the partial winding in use, counted from `from` (may be fractional; in
    /// from [`MIN_TAP_TURNS`] to the winding's turns).
    pub turns: f64,
    /// The end the turns are counted from.
    pub from: TapEnd,
}

/// Turn counts closer than this (turns) to a whole number, or to the winding's end, are taken as
/// that number: such a difference is rounding from arithmetic on the counts, not wire.
pub const TURN_TOLERANCE: f64 = 1e-9;

/// Smallest tap (turns) a winding accepts: far below any tap a builder could make, far above
/// [`TURN_TOLERANCE`], so that the active part is never empty.
pub const MIN_TAP_TURNS: f64 = 1e-6;

/// `u` (turns) moved onto the winding's end `n` or onto a whole number when within
/// [`TURN_TOLERANCE`] of it, and kept inside [0, n].
fn snap_turns(u: f64, n: f64) -> f64 {
    if (u - n).abs() <= TURN_TOLERANCE || u >= n {
        return n;
    }
    if u <= TURN_TOLERANCE {
        return 0.0;
    }
    let whole = u.round();
    if (u - whole).abs() <= TURN_TOLERANCE {
        whole
    } else {
        u
    }
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
                // The angle from the fraction of a turn (u - floor(u) is exact): a whole number
                // of turns lands exactly back on x_hat, so an open helix of whole turns ends
                // straight above its start (TAU * 4 gave sin = -9.8e-16, an end-to-end current
                // element across the axis whose 1/r^2 field outgrew the turns' 1/r^3 dipole on
                // the axis beyond about 1e14 m).
                let u = turns * t;
                let angle = TAU * (u - u.floor());
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

    /// Turns of a shape a tap can cut: a helix, spiral or cone (None for a ring or polyline).
    fn tappable_turns(&self) -> Option<f64> {
        match self.shape {
            Shape::Helix { turns, .. }
            | Shape::Spiral { turns, .. }
            | Shape::Cone { turns, .. } => Some(turns),
            Shape::Ring { .. } | Shape::Polyline { .. } => None,
        }
    }

    /// The current-carrying part of the curve in turns from its start, (u0, u1) with
    /// 0 <= u0 < u1 <= turns: the whole [0, turns] without a tap; [turns - tap, turns] for a tap
    /// from the end, [0, tap] from the start. Ends within [`TURN_TOLERANCE`] of a whole number
    /// or of the winding's end are put there, so that whole turns stay whole. None for a ring or
    /// polyline, which have no turns to cut.
    ///
    /// A tap below [`MIN_TAP_TURNS`] or above the turns (only a hand-built `Winding` can hold one: the
    /// design file and [`Winding::with_tap`] refuse it) is moved into that range; a NaN tap
    /// counts as the whole winding.
    pub fn active_turn_range(&self) -> Option<(f64, f64)> {
        let n = self.tappable_turns()?;
        let Some(tap) = self.tap else {
            return Some((0.0, n));
        };
        let turns = if tap.turns.is_nan() {
            n
        } else {
            // max/min rather than clamp: they cannot panic on a NaN turn count.
            tap.turns.max(MIN_TAP_TURNS.min(n)).min(n)
        };
        Some(match tap.from {
            TapEnd::End => (snap_turns(n - turns, n), n),
            TapEnd::Start => (0.0, snap_turns(turns, n)),
        })
    }

    /// The current-carrying part of the curve as parameters (t0, t1) of [`Shape::point_at`]:
    /// (0, 1) without a tap, for a ring and for a polyline; otherwise the turn range of
    /// [`Winding::active_turn_range`] divided by the turns.
    pub fn active_range(&self) -> (f64, f64) {
        match (self.tappable_turns(), self.active_turn_range()) {
            (Some(n), Some((u0, u1))) => (u0 / n, u1 / n),
            _ => (0.0, 1.0),
        }
    }

    /// Turns of the current-carrying part (the tap, or all turns; None for a ring or polyline).
    pub fn active_turns(&self) -> Option<f64> {
        self.active_turn_range().map(|(u0, u1)| u1 - u0)
    }

    /// Whether a tap leaves part of the curve idle (false for a tap of all the turns).
    pub fn is_tapped(&self) -> bool {
        match (self.tappable_turns(), self.active_turn_range()) {
            (Some(n), Some((u0, u1))) => u0 != 0.0 || u1 != n,
            _ => false,
        }
    }

    /// A copy of this winding tapped at `tap`; None when the shape has no turns to cut (a ring
    /// or polyline) or `tap.turns` is not a number from [`MIN_TAP_TURNS`] to the turns (a tap within
    /// [`TURN_TOLERANCE`] above the turns is taken as all of them). Any other value gives a
    /// winding, so a root finder may move the tap freely inside that range.
    pub fn with_tap(&self, tap: Tap) -> Option<Winding> {
        let n = self.tappable_turns()?;
        if !(tap.turns >= MIN_TAP_TURNS && tap.turns <= n + TURN_TOLERANCE) {
            return None;
        }
        let mut w = self.clone();
        w.tap = Some(Tap {
            turns: tap.turns.min(n),
            from: tap.from,
        });
        Some(w)
    }

    /// [`Winding::with_tap`] at `turns`, counted from the end the winding's tap uses now (the
    /// end of the curve when it has none).
    pub fn with_tap_turns(&self, turns: f64) -> Option<Winding> {
        let from = self.tap.map_or(TapEnd::End, |t| t.from);
        self.with_tap(Tap { turns, from })
    }

    /// A copy without a tap: the whole wire carrying current.
    pub fn without_tap(&self) -> Winding {
        Winding {
            tap: None,
            conductor: Default::default(),
            ..self.clone()
        }
    }
}
