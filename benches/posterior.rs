//! Speed of posteriors. Goals (issue: posteriors): a 1-D Reissner-Nordstrom posterior under
//! 1 s and a Kerr-Newman charge posterior with spin and inclination marginalised under 30 s on
//! 2 cores. Measured here: one likelihood evaluation of each model (the samplers make
//! 4 x (2d + 2) x steps of them), and the whole 1-D Reissner-Nordstrom posterior by the
//! ensemble sampler and by quadrature (about 100 evaluations, 20000 draws).

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

criterion_group!(benches, evaluations, whole);
criterion_main!(benches);
