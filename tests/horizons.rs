//! Outer horizons: the closed-form overrides and the default numerical finder against the
//! textbook formulas, including near-extremal and extremal black holes and naked singularities.

use umbral::metric::{numerical_outer_horizon, Classification, Declared, Metric, MetricComponents};
use umbral::metrics::{build_metric, Kerr, KerrNewman, ReissnerNordstrom, Schwarzschild};
use umbral::prelude::{DualScalar, Spacetime, SphericalMetric};

/// Agreement required with the closed forms.
const TOLERANCE: f64 = 1e-12;

/// r₊ = 1 + √(1 − a² − q²) (M = 1): Kerr (Boyer & Lindquist 1967, J. Math. Phys. 8, 265),
/// Reissner–Nordström and Kerr–Newman (Newman et al. 1965, J. Math. Phys. 6, 918) all have
/// their horizons at the roots of Δ = r² − 2r + a² + q² (Carroll 2004, *Spacetime and
/// Geometry*, ch. 6; chapter from memory).
fn closed_form_outer_horizon(a: f64, q: f64) -> Option<f64> {
    let disc = 1.0 - a * a - q * q;
    (disc >= 0.0).then(|| 1.0 + disc.sqrt())
}

fn assert_horizon(found: Option<f64>, expected: f64, label: &str) {
    let r = found.unwrap_or_else(|| panic!("{label}: no horizon found, expected {expected}"));
    assert!(
        (r - expected).abs() <= TOLERANCE,
        "{label}: r+ = {r}, closed form {expected}, difference {:e}",
        r - expected
    );
}

/// Sub-extremal spins, down to 1 − a = 1e-6 (where r₊ − r₋ ≈ 2.8e-3).
const SPINS: [f64; 10] = [
    0.0, 0.1, -0.3, 0.5, 0.7, -0.9, 0.99, 0.9999, 0.999999, -0.999999,
];

#[test]
fn schwarzschild_horizon_is_at_two() {
    // r = 2M (Schwarzschild 1916).
    assert_eq!(Schwarzschild.outer_horizon(), Some(2.0));
    assert_horizon(
        numerical_outer_horizon(&Schwarzschild),
        2.0,
        "Schwarzschild numerical",
    );
}

#[test]
fn kerr_horizons_match_the_closed_form() {
    for &a in &SPINS {
        let m = Kerr::new(a).unwrap();
        let expected = closed_form_outer_horizon(a, 0.0).unwrap();
        assert_horizon(m.outer_horizon(), expected, &format!("Kerr a = {a}"));
        assert_horizon(
            numerical_outer_horizon(&m),
            expected,
            &format!("Kerr a = {a}, numerical"),
        );
        assert_eq!(
            m.classify(),
            Classification::BlackHole {
                outer_horizon: expected
            }
        );
    }
}

#[test]
fn reissner_nordstrom_horizons_match_the_closed_form() {
    for &q in &[0.0, 0.2, -0.6, 0.9, 0.999, 0.999999, -0.999999] {
        let m = ReissnerNordstrom::new(q).unwrap();
        let expected = closed_form_outer_horizon(0.0, q).unwrap();
        let label = format!("Reissner-Nordström q = {q}");
        assert_horizon(m.outer_horizon(), expected, &label);
        assert_horizon(
            numerical_outer_horizon(&m),
            expected,
            &format!("{label}, numerical"),
        );
    }
}

#[test]
fn kerr_newman_horizons_match_the_closed_form() {
    let cases = [
        (0.0, 0.0),
        (0.5, 0.5),
        (-0.3, 0.8),
        (0.9, 0.3),
        (0.6, -0.799999),
        // Near-extremal: 1 − a² − q² = 2e-6, as for a = 0.999999 in Kerr.
        (0.7, (0.51f64 - 2e-6).sqrt()),
    ];
    for &(a, q) in &cases {
        let m = KerrNewman::new(a, q).unwrap();
        let expected = closed_form_outer_horizon(a, q).unwrap();
        let label = format!("Kerr-Newman a = {a}, q = {q}");
        assert_horizon(m.outer_horizon(), expected, &label);
        assert_horizon(
            numerical_outer_horizon(&m),
            expected,
            &format!("{label}, numerical"),
        );
    }
}

#[test]
fn overspun_and_overcharged_metrics_have_no_horizon() {
    for &a in &[1.000001, 1.01, 1.5, -2.0, 10.0] {
        let m = Kerr::new(a).unwrap();
        assert_eq!(m.outer_horizon(), None, "Kerr a = {a}");
        assert_eq!(numerical_outer_horizon(&m), None, "Kerr a = {a}, numerical");
        assert_eq!(m.classify(), Classification::Horizonless, "Kerr a = {a}");
    }
    for &q in &[1.000001, 1.2, -3.0] {
        let m = ReissnerNordstrom::new(q).unwrap();
        assert_eq!(m.outer_horizon(), None, "RN q = {q}");
        assert_eq!(numerical_outer_horizon(&m), None, "RN q = {q}, numerical");
        assert_eq!(m.classify(), Classification::Horizonless, "RN q = {q}");
    }
    for &(a, q) in &[(0.8, 0.6001), (0.5, 0.9), (1.0, 0.1), (0.0, 1.1)] {
        let m = KerrNewman::new(a, q).unwrap();
        assert_eq!(m.outer_horizon(), None, "KN a = {a}, q = {q}");
        assert_eq!(
            numerical_outer_horizon(&m),
            None,
            "KN numerical a = {a}, q = {q}"
        );
        assert_eq!(
            m.classify(),
            Classification::Horizonless,
            "KN a = {a}, q = {q}"
        );
    }
}

#[test]
fn registry_metrics_classify_like_their_types() {
    let boxed = build_metric("kerr-newman", &[("a".into(), 0.6), ("q".into(), 0.3)]).unwrap();
    let expected = closed_form_outer_horizon(0.6, 0.3).unwrap();
    assert_horizon(boxed.outer_horizon(), expected, "boxed Kerr-Newman");
    let naked = build_metric("kerr", &[("a".into(), 1.2)]).unwrap();
    assert_eq!(naked.classify(), Classification::Horizonless);
}

/// A user's Kerr–Newman written through the trait alone, with no horizon override, so the
/// default numerical finder is used. Components as in Newman et al. 1965 (see
/// `kerr_newman_horizons_match_the_closed_form`).
struct UserKerrNewman {
    a: f64,
    q: f64,
}

impl Declared for UserKerrNewman {}

impl Metric for UserKerrNewman {
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        let (a, q2) = (self.a, self.q * self.q);
        let (s, c) = theta.sin_cos();
        let s2 = s * s;
        let sigma = r * r + c * c * (a * a);
        let delta = r * r - r * 2.0 + (a * a + q2);
        let w = (r * 2.0 - q2) / sigma;
        MetricComponents {
            g_tt: w - 1.0,
            g_tphi: -(w * s2) * a,
            g_rr: sigma / delta,
            g_thth: sigma,
            g_phph: (r * r + a * a + w * s2 * (a * a)) * s2,
        }
    }
}

/// A user's static metric with no closed-form horizon known to the library: A = 1/B with
/// A = 1 − 2/r + k/r³, whose outer horizon is the largest root of r³ − 2r² + k = 0.
struct UserCubic {
    k: f64,
}

impl Declared for UserCubic {}

impl SphericalMetric for UserCubic {
    fn a<D: DualScalar>(&self, r: D) -> D {
        -(r.recip() * 2.0) + 1.0 + r.powi(3).recip() * self.k
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        self.a(r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r
    }
}

/// Minkowski space in spherical coordinates: no horizon anywhere.
struct UserFlat;

impl Declared for UserFlat {}

impl Metric for UserFlat {
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        let s = theta.sin();
        MetricComponents {
            g_tt: D::from(-1.0),
            g_tphi: D::from(0.0),
            g_rr: D::from(1.0),
            g_thth: r * r,
            g_phph: r * r * s * s,
        }
    }
}

#[test]
fn user_metrics_use_the_numerical_default() {
    for &(a, q) in &[
        (0.0, 0.0),
        (0.9, 0.0),
        (0.4, 0.7),
        (0.999999, 0.0),
        (-0.5, 0.5),
    ] {
        let m = UserKerrNewman { a, q };
        let expected = closed_form_outer_horizon(a, q).unwrap();
        let label = format!("user Kerr-Newman a = {a}, q = {q}");
        assert_horizon(m.outer_horizon(), expected, &label);
        let boxed: Box<dyn Spacetime> = Box::new(UserKerrNewman { a, q });
        match boxed.classify() {
            Classification::BlackHole { outer_horizon } => {
                assert_horizon(Some(outer_horizon), expected, &format!("{label}, boxed"))
            }
            Classification::Horizonless => panic!("{label}: classified horizonless"),
        }
    }
    assert_eq!((UserKerrNewman { a: 1.1, q: 0.0 }).outer_horizon(), None);
    assert_eq!(
        (UserKerrNewman { a: 0.5, q: 0.9 }).classify(),
        Classification::Horizonless
    );
    assert_eq!(UserFlat.classify(), Classification::Horizonless);
}

#[test]
fn user_cubic_metric_horizon_is_the_largest_root() {
    for &k in &[0.0, 0.3, -0.5, 1.0] {
        let m = UserCubic { k };
        // The largest real root of r³ − 2r² + k, refined by Newton's method from r = 3
        // (the cubic is convex and increasing beyond its largest root for these k).
        let mut r: f64 = 3.0;
        for _ in 0..100 {
            r -= (r * r * r - 2.0 * r * r + k) / (3.0 * r * r - 4.0 * r);
        }
        assert!((r * r * r - 2.0 * r * r + k).abs() < 1e-13);
        assert_horizon(m.outer_horizon(), r, &format!("user cubic k = {k}"));
    }
    // k > 32/27: the local minimum of r³ − 2r² + k at r = 4/3 is positive, no horizon.
    assert_eq!((UserCubic { k: 1.3 }).outer_horizon(), None);
}

/// Extremal black holes, r₊ = r₋ = 1, with parameters for which 1 − a² − q² is exactly 0 in
/// floating point, so the closed form is exactly 1. The degenerate root of g^rr must be found
/// by the default numerical finder too.
#[test]
fn extremal_horizons_from_the_numerical_finder() {
    let extremal: Vec<(&str, Box<dyn Spacetime>)> = vec![
        ("Kerr a = 1", Box::new(Kerr::new(1.0).unwrap())),
        ("Kerr a = -1", Box::new(Kerr::new(-1.0).unwrap())),
        (
            "Reissner-Nordström q = 1",
            Box::new(ReissnerNordstrom::new(1.0).unwrap()),
        ),
        (
            "Kerr-Newman a = 0.28, q = 0.96",
            Box::new(KerrNewman::new(0.28, 0.96).unwrap()),
        ),
        (
            "Kerr-Newman a = 0.3, q = √0.91",
            Box::new(KerrNewman::new(0.3, 0.91f64.sqrt()).unwrap()),
        ),
    ];
    for (label, m) in &extremal {
        // The closed-form override.
        assert_horizon(m.outer_horizon(), 1.0, label);
    }
    // The numerical default, on the same metrics.
    assert_horizon(
        numerical_outer_horizon(&Kerr::new(1.0).unwrap()),
        1.0,
        "extremal Kerr, numerical",
    );
    assert_horizon(
        numerical_outer_horizon(&Kerr::new(-1.0).unwrap()),
        1.0,
        "extremal Kerr a = -1, numerical",
    );
    assert_horizon(
        numerical_outer_horizon(&ReissnerNordstrom::new(1.0).unwrap()),
        1.0,
        "extremal Reissner-Nordström, numerical",
    );
    assert_horizon(
        numerical_outer_horizon(&KerrNewman::new(0.28, 0.96).unwrap()),
        1.0,
        "extremal Kerr-Newman, numerical",
    );
    assert_horizon(
        (UserKerrNewman {
            a: 0.3,
            q: 0.91f64.sqrt(),
        })
        .outer_horizon(),
        1.0,
        "extremal user Kerr-Newman (numerical default)",
    );
}

/// Exactly extremal parameters whose squares round: 0.8² + 0.6² = 1 in exact arithmetic, so
/// r₊ = 1 (Newman et al. 1965), although 1 − 0.64 − 0.36 is −1.1e-16 in floating point.
#[test]
fn rounded_extremal_parameters_keep_their_degenerate_horizon() {
    let m = umbral::metrics::KerrNewman::new(0.8, 0.6).unwrap();
    assert_eq!(m.outer_horizon(), Some(1.0));
}
