//! Image windings of a perfectly conducting ground plane.

use crate::model::electrode::Ground;
use crate::model::winding::{Model, Role, Shape, Winding};
use nalgebra::{Point3, Unit, Vector3};

/// Mirror image of a point in the plane z = `z0_m`.
fn mirror_point(p: &Point3<f64>, z0_m: f64) -> Point3<f64> {
    Point3::new(p.x, p.y, 2.0 * z0_m - p.z)
}

/// The image windings of a perfectly conducting ground plane `ground` (for B, L and M).
///
/// A perfect conductor keeps the normal flux density zero on its surface, which an image
/// current does: the geometric mirror of each current element with its direction reversed
/// (J_image = (-J_x, -J_y, J_z) at (x, y, 2 z0 - z); method of images, e.g. J. D. Jackson,
/// *Classical Electrodynamics*, 3rd ed. 1999, sec. 5.13 (section from memory)). The mirror is
/// orientation-reversing, so a ring about `n` becomes a ring about the mirrored `n` with the
/// same current sign; ring-model windings keep their shape with mirrored origin and axis.
/// Filament-model windings (and polylines) become polylines through the mirrored points in
/// reverse order, so that a helix keeps its true (opposite) handedness. Images are named
/// `<name>-image` and have role `other`.
pub fn image_windings(windings: &[Winding], ground: &Ground) -> Vec<Winding> {
    let z0 = ground.z_m;
    let mirror_axis = |a: &Unit<Vector3<f64>>| Unit::new_normalize(Vector3::new(a.x, a.y, -a.z));
    windings
        .iter()
        .map(|w| {
            let shape = match (&w.shape, w.model) {
                (
                    Shape::Helix {
                        origin_m,
                        axis,
                        radius_m,
                        length_m,
                        turns,
                    },
                    Model::Ring,
                ) => Shape::Helix {
                    origin_m: mirror_point(origin_m, z0),
                    axis: mirror_axis(axis),
                    radius_m: *radius_m,
                    length_m: *length_m,
                    turns: *turns,
                },
                (
                    Shape::Spiral {
                        origin_m,
                        axis,
                        inner_radius_m,
                        outer_radius_m,
                        turns,
                    },
                    Model::Ring,
                ) => Shape::Spiral {
                    origin_m: mirror_point(origin_m, z0),
                    axis: mirror_axis(axis),
                    inner_radius_m: *inner_radius_m,
                    outer_radius_m: *outer_radius_m,
                    turns: *turns,
                },
                (
                    Shape::Cone {
                        origin_m,
                        axis,
                        inner_radius_m,
                        outer_radius_m,
                        height_m,
                        turns,
                    },
                    Model::Ring,
                ) => Shape::Cone {
                    origin_m: mirror_point(origin_m, z0),
                    axis: mirror_axis(axis),
                    inner_radius_m: *inner_radius_m,
                    outer_radius_m: *outer_radius_m,
                    height_m: *height_m,
                    turns: *turns,
                },
                (
                    Shape::Ring {
                        origin_m,
                        axis,
                        radius_m,
                        count,
                    },
                    _,
                ) => Shape::Ring {
                    origin_m: mirror_point(origin_m, z0),
                    axis: mirror_axis(axis),
                    radius_m: *radius_m,
                    count: *count,
                },
                _ => {
                    let f = crate::model::discretise::filament_model(w);
                    let mut points_m: Vec<Point3<f64>> =
                        f.points_m.iter().map(|p| mirror_point(p, z0)).collect();
                    points_m.reverse();
                    Shape::Polyline {
                        points_m,
                        closed: f.closed,
                    }
                }
            };
            let model = match shape {
                Shape::Polyline { .. } => Model::Filament,
                _ => w.model,
            };
            Winding {
                name: format!("{}-image", w.name),
                role: Role::Other,
                model,
                wire_diameter_m: w.wire_diameter_m,
                segments_per_turn: w.segments_per_turn,
                shape,
            }
        })
        .collect()
}
