//! Benchmarks of the inductance kernels on the geometries in `meshes-demo/bench*.toml`.
//!
//! Run with `cargo bench -p coilfield-solver --bench inductance`; the README records the
//! figures.

use coilfield_geometry::{Design, parse_design};
use coilfield_solver::Par;
use coilfield_solver::assembly::{WindingModel, inductance_report, self_inductance};
use coilfield_solver::mutual::mutual_ring_ring_coaxial;
use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use std::hint::black_box;

fn design(name: &str) -> Design {
    let path = format!("{}/../meshes-demo/{name}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).expect("bench geometry");
    parse_design(&text, &path).expect("valid bench geometry")
}

fn maxwell(c: &mut Criterion) {
    // Ring pairs of the coaxial benchmark pair: every secondary turn against every primary turn.
    let d = design("bench-pair-coaxial.toml");
    let rings = |i: usize| match WindingModel::of(&d.windings[i]) {
        WindingModel::Rings(r) => r,
        WindingModel::Filament(_) => unreachable!("ring model"),
    };
    let (sec, pri) = (rings(0), rings(1));
    let pairs: Vec<(f64, f64, f64)> = sec
        .rings
        .iter()
        .flat_map(|a| {
            pri.rings
                .iter()
                .map(move |b| (a.radius_m, b.radius_m, b.centre_m.z - a.centre_m.z))
        })
        .collect();
    let mut g = c.benchmark_group("maxwell_coaxial");
    g.throughput(Throughput::Elements(pairs.len() as u64));
    g.bench_function("one_core", |b| {
        b.iter(|| {
            pairs
                .iter()
                .map(|&(a, r, z)| mutual_ring_ring_coaxial(black_box(a), r, z))
                .sum::<f64>()
        })
    });
    g.finish();
}

fn helix_self(c: &mut Criterion) {
    let d = design("bench-helix-100k.toml");
    let model = WindingModel::of(&d.windings[0]);
    let mut g = c.benchmark_group("helix_100k_self_inductance");
    g.sample_size(20);
    g.bench_function("sequential", |b| {
        b.iter(|| self_inductance(black_box(&model), Par::Seq))
    });
    g.bench_function("parallel", |b| {
        b.iter(|| self_inductance(black_box(&model), Par::Rayon))
    });
    g.finish();
}

fn pair_matrix(c: &mut Criterion) {
    let mut g = c.benchmark_group("matrix_2x2_1000_turns_vs_10_turn_spiral");
    g.sample_size(20);
    for (label, file) in [
        ("coaxial", "bench-pair-coaxial.toml"),
        ("offset_2cm_tilted_10deg", "bench-pair-tilted.toml"),
    ] {
        let d = design(file);
        g.bench_function(format!("{label}_parallel"), |b| {
            b.iter(|| inductance_report(black_box(&d), Par::Rayon).expect("report"))
        });
        g.bench_function(format!("{label}_sequential"), |b| {
            b.iter(|| inductance_report(black_box(&d), Par::Seq).expect("report"))
        });
    }
    g.finish();
}

criterion_group!(benches, maxwell, helix_self, pair_matrix);
criterion_main!(benches);
