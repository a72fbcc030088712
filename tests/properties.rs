//! Property tests of the assembled inductance matrix on random designs: reciprocity, positive
//! definiteness, |k| <= 1, invariance under a rigid motion, sequential = parallel, convergence
//! of the filament model under refinement.

use coilfield_geometry::{Design, Model, Role, Shape, Winding};
use coilfield_solver::Par;
use coilfield_solver::assembly::{WindingModel, inductance_report, mutual_inductance};
use nalgebra::{DMatrix, Isometry3, Point3, Unit, Vector3};
use proptest::prelude::*;

fn axis_from(theta: f64, phi: f64) -> Unit<Vector3<f64>> {
    Unit::new_normalize(Vector3::new(
        theta.sin() * phi.cos(),
        theta.sin() * phi.sin(),
        theta.cos(),
    ))
}

/// A ring or a short helix, centred in its own cell of a 0.6 m grid so wires never meet.
fn winding_strategy(cell: usize) -> impl Strategy<Value = Winding> {
    (
        0.02..0.15f64,
        0.0..3.1f64,
        0.0..6.2f64,
        -0.1..0.1f64,
        prop::bool::ANY,
        2u32..12,
        prop::bool::ANY,
    )
        .prop_map(
            move |(radius, theta, phi, jitter, helix, turns, filament)| {
                let origin = Point3::new(0.6 * cell as f64 + jitter, jitter, -jitter);
                let axis = axis_from(theta, phi);
                let shape = if helix {
                    Shape::Helix {
                        origin_m: origin,
                        axis,
                        radius_m: radius,
                        length_m: 0.005 * f64::from(turns),
                        turns: f64::from(turns),
                    }
                } else {
                    Shape::Ring {
                        origin_m: origin,
                        axis,
                        radius_m: radius,
                        count: 1,
                    }
                };
                Winding {
                    name: format!("w{cell}"),
                    role: Role::Other,
                    model: if filament && !helix {
                        Model::Filament
                    } else {
                        Model::Ring
                    },
                    wire_diameter_m: 0.001,
                    segments_per_turn: Some(24),
                    tap: None,
                    conductor: Default::default(),
                    shape,
                }
            },
        )
}

fn design_strategy() -> impl Strategy<Value = Design> {
    (
        winding_strategy(0),
        winding_strategy(1),
        winding_strategy(2),
    )
        .prop_map(|(a, b, c)| Design {
            version: 1,
            windings: vec![a, b, c],
            ..Default::default()
        })
}

fn moved(design: &Design, iso: &Isometry3<f64>) -> Design {
    let mut out = design.clone();
    for w in &mut out.windings {
        match &mut w.shape {
            Shape::Helix { origin_m, axis, .. }
            | Shape::Spiral { origin_m, axis, .. }
            | Shape::Cone { origin_m, axis, .. }
            | Shape::Ring { origin_m, axis, .. } => {
                *origin_m = iso * *origin_m;
                *axis = Unit::new_normalize(iso.rotation * axis.into_inner());
            }
            Shape::Polyline { points_m, .. } => {
                for p in points_m {
                    *p = iso * *p;
                }
            }
        }
    }
    out
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 24, ..ProptestConfig::default() })]

    #[test]
    fn matrix_is_reciprocal_positive_definite_and_bounded(design in design_strategy()) {
        let report = inductance_report(&design, Par::Rayon).unwrap();
        let n = design.windings.len();
        let m = DMatrix::from_fn(n, n, |i, j| report.mutual_h[i][j]);
        prop_assert!(m.clone().cholesky().is_some(), "not positive definite: {m}");
        for i in 0..n {
            for j in 0..n {
                prop_assert!(report.coupling[i][j].abs() <= 1.0);
            }
        }
        // Reciprocity through independent evaluations: M(a, b) against M(b, a).
        let models: Vec<WindingModel> = design.windings.iter().map(WindingModel::of).collect();
        for i in 0..n {
            for j in (i + 1)..n {
                let (mij, ..) = mutual_inductance(&models[i], &models[j], Par::Seq).unwrap();
                let (mji, ..) = mutual_inductance(&models[j], &models[i], Par::Seq).unwrap();
                let scale = (m[(i, i)] * m[(j, j)]).sqrt();
                prop_assert!((mij - mji).abs() <= 1e-9 * scale, "{mij} vs {mji}");
            }
        }
    }

    #[test]
    fn a_rigid_motion_changes_nothing(
        design in design_strategy(),
        rot in prop::array::uniform3(-3.0..3.0f64),
        shift in prop::array::uniform3(-2.0..2.0f64),
    ) {
        let iso = Isometry3::new(Vector3::from(shift), Vector3::from(rot));
        let a = inductance_report(&design, Par::Rayon).unwrap();
        let b = inductance_report(&moved(&design, &iso), Par::Rayon).unwrap();
        let n = design.windings.len();
        for i in 0..n {
            for j in 0..n {
                let scale = (a.mutual_h[i][i] * a.mutual_h[j][j]).sqrt();
                prop_assert!(
                    (a.mutual_h[i][j] - b.mutual_h[i][j]).abs() <= 1e-9 * scale,
                    "({i},{j}): {} vs {}", a.mutual_h[i][j], b.mutual_h[i][j]
                );
            }
        }
    }

    #[test]
    fn sequential_equals_parallel(design in design_strategy()) {
        let seq = inductance_report(&design, Par::Seq).unwrap();
        let par = inductance_report(&design, Par::Rayon).unwrap();
        prop_assert_eq!(seq, par);
    }

    #[test]
    fn filament_model_converges_to_the_ring_under_refinement(
        radius in 0.01..0.5f64,
        wire_ratio in 0.001..0.05f64,
    ) {
        let ring = |model: Model, per_turn: usize| Winding {
            name: "r".into(),
            role: Role::Other,
            model,
            wire_diameter_m: 2.0 * wire_ratio * radius,
            segments_per_turn: Some(per_turn),
            tap: None,
            conductor: Default::default(),
            shape: Shape::Ring {
                origin_m: Point3::origin(),
                axis: Vector3::z_axis(),
                radius_m: radius,
                count: 1,
            },
        };
        let l = |w: Winding| {
            let d = Design {
                version: 1,
                windings: vec![w],
                ..Default::default()
            };
            inductance_report(&d, Par::Seq).unwrap().mutual_h[0][0]
        };
        let exact = l(ring(Model::Ring, 0));
        let mut last = f64::INFINITY;
        for per_turn in [32, 64, 128, 256] {
            let err = ((l(ring(Model::Filament, per_turn)) - exact) / exact).abs();
            prop_assert!(err < last, "{per_turn} pieces: {err} >= {last}");
            last = err;
        }
        prop_assert!(last < 1e-3);
    }
}
