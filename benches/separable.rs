//! Speed of the separable solver: a Kerr critical curve with 1000 points (goal: under 1 ms),
//! with and without the ring exponents γ.

use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;
use umbral::metrics::Kerr;
use umbral::shadow::{separable, Observer, ShadowSettings};

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

criterion_group!(benches, kerr_curve);
criterion_main!(benches);
