//! The sampling error of a size measured on N curve points: its estimate from every second and
//! fourth point, and the bounds' and posteriors' doubling of the points until the estimate is
//! within the boundary tolerance.

use umbral::bounds::{solve_sized, SizeMeasure, SizedPoint};
use umbral::metrics::MetricSource;
use umbral::metrics::{Kerr, Schwarzschild};
use umbral::observables::resolved::observables_sampling_error;
use umbral::observables::{centroid_size, sampling_error, CentreChoice, Observables, Quantity};
use umbral::prelude::*;
use umbral::scan::{run_scan, GridAxis, ScanRequest};
use umbral::shadow::{
    register_solver, separable, CriticalCurve, Diagnostics, Observer, ShadowError, ShadowResult,
    ShadowSettings, ShadowStatus,
};

/// Kerr's critical curve from the separable solver (Bardeen 1973, in *Black Holes*, eds.
/// DeWitt & DeWitt: the curve in closed form in the spherical-orbit radius).
fn kerr_curve(a: f64, degrees: f64, points: usize) -> CriticalCurve {
    kerr_curve_within(a, degrees, points, 1e-9)
}

fn kerr_curve_within(a: f64, degrees: f64, points: usize, tolerance: f64) -> CriticalCurve {
    let settings = ShadowSettings {
        points,
        tolerance,
        ..Default::default()
    };
    let observer = Observer::distant(degrees.to_radians());
    separable::solve(&Kerr::new(a).unwrap(), &observer, &settings)
        .unwrap()
        .curve
        .unwrap()
}

fn mean_radius(curve: &CriticalCurve) -> Option<f64> {
    centroid_size(curve).map(|s| s.0)
}

/// The estimate is never below the mean radius's true error (against 4096 points, where the
/// trapezoid rule has converged to rounding), except at the level of rounding, over spins up
/// to 0.9999 and inclinations from 17° to 90°; and it is not wildly pessimistic.
#[test]
fn the_estimate_bounds_the_mean_radius_error_of_kerr_curves() {
    let mut worst_ratio: f64 = 0.0;
    for degrees in [17.0, 60.0, 90.0] {
        for a in [0.9, 0.99, 0.998, 0.9999] {
            let reference = mean_radius(&kerr_curve(a, degrees, 4096)).unwrap();
            let half = mean_radius(&kerr_curve(a, degrees, 2048)).unwrap();
            assert!((reference - half).abs() < 1e-13, "a = {a}, {degrees} deg");
            for points in [32, 64, 128, 256] {
                let curve = kerr_curve(a, degrees, points);
                let error = (mean_radius(&curve).unwrap() - reference).abs();
                let estimate = sampling_error(&curve, mean_radius).unwrap();
                assert!(
                    estimate >= error - 1e-13,
                    "a = {a}, {degrees} deg, {points} points: estimate {estimate:e} below the \
                     error {error:e}"
                );
                if error > 1e-12 {
                    worst_ratio = worst_ratio.max(estimate / error);
                }
            }
        }
    }
    println!("largest estimate / error above 1e-12 M: {worst_ratio:.1}");
    assert!(worst_ratio < 1000.0, "{worst_ratio}");
}

/// A multiple of 4 is needed (the subsets must be curves about the same origin).
#[test]
fn no_estimate_without_a_multiple_of_four_points() {
    let curve = kerr_curve(0.5, 60.0, 30);
    assert_eq!(sampling_error(&curve, mean_radius), None);
}

/// Kerr a = 0.998 at 90°: 64 points put the mean radius 1.2e-7 M off, above the 1e-8 M
/// tolerance; the sized solve doubles to 128 and is within the tolerance. At a = 0.5 the
/// 64 points are kept (the same size as a plain 64-point solve).
#[test]
fn a_size_not_resolved_by_the_points_is_solved_again_with_more() {
    let settings = ShadowSettings {
        points: 64,
        tolerance: 1e-8,
        ..Default::default()
    };
    let observer = Observer::distant(90f64.to_radians());
    let sized = |a: f64| {
        let kerr = Kerr::new(a).unwrap();
        match solve_sized(&kerr, &observer, &settings, false, SizeMeasure::Mean, true).unwrap() {
            SizedPoint::Shadow { size, points, .. } => (size, points),
            other => panic!("{other:?}"),
        }
    };
    let reference = mean_radius(&kerr_curve(0.998, 90.0, 4096)).unwrap();
    let plain = mean_radius(&kerr_curve(0.998, 90.0, 64)).unwrap();
    assert!((plain - reference).abs() > 5e-8, "{:e}", plain - reference);
    let (size, points) = sized(0.998);
    assert_eq!(points, 128);
    assert!((size - reference).abs() < 1e-9, "{:e}", size - reference);
    let (low_spin, points) = sized(0.5);
    assert_eq!(points, 64);
    assert_eq!(
        low_spin,
        mean_radius(&kerr_curve_within(0.5, 90.0, 64, 1e-8)).unwrap()
    );
}

/// A test solver for any metric: the curve R(ψ) = `radius`(ψ) about the screen origin.
struct PolarTestCurve {
    name: &'static str,
    summary: &'static str,
    radius: fn(f64) -> f64,
}

impl ShadowSolver for PolarTestCurve {
    fn name(&self) -> &'static str {
        self.name
    }
    fn summary(&self) -> &'static str {
        self.summary
    }
    fn applies_to(&self, _: &dyn Spacetime) -> Result<(), String> {
        Ok(())
    }
    fn solve(
        &self,
        _: &dyn Spacetime,
        _: &Observer,
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        Ok(ShadowResult {
            solver: self.name(),
            status: ShadowStatus::Shadow,
            curve: Some(CriticalCurve::from_polar(
                [0.0, 0.0],
                settings.points,
                self.radius,
            )),
            photon_orbit_radii: Some([3.0, 3.0]),
            photon_spheres: Vec::new(),
            exponents: None,
            orbits: None,
            diagnostics: Diagnostics {
                star_shaped: true,
                ..Diagnostics::default()
            },
        })
    }
}

/// Register `curve` once per test process (tests run in parallel and share the registry).
fn register(curve: PolarTestCurve) {
    match register_solver(curve) {
        Ok(()) => {}
        Err(ShadowError::BadRequest(m)) => assert!(m.contains("already registered"), "{m}"),
        Err(e) => panic!("{e}"),
    }
}

/// A curve with corners: R(ψ) = 5 + 0.3 |sin ψ| about the origin. The trapezoid rule then
/// converges only like N⁻² (its error is set by the kinks; e.g. Trefethen & Weideman 2014,
/// SIAM Rev. 56, 385, §3), so 1024 points leave the mean radius ~1e-7 M off.
const KINKED: PolarTestCurve = PolarTestCurve {
    name: "kinked-test-curve",
    summary: "a test curve with two corners, for any metric",
    radius: |p| 5.0 + 0.3 * p.sin().abs(),
};

/// Where even the most points allowed do not resolve the size, the point fails with the
/// estimate in the message, never a value.
#[test]
fn a_size_never_resolved_is_an_error() {
    register(KINKED);
    let settings = ShadowSettings {
        points: 64,
        tolerance: 1e-8,
        solver: "kinked-test-curve".parse().unwrap(),
    };
    let e = solve_sized(
        &Schwarzschild,
        &Observer::distant(1.0),
        &settings,
        false,
        SizeMeasure::Mean,
        false,
    );
    match e {
        Err(message) => {
            println!("{message}");
            assert!(
                message.contains("sampling error is estimated")
                    && message.contains("1024 curve points"),
                "{message}"
            )
        }
        Ok(point) => panic!("{point:?}"),
    }
}

/// Fewer than 16 points (subsets under 4 points) are measured as asked, without an estimate:
/// the near-extremal edge-on curve on 12 points is returned from 12 points.
#[test]
fn too_few_points_are_not_doubled() {
    let settings = ShadowSettings {
        points: 12,
        tolerance: 1e-8,
        ..Default::default()
    };
    let kerr = Kerr::new(0.998).unwrap();
    let observer = Observer::distant(90f64.to_radians());
    match solve_sized(&kerr, &observer, &settings, false, SizeMeasure::Mean, false).unwrap() {
        SizedPoint::Shadow { points, .. } => assert_eq!(points, 12),
        other => panic!("{other:?}"),
    }
}

/// A curve that ripples: R(ψ) = 5 + 0.01 (cos 15ψ + cos 17ψ) about the origin. The
/// trapezoid rule integrates cos mψ exactly on N points unless N divides m (e.g. Trefethen &
/// Weideman 2014, SIAM Rev. 56, 385, §3). R itself has no harmonic that 32 or 64 divides, nor
/// have R³ cos ψ and R³ sin ψ (the centroid), so the centroid and the mean radius are exact on
/// 64 and 32 points (on 16 the centroid is off: R³ cos ψ holds cos 16ψ).
/// The size's estimate, e₂²/e₄ with e₂ at rounding, is then at rounding. The variance of R,
/// which ΔC's rms deviation integrates, holds cos 32ψ (from the product of the two ripples):
/// exact on 64 points, aliased on 32 and 16. Only ΔC's estimate is then above the tolerance
/// on 64 points.
const RIPPLED: PolarTestCurve = PolarTestCurve {
    name: "rippled-test-curve",
    summary: "a test curve with two ripples, for any metric",
    radius: |p| 5.0 + 0.01 * ((15.0 * p).cos() + (17.0 * p).cos()),
};

/// ΔC alone doubles the points when it is constrained: on the rippled curve the size's
/// estimate is at rounding on 64 points and its ΔC's is not, so a sized solve that wants ΔC
/// goes to 128 points and one that does not keeps 64, with the same size.
#[test]
fn a_circularity_not_resolved_by_the_points_doubles_them_alone() {
    register(RIPPLED);
    let settings = ShadowSettings {
        points: 64,
        tolerance: 1e-8,
        solver: "rippled-test-curve".parse().unwrap(),
    };
    let curve = RIPPLED
        .solve(&Schwarzschild, &Observer::distant(1.0), &settings)
        .unwrap()
        .curve
        .unwrap();
    let size_estimate = sampling_error(&curve, mean_radius).unwrap();
    assert!(size_estimate < 1e-12, "{size_estimate:e}");
    let sized = |want_circularity: bool| match solve_sized(
        &Schwarzschild,
        &Observer::distant(1.0),
        &settings,
        false,
        SizeMeasure::Mean,
        want_circularity,
    )
    .unwrap()
    {
        SizedPoint::Shadow {
            size,
            circularity,
            points,
            ..
        } => (size, circularity, points),
        other => panic!("{other:?}"),
    };
    let (size, _, points) = sized(false);
    assert_eq!(points, 64);
    let (size_with, circularity, points_with) = sized(true);
    assert_eq!(points_with, 128);
    assert!((size - size_with).abs() < 1e-12, "{size} {size_with}");
    // ΔC (the rms deviation of the radius over the mean radius) of R = 5 + ε (cos 15ψ +
    // cos 17ψ) about its centroid, the origin: the rms is ε (1/2 + 1/2)^½ = ε, so ΔC = ε/5,
    // exact on 128 points. On 32 and 16 points cos 32ψ adds ε² to the variance (ΔC = √2 ε/5),
    // so ΔC's estimate on 64 points was 8e-4: 4e-3 M times the size, far above 1e-8 M.
    assert!((circularity - 0.002).abs() < 1e-14, "{circularity}");
}

/// A quantity's error in M as the scans weigh it
/// ([`umbral::observables::resolved::observables_sampling_error`]): a length's own, a pure
/// number's times the mean radius, the area's over 2π times the area radius.
fn in_metres_of_mass(q: Quantity, error: f64, o: &Observables) -> f64 {
    match q.unit() {
        "M" => error,
        "M^2" => error / (std::f64::consts::TAU * o.area_radius),
        _ => error * o.mean_radius,
    }
}

/// The observables' estimate (the largest over every observable, as scans use it) is never
/// below the largest true error of any observable (against 4096 points), except at the level
/// of rounding (1e-11 M), on Kerr curves of 64 to 512 points at 17°, 60° and 90° up to a = 0.998; on
/// 32 points (where it fell below by up to a factor 5) there is none.
#[test]
fn the_estimate_bounds_every_observables_error_on_kerr_curves() {
    let measure =
        |c: &CriticalCurve| Observables::from_curve(c, CentreChoice::Centroid, None, None).unwrap();
    let mut worst_ratio: f64 = 0.0;
    let mut below = Vec::new();
    for degrees in [17.0, 60.0, 90.0] {
        for a in [0.5, 0.9, 0.99, 0.998] {
            let reference = measure(&kerr_curve(a, degrees, 4096));
            let coarse = kerr_curve(a, degrees, 32);
            assert_eq!(
                observables_sampling_error(&coarse, CentreChoice::Centroid, None, None),
                None
            );
            for points in [64, 128, 256, 512] {
                let curve = kerr_curve(a, degrees, points);
                let o = measure(&curve);
                let (error, worst) = Quantity::ALL
                    .iter()
                    .map(|&q| {
                        let e = in_metres_of_mass(q, (q.of(&o) - q.of(&reference)).abs(), &o);
                        (e, q)
                    })
                    .fold(
                        (0.0, Quantity::MeanRadius),
                        |m, e| if e.0 > m.0 { e } else { m },
                    );
                let estimate =
                    observables_sampling_error(&curve, CentreChoice::Centroid, None, None).unwrap();
                println!(
                    "a = {a}, {degrees} deg, {points} points: error {error:.1e} M ({worst}), \
                     estimate {:.1e} M ({})",
                    estimate.estimate, estimate.quantity
                );
                // Rounding: the Hioki–Maeda distortion, a ratio of differences, stays about
                // 3e-12 M from the reference however many points (seen at 512).
                if estimate.estimate < error - 1e-11 {
                    below.push(format!(
                        "a = {a}, {degrees} deg, {points} points: estimate {:e} ({}) below the \
                         error {error:e} ({worst})",
                        estimate.estimate, estimate.quantity
                    ));
                }
                if error > 1e-11 {
                    worst_ratio = worst_ratio.max(estimate.estimate / error);
                }
            }
        }
    }
    println!("largest estimate / error above 1e-11 M: {worst_ratio:.1}");
    assert!(below.is_empty(), "{below:#?}");
    assert!(worst_ratio < 1000.0, "{worst_ratio}");
}

fn scan_path(name: &str) -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("umbral-sampling-test-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join(name);
    let _ = std::fs::remove_file(&p);
    p
}

/// A scan starts each curve from its points and doubles them where an observable needs it:
/// Kerr seen edge-on from 64 points at a tolerance of 1e-9 M, a = 0.5 keeps 64 (its
/// observables are those of the 64-point separable curve, to the bit) and a = 0.998 goes to
/// 512 (those of the 512-point curve: the estimate was 6.6e-5 M on 64 points, from the
/// height, then 3.5e-6 M on 128 and 9e-9 M on 256, from the Hioki–Maeda distortion).
#[test]
fn a_scan_doubles_the_points_a_curves_observables_need() {
    let request = ScanRequest {
        metric: MetricSource::builtin("kerr").unwrap(),
        axes: vec![GridAxis::new("a", 0.5, 0.998, 2)],
        fixed: vec![],
        inclination_deg: Some(90.0),
        settings: ShadowSettings {
            points: 64,
            tolerance: 1e-9,
            ..Default::default()
        },
        require_horizon: false,
    };
    let s = run_scan(&request, &scan_path("doubled.jsonl"), &|_, _| {}).unwrap();
    for (p, (a, points)) in s.points.iter().zip([(0.5, 64), (0.998, 512)]) {
        let want = Observables::from_curve(
            &kerr_curve_within(a, 90.0, points, 1e-9),
            CentreChoice::Centroid,
            None,
            None,
        )
        .unwrap();
        for q in [
            Quantity::MeanRadius,
            Quantity::Height,
            Quantity::HiokiMaedaDistortion,
        ] {
            assert_eq!(p.observable(q.name()), Some(q.of(&want)), "a = {a}, {q}");
        }
    }
}

/// Where 1024 points do not resolve the observables the scan point fails, with the estimate
/// in its reason, never a value.
#[test]
fn a_scan_point_never_resolved_fails_with_the_estimate() {
    register(KINKED);
    let request = ScanRequest {
        metric: MetricSource::builtin("schwarzschild").unwrap(),
        axes: vec![GridAxis::new("inclination", 30.0, 60.0, 2)],
        fixed: vec![],
        inclination_deg: None,
        settings: ShadowSettings {
            points: 64,
            tolerance: 1e-8,
            solver: "kinked-test-curve".parse().unwrap(),
        },
        require_horizon: false,
    };
    let s = run_scan(&request, &scan_path("kinked.jsonl"), &|_, _| {}).unwrap();
    for p in &s.points {
        let reason = p.reason.as_deref().unwrap_or_default();
        assert_eq!(p.status, "failed", "{reason}");
        assert!(p.observables.is_none());
        assert!(
            reason.contains("sampling error is estimated") && reason.contains("1024 curve points"),
            "{reason}"
        );
    }
}

/// The same for ΔC, as a bound that constrains it weighs it (ΔC times the mean radius, the
/// curve's rms deviation in M), from the samples alone (`centroid_size`, what bounds use),
/// from 32 to 1024 points: up to a = 0.998 never below the true error beyond rounding. At
/// a = 0.9999 seen at 60° it falls below, by 8 times on 64 points (4.2e-7 M against 3.3e-6 M)
/// and at the level of 1e-11 M on 256, where the curve's nearly straight edge slows the
/// convergence; the doubling at the default tolerance (1e-8 M) still never stops at a curve
/// whose ΔC is off by more than the tolerance.
#[test]
fn the_estimate_bounds_the_circularity_error_of_kerr_curves() {
    let circularity = |c: &CriticalCurve| centroid_size(c).map(|s| s.1);
    let mut worst_ratio: f64 = 0.0;
    for degrees in [17.0, 60.0, 90.0] {
        for a in [0.9, 0.99, 0.998, 0.9999] {
            let reference = circularity(&kerr_curve(a, degrees, 4096)).unwrap();
            for points in [32, 64, 128, 256, 512, 1024] {
                let curve = kerr_curve(a, degrees, points);
                let size = mean_radius(&curve).unwrap();
                let error = (circularity(&curve).unwrap() - reference).abs() * size;
                let estimate = sampling_error(&curve, circularity).unwrap() * size;
                let at = format!("a = {a}, {degrees} deg, {points} points");
                if a <= 0.998 {
                    assert!(
                        estimate >= error - 1e-12,
                        "{at}: estimate {estimate:e} below the error {error:e}"
                    );
                }
                assert!(
                    estimate > 1e-8 || error <= 1e-8,
                    "{at}: accepted at 1e-8 M with the error {error:e}"
                );
                if error > 1e-11 {
                    worst_ratio = worst_ratio.max(estimate / error);
                }
            }
        }
    }
    println!("largest estimate / error above 1e-11 M: {worst_ratio:.1}");
    assert!(worst_ratio < 2000.0, "{worst_ratio}");
}
