//! Speed of posteriors. Goals (issue: posteriors): a 1-D Reissner-Nordstrom posterior under
//! 1 s and a Kerr-Newman charge posterior with spin and inclination marginalised under 30 s on
//! 2 cores. Measured here: one likelihood evaluation of each model (the samplers make
//! 4 x (2d + 2) x steps of them), and the whole 1-D Reissner-Nordstrom posterior by the
//! ensemble sampler and by quadrature (about 100 evaluations, 20000 draws).

// Run with the allocator the command-line tool ships with (src/main.rs).
#[cfg(feature = "cli")]
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;
use std::time::Duration;
use umbral::measurement::Measurement;
use umbral::metrics::MetricSource;
use umbral::posterior::{
    infer_on, InferSettings, InferenceRequest, ParallelEvaluator, PosteriorModel, SamplerKind,
};
use umbral::sampling::Prior;

fn model(metric: &str, priors: &[(&str, &str)]) -> PosteriorModel {
    let m = Measurement::from_toml_str("[size.shadow_radius]\nvalue = 5.0\nsigma = 0.2\n").unwrap();
    let priors = priors
        .iter()
        .map(|(n, s)| (n.to_string(), Prior::parse(s).unwrap()))
        .collect();
    let request = InferenceRequest::new(MetricSource::builtin(metric).unwrap(), priors, vec![m]);
    PosteriorModel::new(&request).unwrap()
}

fn evaluations(c: &mut Criterion) {
    let rn = model("reissner-nordstrom", &[("q", "uniform:0:1")]);
    c.bench_function("posterior: one Reissner-Nordstrom evaluation", |b| {
        b.iter(|| black_box(rn.evaluate(black_box(&[0.4]))))
    });
    let kn = model(
        "kerr-newman",
        &[
            ("q", "uniform:0:0.7"),
            ("a", "uniform:0:0.7"),
            ("inclination", "isotropic:0:90"),
        ],
    );
    c.bench_function("posterior: one Kerr-Newman evaluation", |b| {
        b.iter(|| black_box(kn.evaluate(black_box(&[0.3, 0.5, 1.0]))))
    });
}

fn whole(c: &mut Criterion) {
    let rn = model("reissner-nordstrom", &[("q", "uniform:0:1")]);
    let settings = InferSettings {
        steps: 10_000,
        walkers: 4,
        ..Default::default()
    };
    let mut group = c.benchmark_group("posterior");
    group
        .sample_size(10)
        .measurement_time(Duration::from_secs(60));
    group.bench_function("1-D Reissner-Nordstrom, 4 x 4 walkers x 10000 steps", |b| {
        b.iter(|| black_box(infer_on(&rn, &settings, &mut ParallelEvaluator).unwrap()))
    });
    group.finish();
    // The same posterior by quadrature, with the evidence and 20000 independent draws (what
    // `umbral infer --sampler quadrature` does by default).
    let quadrature = InferSettings {
        sampler: SamplerKind::Quadrature,
        ..Default::default()
    };
    c.bench_function("posterior: 1-D Reissner-Nordstrom by quadrature", |b| {
        b.iter(|| black_box(infer_on(&rn, &quadrature, &mut ParallelEvaluator).unwrap()))
    });
}

/// The two slower goals: the Kerr-Newman charge with spin (uniform) and inclination (isotropic)
/// marginalised and the ring chain (kappa, mass, distance) sampled jointly, by nested sampling
/// (goal 30 s); and the Johannsen-Psaltis posterior (eps3 and spin) sampled from its table,
/// which is built once before timing (goal: table under 5 minutes, sampling under 30 s).
fn slow(c: &mut Criterion) {
    let ring = |text: &str| Measurement::from_toml_str(text).unwrap();
    let alder = ring(include_str!("../examples/infer_source_alder.toml"));
    let prior = |s: &str| Prior::parse(s).unwrap();
    let request = InferenceRequest::new(
        MetricSource::builtin("kerr-newman").unwrap(),
        vec![
            ("q".into(), prior("uniform:0:1")),
            ("a".into(), prior("uniform:0:0.9")),
        ],
        vec![alder],
    );
    let kn = PosteriorModel::new(&request).unwrap();
    let nested = InferSettings {
        sampler: SamplerKind::Nested,
        ..Default::default()
    };
    let mut group = c.benchmark_group("posterior (slow)");
    group
        .sample_size(10)
        .measurement_time(Duration::from_secs(200));
    group.bench_function(
        "Kerr-Newman q, a, inclination and the ring chain (6-D), nested",
        |b| b.iter(|| black_box(infer_on(&kn, &nested, &mut ParallelEvaluator).unwrap())),
    );
    let jp = model(
        "johannsen-psaltis",
        &[
            ("eps3", "uniform:-1:1"),
            ("a", "uniform:0:0.7"),
            ("inclination", "fixed:60"),
        ],
    );
    let dir = std::env::temp_dir().join(format!("umbral-bench-table-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let controls = umbral::run::Controls {
        observers: vec![],
        stop: None,
    };
    let tables = umbral::scan::table::build_tables(&jp, &dir, controls).unwrap();
    let jp = jp.with_tables(tables).unwrap();
    let ensemble = InferSettings {
        steps: 10_000,
        max_steps: 160_000,
        walkers: 6,
        ..Default::default()
    };
    group.bench_function(
        "Johannsen-Psaltis eps3 and a from a 9 x 9 table, ensemble",
        |b| b.iter(|| black_box(infer_on(&jp, &ensemble, &mut ParallelEvaluator).unwrap())),
    );
    group.finish();
    let _ = std::fs::remove_dir_all(&dir);
}

criterion_group!(benches, evaluations, whole, slow);
criterion_main!(benches);
