//! Observables of critical curves, against closed forms and independent quadratures.

mod common;

use proptest::prelude::*;
use std::f64::consts::{PI, TAU};
use umbral::observables::{
    radii_about, CentreChoice, Observables, ObservablesError, ReferenceSide,
};
use umbral::shadow::CriticalCurve;

fn observe(curve: &CriticalCurve, centre: CentreChoice) -> Observables {
    Observables::from_curve(curve, centre, None, None).unwrap()
}

/// Complete elliptic integral of the first kind K(m) = π/(2 AGM(1, √(1 − m)))
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

#[test]
fn circle_has_no_circularity_deviation_and_exact_offsets() {
    // A circle of radius R about (α₀, β₀): R̄ = √(A/π) = R, ΔC = 0, centroid = midpoint = (α₀, β₀),
    // Hioki–Maeda R_s = R, δ_s = 0 (elementary geometry).
    let (radius, origin) = (5.3, [0.75, -0.25]);
    for centre in [CentreChoice::Centroid, CentreChoice::Midpoint] {
        let obs = observe(&CriticalCurve::circle(origin, radius, 128), centre);
        assert_eq!(obs.centre, centre);
        assert!(
            obs.circularity_deviation < 1e-14,
            "{}",
            obs.circularity_deviation
        );
        assert!((obs.mean_radius - radius).abs() < 1e-13);
        assert!((obs.area_radius - radius).abs() < 1e-13);
        assert!((obs.centroid_offset - origin[0]).abs() < 1e-14);
        assert!((obs.centroid_offset_beta - origin[1]).abs() < 1e-14);
        assert!((obs.midpoint_offset - origin[0]).abs() < 1e-14);
        assert!((obs.midpoint_offset_beta - origin[1]).abs() < 1e-14);
        assert!((obs.width - 2.0 * radius).abs() < 1e-13);
        assert!((obs.height - 2.0 * radius).abs() < 1e-13);
        assert!((obs.axis_ratio - 1.0).abs() < 1e-14);
        assert!((obs.hioki_maeda_radius - radius).abs() < 1e-12);
        assert!(obs.hioki_maeda_distortion.abs() < 1e-13);
        let expected = radius / 27f64.sqrt() - 1.0; // δ = R/(3√3) − 1 (physics notes §3)
        assert!((obs.fractional_deviation_mean - expected).abs() < 1e-14);
        assert!((obs.fractional_deviation_area - expected).abs() < 1e-14);
    }
}

#[test]
fn off_centre_circle_is_recentred_exactly() {
    // A circle of radius ρ centred at (x₀, 0) sampled about the screen origin:
    // R(ψ) = x₀ cos ψ + √(ρ² − x₀² sin²ψ) (elementary geometry). About its centroid it is
    // again a circle: R̄ = ρ, ΔC = 0, offsets x₀.
    let (rho, x0) = (5.0, 1.2);
    let curve = CriticalCurve::from_polar([0.0, 0.0], 128, |p| {
        x0 * p.cos() + (rho * rho - x0 * x0 * p.sin().powi(2)).sqrt()
    });
    let obs = observe(&curve, CentreChoice::Centroid);
    assert!(
        (obs.centroid_offset - x0).abs() < 1e-13,
        "{}",
        obs.centroid_offset
    );
    assert!(obs.centroid_offset_beta.abs() < 1e-13);
    assert!((obs.midpoint_offset - x0).abs() < 1e-13);
    assert!((obs.mean_radius - rho).abs() < 1e-12);
    assert!(obs.circularity_deviation < 1e-12);
    assert!((obs.width - 2.0 * rho).abs() < 1e-12 && (obs.height - 2.0 * rho).abs() < 1e-12);
}

#[test]
fn four_to_three_ellipse_circularity() {
    // Ellipse with semi-axes a = 4 (α), b = 3 (β) about its centre: R(φ) = ab/√(b²cos²φ + a²sin²φ).
    // (1/2π)∮R dφ = (2b/π) K(1 − b²/a²) (standard integral, cf. Abramowitz & Stegun 1964,
    // 17.2 and 17.3) and (1/2π)∮R² dφ = ab, so ΔC = √(ab/R̄² − 1). The physics notes recall
    // "about 0.10" for a 4:3 ellipse.
    let (a, b) = (4.0f64, 3.0f64);
    let ellipse = |p: f64| a * b / ((b * p.cos()).powi(2) + (a * p.sin()).powi(2)).sqrt();
    let mean = 2.0 * b / PI * elliptic_k(1.0 - b * b / (a * a));
    let exact = (a * b / (mean * mean) - 1.0).sqrt();
    // Independent check of the closed form by a brute-force midpoint rule on the formula.
    let m = 20000;
    let (mut s1, mut s2) = (0.0, 0.0);
    for j in 0..m {
        let r = ellipse(TAU * (j as f64 + 0.5) / m as f64);
        s1 += r;
        s2 += r * r;
    }
    let (mean_q, second_q) = (s1 / m as f64, s2 / m as f64);
    assert!((mean_q - mean).abs() < 1e-12 && (second_q - a * b).abs() < 1e-11);
    assert!((exact - 0.10).abs() < 0.01, "exact DeltaC = {exact}");
    // The same closed form evaluated by mpmath (30 digits: ellipk(7/16), then √(ab/R̄² − 1)):
    // ΔC = 0.101864591056800003393...
    assert!((exact - 0.101_864_591_056_8).abs() < 1e-14, "{exact}");

    // Sampled about a shifted origin, so the centroid has to be found and re-centred on.
    let shift = [0.6, -0.4];
    let curve = CriticalCurve::from_polar(shift, 256, ellipse);
    let obs = observe(&curve, CentreChoice::Centroid);
    assert!(
        (obs.circularity_deviation - exact).abs() < 1e-12,
        "{} vs {exact}",
        obs.circularity_deviation
    );
    assert!((obs.mean_radius - mean).abs() < 1e-12);
    assert!((obs.area_radius - (a * b).sqrt()).abs() < 1e-12);
    assert!((obs.centroid_offset - shift[0]).abs() < 1e-13);
    assert!((obs.centroid_offset_beta - shift[1]).abs() < 1e-13);
    assert!((obs.width - 2.0 * a).abs() < 1e-12 && (obs.height - 2.0 * b).abs() < 1e-12);
    assert!((obs.axis_ratio - 0.75).abs() < 1e-13);
    // The midpoint of a centrally symmetric curve is its centroid.
    let mid = observe(&curve, CentreChoice::Midpoint);
    assert!((mid.centre_alpha - shift[0]).abs() < 1e-12);
    assert!((mid.circularity_deviation - exact).abs() < 1e-12);
}

fn smooth_radius(p: f64) -> f64 {
    5.0 + 0.3 * p.cos() + 0.1 * (2.0 * p).cos() + 0.05 * (3.0 * p).sin()
}

#[test]
fn sixty_four_points_match_four_thousand_ninety_six() {
    // Spectral convergence (common practice, no source): a band-limited curve about an offset
    // origin gives the same observables at N = 64 and N = 4096 to 1e-9 relative.
    let origin = [0.4, 0.1];
    for centre in [CentreChoice::Centroid, CentreChoice::Midpoint] {
        let coarse = observe(
            &CriticalCurve::from_polar(origin, 64, smooth_radius),
            centre,
        );
        let fine = observe(
            &CriticalCurve::from_polar(origin, 4096, smooth_radius),
            centre,
        );
        let pairs = [
            ("mean_radius", coarse.mean_radius, fine.mean_radius),
            ("area_radius", coarse.area_radius, fine.area_radius),
            (
                "circularity",
                coarse.circularity_deviation,
                fine.circularity_deviation,
            ),
            ("centroid", coarse.centroid_offset, fine.centroid_offset),
            (
                "centroid_beta",
                coarse.centroid_offset_beta,
                fine.centroid_offset_beta,
            ),
            ("midpoint", coarse.midpoint_offset, fine.midpoint_offset),
            (
                "midpoint_beta",
                coarse.midpoint_offset_beta,
                fine.midpoint_offset_beta,
            ),
            ("width", coarse.width, fine.width),
            ("height", coarse.height, fine.height),
            (
                "hm_radius",
                coarse.hioki_maeda_radius,
                fine.hioki_maeda_radius,
            ),
            (
                "hm_distortion",
                coarse.hioki_maeda_distortion,
                fine.hioki_maeda_distortion,
            ),
        ];
        for (name, x, y) in pairs {
            assert!(
                (x - y).abs() <= 1e-9 * y.abs().max(1e-3),
                "{name}: {x} vs {y}"
            );
        }
        assert!(coarse.circularity_deviation > 0.01);
    }
}

#[test]
fn extremes_come_from_the_interpolant_not_the_samples() {
    // α_max of R(ψ) = 5 + 0.3 cos ψ + 0.1 cos 2ψ + 0.05 sin 3ψ about (0.4, 0.1): maximise
    // α(ψ) = 0.4 + R(ψ) cos ψ by a fine independent scan with golden-section refinement.
    let alpha = |p: f64| 0.4 + smooth_radius(p) * p.cos();
    let (mut lo, mut hi) = (-0.5f64, 0.5f64);
    let g = (5f64.sqrt() - 1.0) / 2.0;
    for _ in 0..200 {
        let (x1, x2) = (hi - g * (hi - lo), lo + g * (hi - lo));
        if alpha(x1) > alpha(x2) {
            hi = x2;
        } else {
            lo = x1;
        }
    }
    let expected = alpha(0.5 * (lo + hi));
    // 12 samples: the sampled maximum is off by far more than the interpolated one.
    let curve = CriticalCurve::from_polar([0.4, 0.1], 12, smooth_radius);
    let obs = observe(&curve, CentreChoice::Centroid);
    assert!(
        (obs.alpha_max - expected).abs() < 1e-13,
        "{} vs {expected}",
        obs.alpha_max
    );
}

#[test]
fn hioki_maeda_on_a_circle_with_a_flattened_chord() {
    // Circle of radius ρ = 5 about the origin, cut by the chord α = −c, c = 3. By hand: top
    // (0, 5), bottom (0, −5), right edge (5, 0) → reference circle = the original circle,
    // R_s = [(α_t − α_r)² + β_t²]/(2|α_r − α_t|) = 50/10 = 5 (Hioki & Maeda 2009, Phys. Rev. D
    // 80, 024042); D = 5 − 3 = 2, δ_s = 2/5 = 0.4. The kinks at the chord's ends limit the
    // interpolant to algebraic convergence, hence the looser tolerances.
    let (rho, c) = (5.0, 3.0);
    let curve = CriticalCurve::from_polar([0.0, 0.0], 2048, |p: f64| {
        if p.cos() < -c / rho {
            -c / p.cos()
        } else {
            rho
        }
    });
    let obs = observe(&curve, CentreChoice::Centroid);
    assert_eq!(obs.hioki_maeda_reference_side, ReferenceSide::PositiveAlpha);
    assert!(
        (obs.hioki_maeda_radius - 5.0).abs() < 1e-5,
        "{}",
        obs.hioki_maeda_radius
    );
    assert!(
        (obs.hioki_maeda_distortion - 0.4).abs() < 1e-5,
        "{}",
        obs.hioki_maeda_distortion
    );
    assert!((obs.alpha_min + 3.0).abs() < 1e-5);
    // Mirror image: the reference side flips, the numbers do not.
    let mirrored = CriticalCurve::from_polar([0.0, 0.0], 2048, |p: f64| {
        if p.cos() > c / rho {
            c / p.cos()
        } else {
            rho
        }
    });
    let m = observe(&mirrored, CentreChoice::Centroid);
    assert_eq!(m.hioki_maeda_reference_side, ReferenceSide::NegativeAlpha);
    assert!((m.hioki_maeda_distortion - obs.hioki_maeda_distortion).abs() < 1e-9);
}

#[test]
fn hioki_maeda_radius_matches_the_symmetric_formula() {
    // For a curve symmetric about β = 0, R_s = [(α_t − α_r)² + β_t²]/(2|α_r − α_t|)
    // (Hioki & Maeda 2009), with the top point (α_t, β_t) and the retrograde edge α_r.
    let curve = CriticalCurve::from_polar([0.3, 0.0], 128, |p: f64| {
        5.0 + 0.2 * p.cos() - 0.15 * (2.0 * p).cos() + 0.04 * (3.0 * p).cos()
    });
    let obs = observe(&curve, CentreChoice::Centroid);
    let r = |p: f64| 5.0 + 0.2 * p.cos() - 0.15 * (2.0 * p).cos() + 0.04 * (3.0 * p).cos();
    // Top point: root of dβ/dψ = R′ sin ψ + R cos ψ near π/2, by Brent's method.
    let dr = |p: f64| -0.2 * p.sin() + 0.3 * (2.0 * p).sin() - 0.12 * (3.0 * p).sin();
    let beta = |p: f64| r(p) * p.sin();
    let p_top = common::brent_root(|p| dr(p) * p.sin() + r(p) * p.cos(), 1.0, 2.2, 0.0).unwrap();
    let (alpha_t, beta_t) = (0.3 + r(p_top) * p_top.cos(), beta(p_top));
    let (alpha_plus, alpha_minus) = (0.3 + r(0.0), 0.3 - r(PI));
    let alpha_r = if (alpha_plus - alpha_t).abs() >= (alpha_minus - alpha_t).abs() {
        alpha_plus
    } else {
        alpha_minus
    };
    let expected =
        ((alpha_t - alpha_r).powi(2) + beta_t * beta_t) / (2.0 * (alpha_r - alpha_t).abs());
    assert!(
        (obs.hioki_maeda_radius - expected).abs() < 1e-11,
        "{} vs {expected}",
        obs.hioki_maeda_radius
    );
}

#[test]
fn bad_curves_are_refused() {
    let few = CriticalCurve::circle([0.0, 0.0], 1.0, 3);
    assert!(matches!(
        Observables::from_curve(&few, CentreChoice::Centroid, None, None),
        Err(ObservablesError::BadCurve(_))
    ));
    let mut nan = CriticalCurve::circle([0.0, 0.0], 1.0, 16);
    nan.radii[3] = f64::NAN;
    assert!(matches!(
        Observables::from_curve(&nan, CentreChoice::Midpoint, None, None),
        Err(ObservablesError::BadCurve(_))
    ));
    let circle = CriticalCurve::circle([0.0, 0.0], 1.0, 16);
    assert!(matches!(
        radii_about(&circle, [3.0, 0.0], 8),
        Err(ObservablesError::NotStarShaped { .. })
    ));
    let obs = Observables::from_curve(&circle, CentreChoice::Centroid, Some(2.0), Some([3.0, 3.0]))
        .unwrap();
    assert_eq!(obs.horizon_radius, Some(2.0));
    assert_eq!(obs.photon_orbit_radii, Some([3.0, 3.0]));
}

/// A random smooth star-shaped curve: R = r0 + Σ_{m=1}^{4} (c_m cos mψ + s_m sin mψ).
fn random_curve(r0: f64, coeffs: &[f64], origin: [f64; 2], n: usize) -> CriticalCurve {
    CriticalCurve::from_polar(origin, n, |p| {
        r0 + (1..=4)
            .map(|m| {
                let mf = m as f64;
                r0 * (coeffs[2 * m - 2] * (mf * p).cos() + coeffs[2 * m - 1] * (mf * p).sin())
            })
            .sum::<f64>()
    })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    #[test]
    fn observables_are_consistent_and_reflection_invariant(
        r0 in 3.0f64..8.0,
        coeffs in proptest::collection::vec(-0.03f64..0.03, 8),
        ox in -2.0f64..2.0,
        oy in -2.0f64..2.0,
        centroid in proptest::bool::ANY,
    ) {
        let n = 64;
        let centre = if centroid { CentreChoice::Centroid } else { CentreChoice::Midpoint };
        let curve = random_curve(r0, &coeffs, [ox, oy], n);
        let obs = observe(&curve, centre);
        prop_assert!(obs.circularity_deviation >= 0.0);
        let radii = radii_about(&curve, [obs.centre_alpha, obs.centre_beta], 256).unwrap();
        let (lo, hi) = radii.iter().fold((f64::INFINITY, 0.0f64), |(a, b), &r| (a.min(r), b.max(r)));
        prop_assert!(obs.mean_radius >= lo && obs.mean_radius <= hi);
        prop_assert!(obs.width > 0.0 && obs.height > 0.0);

        // Reflection α → −α: R′(ψ) = R(π − ψ) about (−α₀, β₀).
        let reflected = CriticalCurve {
            origin: [-ox, oy],
            radii: (0..n).map(|k| curve.radii[(n / 2 + n - k) % n]).collect(),
        };
        let r = observe(&reflected, centre);
        let same = |x: f64, y: f64| (x - y).abs() <= 1e-11 * y.abs().max(1.0);
        prop_assert!(same(r.mean_radius, obs.mean_radius));
        prop_assert!(same(r.area_radius, obs.area_radius));
        prop_assert!((r.circularity_deviation - obs.circularity_deviation).abs() < 1e-11);
        prop_assert!(same(r.width, obs.width) && same(r.height, obs.height));
        prop_assert!(same(r.hioki_maeda_radius, obs.hioki_maeda_radius));
        prop_assert!((r.hioki_maeda_distortion - obs.hioki_maeda_distortion).abs() < 1e-11);
        prop_assert!(same(r.centroid_offset, -obs.centroid_offset));
        prop_assert!(same(r.midpoint_offset, -obs.midpoint_offset));
        prop_assert!(same(r.centroid_offset_beta, obs.centroid_offset_beta));
        prop_assert!(same(r.centre_alpha, -obs.centre_alpha));
    }
}

/// Observables of the Kerr a = 0.9 curve at 60° (separable solver, curve only).
fn kerr_observables(points: usize, tolerance: f64) -> Observables {
    use umbral::metrics::Kerr;
    use umbral::shadow::{separable, Observer, ShadowSettings};
    let settings = ShadowSettings {
        points,
        tolerance,
        ..ShadowSettings::default()
    };
    let kerr = Kerr::new(0.9).unwrap();
    let r =
        separable::solve_curve(&kerr, &Observer::distant(60f64.to_radians()), &settings).unwrap();
    Observables::from_curve(&r.curve.unwrap(), CentreChoice::Centroid, None, None).unwrap()
}

/// The main observables of a coarse and a fine sampling of one curve agree to 1e-9 relative.
fn assert_converged(coarse: &Observables, fine: &Observables) {
    for (name, c, f) in [
        ("mean_radius", coarse.mean_radius, fine.mean_radius),
        ("area_radius", coarse.area_radius, fine.area_radius),
        (
            "circularity_deviation",
            coarse.circularity_deviation,
            fine.circularity_deviation,
        ),
        (
            "centroid_offset",
            coarse.centroid_offset,
            fine.centroid_offset,
        ),
        ("width", coarse.width, fine.width),
        ("height", coarse.height, fine.height),
    ] {
        assert!((c - f).abs() <= 1e-9 * f.abs(), "{name}: {c} vs {f}");
    }
}

/// Spectral convergence on a real critical curve: Kerr a = 0.9 seen at 60° (Bardeen 1973
/// curve from the separable solver). The 64-point observables match the 4096-point ones to
/// 1e-9 relative, as the trapezoid rule on a smooth periodic R(φ) promises.
#[test]
fn kerr_curve_observables_converge_spectrally() {
    let (coarse, fine) = (kerr_observables(64, 1e-11), kerr_observables(4096, 1e-11));
    assert_converged(&coarse, &fine);
}

/// The real DFT of the samples, summed directly from its definition:
/// a_m = (2/N) Σ R_k cos(2πmk/N), b_m = (2/N) Σ R_k sin(2πmk/N) (the Nyquist term halved).
fn direct_dft(radii: &[f64]) -> Vec<(f64, f64)> {
    let n = radii.len();
    (1..=n / 2)
        .map(|m| {
            let (mut a, mut b) = (0.0, 0.0);
            for (k, r) in radii.iter().enumerate() {
                let (s, c) = (TAU * ((m * k) % n) as f64 / n as f64).sin_cos();
                a += r * c;
                b += r * s;
            }
            let scale = 2.0 / n as f64;
            if 2 * m == n {
                (0.5 * a * scale, 0.0)
            } else {
                (a * scale, b * scale)
            }
        })
        .collect()
}

/// Issue 10 item 13 (work quadratic in the number of points): the interpolant's coefficients
/// now come from an FFT. They equal the DFT summed from its definition (Trefethen 2000, Spectral
/// Methods in MATLAB, ch. 3), for even and odd N.
#[test]
fn fft_coefficients_equal_the_direct_dft() {
    for n in [8usize, 64, 257, 1000] {
        let curve = CriticalCurve::from_polar([0.3, 0.0], n, smooth_radius);
        let interp = curve.interpolant();
        let want = direct_dft(&curve.radii);
        assert_eq!(interp.coefficients().len(), want.len());
        for (m, (got, want)) in interp.coefficients().iter().zip(&want).enumerate() {
            assert!(
                (got.0 - want.0).abs() < 1e-14 && (got.1 - want.1).abs() < 1e-14,
                "N = {n}, m = {}: {got:?} vs {want:?}",
                m + 1
            );
        }
    }
}

/// Issue 10 item 13: the tabulated interpolant (O(1) per point) agrees with the direct series
/// (O(N) per point) for smooth curves, a curve with sample noise at the 1e-9 level (as a
/// solver tolerance leaves) and a curve with a kink (slowly decaying spectrum), N from 8 to
/// 20 000.
#[test]
fn interpolant_table_matches_the_direct_series() {
    let kink = |p: f64| 5.0 + 0.2 * p.sin().abs();
    for (label, n, f, noise) in [
        ("smooth", 8usize, smooth_radius as fn(f64) -> f64, 0.0),
        ("smooth", 255, smooth_radius, 0.0),
        ("noisy", 4096, smooth_radius, 1e-9),
        ("kink", 1000, kink, 0.0),
        ("noisy", 20000, smooth_radius, 1e-9),
    ] {
        let mut curve = CriticalCurve::from_polar([0.0, 0.0], n, f);
        for (k, r) in curve.radii.iter_mut().enumerate() {
            // Deterministic pseudo-noise in [−noise, noise].
            *r += noise * ((k as f64 * 12.9898).sin() * 43758.5453).fract();
        }
        let interp = curve.interpolant();
        let table = interp.table();
        for j in 0..200 {
            let psi = -1.0 + 8.3 * j as f64 / 199.0; // also outside [0, 2π)
            let [r, dr, _] = interp.radius_derivatives(psi);
            let [tr, tdr] = table.radius_slope(psi);
            // With a kink the top modes (|c_m| ~ 1/m²) add up to ~1e-13 (Lagrange remainder
            // estimate, 3e-6 (mh)¹⁶ |c_m| summed): far below the interpolant's own O(1/N) error.
            let tol = if label == "kink" { 1e-12 } else { 2e-14 };
            assert!(
                (tr - r).abs() < tol * r,
                "{label} N = {n} psi = {psi}: {tr} vs {r}"
            );
            // R′ carries the factor m. With a kink, m|c_m| falls only as 1/m, and the local
            // interpolation error 3e-6 (mh)¹⁶ m|c_m| of the top modes (mh ≈ π/4), coherent
            // next to the kink, reaches ~2e-10 (measured): R′ only steers Newton's method, the
            // roots depend on R alone.
            let scale = 1.0 + n as f64 * 1e-9 + if label == "kink" { 1000.0 } else { 0.0 };
            assert!(
                (tdr - dr).abs() < 1e-12 * scale,
                "{label} N = {n} psi = {psi}: {tdr} vs {dr}"
            );
        }
    }
}

/// Issue 10 item 13, the reported case: Kerr a = 0.9 at 60° with 100 000 points (before: 310 s,
/// quadratic in the points). The observables agree with the 256-point ones to 1e-9 (spectral
/// convergence), and the 256-point ones agree to 1e-12 with the values umbral gave before the
/// FFT change (direct O(N²) DFT and O(N) series per evaluation; a baseline from umbral itself,
/// not an outside source). The speed itself is a benchmark (benches/separable.rs).
#[test]
fn kerr_a09_i60_100000_points() {
    let tolerance = umbral::shadow::ShadowSettings::default().tolerance;
    let (coarse, fine) = (
        kerr_observables(256, tolerance),
        kerr_observables(100_000, tolerance),
    );
    // Baseline of the quadratic implementation (umbral before this change, 256 points).
    let before = [
        ("mean_radius", coarse.mean_radius, 4.99945366048934),
        ("area_radius", coarse.area_radius, 5.00060876622014),
        (
            "centroid_offset",
            coarse.centroid_offset,
            1.7007904893579062,
        ),
        (
            "midpoint_offset",
            coarse.midpoint_offset,
            1.7467505024847885,
        ),
    ];
    for (name, now, then) in before {
        assert!(
            (now - then).abs() <= 1e-12 * then.abs(),
            "{name}: {now} vs {then}"
        );
    }
    assert_converged(&coarse, &fine);
}

/// Issue 10 item 13: a circle of 100 000 samples keeps every digit (compensated sums; the
/// plain sums lost 1.7e-11 at this size).
#[test]
fn circle_of_100000_points_is_exact() {
    let radius = 4.96;
    let obs = observe(
        &CriticalCurve::circle([0.0, 0.0], radius, 100_000),
        CentreChoice::Centroid,
    );
    assert!(
        (obs.mean_radius - radius).abs() < 1e-14,
        "{}",
        obs.mean_radius
    );
    assert!(
        (obs.area_radius - radius).abs() < 1e-14,
        "{}",
        obs.area_radius
    );
    assert!(obs.circularity_deviation < 1e-14);
}

/// The mean radius and circularity deviation about the centroid from the samples alone
/// (`centroid_size`, a contour integral in the sampling angle) equal the observables' (rays from
/// the centroid): on the 4:3 ellipse against its closed form (above; Abramowitz & Stegun 1964,
/// 17.3), and on Kerr curves whose centroid lies far from the origin they were sampled about
/// (a = 0.99 shifts it by about 2 M; Bardeen 1973 for the curve).
#[test]
fn centroid_size_from_the_samples_equals_the_observables() {
    use umbral::observables::centroid_size;
    use umbral::prelude::*;
    let (a, b) = (4.0f64, 3.0f64);
    let ellipse = |p: f64| a * b / ((b * p.cos()).powi(2) + (a * p.sin()).powi(2)).sqrt();
    let mean = 2.0 * b / PI * elliptic_k(1.0 - b * b / (a * a));
    let exact = (a * b / (mean * mean) - 1.0).sqrt();
    let (m, c) = centroid_size(&CriticalCurve::from_polar([0.6, -0.4], 256, ellipse)).unwrap();
    assert!(
        (m - mean).abs() < 1e-12 && (c - exact).abs() < 1e-12,
        "{m} {c}"
    );
    for spin in [0.5, 0.9, 0.99] {
        let kerr = Kerr::new(spin).unwrap();
        for degrees in [17.0f64, 60.0, 90.0] {
            let mut request = ShadowRequest::distant(degrees.to_radians()).curve_only();
            request.settings.points = 64;
            let result = shadow(&kerr, &request).unwrap();
            let o = result.observables.unwrap();
            let (m, c) = centroid_size(result.result.curve.as_ref().unwrap()).unwrap();
            assert!(
                (m - o.mean_radius).abs() < 1e-10,
                "a {spin}, {degrees}: {m} vs {}",
                o.mean_radius
            );
            assert!(
                (c - o.circularity_deviation).abs() < 1e-9,
                "a {spin}, {degrees}: {c} vs {}",
                o.circularity_deviation
            );
        }
    }
    // A curve with a non-finite sample has no answer.
    let broken =
        CriticalCurve::from_polar([0.0, 0.0], 16, |p| if p > 3.0 { f64::NAN } else { 5.0 });
    assert!(centroid_size(&broken).is_none());
}
