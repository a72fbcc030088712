//! Checks of the dielectrics and the enclosure against the electric model: every dielectric on
//! the electric axis, no two overlapping, and an enclosure that stands on the ground and holds
//! every conductor and dielectric of the electric model strictly inside.

use crate::error::{DesignError, sig};
use crate::model::design::Design;
use crate::model::electrode::{Axis, ElectrodeShape};
use crate::model::media::Dielectric;
use crate::model::winding::{Role, Shape};
use crate::query::axisymmetric::check_axisymmetric;

/// Relative tolerance (of the design's size) of the checks: positions closer than this are the
/// same position.
const TOL: f64 = 1e-9;

/// A dielectric's cross-section in the electric model's (r, z) half-plane: [r_min, r_max,
/// z_min, z_max] (m), z along `axis` from its origin.
pub fn dielectric_section_m(d: &Dielectric, axis: &Axis) -> [f64; 4] {
    let [r0, r1, _, length] = d.section_m();
    let z0 = (d.origin_m - axis.origin_m).dot(axis.direction.as_ref());
    if d.axis.dot(&axis.direction) >= 0.0 {
        [r0, r1, z0, z0 + length]
    } else {
        [r0, r1, z0 - length, z0]
    }
}

/// The dielectrics and the enclosure of a design against its electric model (see the module
/// doc). Nothing to check (Ok) when the design has neither. `source` labels messages.
// The error is geometry's own type, returned once per design.
#[allow(clippy::result_large_err)]
pub fn check_media(design: &Design, source: &str) -> Result<(), DesignError> {
    let media = &design.media;
    if !media.acts_on_field() {
        return Ok(());
    }
    let bad = |item: String, key: &str, reason: String| DesignError::BadSetting {
        source_name: source.to_string(),
        item,
        key: key.to_string(),
        reason,
    };
    if media.enclosure.is_some() && design.ground.is_none() {
        return Err(bad(
            "enclosure".to_string(),
            "radius",
            "an enclosure needs a [ground] table: the ground plane is its floor".to_string(),
        ));
    }
    let axis = check_axisymmetric(design, source)?;
    let scale = design_scale_m(design, &axis);
    let mut sections: Vec<(&Dielectric, [f64; 4])> = Vec::new();
    for d in &media.dielectrics {
        let item = format!("dielectric '{}'", d.name);
        if d.axis.cross(&axis.direction).norm() > TOL {
            return Err(bad(
                item,
                "axis",
                "not parallel to the electric axis (the secondary's, or the first electrode's); \
                 a dielectric must be a region of revolution about it"
                    .to_string(),
            ));
        }
        let rel = d.origin_m - axis.origin_m;
        let off = (rel - axis.direction.as_ref() * rel.dot(&axis.direction)).norm();
        if off > TOL * scale {
            return Err(bad(
                item,
                "origin",
                format!("{} m off the electric axis; put the origin on it", sig(off)),
            ));
        }
        let s = dielectric_section_m(d, &axis);
        for (other, o) in &sections {
            let overlap_r = s[1].min(o[1]) - s[0].max(o[0]);
            let overlap_z = s[3].min(o[3]) - s[2].max(o[2]);
            if overlap_r > TOL * scale && overlap_z > TOL * scale {
                return Err(bad(
                    item,
                    "origin",
                    format!(
                        "overlaps dielectric '{}' (by {} m in radius and {} m along the axis); \
                         dielectrics may touch but not overlap",
                        other.name,
                        sig(overlap_r),
                        sig(overlap_z)
                    ),
                ));
            }
        }
        sections.push((d, s));
    }
    if let Some(ground) = design.ground {
        // A dielectric may rest on the ground plane, not reach through it (the plane is a
        // conductor; below it there is no field to model). The axis is vertical here.
        for (d, s) in &sections {
            let bottom = axis.origin_m.z
                + axis.direction.z * if axis.direction.z > 0.0 { s[2] } else { s[3] };
            let depth = ground.z_m - bottom;
            if depth > TOL * scale {
                return Err(bad(
                    format!("dielectric '{}'", d.name),
                    "origin",
                    format!(
                        "reaches {} m below the ground plane (z = {} m); a dielectric may rest \
                         on it, not cross it",
                        sig(depth),
                        sig(ground.z_m)
                    ),
                ));
            }
        }
    }
    if let (Some(enc), Some(ground)) = (media.enclosure, design.ground) {
        let ceiling = ground.z_m + enc.height_m;
        // (item, largest distance from the axis, highest z) of everything inside.
        let mut parts: Vec<(String, f64, f64)> = Vec::new();
        for e in &design.electrodes {
            let (o, n) = e.shape.origin_axis();
            let top = match e.shape {
                ElectrodeShape::Sphere { radius_m, .. } => o.z + radius_m,
                ElectrodeShape::Torus { minor_radius_m, .. } => o.z + minor_radius_m,
                ElectrodeShape::Disc { .. } => o.z,
                ElectrodeShape::Cylinder { length_m, .. } => o.z.max(o.z + n.z * length_m),
            };
            parts.push((
                format!("electrode '{}'", e.name),
                e.shape.outer_radius_m(),
                top,
            ));
        }
        for w in design.windings.iter().filter(|w| w.role == Role::Secondary) {
            if let Shape::Helix {
                origin_m,
                axis: a,
                radius_m,
                length_m,
                ..
            } = w.shape
            {
                parts.push((
                    format!("winding '{}'", w.name),
                    radius_m + w.wire_radius_m(),
                    origin_m.z.max(origin_m.z + a.z * length_m) + w.wire_radius_m(),
                ));
            }
        }
        for (d, s) in &sections {
            let z_top = axis.origin_m.z
                + axis.direction.z * if axis.direction.z > 0.0 { s[3] } else { s[2] };
            parts.push((format!("dielectric '{}'", d.name), s[1], z_top));
        }
        for (item, r, top) in parts {
            let reach = |what: &str, gap: f64| {
                if gap < -TOL * scale {
                    format!(
                        "{item} reaches beyond the enclosure's {what} by {} m",
                        sig(-gap)
                    )
                } else {
                    format!(
                        "{item} touches the enclosure's {what} (gap {} m); a conductor must \
                         stand clear of the grounded walls",
                        sig(gap)
                    )
                }
            };
            let wall_gap = enc.radius_m - r;
            if wall_gap <= TOL * scale {
                return Err(bad(
                    "enclosure".to_string(),
                    "radius",
                    format!("{}; enlarge the radius", reach("wall", wall_gap)),
                ));
            }
            let ceiling_gap = ceiling - top;
            if ceiling_gap <= TOL * scale {
                return Err(bad(
                    "enclosure".to_string(),
                    "height",
                    format!("{}; raise the ceiling", reach("ceiling", ceiling_gap)),
                ));
            }
        }
    }
    Ok(())
}

/// A size (m) for tolerances: the largest distance of a conductor's or dielectric's origin from
/// the axis origin, and at least 1 m.
fn design_scale_m(design: &Design, axis: &Axis) -> f64 {
    let mut scale: f64 = 1.0;
    for e in &design.electrodes {
        scale = scale.max((e.shape.origin_axis().0 - axis.origin_m).norm());
    }
    for d in &design.media.dielectrics {
        scale = scale.max((d.origin_m - axis.origin_m).norm());
    }
    scale
}
