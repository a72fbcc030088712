//! Benchmarks of the lumped-circuit kernels (`coilfield_solver::circuit`).
//!
//! Run with `cargo bench -p coilfield-solver --bench circuit`. Targets (2 cores): a 2 ms run of a
//! tuned 2-loop system near 200 kHz (k = 0.2, fastest mode about 230 kHz, some 18,000 samples)
//! with its notch and peak refinements well under 10 ms; the lowest modes of a 200-section
//! ladder with full matrices well under 1 s.

use coilfield_solver::circuit::{LoopState, Loops, SimulationSettings, ladder_modes, simulate};
use criterion::{Criterion, criterion_group, criterion_main};
use nalgebra::DMatrix;
use std::hint::black_box;

/// A 20 uH / 30 nF primary and a 40 mH / 15 pF secondary (both near 205 kHz), k = 0.2, with
/// losses; the primary charged to 20 kV.
fn two_loops() -> (Loops, LoopState) {
    let (l1, l2, k) = (20e-6, 0.04, 0.2);
    let m = k * f64::sqrt(l1 * l2);
    let loops = Loops {
        inductance_h: DMatrix::from_row_slice(2, 2, &[l1, m, m, l2]),
        capacitance_f: vec![Some(30e-9), Some(15e-12)],
        resistance_ohm: vec![0.2, 150.0],
    };
    let state = LoopState {
        charge_c: vec![30e-9 * 2e4, 0.0],
        current_a: vec![0.0, 0.0],
    };
    (loops, state)
}

/// A 200-section winding: full inductance matrix (exponentially decaying mutual terms) and a
/// full capacitance matrix (nearest-neighbour coupling, a weaker far coupling, a top load).
fn ladder(n: usize) -> (DMatrix<f64>, DMatrix<f64>) {
    let l = DMatrix::from_fn(n, n, |i, j| 1e-4 * 0.8f64.powi(i.abs_diff(j) as i32));
    let mut c = DMatrix::from_fn(n, n, |i, j| {
        if i == j {
            0.0
        } else {
            -0.05e-12 * 0.5f64.powi(i.abs_diff(j) as i32)
        }
    });
    for i in 0..n {
        let off: f64 = (0..n).filter(|&j| j != i).map(|j| -c[(i, j)]).sum();
        c[(i, i)] = 0.02e-12 + off;
    }
    c[(n - 1, n - 1)] += 10e-12;
    (c, l)
}

fn circuit(c: &mut Criterion) {
    let mut g = c.benchmark_group("circuit");
    g.sample_size(20);
    let (loops, state) = two_loops();
    let settings = SimulationSettings::new(2e-3);
    g.bench_function("simulate_2_loops_2ms", |b| {
        b.iter(|| black_box(simulate(&loops, &state, &settings).unwrap()))
    });
    g.bench_function("simulate_2_loops_2ms_notch_peak", |b| {
        b.iter(|| {
            let sim = simulate(&loops, &state, &settings).unwrap();
            black_box((
                sim.first_notch(0).unwrap(),
                sim.peak_capacitor_voltage(1).unwrap(),
            ))
        })
    });
    let (cap, ind) = ladder(200);
    g.bench_function("ladder_modes_200_sections", |b| {
        b.iter(|| black_box(ladder_modes(&cap, &ind, 5).unwrap()))
    });
    g.finish();
}

criterion_group!(benches, circuit);
criterion_main!(benches);
