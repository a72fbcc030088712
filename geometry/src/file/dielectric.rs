//! Dielectric regions, the grounded enclosure and the mesh settings of the finite-element
//! electric solver.
//!
//! # Design-file keys
//! `[[dielectric]]`, any number; regions of revolution about the electric axis (the
//! secondary's, see [`crate::query::axisymmetric::check_axisymmetric`]):
//! - `name`: `[A-Za-z0-9_-]+`, unique among dielectrics (default `dielectric-<n>`).
//! - `shape`: `tube` | `disc`.
//! - `origin` (lengths, m): the centre of a tube's base, of a disc's lower face; on the axis.
//! - `axis` (direction): the electric axis, up or down (default `[0, 0, 1]`).
//! - `inner_radius` (tube), `outer_radius` (tube, disc), `length` (tube: along the axis; disc:
//!   its thickness): positive lengths, a tube's inner radius below its outer one.
//! - `relative_permittivity` (number >= 1), or `material` = one of the names of
//!   [`crate::model::media::MATERIALS`] (typical values, with their source there); not both.
//!
//! A dielectric may touch or hold conductors (a form under a winding, enamel around a wire);
//! two dielectrics may touch but not overlap.
//!
//! `[enclosure]` (needs `[ground]`, whose plane is its floor): `radius` (the wall's distance
//! from the axis) and `height` (the ceiling above the floor), positive lengths. Everything of
//! the electric model must lie strictly inside it.
//!
//! `[mesh]` (all optional): `density` (number in (0, 16], default 1: edge lengths scale as
//! 1 / density), `max_elements` (integer, at most [`MAX_MESH_ELEMENTS`], default
//! [`crate::model::media::DEFAULT_MAX_ELEMENTS`]: a mesh that needs more is refused),
//! `outer_radius` (length: the radius of the open far boundary's inner disc; default from the
//! design's size).
//!
//! Dielectrics and the enclosure act on E only: inductances, couplings and B ignore them.

use crate::error::DesignError;
use crate::file::raw::{Ctx, RawLength, RawNumber, type_phrase};
use crate::model::media::{
    Dielectric, DielectricShape, Enclosure, MATERIALS, MAX_MESH_ELEMENTS, MeshSettings, material,
};
use nalgebra::Vector3;
use serde::Deserialize;
use toml::{Table, Value};

/// Values of a dielectric's `shape` key.
pub const DIELECTRIC_SHAPE_NAMES: &[&str] = &["tube", "disc"];

/// Largest `[mesh] density`.
pub const MAX_MESH_DENSITY: f64 = 16.0;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawDielectric {
    origin: Option<[RawLength; 3]>,
    axis: Option<[RawNumber; 3]>,
    inner_radius: Option<RawLength>,
    outer_radius: Option<RawLength>,
    length: Option<RawLength>,
    relative_permittivity: Option<RawNumber>,
    material: Option<String>,
}

fn dielectric_keys(shape: &str) -> &'static [&'static str] {
    match shape {
        "tube" => &[
            "name",
            "shape",
            "origin",
            "axis",
            "inner_radius",
            "outer_radius",
            "length",
            "relative_permittivity",
            "material",
        ],
        _ => &[
            "name",
            "shape",
            "origin",
            "axis",
            "outer_radius",
            "length",
            "relative_permittivity",
            "material",
        ],
    }
}

fn bad(ctx: &Ctx, key: &str, reason: String) -> DesignError {
    DesignError::BadSetting {
        source_name: ctx.source.to_string(),
        item: ctx.item.clone(),
        key: key.to_string(),
        reason,
    }
}

fn wrong_type(source: &str, item: &str, key: &str, reason: String) -> DesignError {
    DesignError::WrongType {
        source_name: source.to_string(),
        item: item.to_string(),
        key: key.to_string(),
        reason,
    }
}

/// Parse the `dielectric` array of a design file.
pub(crate) fn parse_dielectrics(
    value: Value,
    source: &str,
) -> Result<Vec<Dielectric>, DesignError> {
    let Value::Array(entries) = value else {
        return Err(wrong_type(
            source,
            "top level",
            "dielectric",
            format!(
                "expected [[dielectric]] tables (double brackets), got {}",
                type_phrase(&value)
            ),
        ));
    };
    let mut out: Vec<Dielectric> = Vec::with_capacity(entries.len());
    for (idx, entry) in entries.into_iter().enumerate() {
        let number = idx + 1;
        let Value::Table(t) = entry else {
            return Err(wrong_type(
                source,
                &format!("dielectric #{number}"),
                "dielectric",
                format!(
                    "expected a [[dielectric]] table, got {}",
                    type_phrase(&entry)
                ),
            ));
        };
        let d = parse_dielectric(t, number, source)?;
        if let Some(j) = out.iter().position(|o| o.name == d.name) {
            return Err(DesignError::DuplicateName {
                source_name: source.to_string(),
                item: format!("dielectric #{number}"),
                name: d.name.clone(),
                first: format!("dielectric #{}", j + 1),
            });
        }
        out.push(d);
    }
    Ok(out)
}

fn parse_dielectric(
    mut table: Table,
    number: usize,
    source: &str,
) -> Result<Dielectric, DesignError> {
    let mut ctx = Ctx {
        source,
        item: format!("dielectric #{number}"),
    };
    let name = ctx.read_name(&table, "dielectric", "form", number)?;
    table.remove("name");
    let shape = ctx.take_shape(&mut table, DIELECTRIC_SHAPE_NAMES)?;
    let allowed = dielectric_keys(&shape);
    if let Some(key) = table.keys().find(|k| !allowed.contains(&k.as_str())) {
        return Err(DesignError::UnknownKey {
            source_name: source.to_string(),
            item: ctx.item,
            key: key.clone(),
            shape: format!("{shape} dielectric"),
            allowed: allowed.join(", "),
        });
    }
    let raw: RawDielectric = ctx.typed(table)?;
    let origin = raw.origin.as_ref().ok_or_else(|| {
        ctx.missing(
            "origin",
            "give the centre of its base (a disc: of its lower face) as origin = [x, y, z]",
        )
    })?;
    let origin_m = ctx.point("origin", origin)?;
    let axis = if raw.axis.is_none() {
        Vector3::z_axis()
    } else {
        ctx.axis(&raw.axis)?
    };
    let outer_radius_m = ctx.required_size(
        "outer_radius",
        &raw.outer_radius,
        "give the outer radius, e.g. outer_radius = \"48 mm\"",
    )?;
    let length_m = ctx.required_size(
        "length",
        &raw.length,
        "give the length along the axis (a disc: its thickness), e.g. length = \"50 cm\"",
    )?;
    let shape = if shape == "tube" {
        let inner_radius_m = ctx.required_size(
            "inner_radius",
            &raw.inner_radius,
            "give the inner radius, e.g. inner_radius = \"45 mm\"",
        )?;
        if inner_radius_m >= outer_radius_m {
            return Err(DesignError::RadiiOrder {
                source_name: source.to_string(),
                item: ctx.item,
                inner_radius_m,
                outer_radius_m,
            });
        }
        DielectricShape::Tube {
            inner_radius_m,
            outer_radius_m,
            length_m,
        }
    } else {
        DielectricShape::Disc {
            outer_radius_m,
            length_m,
        }
    };
    let (relative_permittivity, material_name) = match (raw.relative_permittivity, raw.material) {
        (Some(_), Some(_)) => {
            return Err(bad(
                &ctx,
                "material",
                "give either relative_permittivity or material, not both".to_string(),
            ));
        }
        (None, None) => {
            return Err(ctx.missing(
                "relative_permittivity",
                &format!(
                    "give relative_permittivity = a number >= 1, or material = one of {}",
                    material_names()
                ),
            ));
        }
        (Some(eps), None) => {
            let v = eps.as_f64();
            if !v.is_finite() {
                return Err(ctx.not_finite(
                    "relative_permittivity",
                    "a finite relative permittivity (a number >= 1)",
                    eps.shown(),
                ));
            }
            if v <= 0.0 {
                return Err(ctx.not_positive(
                    "relative_permittivity",
                    "a positive relative permittivity (a number >= 1)",
                    eps.shown(),
                ));
            }
            if v < 1.0 {
                return Err(bad(
                    &ctx,
                    "relative_permittivity",
                    format!(
                        "{} is below 1, which no material has in a static field; give a number \
                         >= 1",
                        eps.shown()
                    ),
                ));
            }
            (v, None)
        }
        (None, Some(name)) => match material(&name) {
            Some(m) => (m.relative_permittivity, Some(m.name.to_string())),
            None => {
                return Err(bad(
                    &ctx,
                    "material",
                    format!(
                        "unknown material \"{name}\"; known: {} (or give relative_permittivity)",
                        material_names()
                    ),
                ));
            }
        },
    };
    Ok(Dielectric {
        name,
        shape,
        origin_m,
        axis,
        relative_permittivity,
        material: material_name,
    })
}

fn material_names() -> String {
    MATERIALS
        .iter()
        .map(|m| m.name)
        .collect::<Vec<_>>()
        .join(", ")
}

/// Parse the `[enclosure]` table.
pub(crate) fn parse_enclosure(value: Value, source: &str) -> Result<Enclosure, DesignError> {
    let ctx = Ctx {
        source,
        item: "enclosure".to_string(),
    };
    let Value::Table(table) = value else {
        return Err(wrong_type(
            source,
            "top level",
            "enclosure",
            format!("expected an [enclosure] table, got {}", type_phrase(&value)),
        ));
    };
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    struct RawEnclosure {
        radius: Option<RawLength>,
        height: Option<RawLength>,
    }
    if let Some(key) = table
        .keys()
        .find(|k| !["radius", "height"].contains(&k.as_str()))
    {
        return Err(DesignError::UnknownKey {
            source_name: source.to_string(),
            item: ctx.item,
            key: key.clone(),
            shape: "enclosure".to_string(),
            allowed: "radius, height".to_string(),
        });
    }
    let raw: RawEnclosure = ctx.typed(table)?;
    Ok(Enclosure {
        radius_m: ctx.required_size(
            "radius",
            &raw.radius,
            "give the wall's distance from the axis, e.g. radius = \"2 m\"",
        )?,
        height_m: ctx.required_size(
            "height",
            &raw.height,
            "give the ceiling's height above the floor, e.g. height = \"3 m\"",
        )?,
    })
}

/// Parse the `[mesh]` table.
pub(crate) fn parse_mesh(value: Value, source: &str) -> Result<MeshSettings, DesignError> {
    let ctx = Ctx {
        source,
        item: "mesh".to_string(),
    };
    let Value::Table(table) = value else {
        return Err(wrong_type(
            source,
            "top level",
            "mesh",
            format!("expected a [mesh] table, got {}", type_phrase(&value)),
        ));
    };
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    struct RawMesh {
        density: Option<RawNumber>,
        max_elements: Option<RawNumber>,
        outer_radius: Option<RawLength>,
    }
    const KEYS: &[&str] = &["density", "max_elements", "outer_radius"];
    if let Some(key) = table.keys().find(|k| !KEYS.contains(&k.as_str())) {
        return Err(DesignError::UnknownKey {
            source_name: source.to_string(),
            item: ctx.item,
            key: key.clone(),
            shape: "mesh".to_string(),
            allowed: KEYS.join(", "),
        });
    }
    let raw: RawMesh = ctx.typed(table)?;
    let mut mesh = MeshSettings::default();
    if let Some(d) = raw.density {
        let v = d.as_f64();
        if !v.is_finite() {
            return Err(ctx.not_finite("density", "a finite number in (0, 16]", d.shown()));
        }
        if v <= 0.0 {
            return Err(ctx.not_positive("density", "a number in (0, 16]", d.shown()));
        }
        if v > MAX_MESH_DENSITY {
            return Err(ctx.too_large(
                "density",
                d.shown(),
                format!("the limit is {MAX_MESH_DENSITY}"),
            ));
        }
        mesh.density = v;
    }
    if let Some(n) = raw.max_elements {
        let Some(whole) = n.as_whole() else {
            return Err(DesignError::NotInteger {
                source_name: source.to_string(),
                item: ctx.item.clone(),
                key: "max_elements".to_string(),
                expected: "a whole number".to_string(),
                value: n.shown(),
            });
        };
        if whole <= 0 {
            return Err(ctx.not_positive("max_elements", "a positive whole number", n.shown()));
        }
        if whole as u64 > MAX_MESH_ELEMENTS as u64 {
            return Err(ctx.too_large(
                "max_elements",
                n.shown(),
                format!(
                    "the limit is {MAX_MESH_ELEMENTS} elements (memory and time of one \
                     factorisation)"
                ),
            ));
        }
        mesh.max_elements = whole as usize;
    }
    if let Some(r) = &raw.outer_radius {
        mesh.outer_radius_m = Some(ctx.size("outer_radius", r, false)?);
    }
    Ok(mesh)
}
