//! Benchmarks of the resonance model (`coilfield_solver::resonance`) on the frozen design
//! `meshes-demo/bench-resonance.toml` (an invented spark-gap resonator: a 1000-turn secondary,
//! a toroid, a 12-turn spiral primary, a ground plane).
//!
//! Run with `cargo bench -p coilfield-solver --bench resonance`. Targets (2 cores): the
//! secondary's distributed model at 200 sections, the section inductance matrix and the nodal
//! capacitance matrix (a boundary-element solve) included, <= 2 s; the whole resonance with
//! the spark gap's ring-down at the converged section count.

use coilfield_solver::Par;
use coilfield_solver::resonance::{ResonanceParams, resonance, secondary_model};
use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;

fn design() -> coilfield_geometry::Design {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../meshes-demo/bench-resonance.toml"
    );
    let text = std::fs::read_to_string(path).expect("bench design");
    coilfield_geometry::parse_design(&text, path).expect("valid design")
}

fn benches(c: &mut Criterion) {
    let d = design();
    let mut g = c.benchmark_group("resonance");
    g.sample_size(10);
    let at = |n: usize| ResonanceParams {
        sections: Some(n),
        estimate_error: false,
        ..ResonanceParams::default()
    };
    g.bench_function("distributed model, 200 sections, 2 threads", |b| {
        b.iter(|| secondary_model(black_box(&d), "bench", &at(200), Par::Rayon).expect("model"))
    });
    g.bench_function(
        "whole resonance with the spark gap, 32 sections, 2 threads",
        |b| b.iter(|| resonance(black_box(&d), "bench", &at(32), Par::Rayon).expect("resonance")),
    );
    g.finish();
}

criterion_group!(resonance_benches, benches);
criterion_main!(resonance_benches);
