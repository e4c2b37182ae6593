//! The general ray tracer against closed-form critical curves, plus its numerical guarantees:
//! bit-identical results for any thread count and failures reported rather than hidden (the
//! convergence of the distant-observer start data in the start radius and the search along one
//! screen line are unit tests of the tracer: src/shadow/raytrace/tests.rs).
//!
//! The reference curves are computed here from the closed forms, independently of the
//! project's separable solver.

use rayon::prelude::*;
use rayon::ThreadPoolBuilder;
use umbral::geodesic::IntegratorSettings;
use umbral::metric::{Declared, DeclaredHorizon, Metric, MetricComponents, Spacetime};
use umbral::metrics::{Kerr, KerrNewman, ReissnerNordstrom, Schwarzschild};
use umbral::scalar::DualScalar;
use umbral::shadow::raytrace::{solve, solve_with, trace_curve, RaytraceOptions};
use umbral::shadow::{
    solve_classified, Observer, PointShadow, ShadowError, ShadowResult, ShadowSettings,
    ShadowStatus, SolverChoice,
};

fn settings(points: usize) -> ShadowSettings {
    ShadowSettings {
        points,
        ..Default::default()
    }
}

/// Kerr–Newman spherical photon orbits mapped to a distant screen (Bardeen 1973, in *Black
/// Holes*, eds. DeWitt & DeWitt, Gordon & Breach; the charged case with Δ = r² − 2r + a² + q²):
/// λ(r) = (Δ′P − 2ΔP′)/(Δ′Q − 2ΔQ′), η(r) = (P − Qλ)²/Δ − (λ − a)² with P = r² + a², Q = a;
/// α = −λ/sin θ_o, β² = η + a² cos²θ_o − λ² cot²θ_o.
struct ExactCurve {
    a: f64,
    q: f64,
    inclination: f64,
}

impl ExactCurve {
    fn point(&self, r: f64) -> (f64, f64) {
        let (a, q) = (self.a, self.q);
        let delta = r * r - 2.0 * r + a * a + q * q;
        let d_delta = 2.0 * r - 2.0;
        let p = r * r + a * a;
        let lambda = (d_delta * p - 2.0 * delta * 2.0 * r) / (d_delta * a);
        let eta = (p - a * lambda).powi(2) / delta - (lambda - a).powi(2);
        let (s, c) = self.inclination.sin_cos();
        let beta2 = eta + a * a * c * c - lambda * lambda * c * c / (s * s);
        (-lambda / s, beta2)
    }

    /// The radius interval where β² ≥ 0: it contains the orbit with λ = 0 (where
    /// β² = η + a² cos²θ_o > 0), found by bisection; each end by stepping outward from it in
    /// doubling steps until β² < 0, then bisection (near the axis the interval is narrow).
    fn orbit_range(&self) -> (f64, f64) {
        let r_plus = 1.0 + (1.0 - self.a * self.a - self.q * self.q).sqrt();
        let beta2 = |r: f64| self.point(r).1;
        let lambda = |r: f64| -self.point(r).0;
        let (lo, hi) = (r_plus + 1e-6, r_plus + 5.0);
        assert!((lambda(lo) > 0.0) != (lambda(hi) > 0.0), "no polar orbit");
        let polar = bisect(lambda, lo, hi);
        assert!(beta2(polar) > 0.0);
        let end = |direction: f64| {
            let (mut inside, mut outside) = (polar, polar + direction * 1e-12);
            while beta2(outside) >= 0.0 {
                inside = outside;
                // Double the step, but stop just outside the horizon.
                outside = (polar + 2.0 * (outside - polar)).max(lo);
                assert!(outside != inside && (outside - polar).abs() < 5.0);
            }
            bisect(beta2, inside.min(outside), inside.max(outside))
        };
        (end(-1.0), end(1.0))
    }

    /// The exact curve radius along the screen ray from `origin` at angle `psi`, on the
    /// branch with the sign of β given by `upper`.
    fn radius(&self, origin: [f64; 2], psi: f64, upper: bool) -> f64 {
        let (r1, r2) = self.orbit_range();
        let sign = if upper { 1.0 } else { -1.0 };
        let at = |r: f64| {
            let (alpha, beta2) = self.point(r);
            (alpha - origin[0], sign * beta2.max(0.0).sqrt() - origin[1])
        };
        let (s, c) = psi.sin_cos();
        if s.abs() < 1e-12 && origin[1] == 0.0 {
            // Along the α axis the curve meets the line where β = 0: an end of the interval.
            return [r1, r2]
                .iter()
                .map(|&r| at(r).0)
                .find(|x| x * c > 0.0)
                .expect("one end on each side")
                .abs();
        }
        let cross = |r: f64| {
            let (x, y) = at(r);
            x * s - y * c
        };
        let n = 2000;
        for i in 0..n {
            let lo = r1 + (r2 - r1) * i as f64 / n as f64;
            let hi = r1 + (r2 - r1) * (i + 1) as f64 / n as f64;
            let (x, y) = at(0.5 * (lo + hi));
            if (cross(lo) >= 0.0) != (cross(hi) >= 0.0) && x * c + y * s > 0.0 {
                let r = bisect(cross, lo, hi);
                let (x, y) = at(r);
                return x.hypot(y);
            }
        }
        panic!("no exact crossing at psi = {psi}");
    }
}

fn bisect(f: impl Fn(f64) -> f64, mut lo: f64, mut hi: f64) -> f64 {
    let f_lo = f(lo) >= 0.0;
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        if (f(mid) >= 0.0) == f_lo {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// Largest distance between the traced curve and the exact one, along the traced radial lines.
fn worst_deviation(result: &ShadowResult, exact: &ExactCurve) -> f64 {
    let curve = result.curve.as_ref().expect("a shadow");
    let (alpha, beta) = curve.alpha_beta();
    (0..curve.radii.len())
        .map(|k| {
            let r = if exact.a == 0.0 {
                // Schwarzschild-like: the circle of radius 3√3 about the screen centre
                // (Synge 1966, MNRAS 131, 463).
                let b_c = 27f64.sqrt();
                return (alpha[k].hypot(beta[k]) - b_c).abs();
            } else {
                exact.radius(curve.origin, curve.angle(k), beta[k] >= 0.0)
            };
            (curve.radii[k] - r).abs()
        })
        .fold(0.0, f64::max)
}

#[test]
fn kerr_and_kerr_newman_match_bardeen_closed_form() {
    let mut cases: Vec<(f64, f64, f64)> = Vec::new();
    for a in [0.0, 0.5, 0.9, 0.99] {
        for deg in [17.0, 60.0, 90.0] {
            cases.push((a, 0.0, deg));
        }
    }
    cases.push((0.5, 0.5, 60.0));
    let results: Vec<(f64, f64, f64, f64)> = cases
        .par_iter()
        .map(|&(a, q, deg)| {
            let inclination = f64::to_radians(deg);
            let observer = Observer::distant(inclination);
            let result = if q == 0.0 {
                solve(&Kerr::new(a).unwrap(), &observer, &settings(8))
            } else {
                solve(&KerrNewman::new(a, q).unwrap(), &observer, &settings(8))
            }
            .unwrap_or_else(|e| panic!("a = {a}, q = {q}, {deg} deg: {e}"));
            assert_eq!(result.status, ShadowStatus::Shadow);
            assert_eq!(result.diagnostics.failed_rays, 0);
            assert!(result.diagnostics.star_shaped);
            let exact = ExactCurve { a, q, inclination };
            (a, q, deg, worst_deviation(&result, &exact))
        })
        .collect();
    for (a, q, deg, dev) in results {
        println!("a = {a}, q = {q}, inclination {deg} deg: worst deviation {dev:.2e} M");
        assert!(dev < 1e-6, "a = {a}, q = {q}, {deg} deg: deviation {dev}");
    }
}

/// Kerr with its separation data and equatorial symmetry hidden: the solver must take the
/// general path (origin from both axes, no mirror) and still find Bardeen's curve.
struct OpaqueKerr(Kerr);

impl Declared for OpaqueKerr {
    fn declared_horizon(&self) -> DeclaredHorizon {
        DeclaredHorizon::Known(self.0.outer_horizon())
    }
}

impl Metric for OpaqueKerr {
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        self.0.components(r, theta)
    }
}

#[test]
fn general_path_without_symmetry_matches_kerr() {
    let inclination = f64::to_radians(60.0);
    let metric = OpaqueKerr(Kerr::new(0.9).unwrap());
    assert!(!metric.is_separable() && !metric.is_equatorially_symmetric());
    let result = solve(&metric, &Observer::distant(inclination), &settings(8)).unwrap();
    let curve = result.curve.as_ref().unwrap();
    // The Kerr curve is symmetric in β, so the origin found from the vertical line is on the
    // α axis (Bardeen 1973).
    assert!(curve.origin[1].abs() < 1e-7, "origin {:?}", curve.origin);
    let exact = ExactCurve {
        a: 0.9,
        q: 0.0,
        inclination,
    };
    let dev = worst_deviation(&result, &exact);
    assert!(dev < 1e-6, "deviation {dev}");
}

#[test]
fn spherical_metrics_match_closed_form_critical_impact_parameter() {
    let observer = Observer::distant(f64::to_radians(60.0));
    let q: f64 = 0.5;
    // Reissner–Nordström photon sphere r = (3 + √(9 − 8q²))/2 and b_c = r²/√(r² − 2r + q²)
    // (e.g. Perlick & Tsupko 2022, Phys. Rep. 947, 1, from b_c² = min C/A).
    let r_ph = (3.0 + (9.0 - 8.0 * q * q).sqrt()) / 2.0;
    let b_rn = r_ph * r_ph / (r_ph * r_ph - 2.0 * r_ph + q * q).sqrt();
    let rn = ReissnerNordstrom::new(q).unwrap();
    // Schwarzschild b_c = 3√3 (Synge 1966, MNRAS 131, 463).
    let cases: Vec<(&dyn Spacetime, f64)> = vec![(&Schwarzschild, 27f64.sqrt()), (&rn, b_rn)];
    for (metric, b_c) in cases {
        let result = solve(metric, &observer, &settings(8)).unwrap();
        let curve = result.curve.unwrap();
        let (alpha, beta) = curve.alpha_beta();
        for k in 0..alpha.len() {
            let b = alpha[k].hypot(beta[k]);
            assert!((b - b_c).abs() < 1e-7, "b = {b}, b_c = {b_c}");
        }
    }
}

#[test]
fn finite_observer_matches_synge_angular_radius() {
    // Static observer at r_o in Schwarzschild: sin θ_sh = b_c √(A(r_o)/C(r_o)) (Synge 1966,
    // MNRAS 131, 463), so the screen radius √g_θθ sin θ_sh = 3√3 √(1 − 2/r_o).
    for r_o in [15.0, 60.0] {
        let observer = Observer::at_radius(f64::to_radians(60.0), r_o);
        let result = solve(&Schwarzschild, &observer, &settings(8)).unwrap();
        let expected = 27f64.sqrt() * (1.0 - 2.0 / r_o).sqrt();
        let curve = result.curve.unwrap();
        let (alpha, beta) = curve.alpha_beta();
        for k in 0..alpha.len() {
            let rho = alpha[k].hypot(beta[k]);
            assert!(
                (rho - expected).abs() < 1e-7,
                "r_o = {r_o}: {rho} vs {expected}"
            );
        }
    }
}

#[test]
fn result_is_bit_identical_for_one_and_two_threads() {
    let kerr = Kerr::new(0.7).unwrap();
    let observer = Observer::distant(f64::to_radians(45.0));
    let run = |threads: usize| {
        let pool = ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        // 16 angles: neighbour seeding in use (4 anchors, up to 12 seeded lines).
        pool.install(|| solve(&kerr, &observer, &settings(16)).unwrap())
    };
    let (one, two) = (run(1), run(2));
    assert!(one.diagnostics.raytrace.as_ref().unwrap().seeded_lines >= 4);
    let (c1, c2) = (one.curve.unwrap(), two.curve.unwrap());
    assert_eq!(c1.origin.map(f64::to_bits), c2.origin.map(f64::to_bits));
    let bits = |r: &[f64]| r.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
    assert_eq!(bits(&c1.radii), bits(&c2.radii));
    assert_eq!(one.diagnostics.rays_traced, two.diagnostics.rays_traced);
    assert_eq!(one.diagnostics.raytrace, two.diagnostics.raytrace);
    assert_eq!(
        one.diagnostics.integrator_steps,
        two.diagnostics.integrator_steps
    );
}

#[test]
fn step_limit_failures_are_reported_not_classified() {
    let options = RaytraceOptions {
        integrator: IntegratorSettings {
            max_steps: 40,
            ..RaytraceOptions::default().integrator
        },
        ..Default::default()
    };
    let observer = Observer::distant(1.0);
    let report = trace_curve(&Schwarzschild, &observer, &settings(8), &options).unwrap();
    assert!(report.diagnostics.failed_rays >= 1);
    assert!(report.first_failure().unwrap().contains("steps"));
    match solve_with(&Schwarzschild, &observer, &settings(8), &options) {
        Err(ShadowError::NotConverged(message)) => assert!(message.contains("rays failed")),
        other => panic!("expected NotConverged, got {other:?}"),
    }
}

/// Schwarzschild with a non-finite patch at 8 < r < 9 near the north pole (θ < 0.5): rays
/// that pass there cannot be classified.
struct PoisonedSchwarzschild;

impl Metric for PoisonedSchwarzschild {
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        let g = Schwarzschild.components(r, theta);
        let bad = r.re() > 8.0 && r.re() < 9.0 && theta.re().abs() < 0.5;
        if bad {
            g.map(|x| *x * f64::NAN)
        } else {
            g
        }
    }
}

impl Declared for PoisonedSchwarzschild {
    fn declared_horizon(&self) -> DeclaredHorizon {
        DeclaredHorizon::Known(Some(2.0))
    }
}

#[test]
fn non_finite_metric_gives_failed_rays_not_a_curve() {
    let observer = Observer::distant(f64::to_radians(60.0));
    let report = trace_curve(
        &PoisonedSchwarzschild,
        &observer,
        &settings(8),
        &RaytraceOptions::default(),
    )
    .unwrap();
    assert!(
        report.diagnostics.failed_rays >= 1,
        "{:?}",
        report.diagnostics
    );
    let failure = report.first_failure().unwrap();
    assert!(failure.contains("failed"), "{failure}");
    // `solve` looks for singular surfaces first: the non-finite patch outside the horizon is
    // named, and no curve is returned (before: NotConverged from the failed rays).
    let result = solve(&PoisonedSchwarzschild, &observer, &settings(8)).unwrap();
    match &result.status {
        ShadowStatus::NoShadow { reason } => {
            assert!(reason.contains("is not a number"), "{reason}");
            let r: f64 = reason
                .split("singular at r = ")
                .nth(1)
                .and_then(|s| s.split(',').next())
                .and_then(|s| s.parse().ok())
                .expect(reason);
            assert!((8.0..=9.0).contains(&r), "{reason}");
        }
        ShadowStatus::Shadow => panic!("expected no shadow"),
    }
}

#[test]
fn bad_requests_are_rejected() {
    let kerr = Kerr::new(0.5).unwrap();
    for inclination in [0.0, std::f64::consts::PI, f64::NAN] {
        assert!(matches!(
            solve(&kerr, &Observer::distant(inclination), &settings(8)),
            Err(ShadowError::BadRequest(_))
        ));
    }
    let tiny = ShadowSettings {
        points: 2,
        ..Default::default()
    };
    assert!(solve(&kerr, &Observer::distant(1.0), &tiny).is_err());
    let zero_tolerance = ShadowSettings {
        tolerance: 0.0,
        ..Default::default()
    };
    assert!(solve(&kerr, &Observer::distant(1.0), &zero_tolerance).is_err());
}

/// The curve of `metric` (Kerr of spin `a`, or Schwarzschild for a = 0) seen at each
/// inclination (degrees) must claim to meet the tolerance and be within it (plus the strict
/// rays' ~1e-9 M) of Bardeen's curve (for a = 0 the circle b = 3√3).
fn assert_near_axis_within_tolerance(metric: &dyn Spacetime, a: f64, degrees: &[f64]) {
    let worst: Vec<(f64, f64)> = degrees
        .par_iter()
        .map(|&deg: &f64| {
            let inclination = deg.to_radians();
            let result = solve(metric, &Observer::distant(inclination), &settings(8)).unwrap();
            let checks = result.diagnostics.raytrace.clone().unwrap();
            assert!(checks.tolerance_met, "{deg} deg: {checks:?}");
            let exact = ExactCurve {
                a,
                q: 0.0,
                inclination,
            };
            (deg, worst_deviation(&result, &exact))
        })
        .collect();
    for (deg, dev) in worst {
        println!("a = {a}, {deg} deg: worst deviation {dev:.2e} M");
        assert!(dev <= 1.2e-8, "a = {a}, {deg} deg: {dev:e}");
    }
}

/// Issue 10, item 6: near the spin axis the inverse metric lost ~1e-16 cot θ in its θ-derivative
/// (a spurious force on rays passing close to the axis, integrated over the start data's
/// asymptotic correction), which left Schwarzschild at 0.01° 1.5e-7 M below 3√3 at a tolerance
/// of 1e-8 M. Every curve point must now be within the tolerance of b_c = 3√3 (Synge 1966,
/// MNRAS 131, 463) at every near-polar inclination.
#[test]
fn raytrace_schwarzschild_at_0_01_degrees_meets_the_tolerance() {
    assert_near_axis_within_tolerance(&Schwarzschild, 0.0, &[0.01, 0.001, 179.99, 1.0]);
}

/// Issue 10, item 6, for a rotating metric: Kerr a = 0.9 seen 0.01° from either pole matches
/// Bardeen's curve (closed form above) to the tolerance.
#[test]
fn raytrace_kerr_near_the_axis_matches_bardeen() {
    assert_near_axis_within_tolerance(&Kerr::new(0.9).unwrap(), 0.9, &[0.01, 179.99]);
}

/// Issue 10, item 6: a tolerance outside [1e-12, 1e-3] M is refused by every solver (it was
/// accepted up to 1e10, leaving the mean radius off by 7e-4 M), and by the command line with
/// exit code 2; the ends of the range are accepted.
#[test]
fn tolerance_outside_the_physical_range_is_refused() {
    let kerr = Kerr::new(0.5).unwrap();
    let observer = Observer::distant(1.0);
    for tolerance in [1e10, 2e-3, 1e-13, 0.0, -1e-8, f64::NAN, f64::INFINITY] {
        for solver in [SolverChoice::AUTO, solver("separable"), solver("raytrace")] {
            let request = ShadowSettings {
                points: 8,
                tolerance,
                solver,
            };
            match umbral::shadow::solve(&kerr, &observer, &request) {
                Err(ShadowError::BadRequest(m)) => assert!(m.contains("tolerance"), "{m}"),
                other => panic!("tolerance {tolerance}, {solver:?}: {other:?}"),
            }
        }
        let request = ShadowSettings {
            points: 8,
            tolerance,
            ..Default::default()
        };
        assert!(matches!(
            trace_curve(&kerr, &observer, &request, &RaytraceOptions::default()),
            Err(ShadowError::BadRequest(_))
        ));
    }
    for tolerance in umbral::shadow::TOLERANCE_RANGE {
        let request = ShadowSettings {
            points: 8,
            tolerance,
            solver: solver("separable"),
        };
        assert!(umbral::shadow::solve(&kerr, &observer, &request).is_ok());
    }
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_umbral"))
        .args(["shadow", "--metric", "kerr", "--set", "a=0.9"])
        .args([
            "--inclination",
            "60",
            "--solver",
            "raytrace",
            "--tolerance",
            "1e10",
        ])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(stderr.trim().lines().count(), 1, "{stderr}");
    assert!(stderr.contains("tolerance"), "{stderr}");
    assert!(out.stdout.is_empty());
}

/// Issue 10, item 6: the estimate is honest. At the default tolerance every Kerr curve of
/// the Bardeen test meets it (estimated error = the tolerance, deviation from the closed form
/// below it); asked for 1e-11 M, below the strict rays' ~1e-9 M, the curve is labelled as not
/// meeting the tolerance, with an estimate that bounds its true deviation.
#[test]
fn raytrace_tolerance_below_its_noise_is_labelled_not_met() {
    let kerr = Kerr::new(0.9).unwrap();
    let inclination = 60f64.to_radians();
    let exact = ExactCurve {
        a: 0.9,
        q: 0.0,
        inclination,
    };
    let observer = Observer::distant(inclination);
    let results: Vec<(f64, ShadowResult)> = [1e-8, 1e-11]
        .par_iter()
        .map(|&tolerance: &f64| {
            let request = ShadowSettings {
                points: 8,
                tolerance,
                ..Default::default()
            };
            (tolerance, solve(&kerr, &observer, &request).unwrap())
        })
        .collect();
    for (tolerance, result) in results {
        let checks = result.diagnostics.raytrace.clone().unwrap();
        let dev = worst_deviation(&result, &exact);
        println!("tolerance {tolerance:e}: deviation {dev:.2e} M, {checks:?}");
        let estimate = checks.estimated_error.expect("an estimate");
        assert!(
            dev <= estimate,
            "deviation {dev:e} above the estimate {estimate:e}"
        );
        if tolerance == 1e-8 {
            assert!(checks.tolerance_met && checks.accuracy_note.is_none());
        } else {
            assert!(!checks.tolerance_met && estimate > tolerance);
            assert!(checks.accuracy_note.unwrap().contains("refined numerics"));
        }
    }
}

/// What bounds, scans and posteriors take (`solve_classified`): a traced curve asked for
/// 1e-11 M, below the strict rays' noise, is not known to meet its tolerance (the test
/// above), so it is refused with the tracer's note; at 1e-8 M it is a shadow.
#[test]
fn classified_solve_refuses_a_curve_short_of_its_tolerance() {
    let kerr = Kerr::new(0.9).unwrap();
    let observer = Observer::distant(60f64.to_radians());
    let raytrace: SolverChoice = "raytrace".parse().unwrap();
    let classify = |tolerance: f64| {
        let settings = ShadowSettings {
            points: 8,
            tolerance,
            solver: raytrace,
        };
        solve_classified(&kerr, &observer, &settings, false)
    };
    match classify(1e-11) {
        Err(ShadowError::NotConverged(why)) => {
            assert!(
                why.contains("not known to lie within the boundary tolerance")
                    && why.contains("refined numerics"),
                "{why}"
            );
        }
        other => panic!("expected a refusal, got {other:?}"),
    }
    assert!(matches!(
        classify(1e-8),
        Ok(PointShadow::Shadow {
            horizonless: false,
            ..
        })
    ));
}

/// Issue 10, item 5: the dilaton black hole at q = 1.41421356 (q² = 2 − 1e-8) has its photon
/// sphere 8e-5 M outside the horizon r = 2, inside the tracer's capture radius 2.002 M. The
/// tracer used to return the outline of that capture surface (+1.8e-3 M); it must refuse,
/// naming the cause.
#[test]
// The case is q = 1.41421356 as typed, just below √2, not √2 itself.
#[allow(clippy::approx_constant)]
fn raytrace_dilaton_q_1_41421356_is_refused_not_overestimated() {
    let dilaton =
        umbral::metrics::build_metric("dilaton", &[("q".to_string(), 1.41421356)]).unwrap();
    let result = solve(
        dilaton.as_ref(),
        &Observer::distant(90f64.to_radians()),
        &settings(8),
    );
    match result {
        Err(ShadowError::NotConverged(m)) => {
            assert!(
                m.contains("not formed by photon orbits") && m.contains("capture"),
                "{m}"
            )
        }
        other => panic!("expected a refusal, got {other:?}"),
    }
}

/// Issue 10, item 5: extremal Kerr (a = ±1) seen at 60° and 90°: the photon orbits of the
/// flat edge reach the horizon r = 1, inside any capture margin; the tracer used to be up to
/// 7.8e-5 M too large there. Kerr–Newman (0.6, 0.7999999) edge-on (+9e-6 M) likewise. Both
/// must be refused.
#[test]
fn raytrace_extremal_kerr_and_kerr_newman_are_refused() {
    let cases: Vec<(f64, f64, f64)> = vec![
        (1.0, 0.0, 60.0),
        (1.0, 0.0, 90.0),
        (-1.0, 0.0, 90.0),
        (0.6, 0.7999999, 90.0),
    ];
    let outcomes: Vec<(f64, f64, f64, Result<ShadowResult, ShadowError>)> = cases
        .par_iter()
        .map(|&(a, q, deg)| {
            let metric = KerrNewman::new(a, q).unwrap();
            let observer = Observer::distant(f64::to_radians(deg));
            (a, q, deg, solve(&metric, &observer, &settings(8)))
        })
        .collect();
    for (a, q, deg, outcome) in outcomes {
        match outcome {
            Err(ShadowError::NotConverged(m)) => assert!(m.contains("capture"), "{m}"),
            other => panic!("a = {a}, q = {q}, {deg} deg: expected a refusal, got {other:?}"),
        }
    }
}

/// Near-extremal Kerr (a = 0.9999, whose flat edge is formed by orbits 0.03 M outside the
/// horizon, beyond the capture margin) is still resolved, edge-on, to the tolerance of
/// Bardeen's curve.
#[test]
fn raytrace_near_extremal_kerr_edge_on_matches_bardeen() {
    let inclination = 90f64.to_radians();
    let kerr = Kerr::new(0.9999).unwrap();
    let result = solve(&kerr, &Observer::distant(inclination), &settings(8)).unwrap();
    let checks = result.diagnostics.raytrace.clone().unwrap();
    assert!(checks.tolerance_met, "{checks:?}");
    let exact = ExactCurve {
        a: 0.9999,
        q: 0.0,
        inclination,
    };
    let dev = worst_deviation(&result, &exact);
    println!("a = 0.9999 edge-on: worst deviation {dev:.2e} M, {checks:?}");
    assert!(dev <= 1.2e-8, "{dev:e}");
}

/// A registered solver by name.
fn solver(name: &str) -> SolverChoice {
    name.parse().expect("a registered solver")
}
