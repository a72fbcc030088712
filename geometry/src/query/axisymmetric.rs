//! The common axis of the electric model.

use crate::error::DesignError;
use crate::model::design::Design;
use crate::model::electrode::{Axis, ElectrodeShape};
use nalgebra::{Point3, Unit, Vector3};

/// A conductor of the electric model: its name for messages, its centre, its axis (None for a
/// sphere).
type Member = (String, Point3<f64>, Option<Unit<Vector3<f64>>>);

/// Tolerance (relative to the design's size) of the axis checks: positions and directions that
/// differ by less come from rounding, not from placement.
const AXIS_TOL: f64 = 1e-9;

/// The common axis of the electric model: all electrodes and the secondary winding (role =
/// "secondary") on one axis, perpendicular to the ground plane if there is one.
///
/// The axis is the secondary's (origin and direction), or the first electrode's when there is
/// no secondary. The error names the first conductor off that axis and says by how much, or
/// the conductor whose axis is not vertical when a ground plane is present. `source` labels
/// messages (usually the path).
pub fn check_axisymmetric(design: &Design, source: &str) -> Result<Axis, DesignError> {
    let off = |item: String, key: &'static str, reason: String| DesignError::NotAxisymmetric {
        source_name: source.to_string(),
        item,
        key,
        reason,
    };
    let mut members: Vec<Member> = Vec::new();
    for w in design
        .windings
        .iter()
        .filter(|w| w.role == crate::model::winding::Role::Secondary)
    {
        let Some((o, n)) = w.shape.origin_axis() else {
            return Err(off(
                format!("winding '{}'", w.name),
                "points",
                "a polyline secondary has no axis; the electric model needs a helix".to_string(),
            ));
        };
        members.push((format!("winding '{}'", w.name), o, Some(n)));
    }
    for e in &design.electrodes {
        let (o, n) = e.shape.origin_axis();
        let dir = match e.shape {
            ElectrodeShape::Sphere { .. } => None,
            _ => Some(n),
        };
        members.push((format!("electrode '{}'", e.name), o, dir));
    }
    let Some((first_item, origin, first_dir)) = members.first().cloned() else {
        return Err(DesignError::MissingKey {
            source_name: source.to_string(),
            item: "top level".to_string(),
            key: "electrode".to_string(),
            hint: "the electric model needs a winding with role = \"secondary\" or at least one \
                   [[electrode]]"
                .to_string(),
        });
    };
    // A sphere alone fixes no direction: take the plane's normal, or z.
    let direction = first_dir
        .or_else(|| members.iter().find_map(|m| m.2))
        .unwrap_or_else(Vector3::z_axis);
    let scale = members
        .iter()
        .map(|m| (m.1 - origin).norm())
        .fold(1.0_f64, f64::max)
        .max(origin.coords.amax());
    if let Some(g) = design.ground {
        let tilt = direction.cross(&Vector3::z()).norm();
        if tilt > AXIS_TOL {
            let item = members
                .iter()
                .find(|m| m.2.is_some())
                .map_or(first_item.clone(), |m| m.0.clone());
            return Err(off(
                item,
                "axis",
                format!(
                    "with a ground plane (z = {} m) the common axis must be vertical, [0, 0, 1]; \
                     this axis is tilted by {:.3e} rad",
                    g.z_m,
                    tilt.asin()
                ),
            ));
        }
    }
    for (item, o, dir) in &members {
        let r = o - origin;
        let dist = (r - direction.as_ref() * r.dot(direction.as_ref())).norm();
        if dist > AXIS_TOL * scale {
            return Err(off(
                item.clone(),
                "origin",
                format!(
                    "its centre is {} m off the common axis through [{}, {}, {}] m set by {first_item}",
                    crate::error::sig(dist),
                    origin.x,
                    origin.y,
                    origin.z
                ),
            ));
        }
        if let Some(d) = dir {
            let tilt = d.cross(&direction).norm();
            if tilt > AXIS_TOL {
                return Err(off(
                    item.clone(),
                    "axis",
                    format!(
                        "its axis is tilted by {:.3e} rad from the common axis set by {first_item}",
                        tilt.asin()
                    ),
                ));
            }
        }
    }
    Ok(Axis {
        origin_m: origin,
        direction,
    })
}
