//! The null-geodesic Hamiltonian gradient for Kerr: the generic dual-number path
//! (`Spacetime::hamiltonian_gradient`, derived from the metric components alone) against the
//! gradient written out by hand (`Kerr::analytic_hamiltonian_gradient`), on the same inputs.
//!
//! Goal (see docs/performance.md): the dual-number path within 3x of the hand-written one.

// Run with the allocator the command-line tool ships with (src/main.rs).
#[cfg(feature = "cli")]
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use criterion::{criterion_group, criterion_main, Criterion};
use num_dual::{Dual64, HyperDual64};
use std::hint::black_box;
use umbral::metric::{Metric, PhaseGradient, Spacetime};
use umbral::metrics::Kerr;

/// The same gradient through a hyper-dual number (ε₁ = ∂/∂r, ε₂ = ∂/∂θ; the ε₁ε₂ part is
/// computed and discarded): an alternative derivative type, timed for comparison only.
fn hyperdual_gradient<M: Metric>(m: &M, r: f64, theta: f64, p: &[f64; 4]) -> PhaseGradient {
    let inv = m
        .components(
            HyperDual64::new(r, 1.0, 0.0, 0.0),
            HyperDual64::new(theta, 0.0, 1.0, 0.0),
        )
        .inverse();
    let h = inv.hamiltonian(p);
    gradient_from(inv.map(|x| x.re), h.re, [h.eps1, h.eps2], p)
}

/// The same gradient from two passes with a one-direction dual number, for comparison only.
fn two_pass_gradient<M: Metric>(m: &M, r: f64, theta: f64, p: &[f64; 4]) -> PhaseGradient {
    let along_r = m
        .components(Dual64::new(r, 1.0), Dual64::from(theta))
        .inverse();
    let along_theta = m
        .components(Dual64::from(r), Dual64::new(theta, 1.0))
        .inverse();
    let h_r = along_r.hamiltonian(p);
    let h_theta = along_theta.hamiltonian(p);
    gradient_from(along_r.map(|x| x.re), h_r.re, [h_r.eps, h_theta.eps], p)
}

fn gradient_from(
    inv: umbral::metric::InverseComponents<f64>,
    h: f64,
    dh: [f64; 2],
    p: &[f64; 4],
) -> PhaseGradient {
    let [pt, pr, pth, pph] = *p;
    PhaseGradient {
        h,
        dh_dx: [0.0, dh[0], dh[1], 0.0],
        dh_dp: [
            inv.g_tt * pt + inv.g_tphi * pph,
            inv.g_rr * pr,
            inv.g_thth * pth,
            inv.g_tphi * pt + inv.g_phph * pph,
        ],
    }
}

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

fn bench_gradient(c: &mut Criterion) {
    let kerr = Kerr::new(0.9).expect("a = 0.9 is a valid spin");
    let points = inputs();
    // All paths compute the same numbers (checked here so the comparison is fair).
    for (r, theta, p) in &points {
        let reference = kerr.hamiltonian_gradient(*r, *theta, p);
        for other in [
            kerr.analytic_hamiltonian_gradient(*r, *theta, p),
            hyperdual_gradient(&kerr, *r, *theta, p),
            two_pass_gradient(&kerr, *r, *theta, p),
        ] {
            for i in 1..3 {
                let (x, y) = (other.dh_dx[i], reference.dh_dx[i]);
                assert!((x - y).abs() <= 1e-10 * y.abs().max(1e-6), "{x} vs {y}");
            }
        }
    }
    let per_point = points.len() as u64;
    let mut group = c.benchmark_group("kerr_hamiltonian_gradient");
    group.throughput(criterion::Throughput::Elements(per_point));
    group.bench_function("dual_number", |b| {
        b.iter(|| {
            let mut acc = 0.0;
            for (r, theta, p) in &points {
                let g = kerr.hamiltonian_gradient(black_box(*r), black_box(*theta), black_box(p));
                acc += g.h + g.dh_dx[1] + g.dh_dx[2] + g.dh_dp[0] + g.dh_dp[3];
            }
            acc
        })
    });
    group.bench_function("analytic", |b| {
        b.iter(|| {
            let mut acc = 0.0;
            for (r, theta, p) in &points {
                let g = kerr.analytic_hamiltonian_gradient(
                    black_box(*r),
                    black_box(*theta),
                    black_box(p),
                );
                acc += g.h + g.dh_dx[1] + g.dh_dx[2] + g.dh_dp[0] + g.dh_dp[3];
            }
            acc
        })
    });
    group.bench_function("hyperdual_alternative", |b| {
        b.iter(|| {
            let mut acc = 0.0;
            for (r, theta, p) in &points {
                let g = hyperdual_gradient(&kerr, black_box(*r), black_box(*theta), black_box(p));
                acc += g.h + g.dh_dx[1] + g.dh_dx[2] + g.dh_dp[0] + g.dh_dp[3];
            }
            acc
        })
    });
    group.bench_function("two_pass_dual_alternative", |b| {
        b.iter(|| {
            let mut acc = 0.0;
            for (r, theta, p) in &points {
                let g = two_pass_gradient(&kerr, black_box(*r), black_box(*theta), black_box(p));
                acc += g.h + g.dh_dx[1] + g.dh_dx[2] + g.dh_dp[0] + g.dh_dp[3];
            }
            acc
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
