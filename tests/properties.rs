//! Property tests of the assembled inductance matrix on random designs: reciprocity, positive
//! definiteness, |k| <= 1, invariance under a rigid motion, sequential = parallel, convergence
//! of the filament model under refinement.

use coilfield_geometry::{Design, Model, Role, Shape, Winding};
use coilfield_solver::Par;
use coilfield_solver::assembly::{WindingModel, inductance_report};
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

/// Gauss-Legendre nodes and weights on [-1, 1], 8 points (M. Abramowitz & I. A. Stegun,
/// "Handbook of Mathematical Functions", 1964, table 25.4).
const GAUSS_8: [(f64, f64); 8] = [
    (-0.960_289_856_497_536_3, 0.101_228_536_290_376_3),
    (-0.796_666_477_413_626_7, 0.222_381_034_453_374_5),
    (-0.525_532_409_916_329, 0.313_706_645_877_887_3),
    (-0.183_434_642_495_649_8, 0.362_683_783_378_362),
    (0.183_434_642_495_649_8, 0.362_683_783_378_362),
    (0.525_532_409_916_329, 0.313_706_645_877_887_3),
    (0.796_666_477_413_626_7, 0.222_381_034_453_374_5),
    (0.960_289_856_497_536_3, 0.101_228_536_290_376_3),
];

/// Quadrature nodes of a winding's model for Neumann's integral: (point (m), weighted tangent
/// dl (m)). Rings by the trapezoid rule with 48 `level` nodes (spectrally accurate for a
/// smooth periodic integrand); straight filaments by 8-point Gauss-Legendre on `level`
/// equal pieces of each.
fn neumann_nodes(model: &WindingModel, level: usize) -> Vec<(Point3<f64>, Vector3<f64>)> {
    let mut nodes = Vec::new();
    match model {
        WindingModel::Rings(r) => {
            let axis = r.axis.into_inner();
            let helper = if axis.x.abs() < 0.9 {
                Vector3::x()
            } else {
                Vector3::y()
            };
            let u = axis.cross(&helper).normalize();
            let v = axis.cross(&u);
            let per_ring = 48 * level;
            let dphi = std::f64::consts::TAU / per_ring as f64;
            for ring in &r.rings {
                for k in 0..per_ring {
                    let (s, c) = (k as f64 * dphi).sin_cos();
                    let p = ring.centre_m + ring.radius_m * (c * u + s * v);
                    // d/dphi of (c u + s v) is (-s u + c v): right-handed about the axis.
                    let dl = ring.weight * ring.radius_m * dphi * (-s * u + c * v);
                    nodes.push((p, dl));
                }
            }
        }
        WindingModel::Filament(f) => {
            for idx in 0..f.n_segments() {
                let (a, b) = f.segment(idx);
                let piece = (b - a) / level as f64;
                for k in 0..level {
                    let mid = a + (k as f64 + 0.5) * piece;
                    for (x, w) in GAUSS_8 {
                        nodes.push((mid + 0.5 * x * piece, f.weight * 0.5 * w * piece));
                    }
                }
            }
        }
    }
    nodes
}

/// Neumann's double integral M = mu0/(4 pi) sum sum dl_a . dl_b / |p_a - p_b| (F. E.
/// Neumann, 1845; mu0/(4 pi) = 1e-7 H/m in the classical SI), brute force over the nodes of
/// [`neumann_nodes`], refined until two levels agree to 1e-10 of `scale_h`. Independent of
/// the assembly's kernels (no elliptic integrals, no closed-form segment terms, no series).
fn neumann_brute_force(a: &WindingModel, b: &WindingModel, scale_h: f64) -> f64 {
    let sum = |level: usize| {
        let na = neumann_nodes(a, level);
        let nb = neumann_nodes(b, level);
        let total: f64 = na
            .iter()
            .map(|(pa, la)| {
                nb.iter()
                    .map(|(pb, lb)| la.dot(lb) / (pa - pb).norm())
                    .sum::<f64>()
            })
            .sum();
        1e-7 * total
    };
    let mut last = sum(1);
    for level in [2, 4] {
        let next = sum(level);
        if (next - last).abs() <= 1e-10 * scale_h {
            return next;
        }
        last = next;
    }
    panic!("the brute-force reference did not converge: {last}");
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
        // Every off-diagonal entry against a brute-force Neumann double sum over the same
        // models (see `neumann_brute_force`), which shares no kernel with the assembly: this
        // checks the Maxwell, line-integral, Euler-Maclaurin and segment kernels and, since
        // the double sum is symmetric by construction, reciprocity M_ij = M_ji in one go.
        // Tolerance 1e-7 of sqrt(L_i L_j): the line integrals' own tolerance is 1e-10 and the
        // Euler-Maclaurin sum of a stack reaches about 1e-9 (seen: at most 3e-9 here).
        let models: Vec<WindingModel> = design.windings.iter().map(WindingModel::of).collect();
        for i in 0..n {
            for j in (i + 1)..n {
                let reference = neumann_brute_force(&models[i], &models[j], (m[(i, i)] * m[(j, j)]).sqrt());
                let scale = (m[(i, i)] * m[(j, j)]).sqrt();
                for (a, b) in [(i, j), (j, i)] {
                    prop_assert!(
                        (m[(a, b)] - reference).abs() <= 1e-7 * scale,
                        "M({a},{b}) = {} vs brute force {reference}", m[(a, b)]
                    );
                }
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
