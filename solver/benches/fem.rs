//! Benchmarks of the finite-element electrostatic solver.
//!
//! Run with `cargo bench -p coilfield-solver --bench fem`. Targets (issue 12, 2 cores): a
//! mesh of about 200,000 elements assembled, factored once and solved for every conductor in
//! <= 5 s; meshing of the demo room resonator (`meshes-demo/room-resonator.toml`: secondary,
//! PVC form, torus, ground, enclosure) at the density that gives its capacitances to 0.1 %
//! (`TENTH_PERCENT_DENSITY`, README convergence table) in <= 1 s.

#[path = "support/room_resonator.rs"]
mod room_resonator;

use coilfield_solver::fem::{Area, Conductor, Domain, FemProblem, Outer, Profile2d};
use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;

/// Two spheres (radius 0.1 m, centres 0.3 m apart on the axis) in a grounded sphere of
/// radius 0.6 m, at the density that gives about 200,000 elements.
fn two_spheres(density: f64) -> Domain {
    let sphere = |name: &str, zc: f64| {
        let area = Area::Disk {
            centre: [0.0, zc],
            radius: 0.1,
        };
        Conductor {
            name: name.to_string(),
            pieces: area.outline(),
            area: Some(area),
            profile: Profile2d::Uniform,
        }
    };
    Domain {
        conductors: vec![sphere("a", -0.15), sphere("b", 0.15)],
        regions: Vec::new(),
        outer: Outer::Sphere {
            centre_z: 0.0,
            radius: 0.6,
        },
        density,
        max_elements: 2_000_000,
        axis: None,
        drive: None,
    }
}

fn bench(c: &mut Criterion) {
    // Find the density for about 200,000 elements once (the element count grows as density^2).
    let mut density = 10.0;
    let mut problem = FemProblem::new(two_spheres(density)).expect("mesh");
    for _ in 0..3 {
        let n = problem.mesh().elements() as f64;
        density *= (200_000.0 / n).sqrt();
        problem = FemProblem::new(two_spheres(density)).expect("mesh");
    }
    let mut group = c.benchmark_group("fem");
    group.sample_size(10);
    group.bench_function("assemble_factor_solve_200k", |b| {
        b.iter(|| black_box(problem.solve().expect("solve")))
    });
    let (design, path) = room_resonator::room_resonator_at_tenth_percent();
    group.bench_function("mesh_room_resonator", |b| {
        b.iter(|| black_box(FemProblem::from_design(&design, &path).expect("mesh")))
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
