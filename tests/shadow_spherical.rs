//! The spherical shadow solver and the photon-ring exponents, against closed forms.

mod common;

use std::f64::consts::PI;
use umbral::prelude::*;
use umbral::shadow::exponents::{separable_gamma, spherical_exponents};
use umbral::shadow::spherical::{photon_sphere_analysis, shadow_angular_radius, solve};
use umbral::shadow::{Observer, ShadowError, ShadowSettings, ShadowStatus};

fn settings(points: usize) -> ShadowSettings {
    ShadowSettings {
        points,
        ..ShadowSettings::default()
    }
}

fn close(x: f64, y: f64, rel: f64) -> bool {
    (x - y).abs() <= rel * y.abs().max(1.0)
}

// ---------------------------------------------------------------- A. spherical solver

#[test]
fn schwarzschild_photon_sphere_and_critical_impact_parameter() {
    // r_ph = 3, b_c = 3√3 (Synge 1966, MNRAS 131, 463; Chandrasekhar 1983, The Mathematical
    // Theory of Black Holes, §20).
    let b_c = 27f64.sqrt();
    for inclination in [0.0, 0.3, PI / 2.0, 2.5] {
        let result = solve(
            &Schwarzschild,
            &Observer::distant(inclination),
            &settings(64),
        )
        .unwrap();
        assert_eq!(result.status, ShadowStatus::Shadow);
        let [r_lo, r_hi] = result.photon_orbit_radii.unwrap();
        assert!(
            (r_lo - 3.0).abs() < 1e-14 && (r_hi - 3.0).abs() < 1e-14,
            "r_ph = {r_lo}"
        );
        let curve = result.curve.unwrap();
        assert_eq!(curve.radii.len(), 64);
        assert_eq!(curve.origin, [0.0, 0.0]);
        for r in &curve.radii {
            assert!((r - b_c).abs() < 1e-14, "b_c = {r}");
        }
        assert_eq!(result.photon_spheres.len(), 1);
        assert!(result.photon_spheres[0].unstable);
    }
}

#[test]
fn reissner_nordstrom_photon_sphere_against_closed_form() {
    // r_ph = (3 + √(9 − 8q²))/2 and b_c = r²/√(r² − 2r + q²) there (e.g. Perlick & Tsupko 2022,
    // Phys. Rep. 947, 1, from C/A = r⁴/(r² − 2r + q²)).
    for q in [0.0f64, 0.2, 0.5, 0.8, 0.95, 0.999] {
        let rn = ReissnerNordstrom::new(q).unwrap();
        let result = solve(&rn, &Observer::distant(1.0), &settings(16)).unwrap();
        let r = (3.0 + (9.0 - 8.0 * q * q).sqrt()) / 2.0;
        let b = r * r / (r * r - 2.0 * r + q * q).sqrt();
        let r_ph = result.photon_orbit_radii.unwrap()[0];
        assert!(
            close(r_ph, r, 1e-14),
            "q = {q}: r_ph = {r_ph}, expected {r}"
        );
        assert!(close(result.curve.unwrap().radii[0], b, 1e-14), "q = {q}");
    }
    // Extremal RN: r_ph = 2, b_c = 4 exactly.
    let extremal = ReissnerNordstrom::new(1.0).unwrap();
    let result = solve(&extremal, &Observer::distant(0.5), &settings(8)).unwrap();
    assert!((result.curve.unwrap().radii[0] - 4.0).abs() < 1e-13);
    assert!((result.photon_orbit_radii.unwrap()[0] - 2.0).abs() < 1e-13);
}

#[test]
fn finite_observer_matches_synge_formula_and_tends_to_b_c() {
    // sin α_sh = b_c √(A(r_o)/C(r_o)) (Synge 1966; Perlick & Tsupko 2022); screen radius
    // √C(r_o) sin α_sh = 3√3 √(1 − 2/r_o) for Schwarzschild.
    let b_c = 27f64.sqrt();
    for r_o in [50.0f64, 1000.0] {
        let expected_sin = b_c * (1.0 - 2.0 / r_o).sqrt() / r_o;
        let alpha = shadow_angular_radius(&Schwarzschild, r_o).unwrap();
        assert!(close(alpha.sin(), expected_sin, 1e-14), "r_o = {r_o}");
        let result = solve(
            &Schwarzschild,
            &Observer::at_radius(1.2, r_o),
            &settings(32),
        )
        .unwrap();
        let radius = result.curve.unwrap().radii[0];
        assert!(close(radius, r_o * expected_sin, 1e-14), "r_o = {r_o}");
    }
    // Reissner–Nordström, q = 0.6, r_o = 50: A = 1 − 2/r + q²/r², C = r².
    let q = 0.6;
    let rn = ReissnerNordstrom::new(q).unwrap();
    let r = (3.0 + (9.0 - 8.0 * q * q).sqrt()) / 2.0;
    let b = r * r / (r * r - 2.0 * r + q * q).sqrt();
    let r_o: f64 = 50.0;
    let a_o = 1.0 - 2.0 / r_o + q * q / (r_o * r_o);
    let alpha = shadow_angular_radius(&rn, r_o).unwrap();
    assert!(close(alpha.sin(), b * a_o.sqrt() / r_o, 1e-14));
    // The finite-observer screen radius tends to b_c as r_o → ∞: b_c(√(1 − 2/r_o) − 1) ≈ −b_c/r_o.
    let far = solve(&Schwarzschild, &Observer::at_radius(1.0, 1e8), &settings(8)).unwrap();
    let radius = far.curve.unwrap().radii[0];
    assert!((radius - b_c).abs() < 1.01 * b_c / 1e8, "{radius}");
}

#[test]
fn finite_observer_inside_photon_sphere_is_a_bad_request() {
    for r_o in [2.5, 3.0, f64::NAN, -10.0] {
        let err = solve(&Schwarzschild, &Observer::at_radius(1.0, r_o), &settings(8)).unwrap_err();
        assert!(
            matches!(err, ShadowError::BadRequest(_)),
            "r_o = {r_o}: {err:?}"
        );
    }
    let err = solve(&Schwarzschild, &Observer::distant(f64::NAN), &settings(8)).unwrap_err();
    assert!(matches!(err, ShadowError::BadRequest(_)));
    let err = solve(&Schwarzschild, &Observer::distant(1.0), &settings(2)).unwrap_err();
    assert!(matches!(err, ShadowError::BadRequest(_)));
}

#[test]
fn non_spherical_metric_is_not_applicable() {
    let kerr = Kerr::new(0.5).unwrap();
    let err = solve(&kerr, &Observer::distant(1.0), &settings(8)).unwrap_err();
    assert!(
        matches!(err, ShadowError::SolverNotApplicable { .. }),
        "{err:?}"
    );
}

/// Smoothstep S(x) = x³(10 − 15x + 6x²) on [0, 1], 0 below, 1 above (C² at both ends).
fn smoothstep<D: DualScalar>(x: D) -> D {
    if x.re() <= 0.0 {
        x * 0.0
    } else if x.re() >= 1.0 {
        x * 0.0 + 1.0
    } else {
        x * x * x * (x * (x * 6.0 - 15.0) + 10.0)
    }
}

/// A Schwarzschild black hole of mass 1 inside a thick shell that raises the mass to 1 + μ:
/// A = 1/B = 1 − 2m(r)/r, C = r², m = 1 + μ S((r − 5)/4). Test metric written for this file.
/// For r ≤ 5 it is Schwarzschild with M = 1 (photon sphere r = 3, b² = 27), for r ≥ 9 with
/// M = 1 + μ (photon sphere r = 3(1 + μ), b² = 27(1 + μ)²); a maximum of C/A lies between.
struct ShelledBlackHole {
    mu: f64,
}

impl Declared for ShelledBlackHole {}

impl SphericalMetric for ShelledBlackHole {
    fn a<D: DualScalar>(&self, r: D) -> D {
        let m = smoothstep((r - 5.0) / 4.0) * self.mu + 1.0;
        -(m * 2.0) / r + 1.0
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        self.a(r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r
    }
}

#[test]
fn three_photon_spheres_reported_and_the_global_minimum_bounds_capture() {
    // Closed forms from Schwarzschild in each constant-mass region (Synge 1966): r = 3M,
    // b² = 27M². Rays with b² < 27 pass the outer sphere and the barrier and are captured;
    // those with 27 < b² < 432 turn back inside the shell, so b_c = 3√3.
    let metric = ShelledBlackHole { mu: 3.0 };
    assert!((metric.outer_horizon().unwrap() - 2.0).abs() < 1e-12);
    let result = solve(&metric, &Observer::distant(1.0), &settings(8)).unwrap();
    let spheres = &result.photon_spheres;
    assert_eq!(spheres.len(), 3, "{spheres:?}");
    assert!(spheres[0].unstable && !spheres[1].unstable && spheres[2].unstable);
    assert!((spheres[0].radius - 12.0).abs() < 1e-12);
    assert!((spheres[0].impact_parameter - 432f64.sqrt()).abs() < 1e-12);
    assert!(spheres[1].radius > 5.0 && spheres[1].radius < 9.0);
    assert!(spheres[1].impact_parameter > spheres[0].impact_parameter);
    assert!((spheres[2].radius - 3.0).abs() < 1e-13);
    assert_eq!(result.photon_orbit_radii, Some([spheres[2].radius; 2]));
    assert!((result.curve.unwrap().radii[0] - 27f64.sqrt()).abs() < 1e-13);
    // An observer between the spheres is refused; one outside all of them is served.
    let inside = solve(&metric, &Observer::at_radius(1.0, 10.0), &settings(8)).unwrap_err();
    assert!(matches!(inside, ShadowError::BadRequest(_)));
    let r_o: f64 = 50.0;
    let outside = solve(&metric, &Observer::at_radius(1.0, r_o), &settings(8)).unwrap();
    let expected = 27f64.sqrt() * (1.0 - 8.0 / r_o).sqrt();
    assert!(close(outside.curve.unwrap().radii[0], expected, 1e-13));
}

/// Janis–Newman–Winicour 1968 (Phys. Rev. Lett. 20, 878): A = 1/B = (1 − b/r)^ν,
/// C = r²(1 − b/r)^(1−ν), b = 2/ν (unit mass).
struct JanisNewmanWinicour {
    nu: f64,
}

impl Declared for JanisNewmanWinicour {}

impl SphericalMetric for JanisNewmanWinicour {
    fn a<D: DualScalar>(&self, r: D) -> D {
        (-(r.recip() * (2.0 / self.nu)) + 1.0).powf(self.nu)
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        self.a(r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r * (-(r.recip() * (2.0 / self.nu)) + 1.0).powf(1.0 - self.nu)
    }
}

#[test]
fn janis_newman_winicour_with_and_without_photon_sphere() {
    // (ln C/A)′ = 2/r + (1 − 2ν) b/(r(r − b)) = 0 at r = b(1 + 2ν)/2, which exists outside
    // r = b only for ν > 1/2 (Virbhadra, Narasimha & Chitre 1998, A&A 337, 1; from memory,
    // re-derived here).
    let nu = 0.7;
    let b = 2.0 / nu;
    let metric = JanisNewmanWinicour { nu };
    let result = solve(&metric, &Observer::distant(1.0), &settings(8)).unwrap();
    let r = b * (1.0 + 2.0 * nu) / 2.0;
    let b_c = (r * r * (1.0 - b / r).powf(1.0 - 2.0 * nu)).sqrt();
    assert!(close(result.photon_orbit_radii.unwrap()[0], r, 1e-14));
    assert!(close(result.curve.unwrap().radii[0], b_c, 1e-14));

    // ν = 0.4: C/A = r²(1 − b/r)^(0.2) decreases monotonically to 0 at r = b: no shadow.
    let metric = JanisNewmanWinicour { nu: 0.4 };
    let result = solve(&metric, &Observer::distant(1.0), &settings(8)).unwrap();
    match &result.status {
        ShadowStatus::NoShadow { reason } => {
            assert!(reason.contains("no photon sphere"), "{reason}")
        }
        other => panic!("expected no shadow, got {other:?}"),
    }
    assert!(result.curve.is_none() && result.photon_spheres.is_empty());
    assert!(result.exponents.is_none() && result.photon_orbit_radii.is_none());
}

#[test]
fn reissner_nordstrom_naked_singularity_cases() {
    // q² > 9/8: no photon sphere at all (r_ph = (3 ± √(9 − 8q²))/2 complex).
    let rn = ReissnerNordstrom::new(1.2).unwrap();
    let result = solve(&rn, &Observer::distant(1.0), &settings(8)).unwrap();
    assert!(
        matches!(&result.status, ShadowStatus::NoShadow { reason } if reason.contains("no photon sphere"))
    );
    // 1 < q² < 9/8: an unstable and a stable photon sphere at (3 ± √(9 − 8q²))/2, but C/A → 0
    // at r → 0, so every ray inside the photon sphere is turned back: nothing is captured.
    let q: f64 = 1.05;
    let rn = ReissnerNordstrom::new(q).unwrap();
    let analysis = photon_sphere_analysis(&rn).unwrap();
    let disc = (9.0 - 8.0 * q * q).sqrt();
    assert_eq!(analysis.spheres.len(), 2);
    assert!(analysis.spheres[0].unstable && !analysis.spheres[1].unstable);
    assert!(close(analysis.spheres[0].radius, (3.0 + disc) / 2.0, 1e-13));
    assert!(close(analysis.spheres[1].radius, (3.0 - disc) / 2.0, 1e-13));
    let result = solve(&rn, &Observer::distant(1.0), &settings(8)).unwrap();
    assert!(
        matches!(&result.status, ShadowStatus::NoShadow { reason } if reason.contains("turned back"))
    );
    assert_eq!(result.photon_spheres.len(), 2);
}

// ---------------------------------------------------------------- C. exponents

#[test]
fn schwarzschild_exponents() {
    // λ = 1/(3√3), γ = π (Cardoso et al. 2009, Phys. Rev. D 79, 064016; Johnson et al. 2020,
    // Sci. Adv. 6, eaaz1310).
    let e = spherical_exponents(&Schwarzschild, 3.0).unwrap();
    assert!((e.lyapunov.unwrap() - 1.0 / 27f64.sqrt()).abs() < 1e-15);
    assert!((e.gamma_min - PI).abs() < 1e-14 && (e.gamma_max - PI).abs() < 1e-14);
    let result = solve(&Schwarzschild, &Observer::distant(1.0), &settings(8)).unwrap();
    assert!((result.exponents.unwrap().gamma_min - PI).abs() < 1e-14);
    // Not a circular orbit, or not spherical: refused.
    assert!(matches!(
        spherical_exponents(&Schwarzschild, 4.0),
        Err(ShadowError::BadRequest(_))
    ));
    let kerr = Kerr::new(0.3).unwrap();
    assert!(matches!(
        spherical_exponents(&kerr, 3.0),
        Err(ShadowError::SolverNotApplicable { .. })
    ));
}

#[test]
fn reissner_nordstrom_exponents_against_cardoso_formula() {
    // λ = √(g(2f − r²f″)/(2r²)), Ω = √f/r with f = g = 1 − 2/r + q²/r², γ = πλ/Ω
    // (Cardoso et al. 2009, Phys. Rev. D 79, 064016).
    for q in [0.1f64, 0.4, 0.7, 0.9, 1.0] {
        let r = (3.0 + (9.0 - 8.0 * q * q).sqrt()) / 2.0;
        let f = 1.0 - 2.0 / r + q * q / (r * r);
        let f2 = -4.0 / r.powi(3) + 6.0 * q * q / r.powi(4);
        let lyapunov = (f * (2.0 * f - r * r * f2) / (2.0 * r * r)).sqrt();
        let omega = f.sqrt() / r;
        let e = spherical_exponents(&ReissnerNordstrom::new(q).unwrap(), r).unwrap();
        assert!(close(e.lyapunov.unwrap(), lyapunov, 1e-13), "q = {q}");
        assert!(close(e.gamma_min, PI * lyapunov / omega, 1e-13), "q = {q}");
    }
}

/// Complete elliptic integral of the first kind K(m) = π/(2 AGM(1, √(1 − m))), m < 1
/// (Abramowitz & Stegun 1964, 17.6).
fn elliptic_k(m: f64) -> f64 {
    let (mut a, mut b) = (1.0f64, (1.0 - m).sqrt());
    for _ in 0..60 {
        let (an, bn) = (0.5 * (a + b), (a * b).sqrt());
        a = an;
        b = bn;
        if (a - b).abs() <= 1e-16 * a {
            break;
        }
    }
    PI / (2.0 * a)
}

/// Kerr spherical photon orbits (Bardeen 1973): λ = −(r³ − 3r² + a²r + a²)/(a(r − 1)),
/// η = (r² + a² − aλ)²/Δ − (λ − a)².
fn kerr_orbit(a: f64, r: f64) -> (f64, f64) {
    let lambda = -(r.powi(3) - 3.0 * r * r + a * a * r + a * a) / (a * (r - 1.0));
    let delta = r * r - 2.0 * r + a * a;
    let p = r * r + a * a - a * lambda;
    (lambda, p * p / delta - (lambda - a).powi(2))
}

/// Equatorial Kerr photon orbits r = 2[1 + cos(⅔ arccos(∓a))] (Bardeen, Press & Teukolsky 1972).
fn kerr_equatorial(a: f64) -> (f64, f64) {
    let r = |s: f64| 2.0 * (1.0 + ((2.0 / 3.0) * (s * a).acos()).cos());
    (r(-1.0), r(1.0))
}

/// γ = 4r√χ K(u₊/u₋)/(a√(−u₋)), χ = 1 − Δ/(r(r − 1)²), u± = Δ_θ ± √(Δ_θ² + η/a²),
/// Δ_θ = (1 − (η + λ²)/a²)/2 (Johnson et al. 2020, Sci. Adv. 6, eaaz1310; Gralla & Lupsasca
/// 2020, Phys. Rev. D 101, 044031; from memory, its a → 0 limit π checked in the notes).
fn kerr_gamma_closed_form(a: f64, r: f64, lambda: f64, eta: f64) -> f64 {
    let delta = r * r - 2.0 * r + a * a;
    let chi = 1.0 - delta / (r * (r - 1.0).powi(2));
    let d_theta = 0.5 * (1.0 - (eta + lambda * lambda) / (a * a));
    let root = (d_theta * d_theta + eta / (a * a)).sqrt();
    let (u_plus, u_minus) = (d_theta + root, d_theta - root);
    4.0 * r * chi.sqrt() * elliptic_k(u_plus / u_minus) / (a * (-u_minus).sqrt())
}

#[test]
fn kerr_separable_gamma_against_closed_form() {
    for a in [0.5, 0.9] {
        let kerr = Kerr::new(a).unwrap();
        let (r_pro, r_retro) = kerr_equatorial(a);
        // Nearly equatorial orbits (η from ~1e-13 to ~1e-3) join the equatorial limit
        // continuously; there the rounding of θ near π/2 limits the accuracy to ~1e-9 (see
        // separable_gamma).
        for delta in [1e-13, 1e-11, 1e-9, 1e-8, 1e-7, 1e-6, 1e-5, 1e-4] {
            for r in [r_pro + delta, r_retro - delta] {
                let (lambda, eta) = kerr_orbit(a, r);
                let gamma = separable_gamma(&kerr, r, lambda, eta).unwrap();
                let expected = kerr_gamma_closed_form(a, r, lambda, eta.max(0.0));
                assert!(
                    close(gamma, expected, 2e-9),
                    "a = {a}, r = {r}, eta = {eta}: {gamma} vs {expected}"
                );
            }
        }
        for fraction in [0.02, 0.15, 0.3, 0.5, 0.7, 0.85, 0.98] {
            let r = r_pro + fraction * (r_retro - r_pro);
            let (lambda, eta) = kerr_orbit(a, r);
            let gamma = separable_gamma(&kerr, r, lambda, eta).unwrap();
            let expected = kerr_gamma_closed_form(a, r, lambda, eta);
            assert!(
                close(gamma, expected, 1e-12),
                "a = {a}, r = {r}: {gamma} vs {expected}"
            );
        }
        // Equatorial orbits (η = 0): the closed form's η → 0 limit, K(0) = π/2.
        for r in [r_pro, r_retro] {
            let (lambda, _) = kerr_orbit(a, r);
            let gamma = separable_gamma(&kerr, r, lambda, 0.0).unwrap();

            let expected = kerr_gamma_closed_form(a, r, lambda, 1e-300);
            assert!(
                close(gamma, expected, 1e-10),
                "a = {a}, equatorial r = {r}: {gamma} vs {expected}"
            );
        }
    }
}

#[test]
fn kerr_polar_orbit_passes_over_the_pole() {
    // λ = 0: r³ − 3r² + a²r + a² = 0; Θ_u vanishes at u = ±1 (the orbit crosses the poles).
    let a = 0.7;
    let kerr = Kerr::new(a).unwrap();
    let cubic = |r: f64| r.powi(3) - 3.0 * r * r + a * a * r + a * a;
    let r = common::brent_root(cubic, 2.0, 3.5, 0.0).unwrap();
    let (lambda, eta) = kerr_orbit(a, r);
    assert!(lambda.abs() < 1e-12);
    let gamma = separable_gamma(&kerr, r, 0.0, eta).unwrap();
    let expected = kerr_gamma_closed_form(a, r, 0.0, eta);
    assert!(close(gamma, expected, 1e-12), "{gamma} vs {expected}");
}

#[test]
fn separable_gamma_schwarzschild_limits() {
    // a = 0: γ = π for every orientation λ² + η = 27 of the orbit r = 3 (Johnson et al. 2020).
    let kerr = Kerr::new(0.0).unwrap();
    for lambda in [0.0, 1.0, 3.0, -5.0, 27f64.sqrt() * 0.999] {
        let eta = 27.0 - lambda * lambda;
        let gamma = separable_gamma(&kerr, 3.0, lambda, eta).unwrap();
        assert!((gamma - PI).abs() < 1e-12, "lambda = {lambda}: {gamma}");
    }
    // a → 0 limit of Kerr: γ → π.
    let a = 1e-4;
    let kerr = Kerr::new(a).unwrap();
    let (r_pro, r_retro) = kerr_equatorial(a);
    let r = 0.5 * (r_pro + r_retro);
    let (lambda, eta) = kerr_orbit(a, r);
    let gamma = separable_gamma(&kerr, r, lambda, eta).unwrap();
    assert!((gamma - PI).abs() < 1e-6, "{gamma}");
    // Not a spherical photon orbit, or a metric without separation data: refused.
    let kerr = Kerr::new(0.5).unwrap();
    assert!(matches!(
        separable_gamma(&kerr, 3.0, 1.0, 20.0),
        Err(ShadowError::BadRequest(_))
    ));
    assert!(matches!(
        separable_gamma(&Schwarzschild, 3.0, 0.0, 27.0),
        Err(ShadowError::SolverNotApplicable { .. })
    ));
}

/// Issue 10 item 9: Simpson–Visser l = 3 exited 2 because its exponent is undefined, though
/// the shadow is well defined. The photon sphere r² + l² = 9 sits on the throat r = 0 there, so
/// b_c = 3√3 still (Simpson & Visser 2019, JCAP 02, 042), but the orbit is marginally stable
/// (C/A has a quartic minimum at r = 0: λ² = 0, no exponential departure). The shadow is
/// reported and the exponent marked undefined with the reason, in the library and in the
/// command's table and JSON.
#[test]
fn simpson_visser_l3_shadow_with_undefined_exponent() {
    let sv = umbral::metrics::SimpsonVisser::new(3.0).unwrap();
    let result = solve(&sv, &Observer::distant(0.5), &settings(64)).unwrap();
    assert_eq!(result.status, ShadowStatus::Shadow);
    let b_c = 27f64.sqrt();
    assert!(result
        .curve
        .unwrap()
        .radii
        .iter()
        .all(|r| close(*r, b_c, 1e-13)));
    assert!(result.exponents.is_none());
    let why = result.diagnostics.exponents_undefined.expect("a reason");
    assert!(why.contains("marginally stable"), "{why}");
    // Either side of l = 3 the exponent exists (l = 2.9: the sphere outside the throat;
    // l = 3.1: the throat itself is the unstable orbit).
    for l in [2.9, 3.1] {
        let r = solve(
            &umbral::metrics::SimpsonVisser::new(l).unwrap(),
            &Observer::distant(0.5),
            &settings(8),
        );
        assert!(r.unwrap().exponents.is_some(), "l = {l}");
    }

    let run = |json: bool| {
        let mut args = vec!["shadow", "--metric", "simpson-visser", "--set", "l=3"];
        args.extend(["--inclination", "30"]);
        if json {
            args.push("--json");
        }
        std::process::Command::new(env!("CARGO_BIN_EXE_umbral"))
            .args(&args)
            .output()
            .unwrap()
    };
    let table = run(false);
    assert_eq!(table.status.code(), Some(0));
    let text = String::from_utf8_lossy(&table.stdout);
    assert!(text.contains("5.196152422707 M"), "{text}");
    assert!(
        text.contains("undefined (") && text.contains("marginally stable"),
        "{text}"
    );
    let json = run(true);
    assert_eq!(json.status.code(), Some(0));
    let v: serde_json::Value =
        serde_json::from_slice::<serde_json::Value>(&json.stdout).unwrap()[0].clone();
    assert!(v["exponents"].is_null());
    assert!(v["exponents_undefined"]
        .as_str()
        .is_some_and(|s| s.contains("marginally stable")));
}

/// The strong-deflection coefficient ā and the areal radii against the mpmath generator
/// tests/generate_strong_deflection.py, which measures ā from the logarithmic divergence of
/// the deflection angle by quadrature (Bozza 2002, Phys. Rev. D 66, 103001, defines ā by
/// α = −ā ln(b/b_c − 1) + b̄); the areal radii √C are reported only where C ≠ r².
#[test]
fn strong_deflection_coefficient_and_areal_radii_match_mpmath() {
    use umbral::observables::{shadow_report, CentreChoice};
    let table: serde_json::Value =
        serde_json::from_str(include_str!("data/strong_deflection.json")).unwrap();
    for case in table["cases"].as_array().unwrap() {
        let name = case["metric"].as_str().unwrap();
        let parameters: Vec<(String, f64)> = case["parameters"]
            .as_object()
            .unwrap()
            .iter()
            .map(|(k, v)| (k.clone(), v.as_f64().unwrap()))
            .collect();
        let metric = umbral::metrics::build_metric(name, &parameters).unwrap();
        let observer = Observer::distant(0.5);
        let report = shadow_report(
            metric.as_ref(),
            0.5f64.to_degrees(),
            &observer,
            &ShadowSettings::default(),
            CentreChoice::Centroid,
        )
        .unwrap();
        let extras = report.spherical.expect(name);
        let abar = case["abar"].as_f64().unwrap();
        // The reference is good to about 2e-8 (its neglected O(ε ln ε) term).
        assert!(
            (extras.strong_deflection_coefficient - abar).abs() < 1e-6,
            "{name}: {} vs {abar}",
            extras.strong_deflection_coefficient
        );
        let r_ph = case["photon_sphere"].as_f64().unwrap();
        let areal = case["areal_photon_sphere"].as_f64().unwrap();
        match extras.areal_photon_sphere_radius {
            Some(got) => assert!((got - areal).abs() < 1e-9, "{name}: {got} vs {areal}"),
            None => assert!((areal - r_ph).abs() < 1e-12, "{name}: C = r² expected"),
        }
        if let (Some(got), Some(want)) = (
            extras.areal_horizon_radius,
            case.get("areal_horizon").and_then(|v| v.as_f64()),
        ) {
            assert!((got - want).abs() < 1e-9, "{name}: horizon {got} vs {want}");
        }
    }
}
