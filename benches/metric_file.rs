//! The Hamiltonian gradient of a file-defined Kerr (metrics/kerr.toml, compiled to a
//! register program evaluated on dual numbers) against the built-in Rust Kerr, on the same
//! inputs.
//!
//! Goal (see docs/performance.md): the file metric within 4x of the built-in one.

use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;
use std::path::Path;
use umbral::metric::Spacetime;
use umbral::metric_file::load_metric_file;
use umbral::metrics::Kerr;

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

criterion_group! {
    name = benches;
    config = Criterion::default()
        .warm_up_time(std::time::Duration::from_millis(500))
        .measurement_time(std::time::Duration::from_secs(2));
    targets = bench_gradient
}
criterion_main!(benches);
