//! Image windings of a perfectly conducting ground plane.

use crate::model::discretise::{Ring, RingModel};
use crate::model::electrode::Ground;
use crate::model::winding::{Model, Role, Shape, Winding};
use nalgebra::{Point3, Unit, Vector3};

/// Mirror image of a point in the plane z = `z0_m`.
fn mirror_point(p: &Point3<f64>, z0_m: f64) -> Point3<f64> {
    Point3::new(p.x, p.y, 2.0 * z0_m - p.z)
}

/// The image of a ring model in a perfectly conducting ground plane: every ring mirrored in
/// the plane, about the mirrored axis with the same weight (the mirror is orientation-reversing,
/// so that is the reversed current of [`image_windings`]). A uniform stack stays one, from its
/// mirrored origin. For parts of windings that are not windings themselves (the sections of a
/// secondary in the resonance model).
pub fn image_ring_model(model: &RingModel, ground: &Ground) -> RingModel {
    let z0 = ground.z_m;
    let a = model.axis;
    RingModel {
        origin_m: mirror_point(&model.origin_m, z0),
        axis: Unit::new_normalize(Vector3::new(a.x, a.y, -a.z)),
        rings: model
            .rings
            .iter()
            .map(|r| Ring {
                centre_m: mirror_point(&r.centre_m, z0),
                ..*r
            })
            .collect(),
        ..model.clone()
    }
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
/// `<name>-image` and have role `other`. A tapped winding's image carries the same tap (a
/// polyline image is drawn through the filament model of the active part only).
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
                // A mirrored curve keeps its parameter, so a tap cuts the image where it cuts
                // the winding; a polyline image holds the active part already.
                tap: match shape {
                    Shape::Polyline { .. } => None,
                    _ => w.tap,
                },
                conductor: w.conductor.clone(),
                shape,
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::discretise::ring_model;
    use crate::model::winding::{Tap, TapEnd};

    #[test]
    fn images_keep_the_tap() {
        // The image of a tapped spiral 5 cm above a plane at z = 0 is the mirror of its tapped
        // rings: same radii and weights, heights z -> -z.
        let w = Winding {
            name: "p".into(),
            role: Role::Primary,
            model: Model::Ring,
            wire_diameter_m: 0.003,
            segments_per_turn: None,
            shape: Shape::Spiral {
                origin_m: Point3::new(0.0, 0.0, 0.05),
                axis: Vector3::z_axis(),
                inner_radius_m: 0.06,
                outer_radius_m: 0.15,
                turns: 12.0,
            },
            tap: Some(Tap {
                turns: 4.5,
                from: TapEnd::Start,
            }),
            conductor: Default::default(),
        };
        let ground = Ground {
            z_m: 0.0,
            conducting: true,
        };
        let img = &image_windings(std::slice::from_ref(&w), &ground)[0];
        assert_eq!(img.tap, w.tap);
        let a = ring_model(&w).unwrap();
        let b = ring_model(img).unwrap();
        assert_eq!(a.rings.len(), b.rings.len());
        for (ra, rb) in a.rings.iter().zip(&b.rings) {
            assert_eq!((ra.radius_m, ra.weight), (rb.radius_m, rb.weight));
            assert!((ra.centre_m.z + rb.centre_m.z).abs() < 1e-16);
        }
        // A filament-model winding's image is the polyline of its active part alone.
        let f = Winding {
            model: Model::Filament,
            ..w.clone()
        };
        let img = &image_windings(std::slice::from_ref(&f), &ground)[0];
        assert_eq!(img.tap, None);
        let Shape::Polyline { points_m, .. } = &img.shape else {
            panic!("{img:?}")
        };
        assert_eq!(points_m.len(), 4 * 128 + 64 + 1);
    }

    #[test]
    fn the_image_of_a_ring_model_is_the_ring_model_of_the_image() {
        // A helix 2 cm above a plane at z = 0.005 m: mirroring its ring model ring by ring
        // gives the rings of its image winding (mirrored origin and axis), weights unchanged.
        let w = Winding {
            name: "s".into(),
            role: Role::Secondary,
            model: Model::Ring,
            wire_diameter_m: 0.0005,
            segments_per_turn: None,
            shape: Shape::Helix {
                origin_m: Point3::new(0.0, 0.0, 0.025),
                axis: Vector3::z_axis(),
                radius_m: 0.05,
                length_m: 0.1,
                turns: 150.5,
            },
            tap: None,
            conductor: Default::default(),
        };
        let ground = Ground {
            z_m: 0.005,
            conducting: true,
        };
        let by_rings = image_ring_model(&ring_model(&w).unwrap(), &ground);
        let by_winding = ring_model(&image_windings(std::slice::from_ref(&w), &ground)[0]).unwrap();
        assert_eq!(by_rings.uniform_pitch_m, by_winding.uniform_pitch_m);
        assert_eq!(by_rings.axis, by_winding.axis);
        assert_eq!(by_rings.rings.len(), by_winding.rings.len());
        for (a, b) in by_rings.rings.iter().zip(&by_winding.rings) {
            assert_eq!((a.radius_m, a.weight), (b.radius_m, b.weight));
            assert!((a.centre_m - b.centre_m).norm() < 1e-15, "{a:?} {b:?}");
        }
    }
}
