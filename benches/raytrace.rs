//! Ray-traced critical curve of Kerr a = 0.9 seen at 60°: 64 angles, boundary tolerance 1e-8 M.
//!
//! Goal (see docs/performance.md): under 0.3 s wall on 2 cores. Besides criterion's timings
//! of the solve on the global pool and on a 1-thread pool, a summary line reports rays per
//! second, integrator steps per ray and the 1 → 2 thread speed-up.

// Run with the allocator the command-line tool ships with (src/main.rs).
#[cfg(feature = "cli")]
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use criterion::{criterion_group, criterion_main, Criterion};
use rayon::ThreadPoolBuilder;
use std::hint::black_box;
use std::time::{Duration, Instant};
use umbral::metrics::Kerr;
use umbral::shadow::{raytrace, Observer, ShadowResult, ShadowSettings, SolverChoice};

fn case() -> (Kerr, Observer, ShadowSettings) {
    let kerr = Kerr::new(0.9).expect("a = 0.9 is a valid spin");
    let observer = Observer::distant(60f64.to_radians());
    let settings = ShadowSettings {
        points: 64,
        tolerance: 1e-8,
        solver: solver("raytrace"),
    };
    (kerr, observer, settings)
}

/// The fastest of three solves on one pool of `threads` threads, after a first solve that
/// starts the pool's threads (not timed).
fn best_on(threads: usize) -> (ShadowResult, f64) {
    let (kerr, observer, settings) = case();
    let pool = ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .expect("a thread pool");
    let solve = || {
        let start = Instant::now();
        let result = pool
            .install(|| raytrace::solve(&kerr, &observer, &settings))
            .expect("the Kerr curve converges");
        (result, start.elapsed().as_secs_f64())
    };
    solve();
    (0..3)
        .map(|_| solve())
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .expect("three runs")
}

fn summary() {
    let (one, t1) = best_on(1);
    let (_, t2) = best_on(2);
    let d = &one.diagnostics;
    println!(
        "raytrace kerr a=0.9 60deg 64 angles: {:.3} s on 1 thread, {:.3} s on 2 threads \
         (speed-up {:.2}); {} rays, {:.0} rays/s on 2 threads, {:.0} steps/ray",
        t1,
        t2,
        t1 / t2,
        d.rays_traced,
        d.rays_traced as f64 / t2,
        d.integrator_steps as f64 / d.rays_traced as f64
    );
}

fn bench_raytrace(c: &mut Criterion) {
    summary();
    let (kerr, observer, settings) = case();
    let mut group = c.benchmark_group("raytrace_kerr_a0.9_60deg_64");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(8));
    group.bench_function("global_pool", |b| {
        b.iter(|| raytrace::solve(black_box(&kerr), &observer, &settings).expect("converges"))
    });
    let pool = ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .expect("a thread pool");
    group.bench_function("one_thread", |b| {
        b.iter(|| {
            pool.install(|| raytrace::solve(black_box(&kerr), &observer, &settings))
                .expect("converges")
        })
    });
    group.finish();
}

criterion_group!(benches, bench_raytrace);
criterion_main!(benches);

/// A registered solver by name.
fn solver(name: &str) -> SolverChoice {
    name.parse().expect("a registered solver")
}
