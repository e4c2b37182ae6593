//! Speed of bounds and scans. Goals: a 1-D bound for a spherical metric with 0.68 and 0.95
//! levels under 50 ms; Kerr-Newman varying q with spin as nuisance over [0, 0.99] at fixed
//! inclination under 2 s; a 40 x 40 scan of a separable rotating metric under 10 s on 2 cores.

// Run with the allocator the command-line tool ships with (src/main.rs).
#[cfg(feature = "cli")]
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;
use std::time::Duration;
use umbral::bounds::{
    bound, BoundRequest, BoundSettings, Inclination, ParameterRange, SizeMeasure,
};
use umbral::measurement::{DerivedRadii, RadiusInterval};
use umbral::metrics::MetricSource;
use umbral::scan::{run_scan, GridAxis, ScanRequest};

fn radii() -> DerivedRadii {
    DerivedRadii {
        intervals: vec![
            RadiusInterval {
                confidence: 0.68,
                low: 4.5,
                high: 5.0,
            },
            RadiusInterval {
                confidence: 0.95,
                low: 4.2,
                high: 5.1,
            },
        ],
        ring: None,
        assumptions: vec![],
    }
}

fn request(metric: &str, nuisance: Vec<ParameterRange>) -> BoundRequest {
    BoundRequest {
        metric: MetricSource::builtin(metric).unwrap(),
        vary: ParameterRange {
            name: "q".into(),
            low: 0.0,
            high: 1.0,
        },
        fixed: vec![],
        inclination: Inclination::Fixed { degrees: 60.0 },
        nuisance,
        size_measure: SizeMeasure::Mean,
        radii: radii(),
        circularity_max: None,
        settings: BoundSettings::default(),
    }
}

fn bounds(c: &mut Criterion) {
    let rn = request("reissner-nordstrom", vec![]);
    c.bench_function("bound reissner-nordstrom q, two levels", |b| {
        b.iter(|| bound(black_box(&rn)).unwrap())
    });
    let kn = request(
        "kerr-newman",
        vec![ParameterRange {
            name: "a".into(),
            low: 0.0,
            high: 0.99,
        }],
    );
    let mut group = c.benchmark_group("slow");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(20));
    group.bench_function(
        "bound kerr-newman q, spin nuisance [0, 0.99], i = 60 deg",
        |b| b.iter(|| bound(black_box(&kn)).unwrap()),
    );
    let scan = ScanRequest {
        metric: MetricSource::builtin("kerr-newman").unwrap(),
        axes: vec![
            GridAxis::new("a", 0.0, 0.99, 40),
            GridAxis::new("q", 0.0, 0.99, 40),
        ],
        fixed: vec![],
        inclination_deg: Some(60.0),
        settings: Default::default(),
        require_horizon: false,
    };
    let path = std::env::temp_dir().join(format!("umbral-bench-scan-{}.jsonl", std::process::id()));
    group.measurement_time(Duration::from_secs(60));
    group.bench_function("scan kerr-newman 40 x 40, i = 60 deg", |b| {
        b.iter(|| {
            let _ = std::fs::remove_file(&path);
            run_scan(black_box(&scan), &path, &|_, _| {}).unwrap()
        })
    });
    group.finish();
    let _ = std::fs::remove_file(&path);
}

criterion_group!(benches, bounds);
criterion_main!(benches);
