//! `[[winding]]` tables: keys by shape, one validator per shape, and the checks a winding
//! gets by itself (sizes, pitch against the wire, polyline points).

use crate::error::{DesignError, sig};
use crate::file::raw::{Ctx, RawLength, RawNumber, type_phrase};
use crate::file::units;
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
                "pitch",
                "turns",
                "insulation",
                "insulated_diameter",
                "segments_per_turn",
                "tap_turns",
                "tap_from",
            ],
            Self::Spiral => &[
                "origin",
                "axis",
                "inner_radius",
                "outer_radius",
                "turn_spacing",
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
                "turn_spacing",
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
    pitch: Option<RawLength>,
    insulation: Option<RawLength>,
    insulated_diameter: Option<RawLength>,
    turn_spacing: Option<RawLength>,
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

    /// Turns too close for the wire: `key` sets the pitch, `remedy` names the smallest valid
    /// sizes.
    pub(crate) fn thicker_than_pitch(
        &self,
        key: &'static str,
        wire_diameter_m: f64,
        pitch_m: f64,
        pitch_rule: &'static str,
        remedy: String,
    ) -> DesignError {
        DesignError::WireThickerThanPitch {
            source_name: self.source.to_string(),
            item: self.item.clone(),
            key,
            wire_diameter_m,
            pitch_m,
            pitch_rule,
            remedy,
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
    let name = ctx.read_name(&table, "winding", "secondary", number)?;
    let kind = shape_kind(&table, &ctx)?;
    check_keys(&table, kind, &ctx)?;
    // Name and shape are read already; the raw struct does not carry them.
    table.remove("name");
    table.remove("shape");
    let raw: RawWinding = ctx.typed(table)?;
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
        ShapeKind::Helix => helix(&raw, &ctx, wire_diameter_m, wire_raw)?,
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

/// A helix: origin, axis, radius, turns, and the length (or the pitch, or neither for a
/// close-wound coil of insulated wire). The pitch must be at least the insulated diameter
/// (insulation may touch: close-wound) and more than the bare diameter.
fn helix(
    raw: &RawWinding,
    ctx: &Ctx<'_>,
    wire_diameter_m: f64,
    wire_raw: &RawLength,
) -> Result<Shape, DesignError> {
    let origin_m = ctx.origin(&raw.origin)?;
    let axis = ctx.axis(&raw.axis)?;
    let radius_m = ctx.required_size(
        "radius",
        &raw.radius,
        "give the centreline radius, e.g. radius = \"50 mm\"",
    )?;
    let length_m = raw
        .length
        .as_ref()
        .map(|l| ctx.size("length", l, false))
        .transpose()?;
    let given_pitch_m = raw
        .pitch
        .as_ref()
        .map(|p| ctx.size("pitch", p, false))
        .transpose()?;
    let turns = ctx.turns(raw.turns)?;
    let insulated_m = insulated_diameter_m(raw, ctx, wire_diameter_m, wire_raw)?;
    let wire_radius_m = 0.5 * wire_diameter_m;
    if radius_m <= wire_radius_m {
        return Err(ctx.radius_below_wire("radius", radius_m, wire_radius_m));
    }
    let (pitch_m, key, rule) = match (length_m, given_pitch_m, insulated_m) {
        (Some(_), Some(_), _) => {
            return Err(DesignError::BadSetting {
                source_name: ctx.source.to_string(),
                item: ctx.item.clone(),
                key: "pitch".into(),
                reason: "give either length or pitch, not both (length = turns x pitch)".into(),
            });
        }
        (Some(l), None, _) => (l / turns, "length", "length / turns"),
        (None, Some(p), _) => (p, "pitch", "as given"),
        (None, None, Some(d)) => (d, "insulation", "close-wound: the insulated diameter"),
        (None, None, None) => {
            return Err(ctx.missing(
                "length",
                "give the winding length along the axis, e.g. length = \"400 mm\"; or pitch, \
                 the centre-to-centre distance of adjacent turns; or, for a close-wound coil, the \
                 wire's insulation (insulation = \"0.03 mm\" or \"heavy\", or insulated_diameter)",
            ));
        }
    };
    // Insulation may touch (close-wound); a length typed as turns x insulated diameter may come
    // out a rounding below it, hence the relative 1e-9.
    let touching_m = insulated_m.unwrap_or(0.0) * (1.0 - 1e-9);
    if pitch_m < touching_m || pitch_m <= wire_diameter_m {
        return Err(ctx.thicker_than_pitch(
            key,
            wire_diameter_m,
            pitch_m,
            rule,
            helix_remedy(wire_diameter_m, insulated_m, turns),
        ));
    }
    Ok(Shape::Helix {
        origin_m,
        axis,
        radius_m,
        length_m: pitch_m * turns,
        turns,
    })
}

/// What a helix refused for its pitch needs: the smallest valid pitch and length, and (for bare
/// wire) how to describe a close-wound enamelled coil.
fn helix_remedy(wire_diameter_m: f64, insulated_m: Option<f64>, turns: f64) -> String {
    match insulated_m {
        Some(d) => format!(
            "the wire is {} m insulated, and the smallest valid pitch is the insulated \
             diameter, {} m (close-wound), a length of {} m for {} turns; use fewer turns, more \
             length or thinner wire",
            sig(d),
            sig(d),
            sig(d * turns),
            sig(turns)
        ),
        None => format!(
            "the pitch must exceed the bare diameter {} m (a length above {} m for {} turns); \
             for enamelled wire wound close, give insulation (a thickness, e.g. \"0.03 mm\", or \
             \"heavy\" with an AWG wire) or insulated_diameter, and the smallest valid pitch \
             becomes the insulated diameter",
            sig(wire_diameter_m),
            sig(wire_diameter_m * turns),
            sig(turns)
        ),
    }
}

/// Overall diameter of the insulated wire (m): `insulated_diameter`, or the bare diameter plus
/// twice `insulation` (a thickness, or an enamel build by name for an AWG wire); `None` when
/// neither is given.
fn insulated_diameter_m(
    raw: &RawWinding,
    ctx: &Ctx<'_>,
    wire_diameter_m: f64,
    wire_raw: &RawLength,
) -> Result<Option<f64>, DesignError> {
    let bad = |key: &str, reason: String| DesignError::BadSetting {
        source_name: ctx.source.to_string(),
        item: ctx.item.clone(),
        key: key.to_string(),
        reason,
    };
    let overall_m = match (&raw.insulation, &raw.insulated_diameter) {
        (Some(_), Some(_)) => {
            return Err(bad(
                "insulated_diameter",
                "give either insulation (a thickness) or insulated_diameter (overall), not both"
                    .into(),
            ));
        }
        (None, None) => return Ok(None),
        (None, Some(d)) => ctx.size("insulated_diameter", d, false)?,
        (Some(RawLength::Text(build)), None)
            if units::ENAMEL_BUILDS
                .iter()
                .any(|b| b.eq_ignore_ascii_case(build.trim())) =>
        {
            let gauge = match wire_raw {
                RawLength::Text(w) => units::parse_awg(w),
                RawLength::Number(_) => None,
            };
            let Some(gauge) = gauge else {
                return Err(bad(
                    "insulation",
                    format!(
                        "an enamel build (\"{build}\") needs the wire as a gauge, e.g. \
                         wire_diameter = \"AWG 24\"; otherwise give the thickness or \
                         insulated_diameter"
                    ),
                ));
            };
            units::enamel_overall_diameter_m(build.trim(), gauge).ok_or_else(|| {
                bad(
                    "insulation",
                    format!(
                        "the enamel table (from memory) has no AWG {gauge}; it covers AWG {}. \
                         Give the thickness or insulated_diameter",
                        units::enamel_gauges()
                    ),
                )
            })?
        }
        (Some(t), None) => wire_diameter_m + 2.0 * ctx.size("insulation", t, false)?,
    };
    if overall_m <= wire_diameter_m {
        return Err(bad(
            "insulated_diameter",
            format!(
                "the insulated wire ({} m) must be thicker than the bare wire ({} m)",
                sig(overall_m),
                sig(wire_diameter_m)
            ),
        ));
    }
    Ok(Some(overall_m))
}

/// The keys a flat spiral and a cone share: origin, axis, inner and outer radius (growing
/// outwards, the inner one beyond the wire), turns. The outer radius may be given as
/// `turn_spacing` instead (see [`outer_radius_of`]).
struct Flat {
    origin_m: Point3<f64>,
    axis: nalgebra::Unit<nalgebra::Vector3<f64>>,
    inner_radius_m: f64,
    outer_radius_m: f64,
    turns: f64,
}

/// Where a flat spiral's or cone's outer radius comes from.
enum Outer {
    /// `outer_radius` as given (m).
    Radius(f64),
    /// `turn_spacing` (m): centre to centre, radial for a spiral, along the slant for a cone.
    Spacing(f64),
}

fn flat(raw: &RawWinding, ctx: &Ctx<'_>) -> Result<(Flat, Outer), DesignError> {
    let origin_m = ctx.origin(&raw.origin)?;
    let axis = ctx.axis(&raw.axis)?;
    let inner_radius_m = ctx.required_size(
        "inner_radius",
        &raw.inner_radius,
        "give the centreline radius at the start, e.g. inner_radius = \"70 mm\"",
    )?;
    let outer = match (&raw.outer_radius, &raw.turn_spacing) {
        (Some(_), Some(_)) => {
            return Err(DesignError::BadSetting {
                source_name: ctx.source.to_string(),
                item: ctx.item.clone(),
                key: "turn_spacing".into(),
                reason: "give either outer_radius or turn_spacing, not both".into(),
            });
        }
        (None, Some(s)) => Outer::Spacing(ctx.size("turn_spacing", s, false)?),
        (o, None) => Outer::Radius(ctx.required_size(
            "outer_radius",
            o,
            "give the centreline radius at the end, e.g. outer_radius = \"130 mm\", or \
             turn_spacing, the centre-to-centre distance of adjacent turns",
        )?),
    };
    let f = Flat {
        origin_m,
        axis,
        inner_radius_m,
        outer_radius_m: 0.0,
        turns: 0.0,
    };
    Ok((f, outer))
}

/// The outer radius (m) from `outer_radius`, or from `turn_spacing` s: r_in + n s for a flat
/// spiral, r_in + sqrt((n s)^2 - h^2) for a cone of height h (the spacing runs along the
/// slant, so n s must exceed h).
fn outer_radius_of(
    f: &Flat,
    outer: &Outer,
    height_m: Option<f64>,
    ctx: &Ctx<'_>,
) -> Result<f64, DesignError> {
    match *outer {
        Outer::Radius(r) => Ok(r),
        Outer::Spacing(s) => {
            let slant_m = s * f.turns;
            let h = height_m.unwrap_or(0.0);
            if slant_m <= h {
                return Err(DesignError::BadSetting {
                    source_name: ctx.source.to_string(),
                    item: ctx.item.clone(),
                    key: "turn_spacing".into(),
                    reason: format!(
                        "turns x turn_spacing ({} m, along the slant) must exceed the height \
                         ({} m); the smallest valid turn_spacing is above {} m",
                        sig(slant_m),
                        sig(h),
                        sig(h / f.turns)
                    ),
                });
            }
            Ok(f.inner_radius_m + (slant_m * slant_m - h * h).sqrt())
        }
    }
}

/// Turns and radii of a spiral or cone, read after the keys of [`flat`] (and a cone's height,
/// so that messages come in the order of the keys).
fn check_radii(
    (mut f, outer): (Flat, Outer),
    raw: &RawWinding,
    ctx: &Ctx<'_>,
    wire_diameter_m: f64,
    height_m: Option<f64>,
) -> Result<Flat, DesignError> {
    f.turns = ctx.turns(raw.turns)?;
    f.outer_radius_m = outer_radius_of(&f, &outer, height_m, ctx)?;
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

/// The key that set a spiral's or cone's pitch, for messages.
fn spacing_key(raw: &RawWinding) -> &'static str {
    if raw.turn_spacing.is_some() {
        "turn_spacing"
    } else {
        "outer_radius"
    }
}

/// A flat Archimedean spiral: the wire thinner than the radial pitch.
fn spiral(raw: &RawWinding, ctx: &Ctx<'_>, wire_diameter_m: f64) -> Result<Shape, DesignError> {
    let f = check_radii(flat(raw, ctx)?, raw, ctx, wire_diameter_m, None)?;
    let pitch_m = (f.outer_radius_m - f.inner_radius_m) / f.turns;
    if pitch_m <= wire_diameter_m {
        return Err(ctx.thicker_than_pitch(
            spacing_key(raw),
            wire_diameter_m,
            pitch_m,
            "(outer_radius - inner_radius) / turns",
            format!(
                "the turn spacing must exceed the wire ({} m): an outer radius above {} m; use \
                 fewer turns, more room or a thinner wire",
                sig(wire_diameter_m),
                sig(f.inner_radius_m + wire_diameter_m * f.turns)
            ),
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
    let f = check_radii(f, raw, ctx, wire_diameter_m, Some(height_m))?;
    // Adjacent turns of a cone sit one slant length per turn apart along the cone's surface
    // line.
    let pitch_m = (f.outer_radius_m - f.inner_radius_m).hypot(height_m) / f.turns;
    if pitch_m <= wire_diameter_m {
        return Err(ctx.thicker_than_pitch(
            spacing_key(raw),
            wire_diameter_m,
            pitch_m,
            "sqrt((outer_radius - inner_radius)^2 + height^2) / turns, along the slant",
            format!(
                "the turn spacing along the slant must exceed the wire ({} m); use fewer turns, \
                 more room or a thinner wire",
                sig(wire_diameter_m)
            ),
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
