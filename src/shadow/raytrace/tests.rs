//! The tracer's internals: the distant-observer start data and the search along one screen
//! line (the public behaviour is tested in tests/shadow_raytrace.rs).

use super::*;
use crate::geodesic::IntegratorSettings;
use crate::metrics::{Kerr, Schwarzschild};

fn scan(scan_to: f64, tolerance: f64) -> LineScan {
    LineScan {
        spacing: 0.5,
        scan_to,
        tolerance,
        max_radius: 100.0,
    }
}

#[test]
fn start_radius_convergence_of_the_asymptotic_correction() {
    // Kerr a = 0.9, 60°, one radial line off the symmetry axes. With the first-order
    // correction the boundary converges like 1/D²; without it like 1/D.
    let kerr = Kerr::new(0.9).unwrap();
    let observer = Observer::distant(f64::to_radians(60.0));
    let boundary = |d: f64, corrected: bool| {
        let options = RaytraceOptions {
            start_radius: d,
            asymptotic_correction: corrected,
            integrator: IntegratorSettings {
                rtol: 1e-12,
                ..RaytraceOptions::default().integrator
            },
            ..Default::default()
        };
        let tracer = Tracer::new(&kerr, &observer, &options).unwrap();
        let line = tracer.boundary_along_line([0.0, 0.0], true, 1.0, &scan(0.0, 1e-11));
        assert!(line.failure.is_none());
        line.crossings[0]
    };
    let ds = [3e3, 1e4, 3e4, 1e5];
    let radii: Vec<f64> = ds.par_iter().map(|&d| boundary(d, true)).collect();
    let reference = radii[3];
    let errors: Vec<f64> = radii[..3].iter().map(|r| (r - reference).abs()).collect();
    println!("corrected errors at D = 3e3, 1e4, 3e4: {errors:?}");
    // 1/D²: each factor ~3.3 in D gains a factor ~10 (at least 5 allowing for noise).
    assert!(errors[0] > 5.0 * errors[1] && errors[1] > 5.0 * errors[2]);
    // The default start radius 3e4 is within 1e-8 M of D = 1e5 (and D = 1e5 itself is
    // within ~1e-10 by the same scaling).
    assert!(errors[2] < 1e-8);
    assert_eq!(RaytraceOptions::default().start_radius, 3e4);
    let uncorrected = (boundary(3e4, false) - reference).abs();
    println!("uncorrected error at D = 3e4: {uncorrected:e}");
    assert!(uncorrected > 1e-6 && uncorrected > 100.0 * errors[2]);
}

#[test]
fn a_line_crossing_the_boundary_twice_reports_both_crossings() {
    // A screen line that misses the origin: from (−10, 2) along +α it enters and leaves the
    // Schwarzschild circle of radius 3√3 at α = ∓√(27 − 4) (Synge 1966, MNRAS 131, 463).
    let observer = Observer::distant(f64::to_radians(90.0));
    let tracer = Tracer::new(&Schwarzschild, &observer, &RaytraceOptions::default()).unwrap();
    assert_eq!(tracer.trace(-10.0, 2.0).fate, RayFate::Escaped);
    let line = tracer.boundary_along_line([-10.0, 2.0], false, 0.0, &scan(20.0, 1e-9));
    assert!(line.failure.is_none());
    let half_chord = 23f64.sqrt();
    assert_eq!(line.crossings.len(), 2, "{:?}", line.crossings);
    assert!((line.crossings[0] - (10.0 - half_chord)).abs() < 1e-7);
    assert!((line.crossings[1] - (10.0 + half_chord)).abs() < 1e-7);
}

#[test]
fn a_seeded_line_finds_the_crossing_near_its_guess_and_falls_back_to_the_scan_far_from_it() {
    // Schwarzschild seen from anywhere: the boundary is the circle b_c = 3√3 about the screen
    // centre (Synge 1966, MNRAS 131, 463).
    let observer = Observer::distant(f64::to_radians(60.0));
    let tracer = Tracer::new(&Schwarzschild, &observer, &RaytraceOptions::default()).unwrap();
    let b_c = 27f64.sqrt();
    let line = |guess: f64, half_width: f64| {
        let seed = seeding::Seed { guess, half_width };
        tracer.boundary_near([0.0, 0.0], 0.7, seed, &scan(0.0, 1e-9))
    };
    // A guess 1e-3 M off with a bracket of 1e-4 M: widened fourfold twice, then refined.
    let near = line(b_c + 1e-3, 1e-4);
    assert!(near.failure.is_none() && near.seeded, "{near:?}");
    assert_eq!(near.crossings.len(), 1);
    assert!(
        (near.crossings[0] - b_c).abs() < 2e-9,
        "{:?}",
        near.crossings
    );
    // A guess 1 M off with a bracket of 1e-4 M: three fourfold widenings reach 6.4e-3 M, not
    // the crossing; the line is scanned in full, and the rays of the attempt are counted.
    let far = line(b_c - 1.0, 1e-4);
    assert!(far.failure.is_none() && !far.seeded, "{far:?}");
    assert!((far.crossings[0] - b_c).abs() < 2e-9, "{:?}", far.crossings);
    let scanned = tracer.boundary_along_line([0.0, 0.0], true, 0.7, &scan(0.0, 1e-9));
    assert_eq!(far.crossings, scanned.crossings);
    assert_eq!(far.rays, scanned.rays + 5);
}

#[test]
fn seeded_and_fully_scanned_curves_agree_within_the_tolerance() {
    // Kerr a = 0.9 at 60° (a separable metric: the β mirror is used), and Johannsen–Psaltis
    // (a = 0.5, ε₃ = 0.5), which is not separable, so every angle from 0 to 2π is traced.
    let jp = crate::metrics::JohannsenPsaltis::new(0.5, 0.5).unwrap();
    let kerr = Kerr::new(0.9).unwrap();
    let metrics: [&dyn Spacetime; 2] = [&kerr, &jp];
    let observer = Observer::distant(f64::to_radians(60.0));
    let settings = ShadowSettings {
        points: 32,
        tolerance: 1e-8,
        ..Default::default()
    };
    for metric in metrics {
        let curve = |anchor_every: usize| {
            let options = RaytraceOptions {
                anchor_every,
                ..Default::default()
            };
            let report = trace_curve(metric, &observer, &settings, &options).unwrap();
            let rays = report.diagnostics.rays_traced;
            let result = report.into_result().unwrap();
            let checks = result.diagnostics.raytrace.clone().unwrap();
            assert!(checks.tolerance_met, "{checks:?}");
            (result.curve.unwrap(), checks.seeded_lines, rays)
        };
        let (full, none_seeded, full_rays) = curve(1);
        let (seeded, some_seeded, seeded_rays) = curve(4);
        assert_eq!(none_seeded, 0);
        // 8 anchors of 32 angles; the other 24 seeded.
        assert_eq!(some_seeded, 24);
        assert!(
            seeded_rays < full_rays,
            "{seeded_rays} rays against {full_rays}"
        );
        assert_eq!(full.origin, seeded.origin);
        for (a, b) in full.radii.iter().zip(&seeded.radii) {
            // Each is within 1e-8 M of the boundary (the re-traced check above).
            assert!((a - b).abs() < 2e-8, "{a} against {b}");
        }
    }
}
