//! The Hamiltonian gradient of a file-defined Kerr (metrics/kerr.toml, compiled to a
//! register program evaluated on dual numbers) against the built-in Rust Kerr, on the same
//! inputs.
//!
//! Goal (see docs/performance.md): the file metric within 4x of the built-in one.
//!
//! Also a whole ray-traced critical curve (Kerr a = 0.9 seen at 60 degrees, 16 angles) from
//! the file-defined and the built-in Kerr, with the same goal: within 4x.

// Run with the allocator the command-line tool ships with (src/main.rs).
#[cfg(feature = "cli")]
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;
use std::path::Path;
use umbral::metric::Spacetime;
use umbral::metric_file::load_metric_file;
use umbral::metrics::Kerr;
use umbral::shadow::{raytrace, Observer, ShadowSettings, SolverChoice};

/// A fixed set of phase-space points (r, θ, p) spread over a typical ray.
fn inputs() -> Vec<(f64, f64, [f64; 4])> {
    (0..64)
        .map(|i| {
            let x = i as f64 / 63.0;
            let r = 2.5 + 30.0 * x * x;
            let theta = 0.2 + 2.7 * x;
            let p = [-1.0, 0.3 - 0.6 * x, 2.0 * (1.0 - 2.0 * x), 3.0 - 5.0 * x];
            (r, theta, p)
        })
        .collect()
}

fn sweep(m: &dyn Spacetime, points: &[(f64, f64, [f64; 4])]) -> f64 {
    let mut acc = 0.0;
    for (r, theta, p) in points {
        let g = m.hamiltonian_gradient(black_box(*r), black_box(*theta), black_box(p));
        acc += g.h + g.dh_dx[1] + g.dh_dx[2] + g.dh_dp[0] + g.dh_dp[3];
    }
    acc
}

fn bench_gradient(c: &mut Criterion) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("metrics/kerr.toml");
    let spec = load_metric_file(&path).unwrap_or_else(|e| panic!("{e}"));
    let file_kerr = spec
        .instantiate(&[("a".to_string(), 0.9)])
        .expect("a = 0.9 is a valid spin");
    let kerr = Kerr::new(0.9).expect("a = 0.9 is a valid spin");
    let points = inputs();
    let mut group = c.benchmark_group("file_kerr_hamiltonian_gradient");
    group.throughput(criterion::Throughput::Elements(points.len() as u64));
    group.bench_function("builtin", |b| b.iter(|| sweep(&kerr, &points)));
    group.bench_function("file", |b| b.iter(|| sweep(&file_kerr, &points)));
    group.finish();

    let mut group = c.benchmark_group("metric_file_load");
    let text = std::fs::read_to_string(&path).expect("the shipped Kerr file");
    group.bench_function("parse_and_instantiate_kerr", |b| {
        b.iter(|| {
            let spec = umbral::metric_file::parse_metric_file(black_box(&text), "kerr.toml")
                .expect("valid file");
            spec.instantiate_defaults()
        })
    });
    group.finish();
}

/// The ray-traced case: 16 screen angles, boundary tolerance 1e-8 M.
fn raytrace_case() -> (Observer, ShadowSettings) {
    let observer = Observer::distant(60f64.to_radians());
    let settings = ShadowSettings {
        points: 16,
        tolerance: 1e-8,
        solver: solver("raytrace"),
    };
    (observer, settings)
}

/// Best of three wall-clock times of one ray-traced curve, in seconds, and the curve's radii.
fn best_raytrace_time(m: &dyn Spacetime) -> (f64, Vec<f64>) {
    let (observer, settings) = raytrace_case();
    let mut best = f64::INFINITY;
    let mut radii = Vec::new();
    for _ in 0..3 {
        let start = std::time::Instant::now();
        let result = raytrace::solve(m, &observer, &settings).expect("the Kerr curve converges");
        best = best.min(start.elapsed().as_secs_f64());
        radii = result.curve.expect("Kerr a = 0.9 has a shadow").radii;
    }
    (best, radii)
}

fn bench_raytrace(c: &mut Criterion) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("metrics/kerr.toml");
    let file_kerr = load_metric_file(&path)
        .unwrap_or_else(|e| panic!("{e}"))
        .instantiate(&[("a".to_string(), 0.9)])
        .expect("a = 0.9 is a valid spin");
    let kerr = Kerr::new(0.9).expect("a = 0.9 is a valid spin");

    let (t_builtin, r_builtin) = best_raytrace_time(&kerr);
    let (t_file, r_file) = best_raytrace_time(&file_kerr);
    let deviation = r_builtin
        .iter()
        .zip(&r_file)
        .fold(0.0f64, |m, (x, y)| m.max((x - y).abs()));
    println!(
        "raytrace kerr a=0.9 60deg 16 angles: built-in {t_builtin:.3} s, file {t_file:.3} s \
         (ratio {:.2}, goal <= 4); largest radius difference {deviation:.1e} M",
        t_file / t_builtin
    );

    let (observer, settings) = raytrace_case();
    let mut group = c.benchmark_group("raytrace_kerr_a0.9_60deg_16");
    group.sample_size(10);
    group.measurement_time(std::time::Duration::from_secs(4));
    group.bench_function("builtin", |b| {
        b.iter(|| raytrace::solve(black_box(&kerr), &observer, &settings).expect("converges"))
    });
    group.bench_function("file", |b| {
        b.iter(|| raytrace::solve(black_box(&file_kerr), &observer, &settings).expect("converges"))
    });
    group.finish();
}

criterion_group! {
    name = benches;
    config = Criterion::default()
        .warm_up_time(std::time::Duration::from_millis(500))
        .measurement_time(std::time::Duration::from_secs(2));
    targets = bench_gradient, bench_raytrace
}
criterion_main!(benches);

/// A registered solver by name.
fn solver(name: &str) -> SolverChoice {
    name.parse().expect("a registered solver")
}
