//! `[[winding]]` tables: keys by shape, one validator per shape, and the checks a winding
//! gets by itself (sizes, pitch against the wire, polyline points).

use crate::error::DesignError;
use crate::file::raw::{Ctx, RawLength, RawNumber, is_valid_name, type_phrase};
use crate::limits::{MAX_POLYLINE_POINTS, MIN_TURNS};
use crate::model::winding::{Conductor, MIN_TAP_TURNS, Model, Role, Shape, Tap, TapEnd, Winding};
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
const COMMON_KEYS: &[&str] = &[
    "name",
    "shape",
    "role",
    "model",
    "wire_diameter",
    "conductor",
    "tube_wall",
];

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
                "tap_turns",
                "tap_from",
            ],
            Self::Spiral => &[
                "origin",
                "axis",
                "inner_radius",
                "outer_radius",
                "turns",
                "segments_per_turn",
                "tap_turns",
                "tap_from",
            ],
            Self::Cone => &[
                "origin",
                "axis",
                "inner_radius",
                "outer_radius",
                "height",
                "turns",
                "segments_per_turn",
                "tap_turns",
                "tap_from",
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
    tap_turns: Option<RawNumber>,
    tap_from: Option<String>,
    conductor: Option<String>,
    tube_wall: Option<RawLength>,
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
        if turns < MIN_TURNS {
            return Err(self.out_of_range(
                "turns",
                raw.shown(),
                format!(
                    "from {MIN_TURNS} to {MAX_TURNS:e} turns (the ring model needs at least one \
                     element)"
                ),
            ));
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
///
/// The name first (so that every later message names the winding), then the shape (it decides
/// which keys are allowed), the keys, the types, and the shape's own validator.
pub(crate) fn parse_winding(
    mut table: Table,
    number: usize,
    source: &str,
) -> Result<Winding, DesignError> {
    let mut ctx = Ctx {
        source,
        item: format!("winding #{number}"),
    };
    let name = winding_name(&table, number, &mut ctx)?;
    let kind = shape_kind(&table, &ctx)?;
    check_keys(&table, kind, &ctx)?;
    // Name and shape are read already; the raw struct does not carry them.
    table.remove("name");
    table.remove("shape");
    let raw: RawWinding =
        serde_path_to_error::deserialize(table).map_err(|err| DesignError::WrongType {
            source_name: source.to_string(),
            item: ctx.item.clone(),
            key: err.path().to_string(),
            reason: err.inner().message().to_string(),
        })?;
    let role = role_of(&raw, &ctx)?;
    let model = model_of(&raw, kind, &ctx)?;
    let wire_raw = raw.wire_diameter.as_ref().ok_or_else(|| {
        ctx.missing(
            "wire_diameter",
            "give the bare conductor diameter, e.g. wire_diameter = \"0.4 mm\" or \"AWG 26\"",
        )
    })?;
    let wire_diameter_m = ctx.size("wire_diameter", wire_raw, true)?;
    let segments_per_turn = ctx.segments_per_turn(raw.segments_per_turn)?;
    let shape = match kind {
        ShapeKind::Helix => helix(&raw, &ctx, wire_diameter_m)?,
        ShapeKind::Spiral => spiral(&raw, &ctx, wire_diameter_m)?,
        ShapeKind::Cone => cone(&raw, &ctx, wire_diameter_m)?,
        ShapeKind::Ring => ring(&raw, &ctx, wire_diameter_m)?,
        ShapeKind::Polyline => polyline(&raw, &ctx)?,
    };
    if model == Model::Filament {
        check_filament_count(&shape, segments_per_turn, &ctx)?;
    }
    let tap = tap_of(&raw, kind, &shape, role, &ctx)?;
    let conductor = conductor_of(&raw, wire_diameter_m, &ctx)?;
    Ok(Winding {
        name,
        role,
        model,
        wire_diameter_m,
        segments_per_turn,
        shape,
        tap,
        conductor,
    })
}

/// The conductor's material (a lowercase name, checked against the solver's table of
/// resistivities when losses are computed) and a tube's wall (a positive length below the wire
/// radius).
fn conductor_of(
    raw: &RawWinding,
    wire_diameter_m: f64,
    ctx: &Ctx<'_>,
) -> Result<Conductor, DesignError> {
    let material = match &raw.conductor {
        None => None,
        Some(m) if !m.is_empty() && m.bytes().all(|b| b.is_ascii_lowercase()) => Some(m.clone()),
        Some(m) => {
            return Err(DesignError::BadSetting {
                source_name: ctx.source.to_string(),
                item: ctx.item.clone(),
                key: "conductor".to_string(),
                reason: format!(
                    "\"{m}\" is not a material name; write a lowercase name such as \
                     \"copper\", \"aluminium\" or \"silver\""
                ),
            });
        }
    };
    let tube_wall_m = match &raw.tube_wall {
        None => None,
        Some(t) => {
            let v = ctx.size("tube_wall", t, false)?;
            if v >= 0.5 * wire_diameter_m {
                return Err(DesignError::BadSetting {
                    source_name: ctx.source.to_string(),
                    item: ctx.item.clone(),
                    key: "tube_wall".to_string(),
                    reason: format!(
                        "a tube's wall ({v} m) must be thinner than its radius ({} m); leave \
                         tube_wall out for solid wire",
                        0.5 * wire_diameter_m
                    ),
                });
            }
            Some(v)
        }
    };
    Ok(Conductor {
        material,
        tube_wall_m,
    })
}

/// The winding's name (default `winding-<number>`); names the winding in `ctx` from then on.
fn winding_name(table: &Table, number: usize, ctx: &mut Ctx<'_>) -> Result<String, DesignError> {
    match table.get("name") {
        None => Ok(format!("winding-{number}")),
        Some(Value::String(name)) => {
            if !is_valid_name(name) {
                return Err(DesignError::BadName {
                    source_name: ctx.source.to_string(),
                    item: ctx.item.clone(),
                    name: name.clone(),
                });
            }
            ctx.item = format!("winding '{name}'");
            Ok(name.clone())
        }
        Some(other) => Err(DesignError::WrongType {
            source_name: ctx.source.to_string(),
            item: ctx.item.clone(),
            key: "name".to_string(),
            reason: format!(
                "expected a string such as \"secondary\", got {}",
                type_phrase(other)
            ),
        }),
    }
}

/// The `shape` key.
fn shape_kind(table: &Table, ctx: &Ctx<'_>) -> Result<ShapeKind, DesignError> {
    match table.get("shape") {
        None => Err(ctx.missing(
            "shape",
            &format!("give shape = one of {}", SHAPE_NAMES.join(", ")),
        )),
        Some(Value::String(shape)) => ShapeKind::from_name(shape)
            .ok_or_else(|| ctx.unknown_value("shape", shape, SHAPE_NAMES)),
        Some(other) => Err(DesignError::WrongType {
            source_name: ctx.source.to_string(),
            item: ctx.item.clone(),
            key: "shape".to_string(),
            reason: format!(
                "expected one of the strings {}, got {}",
                SHAPE_NAMES.join(", "),
                type_phrase(other)
            ),
        }),
    }
}

/// Keys checked against the shape by hand rather than by serde's deny_unknown_fields, which
/// knows only the union of all shapes' keys and cannot say "this key is for polylines".
fn check_keys(table: &Table, kind: ShapeKind, ctx: &Ctx<'_>) -> Result<(), DesignError> {
    let Some(key) = table.keys().find(|key| !kind.takes(key)) else {
        return Ok(());
    };
    let users: Vec<&str> = ShapeKind::ALL
        .iter()
        .filter(|k| k.takes(key))
        .map(|k| k.name())
        .collect();
    Err(if users.is_empty() {
        DesignError::UnknownKey {
            source_name: ctx.source.to_string(),
            item: ctx.item.clone(),
            key: key.clone(),
            shape: kind.name().to_string(),
            allowed: kind.allowed_keys(),
        }
    } else {
        DesignError::KeyNotForShape {
            source_name: ctx.source.to_string(),
            item: ctx.item.clone(),
            key: key.clone(),
            shape: kind.name().to_string(),
            applies_to: users.join(", "),
        }
    })
}

fn role_of(raw: &RawWinding, ctx: &Ctx<'_>) -> Result<Role, DesignError> {
    match raw.role.as_deref() {
        None | Some("other") => Ok(Role::Other),
        Some("secondary") => Ok(Role::Secondary),
        Some("primary") => Ok(Role::Primary),
        Some(other) => Err(ctx.unknown_value("role", other, &["secondary", "primary", "other"])),
    }
}

fn model_of(raw: &RawWinding, kind: ShapeKind, ctx: &Ctx<'_>) -> Result<Model, DesignError> {
    match (raw.model.as_deref(), kind) {
        // A polyline has no axis, so its only model is the filament one.
        (None, ShapeKind::Polyline) => Ok(Model::Filament),
        (None, _) => Ok(Model::Ring),
        (Some("ring"), ShapeKind::Polyline) => Err(DesignError::ModelNotForShape {
            source_name: ctx.source.to_string(),
            item: ctx.item.clone(),
        }),
        (Some("ring"), _) => Ok(Model::Ring),
        (Some("filament"), _) => Ok(Model::Filament),
        (Some(other), _) => Err(ctx.unknown_value("model", other, &["ring", "filament"])),
    }
}

/// A helix: origin, axis, radius, length, turns; the wire thinner than the pitch.
fn helix(raw: &RawWinding, ctx: &Ctx<'_>, wire_diameter_m: f64) -> Result<Shape, DesignError> {
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
    let wire_radius_m = 0.5 * wire_diameter_m;
    if radius_m <= wire_radius_m {
        return Err(ctx.radius_below_wire("radius", radius_m, wire_radius_m));
    }
    let pitch_m = length_m / turns;
    if pitch_m <= wire_diameter_m {
        return Err(ctx.thicker_than_pitch(wire_diameter_m, pitch_m, "length / turns"));
    }
    Ok(Shape::Helix {
        origin_m,
        axis,
        radius_m,
        length_m,
        turns,
    })
}

/// The keys a flat spiral and a cone share: origin, axis, inner and outer radius (growing
/// outwards, the inner one beyond the wire), turns.
struct Flat {
    origin_m: Point3<f64>,
    axis: nalgebra::Unit<nalgebra::Vector3<f64>>,
    inner_radius_m: f64,
    outer_radius_m: f64,
    turns: f64,
}

fn flat(raw: &RawWinding, ctx: &Ctx<'_>) -> Result<Flat, DesignError> {
    Ok(Flat {
        origin_m: ctx.origin(&raw.origin)?,
        axis: ctx.axis(&raw.axis)?,
        inner_radius_m: ctx.required_size(
            "inner_radius",
            &raw.inner_radius,
            "give the centreline radius at the start, e.g. inner_radius = \"70 mm\"",
        )?,
        outer_radius_m: ctx.required_size(
            "outer_radius",
            &raw.outer_radius,
            "give the centreline radius at the end, e.g. outer_radius = \"130 mm\"",
        )?,
        turns: 0.0,
    })
}

/// Turns and radii of a spiral or cone, read after the keys of [`flat`] (and a cone's height,
/// so that messages come in the order of the keys).
fn check_radii(
    mut f: Flat,
    raw: &RawWinding,
    ctx: &Ctx<'_>,
    wire_diameter_m: f64,
) -> Result<Flat, DesignError> {
    f.turns = ctx.turns(raw.turns)?;
    let wire_radius_m = 0.5 * wire_diameter_m;
    if f.inner_radius_m <= wire_radius_m {
        return Err(ctx.radius_below_wire("inner_radius", f.inner_radius_m, wire_radius_m));
    }
    if f.outer_radius_m <= f.inner_radius_m {
        return Err(DesignError::RadiiOrder {
            source_name: ctx.source.to_string(),
            item: ctx.item.clone(),
            inner_radius_m: f.inner_radius_m,
            outer_radius_m: f.outer_radius_m,
        });
    }
    Ok(f)
}

/// A flat Archimedean spiral: the wire thinner than the radial pitch.
fn spiral(raw: &RawWinding, ctx: &Ctx<'_>, wire_diameter_m: f64) -> Result<Shape, DesignError> {
    let f = check_radii(flat(raw, ctx)?, raw, ctx, wire_diameter_m)?;
    let pitch_m = (f.outer_radius_m - f.inner_radius_m) / f.turns;
    if pitch_m <= wire_diameter_m {
        return Err(ctx.thicker_than_pitch(
            wire_diameter_m,
            pitch_m,
            "(outer_radius - inner_radius) / turns",
        ));
    }
    Ok(Shape::Spiral {
        origin_m: f.origin_m,
        axis: f.axis,
        inner_radius_m: f.inner_radius_m,
        outer_radius_m: f.outer_radius_m,
        turns: f.turns,
    })
}

/// A conical spiral: the wire thinner than the pitch along the slant.
fn cone(raw: &RawWinding, ctx: &Ctx<'_>, wire_diameter_m: f64) -> Result<Shape, DesignError> {
    let f = flat(raw, ctx)?;
    let height_m = ctx.required_size(
        "height",
        &raw.height,
        "give the axial rise from start to end, e.g. height = \"60 mm\"",
    )?;
    let f = check_radii(f, raw, ctx, wire_diameter_m)?;
    // Adjacent turns of a cone sit one slant length per turn apart along the cone's surface
    // line.
    let pitch_m = (f.outer_radius_m - f.inner_radius_m).hypot(height_m) / f.turns;
    if pitch_m <= wire_diameter_m {
        return Err(ctx.thicker_than_pitch(
            wire_diameter_m,
            pitch_m,
            "sqrt((outer_radius - inner_radius)^2 + height^2) / turns, along the slant",
        ));
    }
    Ok(Shape::Cone {
        origin_m: f.origin_m,
        axis: f.axis,
        inner_radius_m: f.inner_radius_m,
        outer_radius_m: f.outer_radius_m,
        height_m,
        turns: f.turns,
    })
}

/// A ring of coincident turns.
fn ring(raw: &RawWinding, ctx: &Ctx<'_>, wire_diameter_m: f64) -> Result<Shape, DesignError> {
    let origin_m = ctx.origin(&raw.origin)?;
    let axis = ctx.axis(&raw.axis)?;
    let radius_m = ctx.required_size(
        "radius",
        &raw.radius,
        "give the centreline radius, e.g. radius = \"100 mm\"",
    )?;
    let count = ctx.ring_count(raw.turns)?;
    let wire_radius_m = 0.5 * wire_diameter_m;
    if radius_m <= wire_radius_m {
        return Err(ctx.radius_below_wire("radius", radius_m, wire_radius_m));
    }
    Ok(Shape::Ring {
        origin_m,
        axis,
        radius_m,
        count,
    })
}

/// A polyline: enough points, no piece of zero length.
fn polyline(raw: &RawWinding, ctx: &Ctx<'_>) -> Result<Shape, DesignError> {
    let closed = raw.closed.unwrap_or(false);
    let raw_points = raw.points.as_ref().ok_or_else(|| {
        ctx.missing(
            "points",
            "give the vertices as points = [[x, y, z], ...] (lengths), in current order",
        )
    })?;
    if raw_points.len() > MAX_POLYLINE_POINTS {
        return Err(ctx.too_large(
            "points",
            format!("{} points", raw_points.len()),
            format!(
                "a polyline has at most {MAX_POLYLINE_POINTS} points (its self-inductance sums \
                 the square of the point count of Neumann integrals)"
            ),
        ));
    }
    let points_m = raw_points
        .iter()
        .enumerate()
        .map(|(i, p)| ctx.point(&format!("points[{i}]"), p))
        .collect::<Result<Vec<_>, _>>()?;
    let needed = if closed { 3 } else { 2 };
    if points_m.len() < needed {
        return Err(DesignError::TooFewPoints {
            source_name: ctx.source.to_string(),
            item: ctx.item.clone(),
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
                source_name: ctx.source.to_string(),
                item: ctx.item.clone(),
                index_a: i,
                index_b: j,
                closing: j == 0,
            });
        }
        let piece_m = (points_m[j] - points_m[i]).norm();
        if piece_m < crate::limits::MIN_SIZE_M {
            return Err(ctx.out_of_range(
                &format!("points[{j}]"),
                format!(
                    "a piece of {} m from points[{i}]",
                    crate::error::sig(piece_m)
                ),
                format!("pieces of at least {:e} m", crate::limits::MIN_SIZE_M),
            ));
        }
    }
    Ok(Shape::Polyline { points_m, closed })
}

/// The tap keys of a primary's helix, spiral or cone (the other shapes do not take them, see
/// [`ShapeKind::own_keys`]): `tap_turns`, the turns in use counted from one end (a positive
/// number up to the winding's turns, fractional allowed), and `tap_from`, that end: `"outer"`
/// (default) or `"inner"` for a spiral or cone, `"top"` (default) or `"bottom"` for a helix.
fn tap_of(
    raw: &RawWinding,
    kind: ShapeKind,
    shape: &Shape,
    role: Role,
    ctx: &Ctx<'_>,
) -> Result<Option<Tap>, DesignError> {
    let bad_tap = |key: &str, reason: String| DesignError::BadTap {
        source_name: ctx.source.to_string(),
        item: ctx.item.clone(),
        key: key.to_string(),
        reason,
    };
    let Some(raw_turns) = raw.tap_turns else {
        if raw.tap_from.is_some() {
            return Err(bad_tap(
                "tap_from",
                "says which end a tap counts from, but the winding has no tap: give tap_turns \
                 too, or remove tap_from"
                    .to_string(),
            ));
        }
        return Ok(None);
    };
    if role != Role::Primary {
        let role = match role {
            Role::Secondary => "secondary",
            Role::Primary => "primary",
            Role::Other => "other",
        };
        return Err(bad_tap(
            "tap_turns",
            format!(
                "a tap tunes the primary, and this winding's role is {role}; set \
                 role = \"primary\" or remove the tap"
            ),
        ));
    }
    const EXPECTED: &str = "a positive number of turns";
    let turns = raw_turns.as_f64();
    if !turns.is_finite() {
        return Err(ctx.not_finite("tap_turns", EXPECTED, raw_turns.shown()));
    }
    if turns <= 0.0 {
        return Err(ctx.not_positive("tap_turns", EXPECTED, raw_turns.shown()));
    }
    let winding_turns = shape.turns().unwrap_or(0.0);
    if turns > winding_turns {
        return Err(bad_tap(
            "tap_turns",
            format!(
                "{} turns is more than the winding's {winding_turns} turns; the tap counts the \
                 turns in use, at most all of them",
                raw_turns.shown()
            ),
        ));
    }
    if turns < MIN_TAP_TURNS {
        return Err(bad_tap(
            "tap_turns",
            format!(
                "{} turns is below the smallest tap, {MIN_TAP_TURNS} turns",
                raw_turns.shown()
            ),
        ));
    }
    // (the default end, the other end) by the shape's own words.
    let ends: [&str; 2] = match kind {
        ShapeKind::Helix => ["top", "bottom"],
        _ => ["outer", "inner"],
    };
    let from = match raw.tap_from.as_deref() {
        None => TapEnd::End,
        Some(end) if end == ends[0] => TapEnd::End,
        Some(end) if end == ends[1] => TapEnd::Start,
        Some(other) => return Err(ctx.unknown_value("tap_from", other, &ends)),
    };
    Ok(Some(Tap { turns, from }))
}

/// The filament model's size: turns times segments per turn within [`MAX_FILAMENT_SEGMENTS`].
fn check_filament_count(
    shape: &Shape,
    segments_per_turn: Option<usize>,
    ctx: &Ctx<'_>,
) -> Result<(), DesignError> {
    let Some(turns) = shape.turns() else {
        return Ok(());
    };
    // A ring's filament model is one turn whatever its count.
    let turns = if matches!(shape, Shape::Ring { .. }) {
        1.0
    } else {
        turns
    };
    let per_turn = segments_per_turn.unwrap_or(crate::model::discretise::DEFAULT_SEGMENTS_PER_TURN);
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
    Ok(())
}

/// Whether two points are the same up to rounding of their coordinates.
fn coincident(a: &Point3<f64>, b: &Point3<f64>) -> bool {
    let scale = a.coords.amax().max(b.coords.amax());
    // A few ulps of the coordinates' size: points that differ by less come from the same
    // number written two ways ("50 mm" and 0.05), not from a real piece of wire.
    (a - b).amax() <= 4.0 * f64::EPSILON * scale
}
