//! Singular surfaces outside the horizon (issue 10, item 4's own case).
//!
//! Johannsen's metric (Johannsen 2013, Phys. Rev. D 88, 044002) has g_tt, g_tφ and g_φφ over
//! D = [(r² + a²) A1 − a² A2 sin²θ]², A1 = 1 + α13/r³, A2 = 1 + α22/r². On the equator with
//! α22 = 0, √D r³ = r⁵ + α13 (r² + a²), which vanishes outside r₊ = 1 + √(1 − a²) when
//! α13 < −r₊⁴/2 (r₊² + a² = 2r₊). At a = 0.9, α13 = −2.95 the separable solver used to return
//! a shadow (mean radius 3.571) and the ray tracer failed; every solver now says no_shadow,
//! naming the surface, for the built-in metric and its metric-file twin alike.

use std::path::Path;
use umbral::metric::{exterior_singularity, Declared, Spacetime, SphericalMetric};
use umbral::metric_file::load_metric_file;
use umbral::metrics::{build_metric, Johannsen};
use umbral::scalar::DualScalar;
use umbral::shadow::{solve, Observer, ShadowResult, ShadowSettings, ShadowStatus, SolverChoice};

fn assignments(set: &[(&str, f64)]) -> Vec<(String, f64)> {
    set.iter().map(|(k, v)| (k.to_string(), *v)).collect()
}

/// The Johannsen metric written as a metric file: no domain beyond the per-parameter one.
fn johannsen_file(set: &[(&str, f64)]) -> impl Spacetime {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("metrics/johannsen.toml");
    load_metric_file(&path)
        .unwrap()
        .instantiate(&assignments(set))
        .unwrap()
}

fn r_plus(a: f64) -> f64 {
    1.0 + (1.0 - a * a).sqrt()
}

/// The outermost zero of r⁵ + α13 r² − a² α22 r + α13 a² (Johannsen 2013's √D r³ on the
/// equator) in [lo, hi], by bisection.
fn equatorial_zero(a: f64, alpha13: f64, alpha22: f64, mut lo: f64, mut hi: f64) -> f64 {
    let p = |r: f64| r.powi(5) + alpha13 * r * r - a * a * alpha22 * r + alpha13 * a * a;
    assert!(p(lo) < 0.0 && p(hi) > 0.0);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if p(mid) < 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    lo
}

fn reason(result: &ShadowResult) -> &str {
    match &result.status {
        ShadowStatus::NoShadow { reason } => reason,
        ShadowStatus::Shadow => panic!("expected no shadow, got a curve {:?}", result.curve),
    }
}

/// The r named in "singular at r = X, theta = Y deg".
fn named_point(reason: &str) -> (f64, f64) {
    let after = reason.split("singular at r = ").nth(1).expect(reason);
    let (r, rest) = after.split_once(", theta = ").expect(reason);
    let theta = rest.split(" deg").next().unwrap();
    (r.parse().unwrap(), theta.parse().unwrap())
}

/// The built-in metric and its metric-file twin, every solver: no shadow, naming the zero of
/// r⁵ + α13 (r² + a²) on the equator (Johannsen 2013's denominator).
#[test]
fn johannsen_a0_9_alpha13_m2_95_inclination_60_every_solver_says_no_shadow() {
    let set = [("a", 0.9), ("alpha13", -2.95)];
    let builtin = build_metric("johannsen", &assignments(&set)).unwrap();
    let file = johannsen_file(&set);
    let zero = equatorial_zero(0.9, -2.95, 0.0, r_plus(0.9), 3.0);
    assert!((zero - 1.5757).abs() < 1e-4, "{zero}");
    let observer = Observer::distant(60f64.to_radians());
    for m in [builtin.as_ref(), &file as &dyn Spacetime] {
        for solver in [SolverChoice::AUTO, solver("separable"), solver("raytrace")] {
            let settings = ShadowSettings {
                points: 16,
                tolerance: 1e-6,
                solver,
            };
            let result = solve(m, &observer, &settings).unwrap();
            let why = reason(&result);
            assert!(why.contains("outside the outer horizon"), "{why}");
            let (r, theta) = named_point(why);
            // D is a double pole: check_point flags it within ~1e-8 relative.
            assert!((r - zero).abs() < 1e-7 * zero, "{solver:?}: {r} vs {zero}");
            assert_eq!(theta, 90.0, "{why}");
        }
    }
}

/// Johannsen's closed-form conditions ([`Johannsen::exterior_singularity`]), a brute-force look
/// at the denominators on a fine grid, and the general check on the metric-file twin agree,
/// on both sides of the equatorial edge α13 = −r₊⁴/2 (α22 = 0) and at points with α22 ≠ 0.
#[test]
fn johannsen_regularity_edge_closed_form_brute_force_and_general_check_agree() {
    let mut cases = vec![
        (0.9, 0.0, 5.0, 0.0, 0.0),
        (0.9, 0.0, 12.0, 0.0, 0.0),
        (0.9, 0.0, 20.0, 0.0, 0.0),
        (0.9, -2.5, -3.0, 0.0, 0.0),
        (0.9, -2.9, -30.0, 0.0, 0.0),
        (0.7, -1.0, 8.0, 0.0, 0.0),
        (0.5, 1.0, 40.0, 0.0, 0.0),
        (-0.95, -1.5, 2.0, 0.0, 0.0),
        (0.9, 0.0, 0.0, -2.5, 0.0),
        (0.9, 0.0, 0.0, 0.0, -3.5),
    ];
    for a in [0.0f64, 0.3, 0.6, 0.9, 0.99, 1.0] {
        let edge = -r_plus(a).powi(4) / 2.0;
        // At a = 1 the zero sits at r − 1 ≈ (α13 − edge)/2, next to a degenerate horizon
        // where the (t, φ) block is lost in rounding within ~1e-3 M: 1% off the edge there.
        let step = if a == 1.0 { 1e-2 } else { 1e-3 };
        cases.push((a, edge * (1.0 - step), 0.0, 0.0, 0.0));
        if edge * (1.0 + step) > -8.0 {
            cases.push((a, edge * (1.0 + step), 0.0, 0.0, 0.0));
        } else {
            // a = 0: the edge −r₊⁴/2 = −8 is the declared domain's (the spin-independent part).
            let beyond = [("a", a), ("alpha13", edge * (1.0 + step))];
            assert!(build_metric("johannsen", &assignments(&beyond)).is_err());
        }
    }
    for (a, alpha13, alpha22, alpha52, eps3) in cases {
        let h = r_plus(a);
        let mut lowest = f64::INFINITY;
        for i in 0..=20_000 {
            let r = h + 50.0 * (i as f64 / 20_000.0).powi(2);
            for j in 0..=32 {
                let s2 = (j as f64 / 32.0 * std::f64::consts::FRAC_PI_2)
                    .sin()
                    .powi(2);
                let root_d = (r * r + a * a) * (1.0 + alpha13 / r.powi(3))
                    - a * a * (1.0 + alpha22 / (r * r)) * s2;
                let sigma_t = r * r + a * a * (1.0 - s2) + eps3 / r;
                let a5 = 1.0 + alpha52 / (r * r);
                lowest = lowest.min(root_d).min(sigma_t).min(a5);
            }
        }
        let regular = lowest > 0.0;
        let set = [
            ("a", a),
            ("alpha13", alpha13),
            ("alpha22", alpha22),
            ("alpha52", alpha52),
            ("eps3", eps3),
        ];
        let closed = Johannsen::new(a, alpha13, alpha22, alpha52, eps3)
            .unwrap()
            .exterior_singularity();
        let general = exterior_singularity(&johannsen_file(&set), 1e3);
        assert_eq!(
            closed.is_none(),
            regular,
            "{set:?}: lowest {lowest}: {closed:?}"
        );
        assert_eq!(general.is_none(), regular, "{set:?}: {general:?}");
        if let (Some((r, theta, _)), Some(found)) = (closed, general) {
            assert!(found.r > h, "{set:?}: {found}");
            // The closed form names the equator (or the axis for A1 = 0, a = 0 included,
            // where every θ has the same zero); the general check the outermost point found.
            if theta > 0.0 {
                assert!((found.r - r).abs() < 1e-6, "{set:?}: {found} vs r = {r}");
            }
        }
    }
}

/// A5 = 1 + α52/r² = 0 outside the horizon: g_rr changes sign (a change of signature).
#[test]
fn johannsen_file_alpha52_m3_changes_signature_outside_the_horizon() {
    let m = johannsen_file(&[("a", 0.9), ("alpha52", -3.0)]);
    let found = exterior_singularity(&m, 1e3).expect("singular");
    assert!((found.r - 3f64.sqrt()).abs() < 1e-8, "{found}");
    let closed = Johannsen::new(0.9, 0.0, 0.0, -3.0, 0.0)
        .unwrap()
        .exterior_singularity();
    assert_eq!(closed.map(|c| c.0), Some(3f64.sqrt()));
    // α52 = −2 has A5 = 0 at r = 1.414 < r₊ = 1.436: regular outside.
    let m = johannsen_file(&[("a", 0.9), ("alpha52", -2.0)]);
    assert!(exterior_singularity(&m, 1e3).is_none());
}

/// A spherical metric, defined here, whose A has a pole at r = 4 outside the horizon r = 2:
/// A = (1 − 2/r)(1 + 0.01/(r − 4)²), B = 1/(1 − 2/r), C = r². The spherical solver and the ray
/// tracer say no shadow, naming the pole, instead of using a singular exterior.
struct PoleOutside;

impl Declared for PoleOutside {}

impl SphericalMetric for PoleOutside {
    fn a<D: DualScalar>(&self, r: D) -> D {
        let x = r - 4.0;
        (-(r.recip() * 2.0) + 1.0) * ((x * x).recip() * 0.01 + 1.0)
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        (-(r.recip() * 2.0) + 1.0).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r
    }
}

#[test]
fn spherical_metric_with_a_pole_outside_the_horizon_has_no_shadow() {
    let observer = Observer::distant(1.0);
    for solver in [SolverChoice::AUTO, solver("raytrace")] {
        let settings = ShadowSettings {
            points: 8,
            tolerance: 1e-6,
            solver,
        };
        let result = solve(&PoleOutside, &observer, &settings).unwrap();
        let (r, _) = named_point(reason(&result));
        assert!((r - 4.0).abs() < 1e-6, "{solver:?}: {r}");
    }
}

/// No false alarms: ordinary points of every kind of built-in metric, and horizonless ones
/// whose photon sphere bounds an absorbed centre (JNW, Simpson–Visser wormhole), are regular
/// outside their horizon or central region.
#[test]
fn ordinary_metrics_have_no_exterior_singularity() {
    let points: &[(&str, &[(&str, f64)])] = &[
        ("schwarzschild", &[]),
        ("kerr", &[("a", 0.9)]),
        ("kerr", &[("a", -0.998)]),
        ("kerr", &[("a", 1.0)]),
        ("kerr-newman", &[("a", 0.6), ("q", 0.7)]),
        ("kerr-sen", &[("a", 0.5), ("b", 0.3)]),
        (
            "johannsen",
            &[("a", 0.9), ("alpha13", 2.0), ("alpha22", -1.0)],
        ),
        ("johannsen", &[("a", 0.9), ("alpha13", -2.1)]),
        ("johannsen-psaltis", &[("a", 0.5), ("eps3", 1.0)]),
        ("krz", &[("a", 0.7)]),
        ("rotating-hayward", &[("a", 0.5), ("l", 0.3)]),
        ("rotating-bardeen", &[("a", 0.5), ("g", 0.3)]),
        ("reissner-nordstrom", &[("q", 0.8)]),
        ("jnw", &[("nu", 0.7)]),
        ("jnw", &[("nu", 0.501)]),
        ("simpson-visser", &[("l", 3.0)]),
        ("dilaton", &[("q", 1.0)]),
    ];
    for (name, set) in points {
        let m = build_metric(name, &assignments(set)).unwrap();
        let found = exterior_singularity(m.as_ref(), 1e3);
        assert!(found.is_none(), "{name} {set:?}: {found:?}");
    }
    // JNW ν = 0.7 keeps its shadow (its size is checked against the closed form elsewhere,
    // tests/photon_spheres.rs and the JNW bound); here only its status.
    let jnw = build_metric("jnw", &assignments(&[("nu", 0.7)])).unwrap();
    let result = solve(
        jnw.as_ref(),
        &Observer::distant(1.0),
        &ShadowSettings::default(),
    )
    .unwrap();
    assert_eq!(result.status, ShadowStatus::Shadow);
}

/// A registered solver by name.
fn solver(name: &str) -> SolverChoice {
    name.parse().expect("a registered solver")
}
