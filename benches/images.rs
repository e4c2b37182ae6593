//! Images and the ring-to-shadow calibration (issue 13). Goals on 2 cores: a 256 × 256 image
//! of a Kerr a = 0.9 thin disk (ISCO inner edge) at 60°, all equatorial crossings up to
//! n = 2, under 5 s; a calibration over the eight built-in models at one inclination (Kerr
//! a = 0.6, 25°, 128 × 128 pixels, 10 μas beam at θ_g = 2.9134 μas) under a minute.

// Run with the allocator the command-line tool ships with (src/main.rs).
#[cfg(feature = "cli")]
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use criterion::{criterion_group, criterion_main, Criterion};
use std::collections::BTreeMap;
use std::hint::black_box;
use std::time::Duration;
use umbral::image::emission::EmissionModel;
use umbral::image::models::ModelList;
use umbral::image::trace::{ImageSettings, ImageTracer};
use umbral::metrics::Kerr;
use umbral::run::calibrate::{calibrate, CalibrationSettings};
use umbral::run::image::render;
use umbral::run::Controls;
use umbral::shadow::Observer;

fn image_256(c: &mut Criterion) {
    let kerr = Kerr::new(0.9).unwrap();
    let model = EmissionModel::built_in("disk-isco").unwrap();
    let settings = ImageSettings::new(Observer::distant(60f64.to_radians()), 256, 24.0);
    assert_eq!(settings.max_order, 2);
    let tracer = ImageTracer::new(&kerr, &model, &settings).unwrap();
    let mut group = c.benchmark_group("images");
    group
        .sample_size(10)
        .measurement_time(Duration::from_secs(30));
    group.bench_function("kerr_0.9_disk_isco_60deg_256px", |b| {
        b.iter(|| {
            let image = render(&tracer, Controls::default()).unwrap();
            assert_eq!(image.failed, 0);
            black_box(image.steps)
        })
    });
    group.finish();
}

fn calibration_8_models(c: &mut Criterion) {
    let kerr = Kerr::new(0.6).unwrap();
    let parameters: BTreeMap<String, f64> = [("a".to_string(), 0.6)].into_iter().collect();
    let settings = CalibrationSettings {
        inclination: 25f64.to_radians(),
        resolution_uas: 10.0,
        theta_g_uas: 2.9134,
        pixels: 128,
        field: None,
    };
    let models = ModelList::built_in();
    let mut group = c.benchmark_group("calibration");
    group
        .sample_size(10)
        .measurement_time(Duration::from_secs(60));
    group.bench_function("kerr_0.6_25deg_8_models_128px", |b| {
        b.iter(|| {
            let cal = calibrate(
                &kerr,
                "kerr",
                &parameters,
                &settings,
                &models,
                Controls::default(),
            )
            .unwrap();
            black_box(cal.summary.kappa.mean)
        })
    });
    group.finish();
}

criterion_group!(benches, image_256, calibration_8_models);
criterion_main!(benches);
