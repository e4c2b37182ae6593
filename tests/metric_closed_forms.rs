//! Christoffel symbols of the built-in metrics against their textbook closed forms.
//!
//! Every one of the 64 entries Γ^μ_{αβ} is compared, at many points: the nonzero ones to
//! 1e-12 relative, the ones that vanish identically to an absolute floor (1e-12 times the
//! largest |Γ| at that point). Units G = c = M = 1, coordinates (t, r, θ, φ).
//!
//! The floor also serves one nonzero Kerr entry: Γ^t_θφ = 2ra³ sin³θ cosθ/Σ² is obtained by
//! the generic contraction ½ g^{tν}(…) as the difference of two O(sin θ) terms, so near the
//! axis (θ = 0.01) its error is ~1e-16 of those terms, not of itself: up to 3e-6 relative
//! there, far below the floor. Every other nonzero entry meets 1e-12 relative everywhere.

use umbral::metric::{Christoffel, Spacetime};
use umbral::metrics::{Kerr, ReissnerNordstrom, Schwarzschild};

/// Relative tolerance of every comparison.
const RELATIVE: f64 = 1e-12;

const T: usize = 0;
const R: usize = 1;
const TH: usize = 2;
const PH: usize = 3;

/// A tensor with Γ^μ_{αβ} = Γ^μ_{βα} filled from its independent entries.
fn symmetric(entries: &[(usize, usize, usize, f64)]) -> Christoffel {
    let mut gamma = [[[0.0; 4]; 4]; 4];
    for &(mu, alpha, beta, value) in entries {
        gamma[mu][alpha][beta] = value;
        gamma[mu][beta][alpha] = value;
    }
    gamma
}

/// Schwarzschild, from Carroll 2004, *Spacetime and Geometry* (Addison-Wesley), ch. 5 (the
/// Christoffel symbols of the Schwarzschild metric), with G M = 1; the same list is in
/// Misner, Thorne & Wheeler 1973, *Gravitation*, ch. 31.
fn schwarzschild_closed_form(r: f64, theta: f64) -> Christoffel {
    let (s, c) = theta.sin_cos();
    let f = r - 2.0;
    symmetric(&[
        (T, T, R, 1.0 / (r * f)),
        (R, T, T, f / (r * r * r)),
        (R, R, R, -1.0 / (r * f)),
        (R, TH, TH, -f),
        (R, PH, PH, -f * s * s),
        (TH, R, TH, 1.0 / r),
        (TH, PH, PH, -s * c),
        (PH, R, PH, 1.0 / r),
        (PH, TH, PH, c / s),
    ])
}

/// Reissner–Nordström, A = 1/B = 1 − 2/r + q²/r², C = r², from the general static spherical
/// Christoffel symbols of ds² = −e^{2α}dt² + e^{2β}dr² + r²dΩ² in Carroll 2004, *Spacetime
/// and Geometry*, ch. 5 (Γ^t_tr = ∂_rα, Γ^r_tt = e^{2(α−β)}∂_rα, Γ^r_rr = ∂_rβ,
/// Γ^r_θθ = −r e^{−2β}, Γ^r_φφ = −r e^{−2β} sin²θ, and the angular ones as in
/// Schwarzschild). Here e^{2α} = e^{−2β} = A, so ∂_rα = −∂_rβ = A′/(2A).
fn reissner_nordstrom_closed_form(q: f64, r: f64, theta: f64) -> Christoffel {
    let (s, c) = theta.sin_cos();
    let a = 1.0 - 2.0 / r + q * q / (r * r);
    let da = 2.0 / (r * r) - 2.0 * q * q / (r * r * r);
    symmetric(&[
        (T, T, R, da / (2.0 * a)),
        (R, T, T, a * da / 2.0),
        (R, R, R, -da / (2.0 * a)),
        (R, TH, TH, -r * a),
        (R, PH, PH, -r * a * s * s),
        (TH, R, TH, 1.0 / r),
        (TH, PH, PH, -s * c),
        (PH, R, PH, 1.0 / r),
        (PH, TH, PH, c / s),
    ])
}

/// Kerr in Boyer–Lindquist coordinates, M = 1: the 20 independent nonzero symbols in the form
/// listed by Müller & Grave 2009, "Catalogue of Spacetimes" (arXiv:0904.4184), Kerr section
/// (equivalently Chandrasekhar 1983, *The Mathematical Theory of Black Holes*, ch. 6).
/// Written from memory; before use each of the 20 was checked against an independent
/// symbolic computation of Γ from the Boyer–Lindquist line element (sympy), and all 20
/// agreed identically, as did the vanishing of the other 20 independent entries.
///
/// Σ = r² + a²cos²θ, Δ = r² − 2r + a², 𝒜 = (r² + a²)² − a²Δ sin²θ.
fn kerr_closed_form(a: f64, r: f64, theta: f64) -> Christoffel {
    let (s, c) = theta.sin_cos();
    let (s2, c2, a2, r2) = (s * s, c * c, a * a, r * r);
    let sigma = r2 + a2 * c2;
    let delta = r2 - 2.0 * r + a2;
    let big_a = (r2 + a2) * (r2 + a2) - a2 * delta * s2;
    let sg2 = sigma * sigma;
    let sg3 = sg2 * sigma;
    let m = r2 - a2 * c2; // r² − a²cos²θ
    let cot = c / s;
    symmetric(&[
        (T, T, R, (r2 + a2) * m / (sg2 * delta)),
        (T, T, TH, -2.0 * r * a2 * s * c / sg2),
        (
            T,
            R,
            PH,
            a * s2 * (a2 * c2 * (a2 - r2) - r2 * (a2 + 3.0 * r2)) / (sg2 * delta),
        ),
        (T, TH, PH, 2.0 * r * a2 * a * s2 * s * c / sg2),
        (R, T, T, delta * m / sg3),
        (R, T, PH, -delta * a * s2 * m / sg3),
        (R, R, R, (r * a2 * s2 - m) / (sigma * delta)),
        (R, R, TH, -a2 * s * c / sigma),
        (R, TH, TH, -r * delta / sigma),
        (R, PH, PH, delta * s2 / sg3 * (-r * sg2 + a2 * s2 * m)),
        (TH, T, T, -2.0 * r * a2 * s * c / sg3),
        (TH, T, PH, 2.0 * r * a * (r2 + a2) * s * c / sg3),
        (TH, R, R, a2 * s * c / (sigma * delta)),
        (TH, R, TH, r / sigma),
        (TH, TH, TH, -a2 * s * c / sigma),
        (
            TH,
            PH,
            PH,
            -s * c / sg3 * (big_a * sigma + (r2 + a2) * 2.0 * r * a2 * s2),
        ),
        (PH, T, R, a * m / (sg2 * delta)),
        (PH, T, TH, -2.0 * a * r * cot / sg2),
        (
            PH,
            R,
            PH,
            (r * sg2 + (a2 * a2 * s2 * c2 - r2 * (sigma + r2 + a2))) / (sg2 * delta),
        ),
        (PH, TH, PH, cot / sg2 * (sg2 + 2.0 * r * a2 * s2)),
    ])
}

/// Compare all 64 entries; returns the number of entries that are nonzero in the closed form.
fn assert_matches(computed: &Christoffel, expected: &Christoffel, label: &str) -> usize {
    assert_matches_worst(computed, expected, label).0
}

/// As [`assert_matches`], also returning the worst relative error over the nonzero entries
/// other than Γ^t_θφ (see the module documentation).
fn assert_matches_worst(
    computed: &Christoffel,
    expected: &Christoffel,
    label: &str,
) -> (usize, f64) {
    let largest = expected
        .iter()
        .flatten()
        .flatten()
        .fold(0.0f64, |m, x| m.max(x.abs()));
    let floor = RELATIVE * largest;
    let mut nonzero = 0;
    let mut worst = 0.0f64;
    for mu in 0..4 {
        for alpha in 0..4 {
            for beta in 0..4 {
                let (x, y) = (computed[mu][alpha][beta], expected[mu][alpha][beta]);
                assert!(
                    x.is_finite(),
                    "{label}: Γ^{mu}_{alpha}{beta} = {x} is not finite"
                );
                if y == 0.0 {
                    assert!(
                        x.abs() <= floor,
                        "{label}: Γ^{mu}_{alpha}{beta} = {x:e} should vanish (floor {floor:e})"
                    );
                } else {
                    nonzero += 1;
                    let err = (x - y).abs();
                    let cancelling = mu == T && alpha + beta == TH + PH && alpha != beta;
                    if !cancelling {
                        worst = worst.max(err / y.abs());
                    }
                    assert!(
                        err <= RELATIVE * y.abs() || err <= floor,
                        "{label}: Γ^{mu}_{alpha}{beta} = {x:e}, closed form {y:e}, \
                         relative error {:e}",
                        err / y.abs()
                    );
                }
            }
        }
    }
    (nonzero, worst)
}

/// Polar angles from near the axis through the equator to near the other pole.
const THETAS: [f64; 9] = [0.01, 0.2, 0.7, 1.2, 1.5, 1.6, 2.1, 2.9, 3.13];

#[test]
fn schwarzschild_christoffels_match_carroll() {
    let m = Schwarzschild;
    let mut points = 0;
    for &r in &[2.05, 2.5, 3.0, 4.7, 6.0, 10.0, 33.0, 250.0] {
        for &theta in &THETAS {
            let nonzero = assert_matches(
                &m.christoffel(r, theta),
                &schwarzschild_closed_form(r, theta),
                &format!("Schwarzschild r = {r}, θ = {theta}"),
            );
            // Nine independent entries, 13 with their symmetric partners.
            assert_eq!(nonzero, 13);
            points += 1;
        }
    }
    assert_eq!(points, 72);
}

#[test]
fn schwarzschild_equator_has_no_theta_phi_phi() {
    // Γ^θ_φφ = −sinθ cosθ vanishes on the equator (Carroll 2004, ch. 5).
    let gamma = Schwarzschild.christoffel(7.0, std::f64::consts::FRAC_PI_2);
    assert!(gamma[TH][PH][PH].abs() < 1e-15);
    assert!((gamma[R][PH][PH] + 5.0).abs() < 1e-13); // −(r − 2) sin²θ = −5
}

#[test]
fn reissner_nordstrom_christoffels_match_the_static_spherical_forms() {
    for &q in &[0.0, 0.3, 0.8, 0.999, 1.0, 1.3] {
        let m = ReissnerNordstrom::new(q).unwrap();
        let r_plus = 1.0 + (1.0 - q * q).max(0.0).sqrt();
        for &dr in &[0.05, 0.4, 1.5, 4.0, 20.0, 90.0] {
            let r = r_plus + dr;
            for &theta in &THETAS {
                assert_matches(
                    &m.christoffel(r, theta),
                    &reissner_nordstrom_closed_form(q, r, theta),
                    &format!("Reissner-Nordström q = {q}, r = {r}, θ = {theta}"),
                );
            }
        }
    }
}

#[test]
fn kerr_christoffels_match_the_catalogue_forms() {
    let spins = [
        -0.999, -0.7, -0.2, 0.0, 0.1, 0.5, 0.9, 0.99, 0.999999, 1.0, 1.4,
    ];
    let mut points = 0;
    let mut worst = 0.0f64;
    for &a in &spins {
        let m = Kerr::new(a).unwrap();
        // Outside the outer horizon; for |a| > 1 (no horizon) from r = 0.5 outwards.
        let r_start = m.outer_horizon().unwrap_or(0.45);
        for &dr in &[0.05, 0.3, 1.0, 2.0, 4.5, 9.0, 30.0, 120.0] {
            let r = r_start + dr;
            for &theta in &THETAS {
                let (nonzero, w) = assert_matches_worst(
                    &m.christoffel(r, theta),
                    &kerr_closed_form(a, r, theta),
                    &format!("Kerr a = {a}, r = {r}, θ = {theta}"),
                );
                worst = worst.max(w);
                if a != 0.0 {
                    // 20 independent nonzero entries (8 with α = β): 32 with their symmetric partners.
                    assert_eq!(nonzero, 32, "a = {a}, r = {r}, θ = {theta}");
                }
                points += 1;
            }
        }
    }
    assert_eq!(points, spins.len() * 8 * THETAS.len());
    // Every nonzero entry but Γ^t_θφ meets the relative tolerance without the floor.
    assert!(worst <= RELATIVE, "worst relative error {worst:e}");
    println!("Kerr: {points} points, worst relative error {worst:e}");
}

#[test]
fn kerr_closed_forms_reduce_to_schwarzschild() {
    // Consistency of the two textbook lists themselves (Carroll 2004 vs Müller & Grave 2009):
    // with a = 0 every Kerr entry equals the Schwarzschild one.
    for &r in &[2.2, 5.0, 40.0] {
        for &theta in &THETAS {
            assert_matches(
                &kerr_closed_form(0.0, r, theta),
                &schwarzschild_closed_form(r, theta),
                &format!("closed forms a = 0, r = {r}, θ = {theta}"),
            );
        }
    }
}

#[test]
fn christoffels_through_a_trait_object_match_too() {
    // The registry's boxed metric goes through the same dual-number path.
    let m = umbral::metrics::build_metric("kerr", &[("a".to_string(), 0.8)]).unwrap();
    let (r, theta) = (4.0, 0.9);
    assert_matches(
        &m.christoffel(r, theta),
        &kerr_closed_form(0.8, r, theta),
        "boxed Kerr a = 0.8",
    );
}
