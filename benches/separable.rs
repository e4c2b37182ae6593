//! Speed of the separable solver: a Kerr critical curve with 1000 points (goal: under 1 ms),
//! with and without the ring exponents γ; and how the whole curve step scales with the number
//! of points: solve and observables for 100 000 points of separable Kerr (goal: under 1 s) and
//! of a spherical circle (goal: under 0.1 s), with 10 000 points for the slope; the
//! 100 000-point cases also on a 1-thread pool, for the parallel speed-up (goal: at least
//! 1.8 on 2 cores).

// Run with the allocator the command-line tool ships with (src/main.rs).
#[cfg(feature = "cli")]
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;
use std::time::Duration;
use umbral::metric::Spacetime;
use umbral::metrics::{Kerr, ReissnerNordstrom};
use umbral::observables::{CentreChoice, Observables};
use umbral::shadow::{separable, solve, Observer, ShadowSettings};

fn kerr_curve(c: &mut Criterion) {
    let kerr = Kerr::new(0.9).unwrap();
    let observer = Observer::distant(60f64.to_radians());
    let settings = ShadowSettings {
        points: 1000,
        ..ShadowSettings::default()
    };
    c.bench_function("separable kerr a=0.9 i=60deg 1000 points", |b| {
        b.iter(|| separable::solve(black_box(&kerr), black_box(&observer), &settings).unwrap())
    });
    c.bench_function(
        "separable kerr a=0.9 i=60deg 1000 points, curve only",
        |b| {
            b.iter(|| {
                separable::solve_curve(black_box(&kerr), black_box(&observer), &settings).unwrap()
            })
        },
    );
    let finite = Observer::at_radius(60f64.to_radians(), 1e3);
    c.bench_function("separable kerr a=0.9 i=60deg r_o=1000 1000 points", |b| {
        b.iter(|| separable::solve(black_box(&kerr), black_box(&finite), &settings).unwrap())
    });
}

/// Solve and reduce to observables, as `umbral shadow` does.
fn curve_and_observables(metric: &dyn Spacetime, observer: &Observer, points: usize) -> f64 {
    let settings = ShadowSettings {
        points,
        ..ShadowSettings::default()
    };
    let result = solve(metric, observer, &settings).unwrap();
    let curve = result.curve.unwrap();
    Observables::from_curve(&curve, CentreChoice::Centroid, None, None)
        .unwrap()
        .mean_radius
}

fn many_points(c: &mut Criterion) {
    let kerr = Kerr::new(0.9).unwrap();
    let rn = ReissnerNordstrom::new(0.5).unwrap();
    let observer = Observer::distant(60f64.to_radians());
    let mut group = c.benchmark_group("curve and observables");
    group
        .sample_size(10)
        .measurement_time(Duration::from_secs(10));
    for points in [10_000, 100_000] {
        group.bench_function(
            format!("separable kerr a=0.9 i=60deg {points} points"),
            |b| b.iter(|| curve_and_observables(black_box(&kerr), &observer, points)),
        );
        group.bench_function(
            format!("spherical reissner-nordstrom q=0.5 circle {points} points"),
            |b| b.iter(|| curve_and_observables(black_box(&rn), &observer, points)),
        );
    }
    let one = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap();
    group.bench_function(
        "separable kerr a=0.9 i=60deg 100000 points, 1 thread",
        |b| b.iter(|| one.install(|| curve_and_observables(black_box(&kerr), &observer, 100_000))),
    );
    group.bench_function(
        "spherical reissner-nordstrom q=0.5 circle 100000 points, 1 thread",
        |b| b.iter(|| one.install(|| curve_and_observables(black_box(&rn), &observer, 100_000))),
    );
    group.finish();
}

criterion_group!(benches, kerr_curve, many_points);
criterion_main!(benches);
