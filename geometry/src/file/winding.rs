//! `[[winding]]` tables: keys by shape, one validator per shape, and the checks a winding
//! gets by itself (sizes, pitch against the wire, polyline points).

use crate::error::DesignError;
use crate::file::raw::{Ctx, RawLength, RawNumber, is_valid_name, type_phrase};
use crate::model::winding::{Model, Role, Shape, Winding};
use nalgebra::Point3;
use serde::Deserialize;
use toml::{Table, Value};

/// Values of a winding's `shape` key.
pub const SHAPE_NAMES: &[&str] = &["helix", "spiral", "cone", "ring", "polyline"];

/// Most turns (or coincident ring turns) one winding may have.
///
/// A limit of this program, not of physics: it bounds the memory of the ring model and the
/// overlap check, so a typing slip cannot exhaust the machine.
pub const MAX_TURNS: f64 = 1e6;

/// Largest `segments_per_turn` accepted (bounds the filament model's memory).
pub const MAX_SEGMENTS_PER_TURN: i64 = 100_000;

/// Most straight filaments a filament model may have: turns times segments per turn.
pub const MAX_FILAMENT_SEGMENTS: f64 = 5e7;

/// Read one `[[winding]]` table alone, with every check a design file makes of a winding by
/// itself. `number` counts windings from 1 in file order (it names a winding without a `name`
/// and labels messages, as in a design file).
pub fn winding_from_table(
    table: Table,
    number: usize,
    source: &str,
) -> Result<Winding, DesignError> {
    parse_winding(table, number, source)
}

/// The five shapes, as the parser tells them apart before the shape's sizes are known.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum ShapeKind {
    Helix,
    Spiral,
    Cone,
    Ring,
    Polyline,
}

/// Keys every shape takes.
const COMMON_KEYS: &[&str] = &["name", "shape", "role", "model", "wire_diameter"];

impl ShapeKind {
    fn from_name(name: &str) -> Option<Self> {
        match name {
            "helix" => Some(Self::Helix),
            "spiral" => Some(Self::Spiral),
            "cone" => Some(Self::Cone),
            "ring" => Some(Self::Ring),
            "polyline" => Some(Self::Polyline),
            _ => None,
        }
    }

    fn name(self) -> &'static str {
        match self {
            Self::Helix => "helix",
            Self::Spiral => "spiral",
            Self::Cone => "cone",
            Self::Ring => "ring",
            Self::Polyline => "polyline",
        }
    }

    /// Keys this shape takes besides [`COMMON_KEYS`].
    fn own_keys(self) -> &'static [&'static str] {
        match self {
            Self::Helix => &[
                "origin",
                "axis",
                "radius",
                "length",
                "turns",
                "segments_per_turn",
            ],
            Self::Spiral => &[
                "origin",
                "axis",
                "inner_radius",
                "outer_radius",
                "turns",
                "segments_per_turn",
            ],
            Self::Cone => &[
                "origin",
                "axis",
                "inner_radius",
                "outer_radius",
                "height",
                "turns",
                "segments_per_turn",
            ],
            Self::Ring => &["origin", "axis", "radius", "turns", "segments_per_turn"],
            Self::Polyline => &["points", "closed"],
        }
    }

    fn takes(self, key: &str) -> bool {
        COMMON_KEYS.contains(&key) || self.own_keys().contains(&key)
    }

    fn allowed_keys(self) -> String {
        COMMON_KEYS
            .iter()
            .chain(self.own_keys())
            .copied()
            .collect::<Vec<_>>()
            .join(", ")
    }

    const ALL: [ShapeKind; 5] = [
        Self::Helix,
        Self::Spiral,
        Self::Cone,
        Self::Ring,
        Self::Polyline,
    ];
}

/// A winding as written: every key optional, values only type-checked.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawWinding {
    role: Option<String>,
    model: Option<String>,
    origin: Option<[RawLength; 3]>,
    axis: Option<[RawNumber; 3]>,
    radius: Option<RawLength>,
    length: Option<RawLength>,
    turns: Option<RawNumber>,
    wire_diameter: Option<RawLength>,
    inner_radius: Option<RawLength>,
    outer_radius: Option<RawLength>,
    height: Option<RawLength>,
    points: Option<Vec<[RawLength; 3]>>,
    closed: Option<bool>,
    segments_per_turn: Option<RawNumber>,
}

/// Checks of winding values that only windings have.
impl Ctx<'_> {
    pub(crate) fn radius_below_wire(
        &self,
        key: &str,
        radius_m: f64,
        wire_radius_m: f64,
    ) -> DesignError {
        DesignError::RadiusBelowWire {
            source_name: self.source.to_string(),
            item: self.item.clone(),
            key: key.to_string(),
            radius_m,
            wire_radius_m,
        }
    }

    pub(crate) fn thicker_than_pitch(
        &self,
        wire_diameter_m: f64,
        pitch_m: f64,
        rule: &str,
    ) -> DesignError {
        DesignError::WireThickerThanPitch {
            source_name: self.source.to_string(),
            item: self.item.clone(),
            wire_diameter_m,
            pitch_m,
            pitch_rule: rule.to_string(),
        }
    }

    /// Turns of a helix, spiral or cone: a positive real number.
    pub(crate) fn turns(&self, raw: Option<RawNumber>) -> Result<f64, DesignError> {
        let raw =
            raw.ok_or_else(|| self.missing("turns", "give the number of turns, e.g. turns = 10"))?;
        const EXPECTED: &str = "a positive number of turns";
        let turns = raw.as_f64();
        if !turns.is_finite() {
            return Err(self.not_finite("turns", EXPECTED, raw.shown()));
        }
        if turns <= 0.0 {
            return Err(self.not_positive("turns", EXPECTED, raw.shown()));
        }
        if turns > MAX_TURNS {
            return Err(self.too_large(
                "turns",
                raw.shown(),
                format!("this program models at most {MAX_TURNS} turns per winding"),
            ));
        }
        Ok(turns)
    }

    /// Coincident turns of a ring: a positive whole number, default 1.
    pub(crate) fn ring_count(&self, raw: Option<RawNumber>) -> Result<u32, DesignError> {
        let Some(raw) = raw else {
            return Ok(1);
        };
        const EXPECTED: &str = "a positive whole number of coincident turns";
        if !raw.as_f64().is_finite() {
            return Err(self.not_finite("turns", EXPECTED, raw.shown()));
        }
        let Some(count) = raw.as_whole() else {
            return Err(DesignError::NotInteger {
                source_name: self.source.to_string(),
                item: self.item.clone(),
                key: "turns".to_string(),
                expected: format!("{EXPECTED} (a ring's turns all lie on one circle)"),
                value: raw.shown(),
            });
        };
        if count <= 0 {
            return Err(self.not_positive("turns", EXPECTED, raw.shown()));
        }
        if count as f64 > MAX_TURNS {
            return Err(self.too_large(
                "turns",
                raw.shown(),
                format!("this program models at most {MAX_TURNS} turns per winding"),
            ));
        }
        // count <= MAX_TURNS, far inside u32.
        Ok(count as u32)
    }

    pub(crate) fn segments_per_turn(
        &self,
        raw: Option<RawNumber>,
    ) -> Result<Option<usize>, DesignError> {
        let Some(raw) = raw else {
            return Ok(None);
        };
        let too_few = || DesignError::TooFewSegments {
            source_name: self.source.to_string(),
            item: self.item.clone(),
            value: raw.shown(),
        };
        let Some(n) = raw.as_whole() else {
            return Err(DesignError::NotInteger {
                source_name: self.source.to_string(),
                item: self.item.clone(),
                key: "segments_per_turn".to_string(),
                expected: "a whole number of at least 3".to_string(),
                value: raw.shown(),
            });
        };
        if n < 3 {
            return Err(too_few());
        }
        if n > MAX_SEGMENTS_PER_TURN {
            return Err(self.too_large(
                "segments_per_turn",
                raw.shown(),
                format!("at most {MAX_SEGMENTS_PER_TURN} segments per turn are accepted"),
            ));
        }
        // 3 <= n <= MAX_SEGMENTS_PER_TURN fits any usize.
        Ok(Some(n as usize))
    }
}

/// Read one `[[winding]]` table. `number` counts windings from 1 in file order.
pub(crate) fn parse_winding(
    mut table: Table,
    number: usize,
    source: &str,
) -> Result<Winding, DesignError> {
    let mut ctx = Ctx {
        source,
        item: format!("winding #{number}"),
    };

    // The name comes first, so that every later message can say which winding it is about.
    let name = match table.get("name") {
        None => format!("winding-{number}"),
        Some(Value::String(name)) => {
            if !is_valid_name(name) {
                return Err(DesignError::BadName {
                    source_name: source.to_string(),
                    item: ctx.item,
                    name: name.clone(),
                });
            }
            ctx.item = format!("winding '{name}'");
            name.clone()
        }
        Some(other) => {
            return Err(DesignError::WrongType {
                source_name: source.to_string(),
                item: ctx.item,
                key: "name".to_string(),
                reason: format!(
                    "expected a string such as \"secondary\", got {}",
                    type_phrase(other)
                ),
            });
        }
    };

    // The shape next: it decides which keys are allowed.
    let kind = match table.get("shape") {
        None => {
            return Err(ctx.missing(
                "shape",
                &format!("give shape = one of {}", SHAPE_NAMES.join(", ")),
            ));
        }
        Some(Value::String(shape)) => ShapeKind::from_name(shape)
            .ok_or_else(|| ctx.unknown_value("shape", shape, SHAPE_NAMES))?,
        Some(other) => {
            return Err(DesignError::WrongType {
                source_name: source.to_string(),
                item: ctx.item,
                key: "shape".to_string(),
                reason: format!(
                    "expected one of the strings {}, got {}",
                    SHAPE_NAMES.join(", "),
                    type_phrase(other)
                ),
            });
        }
    };

    // Keys checked against the shape by hand rather than by serde's deny_unknown_fields, which
    // knows only the union of all shapes' keys and cannot say "this key is for polylines".
    for key in table.keys() {
        if kind.takes(key) {
            continue;
        }
        let users: Vec<&str> = ShapeKind::ALL
            .iter()
            .filter(|k| k.takes(key))
            .map(|k| k.name())
            .collect();
        return Err(if users.is_empty() {
            DesignError::UnknownKey {
                source_name: source.to_string(),
                item: ctx.item,
                key: key.clone(),
                shape: kind.name().to_string(),
                allowed: kind.allowed_keys(),
            }
        } else {
            DesignError::KeyNotForShape {
                source_name: source.to_string(),
                item: ctx.item,
                key: key.clone(),
                shape: kind.name().to_string(),
                applies_to: users.join(", "),
            }
        });
    }

    // Name and shape are read already; the raw struct does not carry them.
    table.remove("name");
    table.remove("shape");
    let raw: RawWinding = serde_path_to_error::deserialize(table).map_err(|err| {
        let key = err.path().to_string();
        DesignError::WrongType {
            source_name: source.to_string(),
            item: ctx.item.clone(),
            key,
            reason: err.inner().message().to_string(),
        }
    })?;

    let role = match raw.role.as_deref() {
        None => Role::Other,
        Some("secondary") => Role::Secondary,
        Some("primary") => Role::Primary,
        Some("other") => Role::Other,
        Some(other) => {
            return Err(ctx.unknown_value("role", other, &["secondary", "primary", "other"]));
        }
    };
    let model = match (raw.model.as_deref(), kind) {
        // A polyline has no axis, so its only model is the filament one.
        (None, ShapeKind::Polyline) => Model::Filament,
        (None, _) => Model::Ring,
        (Some("ring"), ShapeKind::Polyline) => {
            return Err(DesignError::ModelNotForShape {
                source_name: source.to_string(),
                item: ctx.item,
            });
        }
        (Some("ring"), _) => Model::Ring,
        (Some("filament"), _) => Model::Filament,
        (Some(other), _) => return Err(ctx.unknown_value("model", other, &["ring", "filament"])),
    };

    let wire_raw = raw.wire_diameter.as_ref().ok_or_else(|| {
        ctx.missing(
            "wire_diameter",
            "give the bare conductor diameter, e.g. wire_diameter = \"0.4 mm\" or \"AWG 26\"",
        )
    })?;
    let wire_diameter_m = ctx.size("wire_diameter", wire_raw, true)?;
    let wire_radius_m = 0.5 * wire_diameter_m;
    let segments_per_turn = ctx.segments_per_turn(raw.segments_per_turn)?;

    let shape = match kind {
        ShapeKind::Helix => {
            let origin_m = ctx.origin(&raw.origin)?;
            let axis = ctx.axis(&raw.axis)?;
            let radius_m = ctx.required_size(
                "radius",
                &raw.radius,
                "give the centreline radius, e.g. radius = \"50 mm\"",
            )?;
            let length_m = ctx.required_size(
                "length",
                &raw.length,
                "give the winding length along the axis, e.g. length = \"400 mm\"",
            )?;
            let turns = ctx.turns(raw.turns)?;
            if radius_m <= wire_radius_m {
                return Err(ctx.radius_below_wire("radius", radius_m, wire_radius_m));
            }
            let pitch_m = length_m / turns;
            if pitch_m <= wire_diameter_m {
                return Err(ctx.thicker_than_pitch(wire_diameter_m, pitch_m, "length / turns"));
            }
            Shape::Helix {
                origin_m,
                axis,
                radius_m,
                length_m,
                turns,
            }
        }
        ShapeKind::Spiral | ShapeKind::Cone => {
            let origin_m = ctx.origin(&raw.origin)?;
            let axis = ctx.axis(&raw.axis)?;
            let inner_radius_m = ctx.required_size(
                "inner_radius",
                &raw.inner_radius,
                "give the centreline radius at the start, e.g. inner_radius = \"70 mm\"",
            )?;
            let outer_radius_m = ctx.required_size(
                "outer_radius",
                &raw.outer_radius,
                "give the centreline radius at the end, e.g. outer_radius = \"130 mm\"",
            )?;
            let height_m = if kind == ShapeKind::Cone {
                ctx.required_size(
                    "height",
                    &raw.height,
                    "give the axial rise from start to end, e.g. height = \"60 mm\"",
                )?
            } else {
                0.0
            };
            let turns = ctx.turns(raw.turns)?;
            if inner_radius_m <= wire_radius_m {
                return Err(ctx.radius_below_wire("inner_radius", inner_radius_m, wire_radius_m));
            }
            if outer_radius_m <= inner_radius_m {
                return Err(DesignError::RadiiOrder {
                    source_name: source.to_string(),
                    item: ctx.item,
                    inner_radius_m,
                    outer_radius_m,
                });
            }
            let radial_m = outer_radius_m - inner_radius_m;
            if kind == ShapeKind::Spiral {
                let pitch_m = radial_m / turns;
                if pitch_m <= wire_diameter_m {
                    return Err(ctx.thicker_than_pitch(
                        wire_diameter_m,
                        pitch_m,
                        "(outer_radius - inner_radius) / turns",
                    ));
                }
                Shape::Spiral {
                    origin_m,
                    axis,
                    inner_radius_m,
                    outer_radius_m,
                    turns,
                }
            } else {
                // Adjacent turns of a cone sit one slant length per turn apart along the cone's
                // surface line.
                let pitch_m = radial_m.hypot(height_m) / turns;
                if pitch_m <= wire_diameter_m {
                    return Err(ctx.thicker_than_pitch(
                        wire_diameter_m,
                        pitch_m,
                        "sqrt((outer_radius - inner_radius)^2 + height^2) / turns, along the slant",
                    ));
                }
                Shape::Cone {
                    origin_m,
                    axis,
                    inner_radius_m,
                    outer_radius_m,
                    height_m,
                    turns,
                }
            }
        }
        ShapeKind::Ring => {
            let origin_m = ctx.origin(&raw.origin)?;
            let axis = ctx.axis(&raw.axis)?;
            let radius_m = ctx.required_size(
                "radius",
                &raw.radius,
                "give the centreline radius, e.g. radius = \"100 mm\"",
            )?;
            let count = ctx.ring_count(raw.turns)?;
            if radius_m <= wire_radius_m {
                return Err(ctx.radius_below_wire("radius", radius_m, wire_radius_m));
            }
            Shape::Ring {
                origin_m,
                axis,
                radius_m,
                count,
            }
        }
        ShapeKind::Polyline => {
            let closed = raw.closed.unwrap_or(false);
            let raw_points = raw.points.as_ref().ok_or_else(|| {
                ctx.missing(
                    "points",
                    "give the vertices as points = [[x, y, z], ...] (lengths), in current order",
                )
            })?;
            let points_m = raw_points
                .iter()
                .enumerate()
                .map(|(i, p)| ctx.point(&format!("points[{i}]"), p))
                .collect::<Result<Vec<_>, _>>()?;
            let needed = if closed { 3 } else { 2 };
            if points_m.len() < needed {
                return Err(DesignError::TooFewPoints {
                    source_name: source.to_string(),
                    item: ctx.item,
                    found: points_m.len(),
                    needed,
                    closed,
                });
            }
            let n = points_m.len();
            let n_pieces = if closed { n } else { n - 1 };
            for i in 0..n_pieces {
                let j = (i + 1) % n;
                if coincident(&points_m[i], &points_m[j]) {
                    return Err(DesignError::CoincidentPoints {
                        source_name: source.to_string(),
                        item: ctx.item,
                        index_a: i,
                        index_b: j,
                        closing: j == 0,
                    });
                }
            }
            Shape::Polyline { points_m, closed }
        }
    };

    if model == Model::Filament {
        if let Some(turns) = shape.turns() {
            // A ring's filament model is one turn whatever its count.
            let turns = if kind == ShapeKind::Ring { 1.0 } else { turns };
            let per_turn =
                segments_per_turn.unwrap_or(crate::model::discretise::DEFAULT_SEGMENTS_PER_TURN);
            let total = turns * per_turn as f64;
            if total > MAX_FILAMENT_SEGMENTS {
                return Err(ctx.too_large(
                    "segments_per_turn",
                    format!("{per_turn} segments per turn times {turns} turns"),
                    format!(
                        "a filament model may have at most {MAX_FILAMENT_SEGMENTS} segments; \
                         give fewer segments_per_turn or use model = \"ring\""
                    ),
                ));
            }
        }
    }

    Ok(Winding {
        name,
        role,
        model,
        wire_diameter_m,
        segments_per_turn,
        shape,
    })
}

/// Whether two points are the same up to rounding of their coordinates.
fn coincident(a: &Point3<f64>, b: &Point3<f64>) -> bool {
    let scale = a.coords.amax().max(b.coords.amax());
    // A few ulps of the coordinates' size: points that differ by less come from the same
    // number written two ways ("50 mm" and 0.05), not from a real piece of wire.
    (a - b).amax() <= 4.0 * f64::EPSILON * scale
}
