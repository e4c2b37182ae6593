//! Shadows of the catalogue metrics: exact solvers against the ray tracer, limits, and
//! first-order deviations from Schwarzschild.

mod common;

use common::max_distance;

use rayon::prelude::*;
use umbral::metric::Spacetime;
use umbral::metrics::build_metric;
use umbral::shadow::{solve, CriticalCurve, Observer, ShadowSettings, ShadowStatus, SolverChoice};

fn build(name: &str, set: &[(&str, f64)]) -> Box<dyn Spacetime> {
    let a: Vec<(String, f64)> = set.iter().map(|(k, v)| (k.to_string(), *v)).collect();
    build_metric(name, &a).unwrap()
}

fn curve(m: &dyn Spacetime, incl_deg: f64, solver: SolverChoice, points: usize) -> CriticalCurve {
    let settings = ShadowSettings {
        points,
        tolerance: 1e-8,
        solver,
    };
    let r = solve(m, &Observer::distant(incl_deg.to_radians()), &settings)
        .unwrap_or_else(|e| panic!("{} at {incl_deg} deg: {e}", m.info().name));
    assert_eq!(r.status, ShadowStatus::Shadow, "{}", m.info().name);
    r.curve.unwrap()
}

/// The separable curves of the separable catalogue metrics equal the ray-traced ones
/// (an independent method on the same metric) to 1e-6 M.
#[test]
fn separable_catalogue_curves_match_the_ray_tracer() {
    let cases: Vec<(&str, Vec<(&str, f64)>)> = [0.5, 0.9]
        .iter()
        .flat_map(|&a| {
            vec![
                (
                    "johannsen",
                    vec![("a", a), ("alpha13", 0.5), ("alpha22", 0.3)],
                ),
                ("kerr-sen", vec![("a", a), ("b", 0.05)]),
                ("rotating-bardeen", vec![("a", a), ("g", 0.1)]),
                ("rotating-hayward", vec![("a", a), ("l", 0.2)]),
            ]
        })
        .collect();
    let worst: Vec<(String, f64)> = cases
        .par_iter()
        .flat_map(|(name, set)| {
            [17.0, 90.0].into_par_iter().map(move |incl| {
                let m = build(name, set);
                let exact = curve(m.as_ref(), incl, solver("separable"), 128);
                let traced = curve(m.as_ref(), incl, solver("raytrace"), 8);
                (
                    format!("{name} {set:?} at {incl} deg"),
                    max_distance(&traced, &exact),
                )
            })
        })
        .collect();
    for (label, d) in &worst {
        assert!(*d < 1e-6, "{label}: {d:e} M");
    }
}

/// Johannsen (2013): α52 and ε3 do not enter the photon orbits, so the shadow is unchanged.
#[test]
fn johannsen_shadow_ignores_alpha52_and_eps3() {
    let base = build(
        "johannsen",
        &[("a", 0.7), ("alpha13", 0.6), ("alpha22", -0.2)],
    );
    let other = build(
        "johannsen",
        &[
            ("a", 0.7),
            ("alpha13", 0.6),
            ("alpha22", -0.2),
            ("alpha52", 1.3),
            ("eps3", 2.0),
        ],
    );
    for incl in [17.0, 60.0, 90.0] {
        let c0 = curve(base.as_ref(), incl, SolverChoice::AUTO, 64);
        let c1 = curve(other.as_ref(), incl, SolverChoice::AUTO, 64);
        assert!(max_distance(&c1, &c0) < 1e-10, "{incl} deg");
    }
}

/// Simpson & Visser 2019: the photon sphere sits at r² + l² = 9, so b_c = 3√3 for l < 3.
#[test]
fn simpson_visser_keeps_the_schwarzschild_shadow() {
    for l in [0.0, 0.5, 1.5, 2.5, 2.9] {
        let c = curve(
            build("simpson-visser", &[("l", l)]).as_ref(),
            40.0,
            SolverChoice::AUTO,
            16,
        );
        for r in &c.radii {
            assert!((r - 27f64.sqrt()).abs() < 1e-12, "l = {l}: {r}");
        }
    }
}

/// Simpson–Visser wormholes with l ≥ 3: C/A = ρ³/(ρ − 2), ρ = √(r² + l²), is smallest at the
/// throat r = 0, so b_c = √(l³/(l − 2)) (from the line element of Simpson & Visser 2019).
#[test]
fn simpson_visser_wormholes_have_their_photon_sphere_at_the_throat() {
    // (At l = 3 exactly the throat is a degenerate minimum, λ = 0: no photon-ring exponent.)
    for l in [3.2, 3.5, 5.0] {
        let c = curve(
            build("simpson-visser", &[("l", l)]).as_ref(),
            40.0,
            SolverChoice::AUTO,
            16,
        );
        let b_c = (l * l * l / (l - 2.0)).sqrt();
        for r in &c.radii {
            assert!((r - b_c).abs() < 1e-12 * b_c, "l = {l}: {r} vs {b_c}");
        }
    }
}

/// KRZ with every δ zero is Kerr (Konoplya, Rezzolla & Zhidenko 2016): the ray-traced curve
/// equals Kerr's separable one (Bardeen 1973).
#[test]
fn krz_without_deviations_casts_the_kerr_shadow() {
    let krz = build("krz", &[("a", 0.7)]);
    let kerr = build("kerr", &[("a", 0.7)]);
    let exact = curve(kerr.as_ref(), 60.0, solver("separable"), 128);
    let traced = curve(krz.as_ref(), 60.0, solver("raytrace"), 8);
    assert!(max_distance(&traced, &exact) < 1e-6);
}

/// Johannsen–Psaltis at a = 0 is static and spherical: A = (1 + ε3/r³)(1 − 2/r), C = r².
/// The ray tracer on the metric must equal b_c = min √(C/A) found independently here.
#[test]
fn johannsen_psaltis_static_limit_matches_the_spherical_minimum() {
    let eps3 = 0.8;
    let jp = build("johannsen-psaltis", &[("a", 0.0), ("eps3", eps3)]);
    let b2 = |r: f64| r * r / ((1.0 + eps3 / r.powi(3)) * (1.0 - 2.0 / r));
    // (b²)′ = 0 by Brent's method on a numerical derivative of the closed form.
    let db2 = |r: f64| (b2(r + 1e-6) - b2(r - 1e-6)) / 2e-6;
    let r_ph = common::brent_root(db2, 2.5, 4.0, 1e-12).unwrap();
    let b_c = b2(r_ph).sqrt();
    let traced = curve(jp.as_ref(), 50.0, solver("raytrace"), 8);
    for r in &traced.radii {
        assert!((r - b_c).abs() < 1e-6, "{r} vs {b_c}");
    }
}

/// For f = (1 − 2/r)(1 + c/r³) the shadow radius changes at first order as δ = −c/54:
/// b² = r²/f, and at r = 3 the change of b² is −27·c/27 = −c, so b = 3√3 (1 − c/54)
/// (derived here; the Schwarzschild limit is Synge 1966). Checked by a central difference at
/// c = 0 for Johannsen–Psaltis (c = ε3), Rezzolla–Zhidenko (c = 8 a1) and KRZ (c = 8 δ1).
#[test]
fn first_order_shadow_change_is_minus_c_over_54() {
    let h = 1e-3;
    let cases: Vec<(&str, &str, f64, SolverChoice)> = vec![
        ("johannsen-psaltis", "eps3", 1.0, solver("raytrace")),
        ("rezzolla-zhidenko", "a1", 8.0, solver("spherical")),
        ("krz", "delta1", 8.0, solver("raytrace")),
    ];
    let slopes: Vec<(String, f64)> = cases
        .par_iter()
        .map(|(name, param, c_per_unit, solver)| {
            let radius = |x: f64| {
                let m = build(name, &[(param, x)]);
                let c = curve(m.as_ref(), 60.0, *solver, 8);
                c.radii.iter().sum::<f64>() / c.radii.len() as f64
            };
            let slope = (radius(h) - radius(-h)) / (2.0 * h) / 27f64.sqrt() / c_per_unit;
            (name.to_string(), slope)
        })
        .collect();
    for (name, slope) in slopes {
        // Central difference with h = 1e-3: the O(h²) error is far below 1e-3 relative.
        assert!(
            (slope * 54.0 + 1.0).abs() < 1e-3,
            "{name}: {slope} vs {}",
            -1.0 / 54.0
        );
    }
}

/// A registered solver by name.
fn solver(name: &str) -> SolverChoice {
    name.parse().expect("a registered solver")
}
