//! Criterion benchmarks: simulate.
//!
//! The estimator integrates the model (and its sensitivities) once per fit iteration over logs of
//! about 120,000 samples, so that is the size measured: 1 kHz for 120 s, all three damping terms,
//! RK4 at the sample step. Results are recorded in docs/performance.md ("Simulation").

use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;
use swingfit::integrate::{Method, simulate, simulate_with_sensitivities};
use swingfit::model::{DampingSet, Physics, Release};

/// An invented article: ωn = 4 rad/s, light damping of every kind, released at 0.6 rad, still
/// swinging (many hundreds of reversals) at the end of the 120 s log.
fn case() -> (Physics, Release, Vec<f64>) {
    let physics =
        Physics { omega_n: 4.0, damping: [0.004, 0.0004, 0.002, 0.0, 0.0, 0.0], breakaway: None };
    let release = Release { equilibrium: 0.01, angle: 0.6, velocity: 0.0 };
    let times: Vec<f64> = (0..120_000).map(|i| i as f64 * 1e-3).collect();
    (physics, release, times)
}

fn bench_simulate(c: &mut Criterion) {
    let (physics, release, times) = case();
    let mut group = c.benchmark_group("simulate_120k");
    group.bench_function("rk4_state", |b| {
        b.iter(|| {
            simulate(black_box(&physics), &release, &times, Method::Rk4 { max_step: 1e-3 })
                .map(|t| t.angle[times.len() - 1])
        })
    });
    group.bench_function("rk4_sensitivities_3_terms", |b| {
        b.iter(|| {
            simulate_with_sensitivities(
                black_box(&physics),
                &release,
                &times,
                DampingSet::FULL,
                1e-3,
            )
            .map(|(_, s)| s.d_angle[s.d_angle.len() - 1])
        })
    });
    group.bench_function("dopri_rtol_1e-9", |b| {
        b.iter(|| {
            simulate(
                black_box(&physics),
                &release,
                &times,
                Method::DormandPrince { rtol: 1e-9, atol: 1e-12 },
            )
            .map(|t| t.angle[times.len() - 1])
        })
    });
    group.finish();
}

criterion_group!(benches, bench_simulate);
criterion_main!(benches);
