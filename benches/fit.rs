//! Criterion benchmarks of the estimator: how long a fit takes as the log and the model grow.
//!
//! Logs are made here, not read from disk: `integrate::simulate` (Dormand–Prince, tight
//! tolerances) of an invented article, plus seeded Gaussian noise, so every run benchmarks the
//! same data. Groups:
//! - `fit/viscous/{10000,120000}`: one term on a viscous-only decay;
//! - `fit/three_terms/{10000,120000}`: viscous, Coulomb and quadratic on a decay with all three;
//! - `compare/10000`: every candidate damping set on the 10,000-sample three-term log;
//! - `fit/joint_two_logs/2x10000`: two releases of one article fitted jointly (three terms).
//!
//! Run one core, as the target is stated: `RAYON_NUM_THREADS=1 cargo bench --bench fit`
//! (see docs/performance.md).

use std::hint::black_box;
use std::time::Duration;

use criterion::{BenchmarkId, Criterion, criterion_group, criterion_main};
use rand::SeedableRng;
use rand::rngs::StdRng;
use rand_distr::{Distribution, Normal};

use swingfit::data::AngleLog;
use swingfit::fit::compare::{CompareOptions, compare};
use swingfit::fit::{FitOptions, fit};
use swingfit::integrate::{Method, simulate};
use swingfit::model::{DampingSet, Physics, Release, Term};

/// Invented article: ωn 5.2 rad/s (period ≈ 1.21 s); damping light enough to swing for 120 s.
fn physics(terms: DampingSet) -> Physics {
    let mut p = Physics::undamped(5.2);
    let full = [0.012, 0.006, 0.006]; // b1 [1/s], b0 [rad/s²], b2 [1/rad]
    for t in terms.iter() {
        p.damping[t.index()] = full[t.index()];
    }
    p
}

/// `n` samples over `duration` seconds from a release `release_deg` past an equilibrium of
/// 1.5°, with 0.005° of Gaussian noise (seeded).
fn make_log(
    name: &str,
    terms: DampingSet,
    n: usize,
    duration: f64,
    release_deg: f64,
    seed: u64,
) -> AngleLog {
    let deg = std::f64::consts::PI / 180.0;
    let eq = 1.5 * deg;
    let release = Release { equilibrium: eq, angle: eq + release_deg * deg, velocity: 0.0 };
    let times: Vec<f64> = (0..n).map(|i| duration * i as f64 / (n - 1) as f64).collect();
    let tr = simulate(
        &physics(terms),
        &release,
        &times,
        Method::DormandPrince { rtol: 1e-10, atol: 1e-12 },
    )
    .unwrap_or_else(|e| panic!("bench log {name}: {e}"));
    let mut rng = StdRng::seed_from_u64(seed);
    // Standard deviation is a positive constant: Normal::new cannot fail.
    let noise = Normal::new(0.0, 0.005 * deg).unwrap_or_else(|e| panic!("{e}"));
    let angles: Vec<f64> = tr.angle.iter().map(|a| a + noise.sample(&mut rng)).collect();
    AngleLog::from_samples(name, times, angles).unwrap_or_else(|e| panic!("bench log {name}: {e}"))
}

fn options(terms: DampingSet) -> FitOptions {
    FitOptions { damping: terms, ..FitOptions::default() }
}

fn bench_fit(c: &mut Criterion) {
    let viscous = DampingSet::from_terms(&[Term::Viscous]);
    let three = DampingSet::FULL;
    let mut group = c.benchmark_group("fit");
    group.sample_size(10).measurement_time(Duration::from_secs(10));
    for &(n, duration) in &[(10_000usize, 50.0), (120_000, 120.0)] {
        let log = make_log("viscous", viscous, n, duration, 40.0, 11);
        group.bench_with_input(BenchmarkId::new("viscous", n), &log, |b, log| {
            b.iter(|| fit(black_box(std::slice::from_ref(log)), &options(viscous)))
        });
        let log = make_log("three", three, n, duration, 40.0, 13);
        group.bench_with_input(BenchmarkId::new("three_terms", n), &log, |b, log| {
            b.iter(|| fit(black_box(std::slice::from_ref(log)), &options(three)))
        });
    }
    let pair = vec![
        make_log("joint_a", three, 10_000, 50.0, 40.0, 17),
        make_log("joint_b", three, 10_000, 50.0, 20.0, 19),
    ];
    group.bench_with_input(BenchmarkId::new("joint_two_logs", "2x10000"), &pair, |b, logs| {
        b.iter(|| fit(black_box(logs), &options(three)))
    });
    group.finish();
}

fn bench_compare(c: &mut Criterion) {
    let log = make_log("three", DampingSet::FULL, 10_000, 50.0, 40.0, 13);
    let opts =
        CompareOptions { candidates: DampingSet::all_nonempty(), fit: FitOptions::default() };
    let mut group = c.benchmark_group("compare");
    group.sample_size(10).measurement_time(Duration::from_secs(20));
    group.bench_with_input(BenchmarkId::from_parameter(10_000), &log, |b, log| {
        b.iter(|| compare(black_box(std::slice::from_ref(log)), &opts))
    });
    group.finish();
}

criterion_group!(benches, bench_fit, bench_compare);
criterion_main!(benches);
