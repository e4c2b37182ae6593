//! Bounds and scans that need the ray tracer, and the ray-traced Kerr curve's cost per angle
//! (issue 16). Goals on 2 cores: a Johannsen–Psaltis ε₃ bound with spin in [0, 0.95] as a
//! nuisance at fixed inclination under 5 s; a Kerr–Newman q bound with spin and an
//! inclination range as nuisances under 3 s; a 10 × 10 Johannsen–Psaltis (a, ε₃) scan under
//! 20 s. Each case runs on the global pool and on a 1-thread pool, for the parallel
//! speed-up (goal: at least 1.8). The ray-traced Kerr curve (a = 0.9, 60°, 64 angles,
//! 1e-8 M; goal 0.7 ms per angle) is `benches/raytrace.rs`; 100 000-point curves are in
//! `benches/separable.rs`.

// Run with the allocator the command-line tool ships with (src/main.rs).
#[cfg(feature = "cli")]
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use criterion::{criterion_group, criterion_main, Criterion};
use rayon::ThreadPoolBuilder;
use std::hint::black_box;
use std::time::Duration;
use umbral::bounds::{
    bound, BoundRequest, BoundSettings, Inclination, ParameterRange, SizeMeasure,
};
use umbral::measurement::{DerivedRadii, RadiusInterval};
use umbral::metrics::MetricSource;
use umbral::scan::{run_scan, GridAxis, ScanRequest, DEFAULT_SCAN_POINTS};
use umbral::shadow::ShadowSettings;

/// Invented intervals on the mean radius.
fn radii() -> DerivedRadii {
    DerivedRadii {
        intervals: vec![
            RadiusInterval {
                confidence: 0.68,
                low: 5.0,
                high: 5.15,
            },
            RadiusInterval {
                confidence: 0.95,
                low: 4.95,
                high: 5.2,
            },
        ],
        ring: None,
        assumptions: vec![],
    }
}

fn range(name: &str, low: f64, high: f64) -> ParameterRange {
    ParameterRange {
        name: name.into(),
        low,
        high,
    }
}

fn request(
    metric: &str,
    vary: ParameterRange,
    nuisance: Vec<ParameterRange>,
    inclination: Inclination,
) -> BoundRequest {
    BoundRequest {
        metric: MetricSource::builtin(metric).unwrap(),
        vary,
        fixed: vec![],
        inclination,
        nuisance,
        size_measure: SizeMeasure::Mean,
        radii: radii(),
        circularity_max: None,
        settings: BoundSettings::default(),
    }
}

fn traced_bounds(c: &mut Criterion) {
    let jp = request(
        "johannsen-psaltis",
        range("eps3", -1.0, 1.0),
        vec![range("a", 0.0, 0.95)],
        Inclination::Fixed { degrees: 60.0 },
    );
    let kn = request(
        "kerr-newman",
        range("q", 0.0, 0.9),
        vec![range("a", 0.0, 0.99)],
        Inclination::Range {
            low_degrees: 20.0,
            high_degrees: 80.0,
        },
    );
    let scan = ScanRequest {
        metric: MetricSource::builtin("johannsen-psaltis").unwrap(),
        axes: vec![
            GridAxis::new("a", 0.0, 0.9, 10),
            GridAxis::new("eps3", -1.0, 1.0, 10),
        ],
        fixed: vec![],
        inclination_deg: Some(60.0),
        // The command line's default: curves start from 64 points, doubled where needed.
        settings: ShadowSettings {
            points: DEFAULT_SCAN_POINTS,
            ..Default::default()
        },
        require_horizon: false,
    };
    let path = std::env::temp_dir().join(format!(
        "umbral-bench-traced-scan-{}.jsonl",
        std::process::id()
    ));
    let one = ThreadPoolBuilder::new().num_threads(1).build().unwrap();
    let mut group = c.benchmark_group("traced");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(60));
    for (label, pool) in [("global pool", None), ("1 thread", Some(&one))] {
        let install = |f: &mut (dyn FnMut() + Send)| match pool {
            Some(p) => p.install(f),
            None => f(),
        };
        group.bench_function(
            format!("bound johannsen-psaltis eps3, spin nuisance [0, 0.95], 60 deg, {label}"),
            |b| b.iter(|| install(&mut || drop(bound(black_box(&jp)).unwrap()))),
        );
        group.bench_function(
            format!("bound kerr-newman q, spin and inclination 20-80 deg nuisances, {label}"),
            |b| b.iter(|| install(&mut || drop(bound(black_box(&kn)).unwrap()))),
        );
        group.bench_function(format!("scan johannsen-psaltis 10 x 10, {label}"), |b| {
            b.iter(|| {
                install(&mut || {
                    let _ = std::fs::remove_file(&path);
                    run_scan(black_box(&scan), &path, &|_, _| {}).unwrap();
                })
            })
        });
    }
    group.finish();
    let _ = std::fs::remove_file(&path);
}

criterion_group!(benches, traced_bounds);
criterion_main!(benches);
