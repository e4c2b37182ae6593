//! The ray tracer's accuracy against the exact solvers, after the speed work (early end at a
//! radial turning point, winding-guided refinement): Kerr and Kerr–Newman curves against the
//! separable solver to 1e-8 M, every spherical catalogue metric with a photon sphere against
//! its critical impact parameter to 1e-9 M, the early end falling back to full integration
//! where it does not apply, and results independent of the thread count.

mod common;

use common::max_distance;
use rayon::prelude::*;
use rayon::ThreadPoolBuilder;
use umbral::metric::Spacetime;
use umbral::metrics::{build_metric, Kerr};
use umbral::shadow::raytrace::{RayFate, RaytraceOptions, Tracer};
use umbral::shadow::spherical::photon_sphere_analysis;
use umbral::shadow::{solve, Observer, ShadowResult, ShadowSettings, ShadowStatus, SolverChoice};

/// A metric by name, its parameter assignments and an inclination in degrees.
type Case = (&'static str, Vec<(&'static str, f64)>, f64);

fn build(name: &str, set: &[(&str, f64)]) -> Box<dyn Spacetime> {
    let a: Vec<(String, f64)> = set.iter().map(|(k, v)| (k.to_string(), *v)).collect();
    build_metric(name, &a).unwrap()
}

fn solver(name: &str) -> SolverChoice {
    name.parse().expect("a registered solver")
}

fn shadow(m: &dyn Spacetime, deg: f64, name: &str, points: usize, tol: f64) -> ShadowResult {
    let settings = ShadowSettings {
        points,
        tolerance: tol,
        solver: solver(name),
    };
    let result = solve(m, &Observer::distant(deg.to_radians()), &settings)
        .unwrap_or_else(|e| panic!("{} at {deg} deg, {name}: {e}", m.info().name));
    assert_eq!(result.status, ShadowStatus::Shadow, "{}", m.info().name);
    result
}

/// Kerr a ∈ {0, 0.5, 0.9, 0.99, 0.998} at 17°, 60° and 90°, Kerr a = 0.9 at 0.01° (every ray
/// starts 1.7e-4 rad from the spin axis, where the (t, φ) block of the inverse metric and the
/// θ-force are near their cancellations), and Kerr–Newman a = q = 0.5 at 60°: the
/// ray-traced curve (16 angles, tolerance 1e-8 M) lies within 1e-8 M of the separable one. The separable reference is interpolated from 4096 points; its
/// interpolation error, bounded by comparing with 2048 points, is far below the tolerance.
#[test]
fn traced_kerr_and_kerr_newman_agree_with_the_separable_solver_to_1e_8() {
    let mut cases: Vec<Case> = Vec::new();
    for a in [0.0, 0.5, 0.9, 0.99, 0.998] {
        for deg in [17.0, 60.0, 90.0] {
            cases.push(("kerr", vec![("a", a)], deg));
        }
    }
    cases.push(("kerr", vec![("a", 0.9)], 0.01));
    cases.push(("kerr-newman", vec![("a", 0.5), ("q", 0.5)], 60.0));
    let results: Vec<(String, f64, f64)> = cases
        .par_iter()
        .map(|(name, set, deg)| {
            let m = build(name, set);
            // 16 angles: 4 anchors; of the other 12, those whose predicted bracket holds the
            // crossing are seeded, the rest scanned (the β mirror halves the lines traced for
            // these separable metrics).
            let traced = shadow(m.as_ref(), *deg, "raytrace", 16, 1e-8);
            let raytrace = traced.diagnostics.raytrace.as_ref().unwrap();
            assert!(raytrace.tolerance_met, "{name} {set:?} {deg}: {raytrace:?}");
            assert!(
                raytrace.seeded_lines >= 4,
                "{name} {set:?} {deg}: {raytrace:?}"
            );
            let traced = traced.curve.unwrap();
            let fine = shadow(m.as_ref(), *deg, "separable", 4096, 1e-10)
                .curve
                .unwrap();
            let coarse = shadow(m.as_ref(), *deg, "separable", 2048, 1e-10)
                .curve
                .unwrap();
            (
                format!("{name} {set:?} at {deg} deg"),
                max_distance(&traced, &fine),
                max_distance(&traced, &coarse) - max_distance(&traced, &fine),
            )
        })
        .collect();
    for (label, d, interpolation) in &results {
        println!("{label}: {d:.2e} M (reference interpolation {interpolation:.1e})");
    }
    for (label, d, interpolation) in &results {
        assert!(
            interpolation.abs() < 1e-10,
            "{label}: reference {interpolation:e}"
        );
        assert!(*d < 1e-8, "{label}: {d:e} M");
    }
}

/// Every spherical catalogue metric with a photon sphere (black holes, a black bounce, a
/// wormhole with its photon sphere off the throat, a naked singularity with one): the
/// ray-traced radius equals b_c = √(C/A) at the capturing photon sphere of the spherical
/// solver's analysis to 1e-9 M at every angle (tolerance 1e-10 M, 8 angles).
#[test]
fn traced_spherical_catalogue_metrics_agree_with_the_critical_impact_parameter_to_1e_9() {
    let cases: Vec<(&str, Vec<(&str, f64)>)> = vec![
        ("schwarzschild", vec![]),
        ("reissner-nordstrom", vec![("q", 0.5)]),
        ("tidal-charge", vec![("q2", 0.3)]),
        ("tidal-charge", vec![("q2", -0.5)]),
        ("bardeen", vec![("g", 0.3)]),
        ("hayward", vec![("l", 0.3)]),
        ("dilaton", vec![("q", 0.5)]),
        ("simpson-visser", vec![("l", 0.5)]),
        ("simpson-visser", vec![("l", 2.5)]),
        ("jnw", vec![("nu", 0.8)]),
        (
            "rezzolla-zhidenko",
            vec![("epsilon", 0.1), ("a1", 0.1), ("b1", 0.1)],
        ),
    ];
    let results: Vec<(String, f64, f64)> = cases
        .par_iter()
        .map(|(name, set)| {
            let m = build(name, set);
            let analysis = photon_sphere_analysis(m.as_ref()).unwrap();
            let b_c = analysis
                .capture
                .expect("a capturing photon sphere")
                .impact_parameter;
            let traced = shadow(m.as_ref(), 60.0, "raytrace", 8, 1e-10);
            let curve = traced.curve.unwrap();
            let (alpha, beta) = curve.alpha_beta();
            let worst = alpha
                .iter()
                .zip(&beta)
                .map(|(a, b)| (a.hypot(*b) - b_c).abs())
                .fold(0.0, f64::max);
            (format!("{name} {set:?}"), b_c, worst)
        })
        .collect();
    for (label, b_c, worst) in &results {
        println!("{label}: b_c = {b_c:.12}, worst deviation {worst:.2e} M");
    }
    for (label, _, worst) in &results {
        assert!(*worst < 1e-9, "{label}: {worst:e} M");
    }
}

/// The early end applies to a distant observer of a separable or spherical metric only.
/// Johannsen–Psaltis with ε₃ = 0 has Kerr's line element but declares no separation: its
/// escaping rays are followed to the escape radius (no early end), as are Kerr's rays seen
/// by a finite observer, and the fates agree with Kerr's early-ended rays. Its captured rays
/// are followed to the capture radius too: it declares no certificate of capture.
#[test]
fn the_early_end_falls_back_to_full_integration_where_it_does_not_apply() {
    let kerr = Kerr::new(0.9).unwrap();
    let jp = build("johannsen-psaltis", &[("a", 0.9), ("eps3", 0.0)]);
    assert!(!jp.is_separable() && kerr.is_separable());
    let options = RaytraceOptions::default();
    let distant = Observer::distant(60f64.to_radians());
    let finite = Observer::at_radius(60f64.to_radians(), 50.0);
    let early = Tracer::new(&kerr, &distant, &options).unwrap();
    let opaque = Tracer::new(jp.as_ref(), &distant, &options).unwrap();
    let nearby = Tracer::new(&kerr, &finite, &options).unwrap();
    // Escaping (outside the curve, near it and far from it) and captured screen points.
    for (alpha, beta) in [
        (7.0, 0.0),
        (-3.2, 0.5),
        (2.0, 5.5),
        (20.0, -3.0),
        (1.5, 0.0),
    ] {
        let e = early.trace(alpha, beta);
        let o = opaque.trace(alpha, beta);
        assert_eq!(e.fate, o.fate, "({alpha}, {beta})");
        assert!(!o.escaped_at_turning_point, "({alpha}, {beta})");
        assert!(!nearby.trace(alpha, beta).escaped_at_turning_point);
        if e.escaped_at_turning_point {
            // Ended at the closest approach, with fewer steps than the full ray.
            assert!(
                e.steps < o.steps,
                "({alpha}, {beta}): {} vs {}",
                e.steps,
                o.steps
            );
            assert!((e.min_radius - o.min_radius).abs() < 1e-6 * o.min_radius);
        }
    }
    assert!(early.trace(7.0, 0.0).escaped_at_turning_point);
    assert!(!early.trace_measured(7.0, 0.0).escaped_at_turning_point);
    // Captured: Kerr ends the ray where its capture is certified (inside its spherical photon
    // orbit), Johannsen-Psaltis, which declares no such form, follows it to the capture radius.
    assert!(kerr.carter_radial().is_some() && jp.carter_radial().is_none());
    let capture_radius = kerr.outer_horizon().unwrap() * (1.0 + options.capture_margin);
    let (e, o) = (early.trace(1.5, 0.0), opaque.trace(1.5, 0.0));
    assert_eq!((e.fate, o.fate), (RayFate::Captured, RayFate::Captured));
    assert!(o.min_radius <= capture_radius, "{}", o.min_radius);
    assert!(e.min_radius > 1.05 * capture_radius, "{}", e.min_radius);
    assert!(e.steps < o.steps, "{} vs {}", e.steps, o.steps);
}

/// A curve of a metric without symmetry shortcuts (no mirror, no early end) and one with
/// both are bit for bit the same on 1 and 2 threads.
#[test]
fn traced_curves_are_bit_identical_on_one_and_two_threads() {
    let cases: Vec<(Box<dyn Spacetime>, f64)> = vec![
        (
            build("johannsen-psaltis", &[("a", 0.7), ("eps3", 1.0)]),
            40.0,
        ),
        (build("kerr", &[("a", 0.95)]), 75.0),
    ];
    for (m, deg) in &cases {
        let run = |threads: usize| {
            let pool = ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .unwrap();
            // 24 angles: 6 anchors and up to 18 lines seeded from them in two levels
            // (neighbour seeding needs at least 16).
            pool.install(|| shadow(m.as_ref(), *deg, "raytrace", 24, 1e-8))
        };
        let (one, two) = (run(1), run(2));
        let checks = one.diagnostics.raytrace.as_ref().unwrap();
        assert!(checks.seeded_lines >= 6, "{checks:?}");
        let (c1, c2) = (one.curve.unwrap(), two.curve.unwrap());
        let bits = |r: &[f64]| r.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
        assert_eq!(bits(&c1.origin), bits(&c2.origin));
        assert_eq!(bits(&c1.radii), bits(&c2.radii));
        assert_eq!(one.diagnostics.rays_traced, two.diagnostics.rays_traced);
        assert_eq!(
            one.diagnostics.integrator_steps,
            two.diagnostics.integrator_steps
        );
        assert_eq!(one.diagnostics.raytrace, two.diagnostics.raytrace);
    }
}

/// With more than 64 angles the anchors are spread to 16 around the curve: Kerr a = 0.9 at
/// 60° with 128 angles has an anchor every 8th angle (16 around the curve, of which the β
/// mirror traces 9) and 112 seeded angles (96 with an anchor every 4th), and agrees with the
/// separable solver's curve (Bardeen 1973) to 1e-8 M. So does the 256-angle curve, whose
/// last levels aim their rays at the predicted crossing (module docs of the ray tracer,
/// "Neighbour seeding").
#[test]
fn many_angles_spread_the_anchors_and_keep_the_accuracy() {
    let kerr = build("kerr", &[("a", 0.9)]);
    for (points, seeded) in [(128, 112), (256, 240)] {
        let traced = shadow(kerr.as_ref(), 60.0, "raytrace", points, 1e-8);
        let checks = traced.diagnostics.raytrace.as_ref().unwrap();
        assert!(checks.tolerance_met, "{checks:?}");
        assert_eq!(checks.seeded_lines, seeded, "{checks:?}");
        let reference = shadow(kerr.as_ref(), 60.0, "separable", 4096, 1e-10);
        let d = max_distance(&traced.curve.unwrap(), &reference.curve.unwrap());
        println!("kerr a = 0.9, 60 deg, {points} angles: {d:.2e} M");
        assert!(d < 1e-8, "{d:e} M");
    }
}
