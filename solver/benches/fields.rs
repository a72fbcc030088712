//! Benchmarks of the field solvers on `meshes-demo/bench-fields.toml`.
//!
//! Run with `cargo bench -p coilfield-solver --bench fields`. Targets (issue 3, 2 cores):
//! B on a 200 x 200 plane <= 1 s; E on the same plane from a 1,000-panel solution <= 2 s;
//! assembly and solve with 2,000 panels, coarse estimate included, <= 2 s.

use coilfield_geometry::{Design, parse_design};
use coilfield_solver::Par;
use coilfield_solver::electrostatic::{Params, Problem};
use coilfield_solver::field::{b_field, sources_from_design};
use criterion::{Criterion, criterion_group, criterion_main};
use nalgebra::Point3;
use std::hint::black_box;

fn design() -> Design {
    let path = format!(
        "{}/../meshes-demo/bench-fields.toml",
        env!("CARGO_MANIFEST_DIR")
    );
    let text = std::fs::read_to_string(&path).expect("bench geometry");
    parse_design(&text, &path).expect("valid bench geometry")
}

/// The xz plane x in [-0.5, 0.5] m, z in [0.01, 1.0] m, 200 x 200 points.
fn plane() -> Vec<Point3<f64>> {
    let n = 200;
    let mut pts = Vec::with_capacity(n * n);
    for j in 0..n {
        for i in 0..n {
            let x = -0.5 + i as f64 / (n - 1) as f64;
            let z = 0.01 + 0.99 * j as f64 / (n - 1) as f64;
            pts.push(Point3::new(x, 0.0, z));
        }
    }
    pts
}

fn fields(c: &mut Criterion) {
    let d = design();
    let pts = plane();
    let sources = sources_from_design(&d, "bench").unwrap();
    let mut g = c.benchmark_group("fields");
    g.sample_size(10);
    g.bench_function("b_plane_200x200", |b| {
        b.iter(|| black_box(b_field(&sources, &pts, Par::Rayon)))
    });
    let params = |panels| Params {
        panels,
        ..Default::default()
    };
    let sol = Problem::from_design(&d, &params(1000), "bench")
        .unwrap()
        .solve(Par::Rayon)
        .expect("the benchmark design solves");
    g.bench_function("e_plane_200x200_1000_panels", |b| {
        b.iter(|| black_box(sol.e_field(&pts, Par::Rayon)))
    });
    g.bench_function("assemble_solve_2000_panels", |b| {
        b.iter(|| {
            let p = Problem::from_design(&d, &params(2000), "bench").unwrap();
            black_box(p.solve(Par::Rayon).expect("the benchmark design solves"))
        })
    });
    g.finish();
}

criterion_group!(benches, fields);
criterion_main!(benches);
